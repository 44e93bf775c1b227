//! Checking a ruleset as a whole and compiling its matchers.

use hashbrown::{HashMap, HashSet};
use indexmap::IndexMap;
use toml::Spanned;

use super::spec::*;
use super::*;
use crate::pattern::Literals;

/// Where in the file we are, for error messages.
struct Place<'a> {
    file: &'a str,
    text: &'a str,
    /// Byte offset of every line break, to find a line in log time (a
    /// `map` of 70,000 keys asks for 70,000 lines).
    breaks: Vec<usize>,
}

impl Place<'_> {
    fn new<'a>(file: &'a str, text: &'a str) -> Place<'a> {
        let breaks = text.match_indices('\n').map(|(i, _)| i).collect();
        Place { file, text, breaks }
    }

    fn line_of(&self, offset: usize) -> usize {
        self.breaks.partition_point(|&b| b < offset) + 1
    }

    fn err(
        &self,
        rule: Option<String>,
        line: Option<usize>,
        msg: impl Into<String>,
    ) -> RulesetError {
        let mut e = RulesetError::new(self.file, msg).line(line);
        e.rule = rule;
        e
    }
}

pub(super) fn compile(text: &str, file: &str) -> Result<Ruleset, RulesetError> {
    let spec: RulesetSpec = toml::from_str(text).map_err(|e| toml_error(file, text, e))?;
    let place = Place::new(file, text);
    let mut warnings = Vec::new();
    let mut features = Vec::new();
    for f in &spec.flag {
        features.push(compile_flag(&place, &spec, f, &mut warnings)?);
    }
    for c in &spec.count {
        features.push(compile_count(&place, &spec, c, &mut warnings)?);
    }
    for m in &spec.measure {
        features.push(compile_measure(&place, &spec, m, &mut warnings)?);
    }
    for l in &spec.label {
        features.push(compile_label(&place, &spec, l, &mut warnings)?);
    }
    warnings.sort_by_key(|w: &RulesetWarning| w.line);
    let (placeholders, placeholder_pattern) = compile_placeholders(&place, &spec)?;
    features.sort_by_key(|f| f.line);
    check_unique_outputs(&place, &features)?;
    let column = spec.column.clone();
    let mut ruleset = Ruleset {
        file: file.to_owned(),
        column,
        prefix: spec.prefix.clone(),
        decimal: spec.decimal,
        normalizer: spec.normalize.clone(),
        placeholders,
        placeholder_pattern,
        features,
        examples: Vec::new(),
        warnings,
    };
    ruleset.examples = spec
        .example
        .iter()
        .map(|e| compile_example(&place, &ruleset, e))
        .collect::<Result<_, _>>()?;
    Ok(ruleset)
}

fn toml_error(file: &str, text: &str, e: toml::de::Error) -> RulesetError {
    let line = e
        .span()
        .map(|s| text[..s.start.min(text.len())].matches('\n').count() + 1);
    let message = e
        .message()
        .trim()
        .lines()
        .map(str::trim)
        .collect::<Vec<_>>()
        .join(": ");
    let hint = if message.contains("unknown field") {
        Some("see docs/rulesets.md for the keys each table accepts")
    } else if message.contains("missing field") {
        Some("every rule needs a `name`; count and measure rules need a `pattern`")
    } else {
        None
    };
    let mut err = RulesetError::new(file, message).line(line);
    err.hint = hint.map(str::to_owned);
    err
}

fn rule_title(kind: &str, name: &str) -> String {
    format!("[[{kind}]] \"{name}\"")
}

/// Name checks shared by every kind; returns (title, line).
fn named(
    place: &Place,
    kind: &str,
    name: &Spanned<String>,
) -> Result<(String, usize), RulesetError> {
    let line = place.line_of(name.span().start);
    let title = rule_title(kind, name.get_ref());
    let bad = name.get_ref().trim().is_empty() || name.get_ref().chars().any(char::is_control);
    if bad {
        return Err(place
            .err(
                Some(title),
                Some(line),
                "the rule's name is empty or contains control characters",
            )
            .hint("give every rule a short name such as \"gears\"; it becomes the output column"));
    }
    Ok((title, line))
}

fn feature(spec: &RulesetSpec, name: &Spanned<String>, line: usize, rule: Rule) -> Feature {
    let name = name.get_ref().clone();
    Feature {
        output: format!("{}{}", spec.prefix, name),
        name,
        line,
        rule,
    }
}

fn pattern(
    place: &Place,
    title: &str,
    line: usize,
    source: &str,
    fancy: bool,
    spec: &RulesetSpec,
) -> Result<Pattern, RulesetError> {
    Pattern::compile(source, fancy, spec.decimal).map_err(|mut e| {
        e.file = place.file.to_owned();
        e.rule = Some(title.to_owned());
        e.line = Some(line);
        e
    })
}

/// Where a rule is and what it reads: passed to the helpers that compile
/// its parts.
struct At<'a> {
    title: &'a str,
    line: usize,
    fancy: bool,
}

/// `any` literals or a `pattern`, exactly one of them.
fn matcher(
    place: &Place,
    title: &str,
    line: usize,
    any: &Option<Vec<String>>,
    pat: &Option<String>,
    fancy: bool,
    spec: &RulesetSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Matcher, RulesetError> {
    if let Some(words) = any {
        warn_pattern_like(place, title, line, "any", words, warnings);
    }
    match (any, pat) {
        (Some(_), Some(_)) => Err(place
            .err(
                Some(title.into()),
                Some(line),
                "has both `any` and `pattern`",
            )
            .hint("keep one: `any` for whole-word literals, `pattern` for a regex")),
        (None, None) => Err(place
            .err(
                Some(title.into()),
                Some(line),
                "has neither `any` nor `pattern`",
            )
            .hint("add `any = [\"word\", ...]` or `pattern = '...'`")),
        (Some(words), None) => literals(place, title, line, words, spec).map(Matcher::Literals),
        (None, Some(p)) => pattern(place, title, line, p, fancy, spec).map(Matcher::Pattern),
    }
}

/// Literals are normalized like the values they are matched against.
fn literals(
    place: &Place,
    title: &str,
    line: usize,
    words: &[String],
    spec: &RulesetSpec,
) -> Result<Literals, RulesetError> {
    let words: Vec<String> = words.iter().map(|w| spec.normalize.apply(w)).collect();
    if words.is_empty() || words.iter().any(|w| w.is_empty()) {
        return Err(place
            .err(
                Some(title.into()),
                Some(line),
                "`any` is empty or holds an empty word",
            )
            .hint("list at least one non-blank word"));
    }
    Literals::new(words)
        .map_err(|e| place.err(Some(title.into()), Some(line), format!("`any`: {e}")))
}

/// A literal that holds regex syntax was probably meant as a pattern:
/// `any` matches it letter for letter.
fn warn_pattern_like(
    place: &Place,
    title: &str,
    line: usize,
    key: &str,
    words: &[String],
    warnings: &mut Vec<RulesetWarning>,
) {
    const SYNTAX: &[&str] = &[
        "|", "\\d", "\\s", "\\w", "\\b", ".*", ".+", "[", "]", "(?", "^", "$",
    ];
    for w in words {
        if let Some(found) = SYNTAX.iter().find(|s| w.contains(*s)) {
            let suggestion = if key == "any" {
                "pattern"
            } else {
                "unless_pattern"
            };
            warnings.push(RulesetWarning {
                file: place.file.to_owned(),
                line,
                rule: title.to_owned(),
                message: format!(
                    "`{key}` literal {} holds {found:?}, which `{key}` matches letter for letter; \
                     if it is a regular expression, write it as `{suggestion}` instead",
                    crate::render::shown(w)
                ),
            });
        }
    }
}

/// `unless_any` and `unless_pattern`, either or both.
fn unless(
    place: &Place,
    at: &At,
    any: &Option<Vec<String>>,
    pat: &Option<String>,
    spec: &RulesetSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Option<Unless>, RulesetError> {
    if any.is_none() && pat.is_none() {
        return Ok(None);
    }
    let literals = match any {
        Some(words) => {
            warn_pattern_like(place, at.title, at.line, "unless_any", words, warnings);
            Some(
                literals(place, at.title, at.line, words, spec).map_err(|mut e| {
                    e.message = e.message.replace("`any`", "`unless_any`");
                    e
                })?,
            )
        }
        None => None,
    };
    let pattern = match pat {
        Some(p) => Some(pattern(place, at.title, at.line, p, at.fancy, spec)?),
        None => None,
    };
    Ok(Some(Unless { literals, pattern }))
}

fn compile_flag(
    place: &Place,
    spec: &RulesetSpec,
    f: &FlagSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Feature, RulesetError> {
    let (title, line) = named(place, "flag", &f.name)?;
    let matcher = matcher(
        place, &title, line, &f.any, &f.pattern, f.fancy, spec, warnings,
    )?;
    let at = At {
        title: &title,
        line,
        fancy: f.fancy,
    };
    let unless = unless(place, &at, &f.unless_any, &f.unless_pattern, spec, warnings)?;
    Ok(feature(
        spec,
        &f.name,
        line,
        Rule::Flag(FlagRule { matcher, unless }),
    ))
}

/// The `placeholders` list (normalized) and the `placeholder_pattern`,
/// matched against the whole normalized value.
fn compile_placeholders(
    place: &Place,
    spec: &RulesetSpec,
) -> Result<(HashSet<String>, Option<Pattern>), RulesetError> {
    let line = |key: &str| {
        place
            .text
            .lines()
            .position(|l| l.trim_start().starts_with(key))
            .map(|i| i + 1)
    };
    let mut set = HashSet::new();
    for p in spec.placeholders.iter().flatten() {
        let form = spec.normalize.apply(p);
        if form.is_empty() {
            return Err(place
                .err(
                    None,
                    line("placeholders"),
                    "`placeholders` holds a blank value",
                )
                .hint(
                    "blank values are already treated as placeholders; list only values with text",
                ));
        }
        set.insert(form);
    }
    let pattern = match &spec.placeholder_pattern {
        None => None,
        Some(source) => {
            let at = line("placeholder_pattern");
            let locate = |mut e: RulesetError| {
                e.file = place.file.to_owned();
                e.rule = Some("placeholder_pattern".to_owned());
                e.line = at;
                e
            };
            // Checked as written (errors point into it), then anchored.
            Pattern::compile(source, false, spec.decimal).map_err(locate)?;
            Some(
                Pattern::compile(&format!("^(?:{source})$"), false, spec.decimal)
                    .map_err(locate)?,
            )
        }
    };
    Ok((set, pattern))
}

fn required_pattern<'a>(
    place: &Place,
    title: &str,
    line: usize,
    p: &'a Option<String>,
) -> Result<&'a str, RulesetError> {
    p.as_deref().ok_or_else(|| {
        place
            .err(Some(title.into()), Some(line), "has no `pattern`")
            .hint("write a pattern with a capture group around the number, e.g. '({int})\\s*cyl'")
    })
}

/// Every `{int}` / `{num}` must sit inside a capture group, and there must be one.
fn check_number_groups(
    place: &Place,
    title: &str,
    line: usize,
    p: &Pattern,
) -> Result<(), RulesetError> {
    for &m in p.macro_offsets() {
        if !p.groups().iter().any(|g| g.span.contains(&m)) {
            return Err(place
                .err(
                    Some(title.into()),
                    Some(line),
                    "a number macro is not inside a capture group",
                )
                .at(p.source(), m)
                .hint("wrap it in parentheses, e.g. ({num}), so its value can be read"));
        }
    }
    if p.groups().is_empty() {
        return Err(place
            .err(
                Some(title.into()),
                Some(line),
                "the pattern has no capture group to read a number from",
            )
            .at(p.source(), 0)
            .hint("wrap the number in parentheses, e.g. '({int})\\s*cyl'"));
    }
    Ok(())
}

fn compile_count(
    place: &Place,
    spec: &RulesetSpec,
    c: &CountSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Feature, RulesetError> {
    let (title, line) = named(place, "count", &c.name)?;
    let source = required_pattern(place, &title, line, &c.pattern)?;
    let pattern = pattern(place, &title, line, source, c.fancy, spec)?;
    check_number_groups(place, &title, line, &pattern)?;
    let range = match c.range {
        Some([lo, hi]) if lo > hi => {
            return Err(place
                .err(
                    Some(title),
                    Some(line),
                    format!("`range = [{lo}, {hi}]` is reversed"),
                )
                .hint(format!(
                    "write the smaller bound first: range = [{hi}, {lo}]"
                )))
        }
        Some([lo, hi]) => Some((lo, hi)),
        None => None,
    };
    let at = At {
        title: &title,
        line,
        fancy: c.fancy,
    };
    let unless = unless(place, &at, &c.unless_any, &c.unless_pattern, spec, warnings)?;
    let rule = CountRule {
        pattern,
        range,
        missing: c.missing,
        unless,
    };
    Ok(feature(spec, &c.name, line, Rule::Count(rule)))
}

fn compile_measure(
    place: &Place,
    spec: &RulesetSpec,
    m: &MeasureSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Feature, RulesetError> {
    let (title, line) = named(place, "measure", &m.name)?;
    let source = required_pattern(place, &title, line, &m.pattern)?;
    let pattern = pattern(place, &title, line, source, m.fancy, spec)?;
    check_number_groups(place, &title, line, &pattern)?;
    let (number_groups, unit_groups) = measure_groups(&pattern);
    let unit = m.unit.clone().unwrap_or_default();
    let units = measure_units(place, &title, m, spec)?;
    if unit.trim().is_empty() {
        return Err(place
            .err(Some(title), Some(line), "has no `unit`")
            .hint("name the unit every value is converted to, e.g. unit = \"l\""));
    }
    let range = match m.range {
        // NaN compares false with everything: as a bound it would let
        // every value through its side of the range.
        Some([lo, hi]) if lo.is_nan() || hi.is_nan() => {
            return Err(place
                .err(
                    Some(title),
                    Some(line),
                    format!("`range = [{lo}, {hi}]` holds NaN"),
                )
                .hint("write numbers for both bounds"))
        }
        Some([lo, hi]) if lo > hi => {
            return Err(place.err(
                Some(title),
                Some(line),
                format!("`range = [{lo}, {hi}]` is reversed"),
            ))
        }
        other => other.map(|[lo, hi]| (lo, hi)),
    };
    if let Some(missing) = m.missing.filter(|x| !x.is_finite()) {
        return Err(place
            .err(
                Some(title),
                Some(line),
                format!("`missing = {missing}` is not a finite number"),
            )
            .hint("leave `missing` out to write null when nothing matches"));
    }
    let at = At {
        title: &title,
        line,
        fancy: m.fancy,
    };
    let unless = unless(place, &at, &m.unless_any, &m.unless_pattern, spec, warnings)?;
    let rule = MeasureRule {
        pattern,
        unit,
        units,
        number_groups,
        unit_groups,
        precision: m.precision,
        combine: m.combine,
        range,
        missing: m.missing,
        unless,
    };
    Ok(feature(spec, &m.name, line, Rule::Measure(rule)))
}

/// Number groups hold a macro (or, with none, group 1 is the number);
/// every other capture group not enclosing a number group may be the unit.
fn measure_groups(p: &Pattern) -> (Vec<usize>, Vec<usize>) {
    let groups = p.groups();
    let mut number: Vec<usize> = (0..groups.len()).filter(|&i| groups[i].has_macro).collect();
    if number.is_empty() {
        number.push(0);
    }
    let encloses_number = |i: usize| {
        number.iter().any(|&n| {
            n != i
                && groups[i].span.start <= groups[n].span.start
                && groups[n].span.end <= groups[i].span.end
        })
    };
    let unit = (0..groups.len())
        .filter(|i| !number.contains(i) && !encloses_number(*i))
        .collect();
    (number, unit)
}

fn measure_units(
    place: &Place,
    title: &str,
    m: &MeasureSpec,
    spec: &RulesetSpec,
) -> Result<Vec<(String, f64)>, RulesetError> {
    let mut units: Vec<(String, f64)> = Vec::new();
    let mut first_line: HashMap<String, (String, usize)> = HashMap::new();
    for (spelling, factor) in m.units.iter().flatten() {
        let at = place.line_of(spelling.span().start);
        let spelling = spelling.get_ref();
        if !factor.is_finite() || *factor <= 0.0 {
            return Err(place
                .err(Some(title.into()), Some(at), format!("unit \"{spelling}\" has factor {factor}"))
                .hint("a factor converts one of this unit into the target unit; it must be a positive number"));
        }
        let key = crate::ruleset::unit_key(&spec.normalize.apply(spelling)).to_owned();
        if key.is_empty() {
            return Err(place.err(
                Some(title.into()),
                Some(at),
                "`units` holds a blank spelling",
            ));
        }
        if let Some((other, other_line)) = first_line.get(&key) {
            return Err(place
                .err(
                    Some(title.into()),
                    Some(at),
                    format!(
                        "unit spellings \"{other}\" (line {other_line}) and \"{spelling}\" (line {at}) are the same \"{key}\" once normalized"
                    ),
                )
                .hint("values are normalized before they are read (lower case by default), so the two cannot be told apart; keep one, or set [normalize] case = \"none\""));
        }
        first_line.insert(key.clone(), (spelling.clone(), at));
        units.push((key, *factor));
    }
    if let Some(unit) = &m.unit {
        let target = crate::ruleset::unit_key(&spec.normalize.apply(unit)).to_owned();
        if !units.iter().any(|(u, _)| *u == target) {
            units.push((target, 1.0));
        }
    }
    Ok(units)
}

fn compile_label(
    place: &Place,
    spec: &RulesetSpec,
    l: &LabelSpec,
    warnings: &mut Vec<RulesetWarning>,
) -> Result<Feature, RulesetError> {
    let (title, line) = named(place, "label", &l.name)?;
    let mut cases_spec = Vec::new();
    for (i, c) in l.case.iter().enumerate() {
        let Some(label) = &c.label else {
            return Err(place
                .err(
                    Some(title),
                    Some(line),
                    format!("case {} has no `label`", i + 1),
                )
                .hint("each [[label.case]] needs `label = \"...\"` and `any` or `pattern`"));
        };
        let case_line = place.line_of(label.span().start);
        cases_spec.push((label.get_ref().clone(), case_line, c));
    }
    let categories = label_categories(place, &title, line, l, &cases_spec)?;
    let positions: HashMap<String, u32> = categories
        .iter()
        .enumerate()
        .map(|(i, c)| (c.clone(), i as u32))
        .collect();
    let index = |label: &str| positions[label];
    let mut cases = Vec::new();
    for (label, case_line, c) in &cases_spec {
        let case_title = format!("{title} case \"{label}\"");
        let matcher = matcher(
            place,
            &case_title,
            *case_line,
            &c.any,
            &c.pattern,
            c.fancy,
            spec,
            warnings,
        )?;
        let at = At {
            title: &case_title,
            line: *case_line,
            fancy: c.fancy,
        };
        let unless = unless(place, &at, &c.unless_any, &c.unless_pattern, spec, warnings)?;
        cases.push(LabelCase {
            label: index(label),
            matcher,
            unless,
        });
    }
    let mut map: HashMap<String, u32> = HashMap::with_capacity(l.map.len());
    let mut key_line: HashMap<String, (&str, usize)> = HashMap::with_capacity(l.map.len());
    for (k, v) in &l.map {
        let at = place.line_of(k.span().start);
        let key = spec.normalize.apply(k.get_ref());
        if let Some((other, other_line)) = key_line.get(&key) {
            return Err(place
                .err(
                    Some(title),
                    Some(at),
                    format!(
                        "`map` keys {} (line {other_line}) and {} (line {at}) are the same value {} once normalized",
                        crate::render::shown(other),
                        crate::render::shown(k.get_ref()),
                        crate::render::shown(&key)
                    ),
                )
                .hint("`map` is consulted with the normalized value, so only one of the two could ever apply; keep one"));
        }
        key_line.insert(key.clone(), (k.get_ref().as_str(), at));
        map.insert(key, index(v));
    }
    let default = l.default.as_deref().map(index);
    let rule = LabelRule {
        categories,
        default,
        map,
        cases,
    };
    Ok(feature(spec, &l.name, line, Rule::Label(rule)))
}

/// Explicit `categories`, or the labels in order of appearance: cases, then
/// map values, then the default.
fn label_categories(
    place: &Place,
    title: &str,
    line: usize,
    l: &LabelSpec,
    cases: &[(String, usize, &CaseSpec)],
) -> Result<Vec<String>, RulesetError> {
    let used: Vec<&String> = cases
        .iter()
        .map(|(label, _, _)| label)
        .chain(l.map.values())
        .chain(l.default.iter())
        .collect();
    if let Some(label) = used.iter().find(|s| s.is_empty()) {
        return Err(place.err(
            Some(title.into()),
            Some(line),
            format!("label {label:?} is empty"),
        ));
    }
    let Some(declared) = &l.categories else {
        let mut out: Vec<String> = Vec::new();
        let mut seen: HashSet<&str> = HashSet::new();
        for label in used {
            if seen.insert(label.as_str()) {
                out.push(label.clone());
            }
        }
        return Ok(out);
    };
    let mut seen = IndexMap::new();
    for c in declared {
        if seen.insert(c.clone(), ()).is_some() {
            return Err(place.err(
                Some(title.into()),
                Some(line),
                format!("category \"{c}\" is listed twice"),
            ));
        }
    }
    if let Some(missing) = used.iter().find(|u| !seen.contains_key(u.as_str())) {
        return Err(place
            .err(Some(title.into()), Some(line), format!("label \"{missing}\" is not in `categories`"))
            .hint("add it to `categories`, or remove `categories` to take the labels in order of appearance"));
    }
    Ok(declared.clone())
}

fn check_unique_outputs(place: &Place, features: &[Feature]) -> Result<(), RulesetError> {
    let mut seen: HashMap<&str, &Feature> = HashMap::new();
    for f in features {
        if let Some(first) = seen.insert(f.output.as_str(), f) {
            return Err(place
                .err(
                    Some(rule_title(f.rule.kind(), &f.name)),
                    Some(f.line),
                    format!(
                        "output column \"{}\" is already made by [[{}]] \"{}\" on line {}",
                        f.output,
                        first.rule.kind(),
                        first.name,
                        first.line
                    ),
                )
                .hint("rename one of the two rules"));
        }
    }
    Ok(())
}

fn compile_example(
    place: &Place,
    rules: &Ruleset,
    e: &ExampleSpec,
) -> Result<Example, RulesetError> {
    let line = place.line_of(e.value.span().start);
    let title = format!("[[example]] {:?}", e.value.get_ref());
    let mut expect = Vec::new();
    for (key, value) in &e.expect {
        let Some(idx) = rules.feature_index(key) else {
            let names: Vec<&str> = rules.features.iter().map(|f| f.name.as_str()).collect();
            return Err(place
                .err(
                    Some(title),
                    Some(line),
                    format!("`expect` names an unknown feature \"{key}\""),
                )
                .hint(format!("the features are: {}", names.join(", "))));
        };
        let expected = expected_value(&rules.features[idx], value).ok_or_else(|| {
            place.err(
                Some(title.clone()),
                Some(line),
                format!(
                    "`expect.{key}` = {value} does not fit a {} rule",
                    rules.features[idx].rule.kind()
                ),
            )
        })?;
        expect.push((idx, expected));
    }
    Ok(Example {
        value: e.value.get_ref().clone(),
        line,
        expect,
    })
}

fn expected_value(f: &Feature, v: &toml::Value) -> Option<Expected> {
    match (&f.rule, v) {
        (Rule::Flag(_), toml::Value::Boolean(b)) => Some(Expected::Bool(*b)),
        (Rule::Count(_), toml::Value::Integer(i)) => Some(Expected::Int(*i)),
        (Rule::Measure(_), toml::Value::Integer(i)) => Some(Expected::Float(*i as f64)),
        (Rule::Measure(_), toml::Value::Float(x)) => Some(Expected::Float(*x)),
        (Rule::Label(l), toml::Value::String(s)) if l.categories.contains(s) => {
            Some(Expected::Text(s.clone()))
        }
        _ => None,
    }
}
