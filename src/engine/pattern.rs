//! Compiled matchers: regex patterns (with the `{int}` / `{num}` macros) and
//! whole-word literal lists.
//!
//! Guarantees, for rulesets from untrusted hands:
//! - plain patterns use the `regex` crate: matching time is linear in the
//!   value's length, and compiled size is capped ([`REGEX_SIZE_LIMIT`],
//!   [`REGEX_DFA_SIZE_LIMIT`]); a pattern over the cap is a ruleset error;
//! - `fancy = true` patterns use `fancy-regex` with a backtrack limit
//!   ([`BACKTRACK_LIMIT`]); a value that hits it is reported, never a hang.

use std::ops::Range;

use aho_corasick::{AhoCorasick, MatchKind};

use crate::error::RulesetError;
use crate::numbers::{DecimalMark, Macro};

/// Cap on a compiled regex's size in bytes (the regex crate's `size_limit`).
pub const REGEX_SIZE_LIMIT: usize = 2 * (1 << 20);
/// Cap on the lazy DFA's cache per regex (the regex crate's `dfa_size_limit`).
pub const REGEX_DFA_SIZE_LIMIT: usize = 4 * (1 << 20);
/// Backtracking steps a fancy pattern may take on one value.
pub const BACKTRACK_LIMIT: usize = 100_000;

/// Why matching one value failed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum MatchError {
    /// A fancy pattern gave up after [`BACKTRACK_LIMIT`] steps.
    BacktrackLimit,
    Other(String),
}

impl std::fmt::Display for MatchError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            MatchError::BacktrackLimit => write!(f, "backtrack limit reached"),
            MatchError::Other(m) => write!(f, "{m}"),
        }
    }
}

/// A successful match: the whole span and each capture group's span
/// (`groups[0]` is group 1).
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Found {
    pub span: Range<usize>,
    pub groups: Vec<Option<Range<usize>>>,
}

/// A capture group of a pattern, as written.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Group {
    /// Byte range in the pattern source, parentheses included.
    pub span: Range<usize>,
    /// Holds an `{int}` or `{num}` macro directly (not only in a nested group).
    pub has_macro: bool,
}

/// A compiled regex pattern.
#[derive(Debug, Clone)]
pub struct Pattern {
    source: String,
    expanded: String,
    engine: Engine,
    groups: Vec<Group>,
    macros: Vec<usize>,
}

#[derive(Debug, Clone)]
enum Engine {
    Plain(regex::Regex),
    Fancy(fancy_regex::Regex),
}

impl Pattern {
    /// Compile `source`; errors carry the position in `source`.
    pub fn compile(source: &str, fancy: bool, mark: DecimalMark) -> Result<Pattern, RulesetError> {
        let (placeholder, expanded, macros) = expand_macros(source, mark);
        let engine = if fancy {
            check_fancy_syntax(source, &placeholder)?;
            Engine::Fancy(build_fancy(source, &expanded)?)
        } else {
            check_plain_syntax(source, &placeholder)?;
            Engine::Plain(build_plain(source, &expanded)?)
        };
        let groups = scan_groups(source, &macros);
        Ok(Pattern {
            source: source.to_owned(),
            expanded,
            engine,
            groups,
            macros,
        })
    }

    pub fn source(&self) -> &str {
        &self.source
    }

    /// The pattern with its macros expanded: what the regex engine runs.
    pub fn expanded(&self) -> &str {
        &self.expanded
    }

    /// Whether the pattern runs on the backtracking (fancy) engine.
    pub fn is_fancy(&self) -> bool {
        matches!(self.engine, Engine::Fancy(_))
    }

    /// Capture groups in index order (`groups()[0]` is group 1).
    pub fn groups(&self) -> &[Group] {
        &self.groups
    }

    /// Byte offsets in the source of every `{int}` / `{num}`.
    pub fn macro_offsets(&self) -> &[usize] {
        &self.macros
    }

    pub fn find(&self, text: &str) -> Result<Option<Found>, MatchError> {
        self.find_at(text, 0)
    }

    /// The first match that starts at or after byte `start` (the text
    /// before it still counts for `^`, `\b` and look-behind).
    pub fn find_at(&self, text: &str, start: usize) -> Result<Option<Found>, MatchError> {
        match &self.engine {
            Engine::Plain(re) => Ok(re
                .captures_at(text, start)
                .map(|c| found_from(c.len(), |i| c.get(i).map(|m| m.range())))),
            Engine::Fancy(re) => match re.captures_from_pos(text, start) {
                Ok(Some(c)) => Ok(Some(found_from(c.len(), |i| c.get(i).map(|m| m.range())))),
                Ok(None) => Ok(None),
                Err(e) => Err(fancy_runtime_error(e)),
            },
        }
    }

    pub fn is_match(&self, text: &str) -> Result<bool, MatchError> {
        match &self.engine {
            Engine::Plain(re) => Ok(re.is_match(text)),
            Engine::Fancy(re) => re.is_match(text).map_err(fancy_runtime_error),
        }
    }
}

fn found_from(len: usize, get: impl Fn(usize) -> Option<Range<usize>>) -> Found {
    Found {
        span: get(0).unwrap_or(0..0),
        groups: (1..len).map(get).collect(),
    }
}

fn fancy_runtime_error(e: fancy_regex::Error) -> MatchError {
    match e {
        fancy_regex::Error::RuntimeError(fancy_regex::RuntimeError::BacktrackLimitExceeded) => {
            MatchError::BacktrackLimit
        }
        other => MatchError::Other(other.to_string()),
    }
}

/// Returns (placeholder text, real expansion, macro offsets).
fn expand_macros(source: &str, mark: DecimalMark) -> (String, String, Vec<usize>) {
    let mut placeholder = String::with_capacity(source.len());
    let mut expanded = String::with_capacity(source.len() * 2);
    let mut offsets = Vec::new();
    let mut rest = 0;
    while rest < source.len() {
        let hit = Macro::ALL
            .iter()
            .find(|(_, name)| source[rest..].starts_with(name) && !escaped(source, rest));
        match hit {
            Some((m, name)) => {
                offsets.push(rest);
                // As long as the macro's name: error offsets found in the
                // placeholder text are offsets in the user's pattern too.
                placeholder.push_str(m.placeholder());
                expanded.push_str(&m.expansion(mark));
                rest += name.len();
            }
            None => {
                let c = source[rest..].chars().next().expect("in bounds");
                placeholder.push(c);
                expanded.push(c);
                rest += c.len_utf8();
            }
        }
    }
    (placeholder, expanded, offsets)
}

/// Is the byte at `at` preceded by an odd number of backslashes?
fn escaped(source: &str, at: usize) -> bool {
    source[..at]
        .bytes()
        .rev()
        .take_while(|b| *b == b'\\')
        .count()
        % 2
        == 1
}

fn check_plain_syntax(source: &str, placeholder: &str) -> Result<(), RulesetError> {
    match regex_syntax::Parser::new().parse(placeholder) {
        Ok(_) => Ok(()),
        Err(err) => {
            let (offset, kind) = match &err {
                regex_syntax::Error::Parse(e) => (e.span().start.offset, e.kind().to_string()),
                regex_syntax::Error::Translate(e) => (e.span().start.offset, e.kind().to_string()),
                other => (0, other.to_string()),
            };
            let hint = if looks_fancy(source) {
                "lookaround and backreferences need `fancy = true` on the rule"
            } else {
                "patterns use the regex crate's syntax; escape literal ( ) [ ] { } . + * ? | with a backslash"
            };
            Err(RulesetError::new("", format!("invalid pattern: {kind}"))
                .at(source, offset)
                .hint(hint))
        }
    }
}

fn looks_fancy(source: &str) -> bool {
    ["(?=", "(?!", "(?<=", "(?<!", "\\1", "\\2", "(?>"]
        .iter()
        .any(|s| source.contains(s))
}

fn check_fancy_syntax(source: &str, placeholder: &str) -> Result<(), RulesetError> {
    match fancy_regex::Regex::new(placeholder) {
        Ok(_) => Ok(()),
        Err(fancy_regex::Error::ParseError(offset, kind)) => {
            Err(RulesetError::new("", format!("invalid fancy pattern: {kind}")).at(source, offset))
        }
        Err(other) => {
            Err(RulesetError::new("", format!("invalid fancy pattern: {other}")).at(source, 0))
        }
    }
}

fn build_plain(source: &str, expanded: &str) -> Result<regex::Regex, RulesetError> {
    regex::RegexBuilder::new(expanded)
        .size_limit(REGEX_SIZE_LIMIT)
        .dfa_size_limit(REGEX_DFA_SIZE_LIMIT)
        .build()
        .map_err(|e| match e {
            regex::Error::CompiledTooBig(limit) => RulesetError::new(
                "",
                format!("pattern compiles to more than the {limit}-byte limit"),
            )
            .at(source, 0)
            .hint("simplify the pattern: large counted repetitions such as {1000} and big Unicode classes inflate it"),
            other => RulesetError::new("", format!("invalid pattern: {other}")).at(source, 0),
        })
}

fn build_fancy(source: &str, expanded: &str) -> Result<fancy_regex::Regex, RulesetError> {
    fancy_regex::RegexBuilder::new(expanded)
        .backtrack_limit(BACKTRACK_LIMIT)
        .delegate_size_limit(REGEX_SIZE_LIMIT)
        .delegate_dfa_size_limit(REGEX_DFA_SIZE_LIMIT)
        .build()
        .map_err(|e| RulesetError::new("", format!("invalid fancy pattern: {e}")).at(source, 0))
}

/// Find the capture groups by reading the pattern's parentheses: escapes and
/// character classes are skipped; `(?:`, `(?=`, `(?i)` and friends do not
/// capture; `(?P<name>` and `(?<name>` do.
fn scan_groups(source: &str, macros: &[usize]) -> Vec<Group> {
    let bytes = source.as_bytes();
    let mut groups: Vec<Group> = Vec::new();
    let mut open: Vec<Option<usize>> = Vec::new();
    let mut i = 0;
    let mut class_depth = 0usize;
    while i < bytes.len() {
        match bytes[i] {
            b'\\' => i += 1,
            b'[' => class_depth += 1,
            b']' if class_depth > 0 => class_depth -= 1,
            b'(' if class_depth == 0 => {
                if opens_capture(&source[i..]) {
                    groups.push(Group {
                        span: i..i,
                        has_macro: false,
                    });
                    open.push(Some(groups.len() - 1));
                } else {
                    open.push(None);
                }
            }
            b')' if class_depth == 0 => {
                if let Some(Some(g)) = open.pop() {
                    groups[g].span.end = i + 1;
                }
            }
            _ => {}
        }
        i += 1;
    }
    for &m in macros {
        let innermost = groups
            .iter()
            .enumerate()
            .filter(|(_, g)| g.span.contains(&m))
            .max_by_key(|(_, g)| g.span.start);
        if let Some((idx, _)) = innermost {
            groups[idx].has_macro = true;
        }
    }
    groups
}

fn opens_capture(rest: &str) -> bool {
    if !rest[1..].starts_with('?') {
        return true;
    }
    let after = &rest[2..];
    after.starts_with("P<")
        || (after.starts_with('<') && !after.starts_with("<=") && !after.starts_with("<!"))
}

/// A list of literals matched as whole words: the characters just before and
/// just after a match must not be letters or digits.
#[derive(Debug, Clone)]
pub struct Literals {
    words: Vec<String>,
    automaton: AhoCorasick,
}

impl Literals {
    pub fn new(words: Vec<String>) -> Result<Literals, String> {
        // Standard semantics so that overlapping matches can be visited: a
        // match rejected for its word boundaries must not hide another.
        let automaton = AhoCorasick::builder()
            .match_kind(MatchKind::Standard)
            .build(&words)
            .map_err(|e| e.to_string())?;
        Ok(Literals { words, automaton })
    }

    pub fn words(&self) -> &[String] {
        &self.words
    }

    /// The leftmost, then longest, whole-word occurrence.
    pub fn find(&self, text: &str) -> Option<Range<usize>> {
        self.automaton
            .find_overlapping_iter(text)
            .map(|m| m.range())
            .filter(|r| is_whole_word(text, r))
            .min_by_key(|r| (r.start, usize::MAX - r.end))
    }
}

fn is_whole_word(text: &str, r: &Range<usize>) -> bool {
    let before = text[..r.start].chars().next_back();
    let after = text[r.end..].chars().next();
    let first = text[r.start..].chars().next();
    let last = text[..r.end].chars().next_back();
    // A boundary is needed only where the literal itself starts or ends with
    // a word character: "w/" may be followed by anything.
    let word = |c: Option<char>| c.is_some_and(|c| c.is_alphanumeric() || c == '_');
    let start_ok = !word(first) || !word(before);
    let end_ok = !word(last) || !word(after);
    start_ok && end_ok
}

/// A rule's way of recognising a value: literals or a pattern.
#[derive(Debug, Clone)]
pub enum Matcher {
    Literals(Literals),
    Pattern(Pattern),
}

impl Matcher {
    pub fn find(&self, text: &str) -> Result<Option<Found>, MatchError> {
        match self {
            Matcher::Literals(l) => Ok(l.find(text).map(|span| Found {
                span,
                groups: Vec::new(),
            })),
            Matcher::Pattern(p) => p.find(text),
        }
    }

    pub fn is_match(&self, text: &str) -> Result<bool, MatchError> {
        match self {
            Matcher::Literals(l) => Ok(l.find(text).is_some()),
            Matcher::Pattern(p) => p.is_match(text),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const P: DecimalMark = DecimalMark::Point;

    #[test]
    fn macros_expand_and_groups_are_found() {
        let p = Pattern::compile(r"({int})\s*-?\s*cyl|v({int})", false, P).unwrap();
        assert_eq!(p.groups().len(), 2);
        assert!(p.groups().iter().all(|g| g.has_macro));
        let f = p.find("v8 gas").unwrap().unwrap();
        assert_eq!(f.groups, vec![None, Some(1..2)]);
    }

    #[test]
    fn non_capturing_and_lookaround_groups_do_not_count() {
        let p = Pattern::compile(r"(?:a|b)(?P<n>{num})(?i:x)([a-z]+)", false, P).unwrap();
        assert_eq!(p.groups().len(), 2);
        assert!(p.groups()[0].has_macro);
        assert!(!p.groups()[1].has_macro);
        let f = Pattern::compile(r"(?<=x)({int})(?!y)", true, P).unwrap();
        assert_eq!(f.groups().len(), 1);
    }

    #[test]
    fn escaped_parentheses_and_classes_are_not_groups() {
        let p = Pattern::compile(r"\(({int})\)[()]", false, P).unwrap();
        assert_eq!(p.groups().len(), 1);
        assert_eq!(p.groups()[0].span, 2..9);
    }

    #[test]
    fn syntax_error_points_into_the_users_pattern() {
        let err = Pattern::compile(r"({int}\s*cyl", false, P).unwrap_err();
        let (_, offset) = err.pattern.unwrap();
        assert_eq!(offset, 0, "the unclosed group opens at 0");
        let err = Pattern::compile(r"{num}\s*(l|cc", false, P).unwrap_err();
        assert_eq!(err.pattern.unwrap().1, 8);
    }

    #[test]
    fn lookaround_without_fancy_is_refused_with_a_hint() {
        let err = Pattern::compile(r"turbo(?!charged)", false, P).unwrap_err();
        assert!(err.hint.unwrap().contains("fancy = true"));
        assert!(Pattern::compile(r"turbo(?!charged)", true, P).is_ok());
    }

    #[test]
    fn oversized_pattern_is_an_error_not_a_crash() {
        let err = Pattern::compile(r"\w{1000}\w{1000}\w{1000}", false, P).unwrap_err();
        assert!(err.message.contains("limit"), "{}", err.message);
    }

    #[test]
    fn catastrophic_fancy_pattern_stops_at_the_backtrack_limit() {
        // Nested quantifiers with a lookahead: exponential on a backtracker.
        let p = Pattern::compile(r"(a+)+(?!x)$", true, P).unwrap();
        let value = format!("{}b", "a".repeat(64));
        assert_eq!(p.find(&value), Err(MatchError::BacktrackLimit));
    }

    #[test]
    fn fancy_pattern_without_fancy_features_runs_in_linear_time() {
        // fancy-regex hands patterns without lookaround or backreferences to
        // the linear-time engine, so the classic (a+)+$ cannot blow up at all.
        let p = Pattern::compile(r"(a+)+$", true, P).unwrap();
        let value = format!("{}b", "a".repeat(10_000));
        assert_eq!(p.find(&value), Ok(None));
    }

    #[test]
    fn literals_match_whole_words_only() {
        let l = Literals::new(vec!["turbo".into(), "td".into(), "w/".into()]).unwrap();
        assert_eq!(l.find("4 cyl turbo"), Some(6..11));
        assert_eq!(l.find("turbodiesel"), None);
        assert_eq!(l.find("std td"), Some(4..6));
        assert_eq!(l.find("12x12 w/creeper"), Some(6..8));
    }

    #[test]
    fn rejected_overlap_does_not_hide_a_later_match() {
        let l = Literals::new(vec!["auto".into(), "automatic".into()]).unwrap();
        assert_eq!(l.find("autom automatic"), Some(6..15));
    }
}
