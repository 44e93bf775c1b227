//! A clustering method from its name and threshold, as the command line and
//! the Python package spell them.

use super::{EditLimit, Fuzzy, Method};

/// The method names, in the order `--help` lists them.
pub const METHOD_NAMES: &[&str] = &[
    "letters",
    "words",
    "qgram",
    "levenshtein",
    "osa",
    "jaro-winkler",
];

/// The method `name` with its `threshold` (the method's default when none is
/// given) and, for q-grams, the gram length `q`. The error says what to give.
pub fn method_of(name: &str, threshold: Option<&str>, q: usize) -> Result<Method, String> {
    let similarity = |default: f64| -> Result<f64, String> {
        let Some(t) = threshold else {
            return Ok(default);
        };
        match t.trim().parse::<f64>() {
            Ok(s) if s > 0.0 && s <= 1.0 => Ok(s),
            _ => Err(format!(
                "--threshold {t:?}: a similarity between 0 and 1 is needed for this method, e.g. --threshold {default}"
            )),
        }
    };
    let edits = || -> Result<EditLimit, String> {
        let Some(t) = threshold else {
            return Ok(EditLimit::Ratio(0.2));
        };
        let t = t.trim();
        if let Ok(k) = t.parse::<usize>() {
            return Ok(EditLimit::Edits(k));
        }
        match t.parse::<f64>() {
            Ok(r) if r > 0.0 && r < 1.0 => Ok(EditLimit::Ratio(r)),
            _ => Err(format!(
                "--threshold {t:?}: give a whole number of edits (e.g. 2) or a share of the longer value's length \
                 between 0 and 1 (e.g. 0.2)"
            )),
        }
    };
    Ok(match name {
        "letters" | "words" if threshold.is_some() => return Err(
            "--threshold applies to the fuzzy methods (qgram, levenshtein, osa, jaro-winkler); \
                        letters and words need none"
                .to_owned(),
        ),
        "letters" => Method::Letters,
        "words" => Method::Words,
        "qgram" => {
            if !(1..=16).contains(&q) {
                return Err(format!(
                    "--q {q}: the q-gram length must be between 1 and 16 (3 is usual)"
                ));
            }
            Method::Fuzzy(Fuzzy::QGram {
                q,
                min_similarity: similarity(0.7)?,
            })
        }
        "levenshtein" => Method::Fuzzy(Fuzzy::Levenshtein(edits()?)),
        "osa" => Method::Fuzzy(Fuzzy::Osa(edits()?)),
        "jaro-winkler" => Method::Fuzzy(Fuzzy::JaroWinkler {
            min_similarity: similarity(0.93)?,
        }),
        other => {
            return Err(format!(
                "no clustering method {other:?}; the methods are: {}",
                METHOD_NAMES.join(", ")
            ))
        }
    })
}
