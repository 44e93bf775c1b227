//! The anatomy of a value: its shape signature, its tokens and its digit
//! runs. `survey` shows shapes and tokens; `cluster` builds its keys from
//! tokens and digit runs.
//!
//! # Shape notation
//!
//! A shape keeps a value's layout and drops its content:
//!
//! | in the value | in the shape |
//! |---|---|
//! | a run of n digits | `9` written n times (`9{n}` when n > 6) |
//! | a run of letters in lower case | `a` |
//! | a run of letters in upper case | `A` |
//! | a run of letters: one capital, then lower case | `Aa` |
//! | a run of letters in any other mix of case | `aA` |
//! | a run of letters without case (e.g. CJK) | `a` |
//! | a run of white space of any kind | one space |
//! | anything else (punctuation, symbols, controls) | itself |
//!
//! Digits keep their count because the count is usually the format
//! (`0750` against `750`); letters do not, because words vary in length
//! without changing the format. Combining marks continue the letter run they
//! follow.
//!
//! ```
//! use descry::shape::shape;
//! assert_eq!(shape("PMP-0750-3T"), "A-9999-9A");
//! assert_eq!(shape("6 SPD Auto"), "9 A Aa");
//! assert_eq!(shape("4.5L  V8"), "9.9A A9");
//! ```

use unicode_normalization::char::is_combining_mark;

/// The class of a character, as shapes and tokens see it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CharClass {
    Letter,
    Digit,
    Space,
    Other,
}

/// Letters (with the combining marks that follow them), digits, white
/// space, and everything else.
pub fn class(c: char) -> CharClass {
    if c.is_alphabetic() || is_combining_mark(c) {
        CharClass::Letter
    } else if c.is_numeric() {
        CharClass::Digit
    } else if c.is_whitespace() {
        CharClass::Space
    } else {
        CharClass::Other
    }
}

/// Zero-width characters: spaces and joiners that print as nothing.
pub fn is_zero_width(c: char) -> bool {
    matches!(
        c,
        '\u{200b}' | '\u{200c}' | '\u{200d}' | '\u{2060}' | '\u{feff}'
    )
}

/// Bidirectional controls: they print as nothing but reorder what follows.
pub fn is_bidi_control(c: char) -> bool {
    matches!(c, '\u{200e}' | '\u{200f}' | '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

/// Characters a terminal shows as nothing, or as a plain space although
/// they are not one: the no-break spaces, line and paragraph separators,
/// zero-width characters, bidirectional controls and the other invisible
/// format characters. Text reports escape them (with the control
/// characters), and `survey` reports them.
pub fn is_invisible(c: char) -> bool {
    is_zero_width(c)
        || is_bidi_control(c)
        || matches!(
            c,
            '\u{a0}' | '\u{2028}' | '\u{2029}' | '\u{202f}' | '\u{2061}'..='\u{2065}' | '\u{206a}'..='\u{206f}'
        )
}

/// Longest digit run written out in full in a shape.
const DIGITS_WRITTEN_OUT: usize = 6;

/// The shape signature of a value (see the module documentation).
pub fn shape(value: &str) -> String {
    let mut out = String::new();
    for run in runs(value) {
        match run.class {
            CharClass::Digit => {
                let n = run.text.chars().count();
                if n <= DIGITS_WRITTEN_OUT {
                    out.extend(std::iter::repeat_n('9', n));
                } else {
                    out.push_str(&format!("9{{{n}}}"));
                }
            }
            CharClass::Letter => out.push_str(letter_case(run.text)),
            CharClass::Space => out.push(' '),
            CharClass::Other => out.push_str(run.text),
        }
    }
    out
}

fn letter_case(word: &str) -> &'static str {
    let mut chars = word.chars().filter(|c| c.is_alphabetic());
    let first = chars.next();
    let (mut upper, mut lower) = (0usize, 0usize);
    for c in chars.clone() {
        upper += c.is_uppercase() as usize;
        lower += c.is_lowercase() as usize;
    }
    match first {
        Some(f) if f.is_uppercase() && upper == 0 && lower > 0 => "Aa",
        Some(f) if f.is_uppercase() && lower == 0 => "A",
        Some(f) if f.is_lowercase() && upper == 0 => "a",
        Some(f) if !f.is_uppercase() && !f.is_lowercase() && upper == 0 && lower == 0 => "a",
        _ => "aA",
    }
}

/// A maximal run of characters of one class; runs of `Other` are one
/// character each.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Run<'a> {
    pub class: CharClass,
    pub text: &'a str,
}

/// The runs of a value, in order.
pub fn runs(value: &str) -> impl Iterator<Item = Run<'_>> {
    let mut rest = value;
    std::iter::from_fn(move || {
        let mut chars = rest.char_indices();
        let (_, first) = chars.next()?;
        let class_of_run = class(first);
        let mut end = first.len_utf8();
        if class_of_run != CharClass::Other {
            for (i, c) in chars {
                if class(c) != class_of_run {
                    break;
                }
                end = i + c.len_utf8();
            }
        }
        let (text, tail) = rest.split_at(end);
        rest = tail;
        Some(Run {
            class: class_of_run,
            text,
        })
    })
}

/// The tokens of a (normalized) value: its runs of letters and its runs of
/// digits, in order. White space and punctuation only separate tokens.
///
/// ```
/// use descry::shape::tokens;
/// let t: Vec<&str> = tokens("4-cyl turbo 4.5l").collect();
/// assert_eq!(t, ["4", "cyl", "turbo", "4", "5", "l"]);
/// ```
pub fn tokens(value: &str) -> impl Iterator<Item = &str> {
    runs(value)
        .filter(|r| matches!(r.class, CharClass::Letter | CharClass::Digit))
        .map(|r| r.text)
}

/// A value's letters and digits alone: punctuation, symbols and white space
/// dropped (`"4-cyl."` gives `"4cyl"`).
pub fn letters_and_digits(value: &str) -> String {
    value
        .chars()
        .filter(|&c| matches!(class(c), CharClass::Letter | CharClass::Digit))
        .collect()
}

/// The digit runs of a value joined by single spaces: two values whose
/// signatures differ name different numbers (`"pmp-0750"` has `"0750"`,
/// `"pmp-0751"` has `"0751"`).
pub fn digit_signature(value: &str) -> String {
    let mut out = String::new();
    for r in runs(value).filter(|r| r.class == CharClass::Digit) {
        if !out.is_empty() {
            out.push(' ');
        }
        out.push_str(r.text);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shapes_keep_layout_and_digit_counts() {
        assert_eq!(shape("FLT-1204-A"), "A-9999-A");
        assert_eq!(shape("flt 1204 a"), "a 9999 a");
        assert_eq!(shape("P/N PMP-0750-3T-R2"), "A/A A-9999-9A-A9");
        assert_eq!(shape("6 spd auto"), "9 a a");
        assert_eq!(shape("12-Speed Powershift"), "99-Aa Aa");
        assert_eq!(shape("eXtra"), "aA");
        assert_eq!(shape("12345678"), "9{8}");
        assert_eq!(shape(""), "");
    }

    #[test]
    fn invisible_characters_are_the_spaces_zero_widths_and_format_controls() {
        let expected = |c: char| matches!(c, '\u{a0}' | '\u{200b}'..='\u{200f}' | '\u{2028}'..='\u{202f}' | '\u{2060}'..='\u{206f}' | '\u{feff}');
        for c in (0..=0x10ffff).filter_map(char::from_u32) {
            assert_eq!(is_invisible(c), expected(c), "U+{:04X}", c as u32);
        }
        assert!(is_zero_width('\u{feff}') && is_bidi_control('\u{202e}'));
        assert!(!is_invisible(' ') && !is_invisible('a'));
    }

    #[test]
    fn every_kind_of_space_is_one_space() {
        assert_eq!(shape(" 6\u{a0}\u{a0}spd\t"), " 9 a ");
    }

    #[test]
    fn punctuation_is_kept_one_character_at_a_time() {
        assert_eq!(shape("--"), "--");
        assert_eq!(shape("n/a"), "a/a");
        assert_eq!(shape("(6)"), "(9)");
    }

    #[test]
    fn accents_and_marks_stay_in_their_word() {
        // "e" + U+0301 combining acute accent is one letter run.
        assert_eq!(shape("Cre\u{301}maille\u{300}re"), "Aa");
        assert_eq!(shape("Écrou"), "Aa");
    }

    #[test]
    fn full_width_digits_are_digits() {
        // U+FF16 FULLWIDTH DIGIT SIX has Numeric_Type=Decimal (UnicodeData.txt).
        assert_eq!(shape("\u{ff16} spd"), "9 a");
    }

    #[test]
    fn tokens_split_at_class_boundaries() {
        let t: Vec<&str> = tokens("6spd/auto w/ shuttle").collect();
        assert_eq!(t, ["6", "spd", "auto", "w", "shuttle"]);
        assert_eq!(tokens("-- ? --").count(), 0);
    }

    #[test]
    fn digit_signatures_name_the_numbers() {
        assert_eq!(digit_signature("pmp-0750-3t-r2"), "0750 3 2");
        assert_eq!(digit_signature("auto 6-speed"), "6");
        assert_eq!(digit_signature("cvt"), "");
    }
}
