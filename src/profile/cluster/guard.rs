//! What a pair of values must share before any method may group them:
//! the precision-first rules behind every default of `cluster`.
//!
//! **Identity runs.** Some parts of a value name *which* thing it is rather
//! than *what* it is: its digit runs (`pmp-0750` / `pmp-0751`), its letter
//! runs of one or two characters (`tq-320` / `rq-320`, `kr-t` / `hr-t`,
//! `p47` / `k47`, `inpatient ward a` / `b`, `sr accountant` / `accountant`)
//! and Roman numerals from `i` to `xx` (`mk iii` / `mk iv`, `manager ii`).
//! Two values group only when these runs are equal, in the same order
//! ([`identity_signature`]); with `--digits loose` the digit runs are left
//! out of the signature and the words check.
//!
//! **Words.** The other letter runs are words. Two values whose words are
//! the same (as a multiset) name the same thing written another way. Apart
//! from that, the words that differ must pair up one to one as typos
//! ([`is_typo`]), or be one word written as two (`print on` / `printon`); a
//! word that is added, dropped or replaced by another word is a different
//! thing, however similar the strings (`plaster` / `plastic`,
//! `etching` / `engraving`, `customer service` / `customer service agent`).
//! At most one word of a value may be misspelled, or two in values of six
//! words or more.
//!
//! **Short words are stricter.** A word of fewer than 6 letters is compared
//! exactly, except for two swapped neighbours in a word of 4 or 5 (`atuo`);
//! a word of 6 letters may lose, gain or swap one letter; only from 7
//! letters may one letter be replaced by another. A word that merely
//! extends the other (`office` / `officer`, `dispatch` / `dispatcher`) is a
//! different word.
//!
//! These rules were measured against hand-labelled real columns (see
//! docs/cluster.md).
//!
//! **What the index relies on.** A pair [`may_group`] keeps has, as to its
//! words (repeats counted), one of three forms: the same words; as many
//! words on both sides, all but at most [`most_misspelled`] of them shared;
//! or the same letters in its words, the words that differ joined being
//! equal. The word filter of the index (see `words.rs`) finds the pairs of
//! long values through these forms alone.

use crate::shape::{runs, CharClass};

use super::distance::{levenshtein, osa};
use super::Digits;

/// Roman numerals from 1 to 20, the ones that number models and levels.
const ROMAN: [&str; 20] = [
    "i", "ii", "iii", "iv", "v", "vi", "vii", "viii", "ix", "x", "xi", "xii", "xiii", "xiv", "xv",
    "xvi", "xvii", "xviii", "xix", "xx",
];

/// The shortest word that may be misspelled at all (by a swap).
const SHORTEST_SWAP: usize = 4;
/// The shortest word that may lose or gain a letter.
const SHORTEST_EDIT: usize = 6;
/// The shortest word in which one letter may replace another.
const SHORTEST_SUBSTITUTION: usize = 7;

/// Is this letter run part of a value's identity (a letter code or a
/// numeral) rather than a word?
pub fn is_identity_letters(run: &str) -> bool {
    run.chars().count() <= 2 || ROMAN.contains(&run)
}

/// A value split into identity runs and words.
struct Parts<'a> {
    identity: Vec<&'a str>,
    words: Vec<&'a str>,
}

fn parts(normalized: &str, digits: Digits) -> Parts<'_> {
    let mut p = Parts {
        identity: Vec::new(),
        words: Vec::new(),
    };
    for r in runs(normalized) {
        match r.class {
            CharClass::Digit if digits == Digits::Strict => p.identity.push(r.text),
            CharClass::Letter if is_identity_letters(r.text) => p.identity.push(r.text),
            CharClass::Letter => p.words.push(r.text),
            _ => {}
        }
    }
    p
}

/// The identity runs of a (normalized) value, in order, joined by spaces:
/// values with different signatures are never grouped.
pub fn identity_signature(normalized: &str, digits: Digits) -> String {
    parts(normalized, digits).identity.join(" ")
}

/// The words of a (normalized) value, in order: its letter runs that are
/// not identity runs.
pub fn words(normalized: &str, digits: Digits) -> Vec<&str> {
    parts(normalized, digits).words
}

/// How many words of a value of `words` words may be misspelled.
pub fn most_misspelled(words: usize) -> usize {
    if words >= 6 {
        2
    } else {
        1
    }
}

/// The words of a value, sorted, repeats kept: values with equal word keys
/// (and equal identity signatures) hold the same words in any order.
pub fn word_key(normalized: &str, digits: Digits) -> String {
    let mut words = parts(normalized, digits).words;
    words.sort_unstable();
    words.join(" ")
}

/// May `a` and `b` (normalized) name the same thing? Both the identity
/// runs and the words must agree, as the module documentation says.
pub fn may_group(a: &str, b: &str, digits: Digits) -> bool {
    let (pa, pb) = (parts(a, digits), parts(b, digits));
    if pa.identity != pb.identity {
        return false;
    }
    let (only_a, only_b) = unshared(&pa.words, &pb.words);
    if only_a.is_empty() && only_b.is_empty() {
        return true;
    }
    if only_a.concat() == only_b.concat() {
        return true; // one word written as two, or two as one
    }
    let most = most_misspelled(pa.words.len().max(pb.words.len()));
    only_a.len() == only_b.len()
        && only_a.len() <= most
        && only_a.iter().zip(&only_b).all(|(x, y)| is_typo(x, y))
}

/// The words of each list that the other lacks (multisets), in order.
fn unshared<'a>(a: &[&'a str], b: &[&'a str]) -> (Vec<&'a str>, Vec<&'a str>) {
    let mut rest_b: Vec<&str> = b.to_vec();
    let mut only_a = Vec::new();
    for w in a {
        match rest_b.iter().position(|x| x == w) {
            Some(i) => {
                rest_b.remove(i);
            }
            None => only_a.push(*w),
        }
    }
    (only_a, rest_b)
}

/// Is one of two different words a misspelling of the other? One edit at
/// most, stricter on short words (see the module documentation).
pub fn is_typo(a: &str, b: &str) -> bool {
    if a.starts_with(b) || b.starts_with(a) {
        return false; // an extension is another word
    }
    let (la, lb) = (a.chars().count(), b.chars().count());
    let shorter = la.min(lb);
    if shorter < SHORTEST_SWAP || osa(a, b) != 1 {
        return false;
    }
    let swap = la == lb && levenshtein(a, b) == 2;
    let substitution = la == lb && !swap;
    if swap {
        true
    } else if substitution {
        shorter >= SHORTEST_SUBSTITUTION
    } else {
        shorter >= SHORTEST_EDIT
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn group(a: &str, b: &str) -> bool {
        may_group(a, b, Digits::Strict)
    }

    #[test]
    fn letter_codes_and_numerals_are_identity() {
        for (a, b) in [
            ("tq-320", "rq-320"),
            ("mk iii", "mk iv"),
            ("kr-t", "hr-t"),
            ("p47", "k47"),
            ("inpatient ward a", "inpatient ward b"),
            ("manager ii", "manager"),
            ("sr accountant", "accountant"),
        ] {
            assert!(!group(a, b), "{a} / {b}");
        }
        assert!(group("mk iii turbo", "mk-iii turbo"));
    }

    #[test]
    fn a_changed_word_is_not_a_typo() {
        for (a, b) in [
            ("plaster on board", "plastic on board"),
            ("etching on paper", "engraving on paper"),
            ("customer service", "customer service agent"),
            ("office", "officer"),
            ("aslt", "daslt"),
            ("burgb", "burgd"),
            ("crvehd", "crvehi"),
            ("truck driver", "towtruck driver"),
        ] {
            assert!(!group(a, b), "{a} / {b}");
        }
    }

    #[test]
    fn typos_order_and_spacing_are_the_same_thing() {
        for (a, b) in [
            ("maintenance", "maintenence"),
            ("office manager", "office managetr"),
            ("6 spd auto", "6 spd atuo"),
            ("etching and aquatint", "aquatint and etching"),
            ("screenprint on paper", "screen print on paper"),
            ("pot bellied", "pot-bellied"),
        ] {
            assert!(group(a, b), "{a} / {b}");
        }
    }

    #[test]
    fn repeated_words_count() {
        assert_ne!(
            word_key("etching on paper", Digits::Strict),
            word_key("etching on paper on paper", Digits::Strict)
        );
        assert_eq!(word_key("bbb aaa a aaa", Digits::Strict), "aaa aaa bbb");
    }

    #[test]
    fn loose_digits_leave_digits_out() {
        assert_eq!(
            identity_signature("pmp-0750-3t", Digits::Strict),
            "0750 3 t"
        );
        assert_eq!(identity_signature("pmp-0750-3t", Digits::Loose), "t");
        assert!(may_group("pmp-0750", "pmp-0751", Digits::Loose));
    }
}
