//! The ruleset format: the documented example loads and passes its own
//! examples, and every kind of mistake gives an error that names the file,
//! the line, the rule and (for patterns) the position.

mod common;

use descry::{Ruleset, RulesetError};

/// The ```toml block under "A complete example" in docs/rulesets.md.
fn documented_example() -> String {
    let doc = std::fs::read_to_string(common::root().join("docs/rulesets.md")).unwrap();
    let section = doc
        .split("## A complete example")
        .nth(1)
        .expect("section exists");
    let body = section.split("```toml").nth(1).expect("toml block");
    body.split("```").next().unwrap().to_owned()
}

#[test]
fn the_documented_example_loads_and_its_examples_pass() {
    let rules = Ruleset::from_toml(&documented_example(), "docs/rulesets.md").unwrap();
    let names: Vec<&str> = rules.features.iter().map(|f| f.output.as_str()).collect();
    assert_eq!(
        names,
        [
            "eng_turbo",
            "eng_cylinders",
            "eng_displacement_l",
            "eng_power_hp",
            "eng_fuel"
        ]
    );
    let vocab = descry::Vocabulary::build([Some("x")]);
    let eval = rules.evaluate_all(&vocab.values);
    let report = descry::CoverageReport::build(&rules, "engine", &vocab, &eval);
    assert_eq!(report.examples.len(), 4);
    assert_eq!(report.examples_failed, 0, "{:#?}", report.examples);
}

fn error(toml: &str) -> RulesetError {
    Ruleset::from_toml(toml, "bad.toml").expect_err("should be refused")
}

fn shows(err: &RulesetError, parts: &[&str]) {
    let text = err.to_string();
    for p in parts {
        assert!(text.contains(p), "expected {p:?} in:\n{text}");
    }
}

#[test]
fn invalid_toml_names_the_line() {
    // The parser notices the unclosed array where the next line starts.
    let e = error("[[flag]]\nname = \"a\"\nany = [\"x\"\n[[flag]]\nname = \"b\"\n");
    shows(&e, &["bad.toml:4", "invalid array: expected `]`"]);
}

#[test]
fn unknown_keys_are_refused() {
    let e = error("[[count]]\nname = \"c\"\npattern = '({int})'\nrnage = [1, 2]\n");
    shows(&e, &["bad.toml:4", "unknown field `rnage`", "hint"]);
}

#[test]
fn wrong_types_are_refused() {
    let e = error("[[count]]\nname = \"c\"\npattern = '({int})'\nrange = \"1-2\"\n");
    shows(&e, &["bad.toml:4"]);
}

#[test]
fn empty_name_is_refused() {
    let e = error("[[flag]]\nname = \"\"\nany = [\"x\"]\n");
    shows(&e, &["bad.toml:2", "name is empty"]);
}

#[test]
fn duplicate_output_names_are_refused() {
    let e = error(
        "[[flag]]\nname = \"a\"\nany = [\"x\"]\n[[count]]\nname = \"a\"\npattern = '({int})'\n",
    );
    shows(
        &e,
        &[
            "bad.toml:5",
            "[[count]] \"a\"",
            "already made by [[flag]] \"a\" on line 2",
        ],
    );
}

#[test]
fn invalid_pattern_points_at_the_position() {
    let e = error("[[flag]]\nname = \"a\"\npattern = 'ab[c'\n");
    shows(
        &e,
        &[
            "bad.toml:2",
            "[[flag]] \"a\"",
            "pattern position 2",
            "ab[c\n      ^",
        ],
    );
}

#[test]
fn a_pattern_that_fails_only_under_fancy_regex() {
    // `\\pN` is a Unicode class that the regex crate accepts and fancy-regex's parser rejects... or accepts;
    // what matters is that a fancy parse error is reported with its position.
    let e = error("[[flag]]\nname = \"a\"\nfancy = true\npattern = 'ab(?<=x+)c('\n");
    shows(
        &e,
        &[
            "[[flag]] \"a\"",
            "invalid fancy pattern",
            "pattern position",
        ],
    );
}

#[test]
fn number_macro_outside_a_group_is_refused() {
    let e = error("[[count]]\nname = \"c\"\npattern = '{num}\\s*l'\n");
    shows(
        &e,
        &[
            "[[count]] \"c\"",
            "not inside a capture group",
            "pattern position 0",
            "({num})",
        ],
    );
}

#[test]
fn reversed_range_is_refused() {
    let e = error("[[count]]\nname = \"c\"\npattern = '({int})'\nrange = [24, 1]\n");
    shows(&e, &["bad.toml:2", "reversed", "range = [1, 24]"]);
}

#[test]
fn label_case_without_label_is_refused() {
    let e = error("[[label]]\nname = \"fuel\"\n[[label.case]]\nany = [\"diesel\"]\n");
    shows(&e, &["[[label]] \"fuel\"", "case 1 has no `label`"]);
}

#[test]
fn example_naming_an_unknown_feature_is_refused() {
    let e = error("[[flag]]\nname = \"a\"\nany = [\"x\"]\n[[example]]\nvalue = \"x\"\nexpect = { b = true }\n");
    shows(
        &e,
        &["bad.toml:5", "unknown feature \"b\"", "the features are: a"],
    );
}

#[test]
fn example_value_of_the_wrong_type_is_refused() {
    let e = error(
        "[[flag]]\nname = \"a\"\nany = [\"x\"]\n[[example]]\nvalue = \"x\"\nexpect = { a = 3 }\n",
    );
    shows(&e, &["does not fit a flag rule"]);
}

#[test]
fn any_and_pattern_together_are_refused() {
    let e = error("[[flag]]\nname = \"a\"\nany = [\"x\"]\npattern = 'x'\n");
    shows(&e, &["both `any` and `pattern`"]);
}

#[test]
fn label_not_in_declared_categories_is_refused() {
    let e = error("[[label]]\nname = \"k\"\ncategories = [\"a\"]\ndefault = \"b\"\n");
    shows(&e, &["label \"b\" is not in `categories`"]);
}

#[test]
fn a_pattern_over_the_size_limit_is_an_error_naming_the_rule() {
    let e = error("[[count]]\nname = \"huge\"\npattern = '(\\w{500}){10}({int})'\n");
    shows(&e, &["bad.toml:2", "[[count]] \"huge\"", "limit"]);
}

/// Every ```toml block of docs/rulesets.md, in order.
fn documented_blocks() -> Vec<String> {
    let doc = std::fs::read_to_string(common::root().join("docs/rulesets.md")).unwrap();
    doc.split("```toml")
        .skip(1)
        .map(|b| b.split("```").next().unwrap().to_owned())
        .collect()
}

fn reading(rules: &Ruleset, feature: &str, value: &str) -> descry::Cell {
    let i = rules.feature_index(feature).expect("feature");
    rules.evaluate(&rules.normalizer.apply(value))[i].cell
}

#[test]
fn every_documented_block_loads() {
    let blocks = documented_blocks();
    assert!(blocks.len() >= 4, "{}", blocks.len());
    // Blocks that declare rules are whole rulesets; the rest are fragments.
    for b in blocks.iter().filter(|b| b.contains("name =")) {
        Ruleset::from_toml(b, "docs/rulesets.md").unwrap_or_else(|e| panic!("{e}\n{b}"));
    }
}

#[test]
fn the_documented_compound_measures_read_what_the_reference_says() {
    use descry::Cell::Float;
    let block = documented_blocks()
        .into_iter()
        .find(|b| b.contains("height_in"))
        .expect("the combine example");
    let rules = Ruleset::from_toml(&block, "docs/rulesets.md").unwrap();
    // 1 ft = 12 in exactly (NIST SP 811, Appendix B.8): 5 ft 6 in = 66 in.
    for value in [
        "5 ft 6 in",
        "5'6\"",
        "5\u{2032}6\u{2033}",
        "5\u{2032} 6\u{2033}",
        "5 feet 6 inches",
    ] {
        assert_eq!(reading(&rules, "height_in", value), Float(66.0), "{value}");
    }
    assert_eq!(reading(&rules, "height_in", "6 ft"), Float(72.0));
    // 208-230/460V names three voltages; "max" keeps the largest.
    assert_eq!(reading(&rules, "voltage_max", "208-230/460V"), Float(460.0));
    assert_eq!(reading(&rules, "voltage_max", "115V"), Float(115.0));
}

#[test]
fn placeholders_and_blanks_make_every_feature_null() {
    let rules = Ruleset::from_toml(
        r#"
        placeholders = ["N/A", "unknown", "?"]
        placeholder_pattern = '-+|tb[dac]'
        [[flag]]
        name = "turbo"
        any = ["turbo"]
        [[count]]
        name = "cyl"
        pattern = '({int})\s*cyl'
        missing = 0
        [[label]]
        name = "fuel"
        default = "other"
        [[label.case]]
        label = "diesel"
        any = ["diesel"]
        "#,
        "<test>",
    )
    .unwrap();
    use descry::Cell::*;
    for value in ["n/a", " N/A ", "Unknown", "?", "---", "TBD", "", "   "] {
        let cells: Vec<descry::Cell> = rules
            .evaluate(&rules.normalizer.apply(value))
            .into_iter()
            .map(|o| o.cell)
            .collect();
        assert_eq!(cells, [Null, Null, Null], "{value:?}");
    }
    // A placeholder must be the whole value.
    assert_eq!(reading(&rules, "turbo", "n/a turbo"), Bool(true));
    assert_eq!(reading(&rules, "cyl", "- 4 cyl"), Int(4));
    assert_eq!(
        reading(&rules, "cyl", "electric"),
        Int(0),
        "missing still fills real values"
    );
    // The report counts them apart and leaves them out of coverage.
    let vocab = descry::Vocabulary::build([
        Some("n/a"),
        Some("n/a"),
        Some("TBD"),
        Some("4 cyl turbo"),
        Some("electric"),
        Some(" "),
        None,
    ]);
    let eval = rules.evaluate_all(&vocab.values);
    let report = descry::CoverageReport::build(&rules, "engine", &vocab, &eval);
    assert_eq!(
        (report.placeholder_rows, report.placeholder_distinct),
        (3, 2)
    );
    assert_eq!((report.blank_rows, report.null_rows), (1, 1));
    assert_eq!(report.coverage.rows_considered, 2);
    // `missing` fills "electric" but does not fire: only "4 cyl turbo" is covered.
    assert_eq!(report.coverage.rows_covered, 1);
    assert_eq!(report.placeholders[0].value, "n/a");
    assert!(report.unmatched.iter().all(|u| u.value != "n/a"));
}

#[test]
fn unless_stops_a_rule_or_case_where_it_matches() {
    let rules = Ruleset::from_toml(
        r#"
        [[flag]]
        name = "turbo"
        any = ["turbo"]
        unless_any = ["non-turbo", "no turbo"]
        [[flag]]
        name = "damage"
        pattern = 'damage[ds]?'
        unless_pattern = '\bno\s+damage'
        [[count]]
        name = "gears"
        pattern = '({int})\s*spd'
        unless_any = ["w/o overdrive"]
        [[label]]
        name = "kind"
        [[label.case]]
        label = "automatic"
        any = ["auto"]
        unless_any = ["semi-auto"]
        [[label.case]]
        label = "manual"
        any = ["manual", "semi-auto"]
        "#,
        "<test>",
    )
    .unwrap();
    use descry::Cell::*;
    assert_eq!(reading(&rules, "turbo", "turbo diesel"), Bool(true));
    assert_eq!(reading(&rules, "turbo", "non-turbo diesel"), Bool(false));
    assert_eq!(reading(&rules, "turbo", "diesel, no turbo"), Bool(false));
    assert_eq!(reading(&rules, "damage", "hail damage"), Bool(true));
    assert_eq!(reading(&rules, "damage", "no damage"), Bool(false));
    assert_eq!(reading(&rules, "gears", "5 spd w/o overdrive"), Null);
    assert_eq!(reading(&rules, "gears", "5 spd"), Int(5));
    assert_eq!(reading(&rules, "kind", "semi-auto 6 spd"), Label(1));
    assert_eq!(reading(&rules, "kind", "auto 6 spd"), Label(0));
}

#[test]
fn equal_map_keys_and_unit_spellings_name_both_lines() {
    let e = error(
        "[[label]]\nname = \"kind\"\n[label.map]\n\"Hydro\" = \"hydrostatic\"\n\"auto\" = \"automatic\"\n\"hydro\" = \"manual\"\n",
    );
    shows(&e, &["bad.toml:6", "line 4", "line 6", "\"hydro\""]);
    let e = error(
        "[[measure]]\nname = \"p\"\npattern = '({num})\\s*(mw|w)'\nunit = \"w\"\n[measure.units]\nw = 1\nmW = 0.001\nMW = 1000000\n",
    );
    shows(&e, &["bad.toml:8", "line 7", "line 8", "\"mw\""]);
}

#[test]
fn a_unit_spelling_that_ends_in_a_period_is_read() {
    let rules = Ruleset::from_toml(
        "[[measure]]\nname = 'hp'\npattern = '({num})\\s*(h\\.p\\.|hp)'\nunit = 'hp'\nunits = { \"h.p.\" = 1, hp = 1 }\n",
        "<test>",
    )
    .unwrap();
    assert_eq!(reading(&rules, "hp", "3 H.P."), descry::Cell::Float(3.0));
}

#[test]
fn an_any_literal_that_looks_like_a_pattern_gets_a_warning() {
    let rules = Ruleset::from_toml(
        "[[flag]]\nname = 'turbo'\nany = ['turbo|t/c', 'tc']\n[[flag]]\nname = 'n'\nany = ['\\d+ spd']\n",
        "w.toml",
    )
    .unwrap();
    assert_eq!(rules.warnings.len(), 2, "{:?}", rules.warnings);
    let first = rules.warnings[0].to_string();
    assert!(
        first.starts_with("w.toml:2: rule [[flag]] \"turbo\""),
        "{first}"
    );
    assert!(first.contains("`pattern`"), "{first}");
    let vocab = descry::Vocabulary::build([Some("x")]);
    let eval = rules.evaluate_all(&vocab.values);
    let report = descry::CoverageReport::build(&rules, "c", &vocab, &eval);
    assert_eq!(report.warnings.len(), 2);
}

#[test]
fn a_measure_too_large_for_its_type_is_null_and_reported() {
    let rules = Ruleset::from_toml(
        "[[measure]]\nname = 'v'\npattern = '({num})\\s*l'\nunit = 'l'\n",
        "<test>",
    )
    .unwrap();
    let big = format!("2{} l", "0".repeat(45));
    let out = rules.evaluate(&big);
    assert_eq!(out[0].cell, descry::Cell::Null);
    assert!(!out[0].fired);
    assert!(
        matches!(out[0].issue, Some(descry::Issue::NotFinite { .. })),
        "{:?}",
        out[0].issue
    );
    let huge = format!("{} l", "9".repeat(320));
    assert_eq!(rules.evaluate(&huge)[0].cell, descry::Cell::Null);
}
