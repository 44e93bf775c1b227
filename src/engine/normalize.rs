//! Normalization: the form of a value that rules match against.
//!
//! A ruleset chooses its normalization once; every distinct value is
//! normalized once, before any rule sees it. The original value is kept
//! alongside for reports.

use serde::{Deserialize, Serialize};
use unicode_normalization::char::is_combining_mark;
use unicode_normalization::UnicodeNormalization;

/// Which Unicode normalization form to apply (Unicode Standard Annex #15).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum UnicodeForm {
    /// Compatibility composition: full-width digits become ASCII, ligatures split.
    #[default]
    Nfkc,
    /// Canonical composition only.
    Nfc,
    /// Leave code points as they are.
    None,
}

/// Whether to fold letter case.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum CaseFold {
    #[default]
    Lower,
    None,
}

/// The `[normalize]` table of a ruleset. Defaults are the common case:
/// NFKC, lower case, trimmed, white space collapsed, accents kept.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Normalizer {
    pub unicode: UnicodeForm,
    pub case: CaseFold,
    pub trim: bool,
    pub collapse_space: bool,
    pub strip_accents: bool,
}

impl Default for Normalizer {
    fn default() -> Self {
        Normalizer {
            unicode: UnicodeForm::Nfkc,
            case: CaseFold::Lower,
            trim: true,
            collapse_space: true,
            strip_accents: false,
        }
    }
}

impl Normalizer {
    /// A normalizer that changes nothing.
    pub fn identity() -> Self {
        Normalizer {
            unicode: UnicodeForm::None,
            case: CaseFold::None,
            trim: false,
            collapse_space: false,
            strip_accents: false,
        }
    }

    /// Normalize one value.
    ///
    /// ```
    /// use descry::Normalizer;
    /// let n = Normalizer::default();
    /// assert_eq!(n.apply("  ６\u{a0}SPD   Auto "), "6 spd auto");
    /// ```
    pub fn apply(&self, value: &str) -> String {
        if self.is_ascii_fast_path(value) {
            return self.apply_ascii(value);
        }
        let mut s: String = match self.unicode {
            UnicodeForm::Nfkc => value.nfkc().collect(),
            UnicodeForm::Nfc => value.nfc().collect(),
            UnicodeForm::None => value.to_owned(),
        };
        if self.strip_accents {
            s = strip_accents(&s, self.unicode);
        }
        if self.case == CaseFold::Lower {
            s = s.to_lowercase();
        }
        self.tidy_space(&s)
    }

    /// Pure ASCII needs no Unicode normalization: NFC and NFKC leave it unchanged.
    fn is_ascii_fast_path(&self, value: &str) -> bool {
        value.is_ascii()
    }

    /// The same steps as for any text, in one pass and one allocation. The
    /// ASCII white space of `char::is_whitespace` is space and `\t`..=`\r`
    /// (vertical tab included); trimming first and then collapsing gives
    /// what collapsing and then trimming does.
    fn apply_ascii(&self, value: &str) -> String {
        let space = |b: &u8| *b == b' ' || (b'\t'..=b'\r').contains(b);
        let mut bytes = value.as_bytes();
        if self.trim {
            let start = bytes.iter().position(|b| !space(b)).unwrap_or(bytes.len());
            let end = bytes
                .iter()
                .rposition(|b| !space(b))
                .map_or(start, |i| i + 1);
            bytes = &bytes[start..end];
        }
        let lower = self.case == CaseFold::Lower;
        let mut out = String::with_capacity(bytes.len());
        let mut in_space = false;
        for b in bytes {
            if self.collapse_space && space(b) {
                if !in_space {
                    out.push(' ');
                }
                in_space = true;
            } else {
                out.push(char::from(if lower { b.to_ascii_lowercase() } else { *b }));
                in_space = false;
            }
        }
        out
    }

    fn tidy_space(&self, s: &str) -> String {
        let s = if self.collapse_space {
            collapse_white_space(s)
        } else {
            s.to_owned()
        };
        if self.trim {
            s.trim_matches(char::is_whitespace).to_owned()
        } else {
            s
        }
    }
}

/// Replace every run of Unicode white space (including U+00A0 no-break
/// space, which `char::is_whitespace` covers) with one ASCII space.
fn collapse_white_space(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut in_space = false;
    for c in s.chars() {
        if c.is_whitespace() {
            if !in_space {
                out.push(' ');
            }
            in_space = true;
        } else {
            out.push(c);
            in_space = false;
        }
    }
    out
}

/// Remove combining marks after canonical decomposition ("é" -> "e"), then
/// recompose in the ruleset's form.
fn strip_accents(s: &str, form: UnicodeForm) -> String {
    let bare: String = s.nfd().filter(|c| !is_combining_mark(*c)).collect();
    match form {
        UnicodeForm::Nfkc => bare.nfkc().collect(),
        UnicodeForm::Nfc | UnicodeForm::None => bare.nfc().collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_fold_case_trim_and_collapse() {
        let n = Normalizer::default();
        assert_eq!(n.apply("  6  SPD\tAuto\n"), "6 spd auto");
    }

    #[test]
    fn no_break_and_other_unicode_spaces_collapse() {
        let n = Normalizer::default();
        // U+00A0 no-break space, U+2007 figure space, U+3000 ideographic space
        // are White_Space in the Unicode Character Database (PropList.txt).
        assert_eq!(n.apply("4\u{a0}cyl\u{2007}\u{3000}turbo"), "4 cyl turbo");
    }

    #[test]
    fn nfkc_examples_from_uax15() {
        let n = Normalizer::default();
        // Unicode Standard Annex #15, compatibility decomposition examples:
        // the ligature U+FB01 "ﬁ" becomes "fi"; full-width digit U+FF16 becomes "6".
        assert_eq!(n.apply("\u{fb01}lter"), "filter");
        assert_eq!(n.apply("\u{ff16} spd"), "6 spd");
        // NFC keeps compatibility characters as they are (UAX #15, Figure 6).
        let nfc = Normalizer {
            unicode: UnicodeForm::Nfc,
            ..Normalizer::default()
        };
        assert_eq!(nfc.apply("\u{ff16}"), "\u{ff16}");
        // Canonical composition: "e" + U+0301 combining acute -> U+00E9 (UAX #15, Figure 3).
        assert_eq!(nfc.apply("e\u{301}"), "\u{e9}");
    }

    #[test]
    fn accents_stripped_only_when_asked() {
        let keep = Normalizer::default();
        assert_eq!(keep.apply("Écrou"), "écrou");
        let strip = Normalizer {
            strip_accents: true,
            ..Normalizer::default()
        };
        assert_eq!(strip.apply("Écrou Crémaillère"), "ecrou cremaillere");
    }

    #[test]
    fn the_ascii_path_agrees_with_the_general_one() {
        let general = |n: &Normalizer, v: &str| {
            let mut s = v.to_owned();
            if n.case == CaseFold::Lower {
                s = s.to_lowercase();
            }
            n.tidy_space(&s)
        };
        let values = [
            "",
            " ",
            "\x0b\t\r\n\x0c",
            "  6  SPD\tAuto\n",
            "A\x0bB",
            "x ",
            " x",
            "PMP-0750 \r\n",
        ];
        for collapse_space in [true, false] {
            for trim in [true, false] {
                for case in [CaseFold::Lower, CaseFold::None] {
                    let n = Normalizer {
                        case,
                        trim,
                        collapse_space,
                        ..Normalizer::default()
                    };
                    for v in values {
                        assert_eq!(n.apply_ascii(v), general(&n, v), "{n:?} on {v:?}");
                    }
                }
            }
        }
    }

    #[test]
    fn identity_changes_nothing() {
        assert_eq!(Normalizer::identity().apply(" A  b "), " A  b ");
    }

    #[test]
    fn case_kept_when_asked() {
        let n = Normalizer {
            case: CaseFold::None,
            ..Normalizer::default()
        };
        assert_eq!(n.apply(" PMP-0750 "), "PMP-0750");
    }
}
