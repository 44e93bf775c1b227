//! The distances and similarities `cluster` compares values with, on
//! Unicode scalar values (`char`), not bytes.
//!
//! Levenshtein, optimal string alignment and Jaro-Winkler come from the
//! `rapidfuzz` crate: bit-parallel algorithms (Hyyrö's for the edit
//! distances), measured faster than `strsim` and `triple_accel` on this
//! workload (`cargo run --release --example distance_crates`; figures in the
//! docs/benchmarks.md). The q-gram Jaccard similarity is computed here.
//!
//! ```
//! use descry::cluster::distance::{jaro_winkler, levenshtein, osa, qgram_jaccard};
//! assert_eq!(levenshtein("kitten", "sitting"), 3);
//! assert_eq!(osa("ca", "ac"), 1);
//! assert!((jaro_winkler("martha", "marhta") - 0.9611).abs() < 1e-4);
//! assert_eq!(qgram_jaccard("abcd", "abce", 2), 0.5);
//! ```

use rapidfuzz::distance::{jaro_winkler as rf_jw, levenshtein as rf_lev, osa as rf_osa};

/// The Winkler prefix scale: 0.1 per common leading character, at most four.
pub const PREFIX_WEIGHT: f64 = 0.1;
/// Winkler's bonus is added only above this Jaro similarity.
pub const BOOST_THRESHOLD: f64 = 0.7;

/// Levenshtein distance: insertions, deletions and substitutions, one each.
pub fn levenshtein(a: &str, b: &str) -> usize {
    rf_lev::distance(a.chars(), b.chars())
}

/// Optimal string alignment distance (restricted Damerau-Levenshtein):
/// Levenshtein plus transposition of two neighbouring characters, where no
/// substring is edited twice.
pub fn osa(a: &str, b: &str) -> usize {
    rf_osa::distance(a.chars(), b.chars())
}

/// Jaro-Winkler similarity with prefix scale [`PREFIX_WEIGHT`], the bonus
/// applied above a Jaro similarity of [`BOOST_THRESHOLD`].
pub fn jaro_winkler(a: &str, b: &str) -> f64 {
    rf_jw::similarity_with_args(
        a.chars(),
        b.chars(),
        &rf_jw::Args::default().prefix_weight(PREFIX_WEIGHT),
    )
}

/// Jaccard similarity of the sets of character q-grams: shared q-grams over
/// all distinct q-grams. A value shorter than `q` characters is its own
/// single q-gram; two empty values are identical (1.0).
pub fn qgram_jaccard(a: &str, b: &str, q: usize) -> f64 {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let mut ga = qgram_set(&a, q);
    let mut gb = qgram_set(&b, q);
    ga.sort_unstable();
    gb.sort_unstable();
    jaccard_sorted(&ga, &gb)
}

/// The distinct q-grams of a value (shorter than `q`: the value itself),
/// in no particular order.
pub fn qgram_set(chars: &[char], q: usize) -> Vec<&[char]> {
    let mut grams: Vec<&[char]> = if chars.len() < q {
        vec![chars]
    } else {
        chars.windows(q).collect()
    };
    grams.sort_unstable();
    grams.dedup();
    grams
}

/// Jaccard similarity of two sorted, duplicate-free lists.
pub fn jaccard_sorted<T: Ord>(a: &[T], b: &[T]) -> f64 {
    if a.is_empty() && b.is_empty() {
        return 1.0;
    }
    let shared = intersection_size(a, b);
    shared as f64 / (a.len() + b.len() - shared) as f64
}

/// Size of the intersection of two sorted, duplicate-free lists.
pub fn intersection_size<T: Ord>(a: &[T], b: &[T]) -> usize {
    let (mut i, mut j, mut n) = (0, 0, 0);
    while i < a.len() && j < b.len() {
        match a[i].cmp(&b[j]) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                n += 1;
                i += 1;
                j += 1;
            }
        }
    }
    n
}

/// One value compared with many: the pattern is prepared once (the
/// bit-parallel match vectors), then each comparison stops as soon as the
/// limit cannot be met.
pub enum Comparator {
    Levenshtein(rf_lev::BatchComparator<char>),
    Osa(rf_osa::BatchComparator<char>),
    JaroWinkler(rf_jw::BatchComparator<char>),
}

impl Comparator {
    pub fn levenshtein(a: &[char]) -> Self {
        Comparator::Levenshtein(rf_lev::BatchComparator::new(a.iter().copied()))
    }

    pub fn osa(a: &[char]) -> Self {
        Comparator::Osa(rf_osa::BatchComparator::new(a.iter().copied()))
    }

    pub fn jaro_winkler(a: &[char]) -> Self {
        Comparator::JaroWinkler(rf_jw::BatchComparator::new(a.iter().copied()))
    }

    /// The edit distance to `b` if it is at most `max`.
    pub fn distance_within(&self, b: &[char], max: usize) -> Option<usize> {
        let b = b.iter().copied();
        match self {
            Comparator::Levenshtein(c) => {
                c.distance_with_args(b, &rf_lev::Args::default().score_cutoff(max))
            }
            Comparator::Osa(c) => {
                c.distance_with_args(b, &rf_osa::Args::default().score_cutoff(max))
            }
            Comparator::JaroWinkler(_) => unreachable!("Jaro-Winkler is a similarity"),
        }
    }

    /// The similarity to `b` if it is at least `min`.
    pub fn similarity_at_least(&self, b: &[char], min: f64) -> Option<f64> {
        match self {
            Comparator::JaroWinkler(c) => c.similarity_with_args(
                b.iter().copied(),
                &rf_jw::Args::default()
                    .prefix_weight(PREFIX_WEIGHT)
                    .score_cutoff(min),
            ),
            _ => unreachable!("edit distances are distances"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levenshtein_textbook_example() {
        // kitten -> sitten -> sittin -> sitting: the textbook example, e.g.
        // the Wikipedia article "Levenshtein distance".
        assert_eq!(levenshtein("kitten", "sitting"), 3);
        assert_eq!(levenshtein("", "abc"), 3);
        assert_eq!(levenshtein("flaw", "lawn"), 2);
    }

    #[test]
    fn osa_is_not_the_unrestricted_damerau_distance() {
        // The standard example (Wikipedia, "Damerau-Levenshtein distance"):
        // OSA("CA", "ABC") = 3 because no substring may be edited twice,
        // while the unrestricted distance is 2 (CA -> AC -> ABC).
        assert_eq!(osa("CA", "ABC"), 3);
        assert_eq!(osa("ab", "ba"), 1);
        assert_eq!(levenshtein("ab", "ba"), 2);
    }

    #[test]
    fn jaro_winkler_martha() {
        // Winkler's worked example as reproduced in many references (from
        // memory): Jaro(MARTHA, MARHTA) = 0.944, Jaro-Winkler = 0.961.
        let jw = jaro_winkler("MARTHA", "MARHTA");
        assert!((jw - 0.961).abs() < 0.0005, "{jw}");
        // Exactly: m = 6, t = 1, prefix 3: (1 + 1 + 5/6)/3 = 17/18, then
        // 17/18 + 3 * 0.1 * (1 - 17/18) = 0.96111...
        assert!((jw - (17.0 / 18.0 + 0.3 / 18.0)).abs() < 1e-12);
    }

    #[test]
    fn jaro_winkler_dixon() {
        // The other common worked example (from memory): DIXON / DICKSONX,
        // Jaro 0.767, Jaro-Winkler 0.813.
        let jw = jaro_winkler("DIXON", "DICKSONX");
        assert!((jw - 0.813).abs() < 0.0005, "{jw}");
    }

    #[test]
    fn qgram_jaccard_by_hand() {
        // {ab, bc, cd} and {ab, bc, ce}: 2 shared of 4.
        assert_eq!(qgram_jaccard("abcd", "abce", 2), 0.5);
        assert_eq!(qgram_jaccard("ab", "ab", 3), 1.0);
        assert_eq!(qgram_jaccard("ab", "abc", 3), 0.0);
        assert_eq!(qgram_jaccard("aaaa", "aa", 2), 1.0);
    }

    #[test]
    fn comparators_agree_with_the_plain_functions() {
        let a: Vec<char> = "6 spd auto".chars().collect();
        let b: Vec<char> = "6 sdp atuo".chars().collect();
        assert_eq!(
            Comparator::levenshtein(&a).distance_within(&b, 9),
            Some(levenshtein("6 spd auto", "6 sdp atuo"))
        );
        assert_eq!(
            Comparator::osa(&a).distance_within(&b, 9),
            Some(osa("6 spd auto", "6 sdp atuo"))
        );
        assert_eq!(Comparator::osa(&a).distance_within(&b, 1), None);
        let jw = Comparator::jaro_winkler(&a)
            .similarity_at_least(&b, 0.0)
            .unwrap();
        assert!((jw - jaro_winkler("6 spd auto", "6 sdp atuo")).abs() < 1e-15);
    }
}
