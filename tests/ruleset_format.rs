//! The ruleset format: the documented example loads and passes its own
//! examples, and every kind of mistake gives an error that names the file,
//! the line, the rule and (for patterns) the position.

mod common;

use descry::{Ruleset, RulesetError};

/// The ```toml block under "A complete example" in rulesets/README.md.
fn documented_example() -> String {
    let doc = std::fs::read_to_string(common::root().join("rulesets/README.md")).unwrap();
    let section = doc
        .split("## A complete example")
        .nth(1)
        .expect("section exists");
    let body = section.split("```toml").nth(1).expect("toml block");
    body.split("```").next().unwrap().to_owned()
}

#[test]
fn the_documented_example_loads_and_its_examples_pass() {
    let rules = Ruleset::from_toml(&documented_example(), "rulesets/README.md").unwrap();
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
    assert_eq!(report.examples.len(), 3);
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
