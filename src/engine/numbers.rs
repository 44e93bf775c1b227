//! The `{int}`, `{num}` and `{count}` pattern macros: the regex text they
//! expand to and the parser that turns their captured text into a number.
//!
//! The expansion and the parser are written together so that whatever the
//! macro can match, the parser can read.

use serde::{Deserialize, Serialize};

/// The decimal separator a ruleset uses for `{num}`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
pub enum DecimalMark {
    /// `4.5`, thousands written `1,800` or `1 800`.
    #[default]
    #[serde(rename = ".")]
    Point,
    /// `4,5`, thousands written `1.800` or `1 800`.
    #[serde(rename = ",")]
    Comma,
}

impl DecimalMark {
    pub(crate) fn decimal(self) -> char {
        match self {
            DecimalMark::Point => '.',
            DecimalMark::Comma => ',',
        }
    }

    fn thousands(self) -> char {
        match self {
            DecimalMark::Point => ',',
            DecimalMark::Comma => '.',
        }
    }
}

/// A number macro found in a pattern.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Macro {
    Int,
    Num,
    /// `{int}` or an English number word from zero to ninety-nine.
    Count,
}

/// English number words, longest first within each family so that the
/// leftmost-first regex never stops at `seven` in `seventeen`.
const TEENS: &[(&str, u32)] = &[
    ("thirteen", 13),
    ("fourteen", 14),
    ("fifteen", 15),
    ("sixteen", 16),
    ("seventeen", 17),
    ("eighteen", 18),
    ("nineteen", 19),
    ("eleven", 11),
    ("twelve", 12),
    ("ten", 10),
];
const UNITS: &[(&str, u32)] = &[
    ("zero", 0),
    ("one", 1),
    ("two", 2),
    ("three", 3),
    ("four", 4),
    ("five", 5),
    ("six", 6),
    ("seven", 7),
    ("eight", 8),
    ("nine", 9),
];
const TENS: &[(&str, u32)] = &[
    ("twenty", 20),
    ("thirty", 30),
    ("forty", 40),
    ("fifty", 50),
    ("sixty", 60),
    ("seventy", 70),
    ("eighty", 80),
    ("ninety", 90),
];

fn words(list: &[(&str, u32)]) -> String {
    list.iter().map(|(w, _)| *w).collect::<Vec<_>>().join("|")
}

/// The value of an English number word (`six`, `twelve`, `thirty-two`,
/// `thirty two`), any case; `None` otherwise.
///
/// ```
/// use descry::numbers::number_word;
/// assert_eq!(number_word("Twelve"), Some(12));
/// assert_eq!(number_word("thirty-two"), Some(32));
/// assert_eq!(number_word("4"), None);
/// ```
pub fn number_word(text: &str) -> Option<u32> {
    let text = text.trim().to_lowercase();
    let find = |list: &[(&str, u32)], w: &str| list.iter().find(|(x, _)| *x == w).map(|(_, v)| *v);
    let mut parts = text.split(['-', ' ']).filter(|p| !p.is_empty());
    let first = parts.next()?;
    match (parts.next(), parts.next()) {
        (None, _) => find(UNITS, first)
            .or_else(|| find(TEENS, first))
            .or_else(|| find(TENS, first))
            .or_else(|| joined_tens(first)),
        (Some(second), None) => Some(find(TENS, first)? + find(UNITS, second).filter(|&u| u > 0)?),
        _ => None,
    }
}

/// A tens word and a unit word written together (`fortyfour`), which
/// `{count}` matches as it matches `forty-four`.
fn joined_tens(word: &str) -> Option<u32> {
    TENS.iter().find_map(|(tens, value)| {
        let unit = word.strip_prefix(tens)?;
        let unit = UNITS[1..].iter().find(|(u, _)| *u == unit)?.1;
        Some(value + unit)
    })
}

impl Macro {
    pub const ALL: [(Macro, &'static str); 3] = [
        (Macro::Int, "{int}"),
        (Macro::Num, "{num}"),
        (Macro::Count, "{count}"),
    ];

    /// Text as long as the macro's name that stands for "one number" while
    /// the user's pattern is checked, so error offsets fall in the pattern.
    pub fn placeholder(self) -> &'static str {
        match self {
            Macro::Int | Macro::Num => r"\d{1}",
            Macro::Count => r"\d{1,1}",
        }
    }

    /// The regex fragment (a non-capturing group) the macro expands to.
    ///
    /// Alternatives are ordered longest form first, because the regex crate
    /// picks the first alternative that matches (leftmost-first).
    pub fn expansion(self, mark: DecimalMark) -> String {
        let t = regex::escape(&mark.thousands().to_string());
        let d = regex::escape(&mark.decimal().to_string());
        // ASCII digits only: the regex crate's `\d` is any Unicode digit
        // (`١٢`, which NFKC keeps), and the parser reads ASCII digits.
        let grouped = format!(r"[0-9]{{1,3}}(?:{t}[0-9]{{3}})+");
        match self {
            Macro::Int => format!(r"(?:{grouped}|[0-9]+)"),
            Macro::Count => {
                let (tens, teens, units) = (words(TENS), words(TEENS), words(UNITS));
                let ones = words(&UNITS[1..]);
                format!(
                    r"(?:{grouped}|[0-9]+|(?i:\b(?:(?:{tens})(?:[- ]?(?:{ones}))?|{teens}|{units})\b))"
                )
            }
            Macro::Num => {
                // U+2044 FRACTION SLASH is what NFKC makes of "½" and friends.
                let slash = r"[/\u{2044}]";
                // A fraction has a numerator and a denominator of one or two
                // digits: `208-230/460` is three numbers, not 208 230/460.
                // The parser then takes only proper fractions with a
                // denominator of at most 64.
                format!(
                    r"(?:[0-9]+(?:-| )[0-9]{{1,2}}{slash}[0-9]{{1,2}}|[0-9]{{1,2}}{slash}[0-9]{{1,2}}|(?:{grouped}|[0-9]+)?{d}[0-9]+|{grouped}|[0-9]+)"
                )
            }
        }
    }
}

/// Parse text captured by `{int}`, `{num}` or `{count}` (or a user's own
/// digits group).
///
/// Accepts plain integers, thousands separators, decimals (also `.75`),
/// simple fractions `1/2`, mixed numbers `7-1/2` / `7 1/2`, and the number
/// words of `{count}` ([`number_word`]). A fraction must be proper, with a
/// denominator of at most [`MAX_DENOMINATOR`] (`3/4`, `15/32`, `7 1/2`):
/// `230/460` and `7-9/8` are not numbers but two.
///
/// ```
/// use descry::numbers::{parse_number, DecimalMark};
/// assert_eq!(parse_number("1,800", DecimalMark::Point), Some(1800.0));
/// assert_eq!(parse_number("7-1/2", DecimalMark::Point), Some(7.5));
/// assert_eq!(parse_number("4,5", DecimalMark::Comma), Some(4.5));
/// ```
pub fn parse_number(text: &str, mark: DecimalMark) -> Option<f64> {
    let text = text.trim();
    if text.is_empty() {
        return None;
    }
    let value = match parse_fraction_forms(text) {
        Some(value) => Some(value),
        None => parse_decimal(text, mark).or_else(|| number_word(text).map(f64::from)),
    };
    // Three hundred digits parse to infinity: that is no number to report.
    value.filter(|v| v.is_finite())
}

/// Parse a whole number; `None` when the text is not an integer (`4.5`).
pub fn parse_integer(text: &str, mark: DecimalMark) -> Option<i64> {
    let value = parse_number(text, mark)?;
    let in_range = value.fract() == 0.0 && value.abs() < 9.0e15;
    in_range.then_some(value as i64)
}

/// The largest denominator of a fraction `{num}` reads (sixty-fourths of
/// an inch are the finest fraction in common use; common practice).
pub const MAX_DENOMINATOR: u32 = 64;

fn parse_fraction_forms(text: &str) -> Option<f64> {
    let slash = text.find(['/', '\u{2044}'])?;
    let slash_len = text[slash..].chars().next()?.len_utf8();
    let (head, denominator) = (&text[..slash], &text[slash + slash_len..]);
    let denominator: f64 = digits_only(denominator)?;
    let proper = |numerator: f64| {
        (1.0..denominator).contains(&numerator) && denominator <= f64::from(MAX_DENOMINATOR)
    };
    match head.rfind(['-', ' ']) {
        Some(sep) => {
            let whole: f64 = digits_only(&head[..sep])?;
            let numerator: f64 = digits_only(&head[sep + 1..])?;
            proper(numerator).then(|| whole + numerator / denominator)
        }
        None => {
            let numerator = digits_only(head)?;
            proper(numerator).then(|| numerator / denominator)
        }
    }
}

fn digits_only(s: &str) -> Option<f64> {
    let ok = !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if ok {
        s.parse().ok()
    } else {
        None
    }
}

fn parse_decimal(text: &str, mark: DecimalMark) -> Option<f64> {
    let (int_part, frac_part) = match text.rfind(mark.decimal()) {
        Some(i) => (&text[..i], Some(&text[i + 1..])),
        None => (text, None),
    };
    let int_digits = strip_thousands(int_part, mark.thousands())?;
    let mut plain = if int_digits.is_empty() {
        "0".to_owned()
    } else {
        int_digits
    };
    if let Some(frac) = frac_part {
        if frac.is_empty() || !frac.bytes().all(|b| b.is_ascii_digit()) {
            return None;
        }
        plain.push('.');
        plain.push_str(frac);
    }
    plain.parse().ok()
}

/// Digits with optional thousands separators in groups of three, or with
/// a space as separator; `None` when the grouping is not well formed.
fn strip_thousands(s: &str, sep: char) -> Option<String> {
    if s.bytes().all(|b| b.is_ascii_digit()) {
        return Some(s.to_owned());
    }
    let used = if s.contains(sep) { sep } else { ' ' };
    let groups: Vec<&str> = s.split(used).collect();
    let first_ok = (1..=3).contains(&groups[0].len());
    let rest_ok = groups[1..].iter().all(|g| g.len() == 3);
    let digits_ok = groups.iter().all(|g| g.bytes().all(|b| b.is_ascii_digit()));
    (first_ok && rest_ok && digits_ok).then(|| groups.concat())
}

#[cfg(test)]
mod tests {
    use super::*;
    use regex::Regex;

    const P: DecimalMark = DecimalMark::Point;
    const C: DecimalMark = DecimalMark::Comma;

    fn whole_match(m: Macro, mark: DecimalMark, text: &str) -> bool {
        let re = Regex::new(&format!("^{}$", m.expansion(mark))).unwrap();
        re.is_match(text)
    }

    #[test]
    fn count_reads_digits_and_number_words() {
        let re = regex::Regex::new(&format!("^{}$", Macro::Count.expansion(P))).unwrap();
        for (text, value) in [
            ("6", 6),
            ("1,800", 1800),
            ("six", 6),
            ("Twelve", 12),
            ("seventeen", 17),
            ("seventy", 70),
            ("thirty-two", 32),
            ("thirty two", 32),
            ("ninety-nine", 99),
            ("zero", 0),
        ] {
            assert!(re.is_match(text), "{{count}} should match {text}");
            assert_eq!(parse_integer(text, P), Some(value), "{text}");
        }
        for text in ["twenty-zero", "sixs", "phone", "hundred", "4.5"] {
            assert!(!re.is_match(text), "{{count}} should not match {text}");
        }
        // Inside a longer word there is no number.
        let spd =
            regex::Regex::new(&format!(r"({})\s?-?speed", Macro::Count.expansion(P))).unwrap();
        assert_eq!(&spd.captures("eighteen-speed").unwrap()[1], "eighteen");
        assert!(spd.captures("often-speed").is_none());
    }

    #[test]
    fn integers_and_thousands() {
        assert_eq!(parse_number("12", P), Some(12.0));
        assert_eq!(parse_number("1,800", P), Some(1800.0));
        assert_eq!(parse_number("1,234,567", P), Some(1_234_567.0));
        assert_eq!(parse_number("1.800", C), Some(1800.0));
        assert_eq!(parse_number("1 800", P), Some(1800.0));
        assert_eq!(
            parse_number("1,80", P),
            None,
            "a group of two is not a thousands group"
        );
    }

    #[test]
    fn decimals_point_and_comma() {
        assert_eq!(parse_number("4.5", P), Some(4.5));
        assert_eq!(parse_number(".75", P), Some(0.75));
        assert_eq!(parse_number("1,234.5", P), Some(1234.5));
        assert_eq!(parse_number("4,5", C), Some(4.5));
        assert_eq!(parse_number("1.234,5", C), Some(1234.5));
        assert_eq!(parse_number(",75", C), Some(0.75));
    }

    #[test]
    fn fractions_and_mixed_numbers() {
        assert_eq!(parse_number("1/2", P), Some(0.5));
        assert_eq!(parse_number("7-1/2", P), Some(7.5));
        assert_eq!(parse_number("7 1/2", P), Some(7.5));
        assert_eq!(parse_number("3/4", C), Some(0.75));
        // NFKC turns U+00BD "½" into "1⁄2" with U+2044 FRACTION SLASH (UnicodeData.txt).
        assert_eq!(parse_number("1\u{2044}2", P), Some(0.5));
        assert_eq!(parse_number("1/0", P), None);
    }

    #[test]
    fn only_proper_fractions_with_small_denominators() {
        // Common practice: fractions of an inch go down to sixty-fourths.
        assert_eq!(parse_number("15/32", P), Some(15.0 / 32.0));
        assert_eq!(parse_number("7 63/64", P), Some(7.0 + 63.0 / 64.0));
        assert_eq!(parse_number("7-9/8", P), None, "improper");
        assert_eq!(parse_number("1/65", P), None, "denominator above 64");
        assert_eq!(parse_number("230/460", P), None);
        assert_eq!(parse_number("0/4", P), None);
        // `208-230/460` is three numbers: the mixed form never matches it.
        let re = Regex::new(&Macro::Num.expansion(P)).unwrap();
        let all: Vec<&str> = re.find_iter("208-230/460").map(|m| m.as_str()).collect();
        assert_eq!(all, ["208", "230", "460"]);
        let all: Vec<&str> = re.find_iter("7-1/2 x 3 3/4").map(|m| m.as_str()).collect();
        assert_eq!(all, ["7-1/2", "3 3/4"]);
    }

    #[test]
    fn macros_match_ascii_digits_only() {
        // Arabic-Indic digits are Unicode digits (`\d`) that NFKC keeps; the
        // parser reads ASCII digits, so the macros must not match them.
        for m in [Macro::Int, Macro::Num, Macro::Count] {
            assert!(!whole_match(m, P, "\u{661}\u{662}"), "{m:?}");
        }
    }

    #[test]
    fn numbers_too_large_for_f64_are_no_numbers() {
        let digits = "9".repeat(400);
        assert!(whole_match(Macro::Num, P, &digits));
        assert_eq!(parse_number(&digits, P), None);
    }

    #[test]
    fn count_words_written_together_read_as_with_a_hyphen() {
        assert!(whole_match(Macro::Count, P, "fortyfour"));
        assert_eq!(parse_integer("fortyfour", P), Some(44));
        assert_eq!(number_word("twentyzero"), None);
    }

    #[test]
    fn integers_reject_fractions() {
        assert_eq!(parse_integer("6", P), Some(6));
        assert_eq!(parse_integer("1,800", P), Some(1800));
        assert_eq!(parse_integer("4.5", P), None);
        assert_eq!(parse_integer("abc", P), None);
    }

    #[test]
    fn expansions_match_what_the_parser_reads() {
        for text in ["6", "1,800", "1,234,567"] {
            assert!(
                whole_match(Macro::Int, P, text),
                "{{int}} should match {text}"
            );
        }
        for text in [
            "6", "4.5", ".75", "1,800", "1/2", "7-1/2", "7 1/2", "1,234.5",
        ] {
            assert!(
                whole_match(Macro::Num, P, text),
                "{{num}} should match {text}"
            );
            assert!(parse_number(text, P).is_some(), "parser should read {text}");
        }
        for text in ["4,5", ",75", "1.800", "1.234,5"] {
            assert!(
                whole_match(Macro::Num, C, text),
                "{{num}} with comma should match {text}"
            );
        }
    }

    #[test]
    fn leftmost_first_takes_the_longest_number_form() {
        let re = Regex::new(&format!("({})", Macro::Num.expansion(P))).unwrap();
        let got = |s: &str| re.captures(s).unwrap()[1].to_owned();
        assert_eq!(got("7-1/2 in"), "7-1/2");
        assert_eq!(got("4.5l"), "4.5");
        assert_eq!(got("1,800 cc"), "1,800");
        assert_eq!(got("6-speed"), "6");
    }
}
