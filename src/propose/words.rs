//! Words of a column: which values hold each word, spellings grouped, and
//! the flags and labels proposed from them.
//!
//! A word is a run of letters of a normalized value. Two spellings are one
//! group when one is a typo of the other (same first letter, one edit, two
//! from eight letters on, and a Jaro-Winkler similarity of at least 0.9), or
//! an abbreviation of it (`man` / `manual`, `dsl` / `diesel`: the short one
//! is a prefix, or from three letters on a subsequence with the same first
//! letter), unless the long one is the short one glued to another word of the
//! column (`powershift` is `power` + `shift`, not a spelling of `power`).

use hashbrown::{HashMap, HashSet};
use rayon::prelude::*;

use super::{rule_name, shared_rows, union, Corpus, Proposal, ProposeOptions, ProposedRule};
use crate::cluster::distance::{intersection_size, jaro_winkler, osa};
use crate::cluster::UnionFind;
use crate::shape::{runs, CharClass};

/// Words too common in descriptions to mean anything alone (common practice).
const FILLER: &[&str] = &[
    "w/", "with", "and", "or", "the", "of", "for", "in", "on", "to", "at", "by", "plus", "a", "an",
];

/// A label of kinds sorts most of a column: its cases must cover at least
/// this share of the rows. (On the real columns of the benchmark, families
/// cover 65% to 97%; the few frequent words of a column of pet names, 5%.)
const MIN_FAMILY_SHARE: f64 = 1.0 / 3.0;
/// A label case must share at most this share of its rows with each other case.
const EXCLUSIVE: f64 = 0.10;
/// Two words that share this share of the rows of both are one marker.
const TOGETHER: f64 = 0.95;

/// Which values hold each word and each two-word phrase.
pub(crate) struct WordIndex {
    /// Word (or `t/c`-style abbreviation) -> sorted entries holding it.
    pub words: HashMap<String, Vec<u32>>,
    /// Two words joined by one space or hyphen (`power shift`) -> entries.
    pub phrases: HashMap<String, Vec<u32>>,
}

impl WordIndex {
    pub fn build(corpus: &Corpus) -> WordIndex {
        let per_entry: Vec<(Vec<String>, Vec<String>)> =
            corpus.normalized.par_iter().map(|v| words_of(v)).collect();
        let mut words: HashMap<String, Vec<u32>> = HashMap::new();
        let mut phrases: HashMap<String, Vec<u32>> = HashMap::new();
        for (entry, (ws, ps)) in per_entry.into_iter().enumerate() {
            for w in ws {
                words.entry(w).or_default().push(entry as u32);
            }
            for p in ps {
                phrases.entry(p).or_default().push(entry as u32);
            }
        }
        WordIndex { words, phrases }
    }

    pub fn rows(&self, corpus: &Corpus, word: &str) -> u64 {
        self.words.get(word).map_or(0, |s| corpus.rows_of(s))
    }
}

/// The distinct words and phrases of one normalized value.
fn words_of(value: &str) -> (Vec<String>, Vec<String>) {
    let runs: Vec<_> = runs(value).collect();
    let mut words = Vec::new();
    let mut phrases = Vec::new();
    for (i, r) in runs.iter().enumerate() {
        if r.class != CharClass::Letter {
            continue;
        }
        let letter = |k: usize| runs.get(k).filter(|r| r.class == CharClass::Letter);
        let single = r.text.chars().count() == 1;
        // `t/c`, `p/s`, `w/`: a single letter, a slash, a single letter or
        // nothing, standing apart (not `16f/16r`).
        let apart = |k: Option<usize>| {
            k.and_then(|k| runs.get(k))
                .is_none_or(|r| matches!(r.class, CharClass::Space | CharClass::Other))
        };
        if single && runs.get(i + 1).is_some_and(|s| s.text == "/") && apart(i.checked_sub(1)) {
            match runs.get(i + 2) {
                Some(b)
                    if b.class == CharClass::Letter
                        && b.text.chars().count() == 1
                        && apart(Some(i + 3)) =>
                {
                    words.push(format!("{}/{}", r.text, b.text))
                }
                None => words.push(format!("{}/", r.text)),
                Some(b) if b.class == CharClass::Space => words.push(format!("{}/", r.text)),
                _ => {}
            }
        }
        // `t.e.f.c.`: single letters joined by periods are one word, with
        // its periods (the first letter of the run starts it).
        let dot = |k: usize| runs.get(k).is_some_and(|r| r.text == ".");
        let single_at = |k: usize| letter(k).is_some_and(|r| r.text.chars().count() == 1);
        if single && dot(i + 1) && single_at(i + 2) && !(i >= 2 && dot(i - 1) && single_at(i - 2)) {
            let mut k = i;
            let mut word = String::new();
            while single_at(k) {
                word.push_str(runs[k].text);
                if !dot(k + 1) {
                    break;
                }
                word.push('.');
                k += 2;
            }
            words.push(word);
        }
        words.push(r.text.to_owned());
        if let (Some(sep), Some(next)) = (runs.get(i + 1), letter(i + 2)) {
            if sep.text == " " || sep.text == "-" {
                phrases.push(format!("{}{}{}", r.text, sep.text, next.text));
            }
        }
    }
    words.sort_unstable();
    words.dedup();
    phrases.sort_unstable();
    phrases.dedup();
    (words, phrases)
}

fn letters(s: &str) -> String {
    s.chars().filter(|c| c.is_alphabetic()).collect()
}

fn is_subsequence(short: &str, long: &str) -> bool {
    let mut it = long.chars();
    short.chars().all(|c| it.any(|d| d == c))
}

/// Whether two spellings are typos of each other: same first letter, one
/// edit (two from eight letters on), Jaro-Winkler at least 0.9.
pub(crate) fn typo(a: &str, b: &str) -> bool {
    let (la, lb) = (a.chars().count(), b.chars().count());
    a.chars().next() == b.chars().next()
        && la.min(lb) >= 4
        && osa(a, b) <= if la.min(lb) >= 8 { 2 } else { 1 }
        && jaro_winkler(a, b) >= 0.9
        && !derived_pair(a, b)
}

/// Whether `a` and `b` are one stem with two endings that make different
/// words (`operated` / `operator`, `direct` / `director`, `manage` /
/// `manager`); a plural `s` is no such ending.
fn derived_pair(a: &str, b: &str) -> bool {
    if plural(a, b) || plural(b, a) {
        return false;
    }
    let stem = a
        .chars()
        .zip(b.chars())
        .take_while(|(x, y)| x == y)
        .map(|(x, _)| x.len_utf8())
        .sum::<usize>();
    // The stem may end before the common prefix does (`operat-ing`,
    // `operat-ion`).
    (3..=stem)
        .rev()
        .filter(|&cut| a.is_char_boundary(cut))
        .any(|cut| {
            let (ra, rb) = (&a[cut..], &b[cut..]);
            let ending = |r: &str| {
                r.is_empty()
                    || DERIVED.contains(&r)
                    || (a[..cut].ends_with('e') && DERIVED.contains(&format!("e{r}").as_str()))
            };
            ra != rb && ending(ra) && ending(rb)
        })
}

/// Endings that make another word of the same stem (`office` / `officer`,
/// `print` / `printed`, `account` / `accountant`): a word ending so is not
/// abbreviated by its stem (common practice of English word formation).
const DERIVED: &[&str] = &[
    "ed", "er", "ers", "ing", "al", "ant", "ants", "ent", "ical", "en", "ance", "ation", "ion",
    "ions", "ive", "or", "ors", "ist", "ity", "ly", "y", "ery", "ure",
];

fn is_vowel(c: char) -> bool {
    matches!(c, 'a' | 'e' | 'i' | 'o' | 'u')
}

/// Whether `short` abbreviates `long`: a prefix of it, or from three letters
/// on a subsequence with the same first letter that drops the vowels
/// (`mgr`, `acct`, `dsl`: no vowel after the first letter); not when `long`
/// is `short` glued to another word of the column (`known`), nor when it is
/// `short` with an ending that makes another word (`printed`, `officer`).
pub(crate) fn abbreviates(short: &str, long: &str, known: &dyn Fn(&str) -> bool) -> bool {
    let ls = short.chars().count();
    if ls < 2 || ls >= long.chars().count() || short.chars().next() != long.chars().next() {
        return false;
    }
    if !short.chars().all(char::is_alphabetic) || !long.chars().all(char::is_alphabetic) {
        return false;
    }
    if let Some(rest) = long.strip_prefix(short) {
        return !known(rest) && !derived_pair(short, long);
    }
    ls >= 3 && !short.chars().skip(1).any(is_vowel) && is_subsequence(short, long)
}

/// Whether `long` is the plural of `short` (`prints`, `boxes`).
fn plural(short: &str, long: &str) -> bool {
    long.strip_prefix(short)
        .is_some_and(|rest| rest == "s" || rest == "es")
}

/// Whether two spellings of one word are one group (see the module docs).
/// `known` tells whether a string is a word of the column.
pub(crate) fn same_word(a: &str, b: &str, known: &dyn Fn(&str) -> bool) -> bool {
    a == b || typo(a, b) || abbreviates(a, b, known) || abbreviates(b, a, known)
}

/// `h.s.t.` for an acronym-like word: two to four ASCII letters, no vowel.
fn dotted_acronym(word: &str) -> Option<String> {
    let acronym = (2..=4).contains(&word.len())
        && word
            .bytes()
            .all(|b| b.is_ascii_lowercase() && !b"aeiou".contains(&b));
    acronym.then(|| word.chars().map(|c| format!("{c}.")).collect())
}

/// A group of spellings of one word.
#[derive(Default)]
struct Group {
    /// Spellings, most rows first.
    spellings: Vec<String>,
    entries: Vec<u32>,
    rows: u64,
    /// How each spelling joined: "typo or abbreviation of ..." notes.
    grouped: Vec<String>,
    /// Words always written with it, left out of `spellings`.
    with: Vec<String>,
}

/// The name of a group: its spelling with the most rows that abbreviates
/// no other spelling of it (`manager`, not `mgr`; the phrase, not its
/// acronym). A singular, or a prefix one letter short, is no abbreviation
/// here: `luna` with more rows than `lunar` names the group.
fn group_name(g: &Group) -> &str {
    let none = |_: &str| false;
    let shortens = |w: &str, o: &str| {
        abbreviates(w, o, &none)
            && !plural(w, o)
            && !(o.starts_with(w) && o.chars().count() - w.chars().count() < 2)
    };
    g.spellings
        .iter()
        .find(|w| {
            !g.spellings
                .iter()
                .any(|o| shortens(w, o) || is_acronym_of(w, o))
        })
        .unwrap_or(&g.spellings[0])
}

/// The initials of a phrase of two words or more (`totally enclosed fan
/// cooled` gives `tefc`); empty for one word, and for letters that are
/// initials already (`c.v.t.` is no phrase).
fn initials(phrase: &str) -> String {
    let words: Vec<&str> = phrase
        .split(|c: char| !c.is_alphabetic())
        .filter(|w| !w.is_empty())
        .collect();
    if words.len() < 2 || words.iter().any(|w| w.chars().nth(1).is_none()) {
        return String::new();
    }
    words.iter().filter_map(|w| w.chars().next()).collect()
}

/// Whether `short` is the acronym of the phrase `long`: its initials
/// (`tefc`), or its initials and one letter more for the word the column
/// leaves out (`dct`, `dual clutch`).
fn is_acronym_of(short: &str, long: &str) -> bool {
    let i = initials(long);
    let short = letters(short);
    !i.is_empty() && (i == short || (short.len() == i.len() + 1 && short.starts_with(&i)))
}

/// The initials an acronym stands for: three to five letters (`tefc`), or
/// two to five single letters written with periods or slashes (`a/t`,
/// `h.s.t.`), whose letters count. A two-letter acronym looks for a phrase
/// only when it is on `min_rows` itself.
fn acronym_key(spelling: &str) -> Option<String> {
    let plain = |w: &str| w.bytes().all(|b| b.is_ascii_lowercase());
    if (3..=5).contains(&spelling.len()) && plain(spelling) {
        return Some(spelling.to_owned());
    }
    let key = letters(spelling);
    let marked = spelling.contains(['.', '/'])
        && spelling
            .split(['.', '/'])
            .filter(|p| !p.is_empty())
            .all(|p| p.len() == 1 && plain(p));
    (marked && (2..=5).contains(&key.len())).then_some(key)
}

/// Where a phrase was found for an acronym.
#[derive(Default)]
struct Found {
    /// Values holding the phrase.
    entries: Vec<u32>,
    /// Of those, values with a twin that has the acronym in the phrase's
    /// place (`7 speed dual clutch`, `7 speed dct`), or that hold the
    /// acronym too (`dual clutch (dct)`).
    twins: usize,
}

/// Polynomial hashes of a sequence of tokens and of its prefixes, so that
/// the hash of the sequence with a span replaced by one token costs O(1)
/// (the twins of the acronym search). Equal sequences hash alike; a rare
/// collision only adds a twin.
struct SequenceHash {
    /// `prefix[j]`: hash of the first `j` tokens.
    prefix: Vec<u64>,
    /// `power[j]`: BASE^j.
    power: Vec<u64>,
}

impl SequenceHash {
    const BASE: u64 = 0x100_0000_01b3;

    fn token(t: &str) -> u64 {
        use std::hash::{Hash, Hasher};
        let mut h = std::collections::hash_map::DefaultHasher::new();
        t.hash(&mut h);
        h.finish() | 1
    }

    fn of(tokens: &[&str]) -> SequenceHash {
        let mut prefix = Vec::with_capacity(tokens.len() + 1);
        let mut power = Vec::with_capacity(tokens.len() + 2);
        prefix.push(0u64);
        power.push(1u64);
        for t in tokens {
            let last = *prefix.last().unwrap_or(&0);
            prefix.push(last.wrapping_mul(Self::BASE).wrapping_add(Self::token(t)));
            let p = *power.last().unwrap_or(&1);
            power.push(p.wrapping_mul(Self::BASE));
        }
        SequenceHash { prefix, power }
    }

    /// The hash of the sequence with tokens `start..end` replaced by `token`.
    fn replaced(&self, start: usize, end: usize, token: &str) -> u64 {
        let n = self.prefix.len() - 1;
        let tail = n - end;
        let suffix = self.prefix[n].wrapping_sub(self.prefix[end].wrapping_mul(self.power[tail]));
        let head = self.prefix[start]
            .wrapping_mul(Self::BASE)
            .wrapping_add(Self::token(token));
        head.wrapping_mul(self.power[tail]).wrapping_add(suffix)
    }
}

/// Letters and numbers of a value, without the spaces and signs between.
fn skeleton(value: &str) -> Vec<&str> {
    runs(value)
        .filter(|r| matches!(r.class, CharClass::Letter | CharClass::Digit))
        .map(|r| r.text)
        .collect()
}

/// Acronyms and the phrases they stand for: a group whose main spelling is
/// three to five letters, and a phrase of as many consecutive words of the
/// column with those initials (`tefc`, `totally enclosed fan cooled`), the
/// one with the most rows, found in at least two rows. The phrase joins the
/// acronym's group; when every word of the phrase belongs to one other group
/// (words always written together), the acronym's group joins that group,
/// which is then named after the phrase. Words naming the column's own
/// subject do not count here (`a/t`, `auto trans`: `auto`).
///
/// An acronym's last letter often stands for the thing the whole column
/// describes, which its values leave out (`dct` for `dual clutch`
/// transmission). A phrase with the initials of all letters but the last
/// counts only with evidence of context, as initials of two words are
/// easily shared by chance: at least two of its values (or half of them)
/// have a twin value with the acronym in the phrase's place, or hold the
/// acronym as well; and the acronym abbreviates no longer word of the
/// column (`std` is `standard`, not `synchromesh trans`).
fn acronym_phrases(corpus: &Corpus, groups: &mut Vec<Group>, subject: &[String], min_rows: u64) {
    // One acronym written with and without periods is one group (`tefc`,
    // `t.e.f.c.`): the marked spelling joins the plain one.
    let mut a = 0;
    while a < groups.len() {
        let spelling = &groups[a].spellings[0];
        let plain = spelling.contains(['.', '/'])
            && acronym_key(spelling).is_some_and(|key| {
                groups
                    .iter()
                    .position(|g| g.spellings[0] == key)
                    .is_some_and(|h| {
                        let g = groups.remove(a);
                        let h = if h > a { h - 1 } else { h };
                        let target = &mut groups[h];
                        target.grouped.push(format!(
                            "{:?} is {:?} written with periods or slashes",
                            g.spellings[0], target.spellings[0]
                        ));
                        target.spellings.extend(g.spellings);
                        target.entries = union(&target.entries, &g.entries);
                        target.rows = corpus.rows_of(&target.entries);
                        true
                    })
            });
        if !plain {
            a += 1;
        }
    }
    // Initials looked for: the acronym's letters (`a/t` looks for `at`).
    let acronyms: HashSet<String> = groups
        .iter()
        .filter_map(|g| acronym_key(&g.spellings[0]))
        .collect();
    if acronyms.is_empty() {
        return;
    }
    // Initials -> phrase -> entries.
    let mut found: HashMap<String, HashMap<String, Vec<u32>>> = HashMap::new();
    // Initials of all letters but the last -> acronyms; not for an acronym
    // that also abbreviates a longer word of the column (`std`, `standard`).
    let none = |_: &str| false;
    // Only acronyms common enough to be a rule of their own are looked for
    // so: the search meets many windows by chance.
    let common: HashSet<String> = groups
        .iter()
        .filter(|g| g.rows >= min_rows)
        .filter_map(|g| acronym_key(&g.spellings[0]))
        .collect();
    let shortened: HashMap<String, Vec<&str>> = {
        // Single-word spellings by first letter, for the abbreviation test.
        let mut by_initial: HashMap<char, Vec<&str>> = HashMap::new();
        for w in groups.iter().flat_map(|g| &g.spellings) {
            if let (Some(c), false) = (w.chars().next(), w.contains(' ')) {
                by_initial.entry(c).or_default().push(w);
            }
        }
        let mut shortened: HashMap<String, Vec<&str>> = HashMap::new();
        for a in acronyms
            .iter()
            .filter(|a| a.len() >= 3 && common.contains(*a))
        {
            let first = a.chars().next().unwrap_or(' ');
            let abbreviation = by_initial.get(&first).is_some_and(|ws| {
                ws.iter()
                    .any(|w| w.len() > a.len() && abbreviates(a, w, &none))
            });
            if !abbreviation {
                shortened
                    .entry(a[..a.len() - 1].to_owned())
                    .or_default()
                    .push(a);
            }
        }
        shortened
    };
    // Acronym -> phrase of one word fewer -> where.
    let mut short_found: HashMap<&str, HashMap<String, Found>> = HashMap::new();
    let skeletons: HashSet<u64> = if shortened.is_empty() {
        HashSet::new()
    } else {
        corpus
            .normalized
            .iter()
            .map(|v| *SequenceHash::of(&skeleton(v)).prefix.last().unwrap_or(&0))
            .collect()
    };
    for (e, value) in corpus.normalized.iter().enumerate() {
        let words: Vec<&str> = runs(value)
            .filter(|r| r.class == CharClass::Letter)
            .map(|r| r.text)
            .collect();
        for k in 2..=5 {
            for window in words.windows(k) {
                // A phrase's words are words, not the acronym's own letters.
                if window.iter().any(|w| w.chars().nth(1).is_none()) {
                    continue;
                }
                let key: String = window.iter().filter_map(|w| w.chars().next()).collect();
                if acronyms.contains(&key) {
                    let phrase = window.join(" ");
                    let list = found.entry(key).or_default().entry(phrase).or_default();
                    if list.last() != Some(&(e as u32)) {
                        list.push(e as u32);
                    }
                }
            }
        }
        if shortened.is_empty() {
            continue;
        }
        let tokens = skeleton(value);
        let hashes = SequenceHash::of(&tokens);
        let held: HashSet<&str> = tokens.iter().copied().collect();
        for k in 2..=4 {
            for (i, window) in tokens.windows(k).enumerate() {
                if !window
                    .iter()
                    .all(|t| t.chars().count() >= 2 && t.chars().all(char::is_alphabetic))
                {
                    continue;
                }
                let key: String = window.iter().filter_map(|w| w.chars().next()).collect();
                let Some(candidates) = shortened.get(&key) else {
                    continue;
                };
                for &acronym in candidates {
                    let phrase = window.join(" ");
                    let f = short_found
                        .entry(acronym)
                        .or_default()
                        .entry(phrase)
                        .or_default();
                    if f.entries.last() == Some(&(e as u32)) {
                        continue;
                    }
                    f.entries.push(e as u32);
                    if held.contains(acronym)
                        || skeletons.contains(&hashes.replaced(i, i + k, acronym))
                    {
                        f.twins += 1;
                    }
                }
            }
        }
    }
    // Word -> the groups holding it, for the search of a phrase's home.
    // Groups merged into another are marked and dropped at the end (removing
    // each from the vector would move all the others each time).
    let mut merged = vec![false; groups.len()];
    let mut holders: HashMap<String, Vec<usize>> = HashMap::new();
    for (id, g) in groups.iter().enumerate() {
        for w in g.spellings.iter().chain(&g.with) {
            holders.entry(w.clone()).or_default().push(id);
        }
    }
    for a in 0..groups.len() {
        if merged[a] {
            continue;
        }
        // Two letters (`a/t`) are initials of many phrases by chance: such
        // an acronym must be common enough to be a rule of its own (not a
        // stray `e.g.`).
        let Some(acronym) = acronym_key(&groups[a].spellings[0])
            .filter(|key| key.len() >= 3 || groups[a].rows >= min_rows)
        else {
            continue;
        };
        let supported = |es: &Vec<u32>, rows: u64| es.len() >= 2 || rows >= min_rows;
        let best = found
            .get(&acronym)
            .and_then(|phrases| {
                phrases
                    .iter()
                    .map(|(p, es)| (p, es, corpus.rows_of(es)))
                    .filter(|(_, es, rows)| supported(es, *rows))
                    .max_by(|x, y| x.2.cmp(&y.2).then_with(|| y.0.cmp(x.0)))
                    .map(|(p, es, rows)| {
                        let note = format!("{acronym:?} is the initials of {p:?} ({rows} rows)");
                        (p.clone(), es.clone(), note)
                    })
            })
            .or_else(|| {
                short_found.get(acronym.as_str()).and_then(|phrases| {
                    phrases
                        .iter()
                        .map(|(p, f)| (p, f, corpus.rows_of(&f.entries)))
                        .filter(|(_, f, rows)| {
                            supported(&f.entries, *rows)
                                && (f.twins >= 2 || 2 * f.twins >= f.entries.len())
                        })
                        .max_by(|x, y| x.2.cmp(&y.2).then_with(|| y.0.cmp(x.0)))
                        .map(|(p, f, rows)| {
                            let note = format!(
                                "{acronym:?} is the initials of {p:?} and of a word the values leave out \
                                 ({rows} rows; {} values written both ways)",
                                f.twins
                            );
                            (p.clone(), f.entries.clone(), note)
                        })
                })
            });
        let Some((phrase, entries, note)) = best else {
            continue;
        };
        // The column's own noun is implied (`auto trans` is `auto` in a
        // transmission column).
        let words: Vec<&str> = phrase
            .split(' ')
            .filter(|w| !names_subject(w, subject))
            .collect();
        // The first group holding every word, looked up through the groups
        // that hold the first one.
        let home = words
            .first()
            .and_then(|w| holders.get(*w))
            .and_then(|candidates| {
                candidates
                    .iter()
                    .copied()
                    .filter(|&h| {
                        h != a
                            && !merged[h]
                            && words.iter().all(|w| {
                                groups[h].spellings.iter().any(|s| s == w)
                                    || groups[h].with.iter().any(|s| s == w)
                            })
                    })
                    .min()
            });
        match home {
            Some(h) => {
                let g = std::mem::take(&mut groups[a]);
                merged[a] = true;
                for s in g.spellings.iter().chain([&phrase]) {
                    holders.entry(s.clone()).or_default().push(h);
                }
                let target = &mut groups[h];
                target.spellings.insert(0, phrase);
                target.spellings.extend(g.spellings);
                target.entries = union(&union(&target.entries, &g.entries), &entries);
                target.rows = corpus.rows_of(&target.entries);
                target.grouped.extend(g.grouped);
                target.grouped.push(note);
            }
            None => {
                holders.entry(phrase.clone()).or_default().push(a);
                let g = &mut groups[a];
                g.spellings.push(phrase);
                g.entries = union(&g.entries, &entries);
                g.rows = corpus.rows_of(&g.entries);
                g.grouped.push(note);
            }
        }
    }
    let mut place = 0;
    groups.retain(|_| {
        place += 1;
        !merged[place - 1]
    });
}

/// Words of a column's name that say what the column holds rather than
/// what it describes (common practice of naming columns).
const ROLE_WORDS: &[&str] = &[
    "type",
    "types",
    "name",
    "names",
    "desc",
    "descr",
    "description",
    "code",
    "codes",
    "value",
    "values",
    "text",
    "field",
    "raw",
    "col",
    "column",
    "str",
    "info",
    "kind",
    "class",
    "category",
    "spec",
    "specs",
    "data",
    "label",
    "id",
];

/// The words of a column's name that name the thing every value describes
/// (`transmission`, `engine`; not `type` or `desc`).
fn subject_words(column: &str) -> Vec<String> {
    column
        .split(|c: char| !c.is_alphabetic())
        .map(str::to_lowercase)
        .filter(|w| w.chars().count() >= 3 && !ROLE_WORDS.contains(&w.as_str()))
        .collect()
}

/// Whether a spelling names the column's own subject: one of its words, its
/// plural, or an abbreviation of it (`trans` in a `transmission` column).
/// Such a word is on (nearly) every value in spirit, so it tells nothing.
fn names_subject(spelling: &str, subject: &[String]) -> bool {
    let none = |_: &str| false;
    !spelling.contains([' ', '-', '/'])
        && subject.iter().any(|w| {
            spelling == w
                || plural(w, spelling)
                || (spelling.chars().count() >= 3 && abbreviates(spelling, w, &none))
        })
}

/// English prefixes written as words of their own (`non synchro`, `semi
/// automatic`, `self propelled`): alone they mean nothing (common practice
/// of English word formation).
const PREFIX_WORDS: &[&str] = &[
    "non", "semi", "pre", "post", "anti", "multi", "sub", "self", "half", "quasi", "pseudo", "mid",
];

/// Flags for a prefix word with each word it is written before (`non
/// synchro` and `non-synchro` give `non_synchro`), on at least `min_rows`.
fn prefix_phrase_flags(
    corpus: &Corpus,
    index: &WordIndex,
    g: &Group,
    min_rows: u64,
    opts: &ProposeOptions,
) -> Vec<Proposal> {
    // Second word -> spellings of the phrase and their entries.
    let mut by_next: HashMap<&str, (Vec<String>, Vec<u32>)> = HashMap::new();
    for (phrase, entries) in &index.phrases {
        let Some((first, next)) = phrase.split_once([' ', '-']) else {
            continue;
        };
        if !g.spellings.iter().any(|s| s == first) || next.chars().count() < 2 {
            continue;
        }
        let e = by_next.entry(next).or_default();
        e.0.push(phrase.clone());
        e.1 = union(&e.1, entries);
    }
    let mut out: Vec<Proposal> = by_next
        .into_iter()
        .filter_map(|(next, (mut spellings, mut entries))| {
            for s in &g.spellings {
                if let Some(glued) = index.words.get(&format!("{s}{next}")) {
                    spellings.push(format!("{s}{next}"));
                    entries = union(&entries, glued);
                }
            }
            let rows = corpus.rows_of(&entries);
            (rows >= min_rows).then(|| {
                spellings.sort_by(|a, b| a.len().cmp(&b.len()).then_with(|| a.cmp(b)));
                let name = format!("{} {next}", group_name(g));
                Proposal {
                    name: rule_name(&name),
                    rule: ProposedRule::Flag {
                        any: spellings,
                        pattern: None,
                    },
                    distinct: entries.len() as u64,
                    rows,
                    examples: corpus.examples(&entries, opts.examples),
                    notes: vec![format!(
                        "{:?} is a prefix that means nothing alone: one flag per word it is written before",
                        group_name(g)
                    )],
                }
            })
        })
        .collect();
    out.sort_by(|a, b| b.rows.cmp(&a.rows).then_with(|| a.name.cmp(&b.name)));
    out
}

/// Flags and labels from the words that are not number markers.
pub(crate) fn flags_and_labels(
    corpus: &Corpus,
    index: &WordIndex,
    marker_words: &HashSet<String>,
    column: &str,
    opts: &ProposeOptions,
) -> Vec<Proposal> {
    let total = corpus.total_rows.max(1) as f64;
    let min_rows = (opts.min_share * total).ceil().max(1.0) as u64;
    let max_rows = (opts.max_share * total).floor() as u64;
    let mut groups = word_groups(corpus, index, marker_words, min_rows);
    let subject = subject_words(column);
    acronym_phrases(corpus, &mut groups, &subject, min_rows);
    // Words that name the column's own subject, and prefixes alone, are no
    // flag and no kind.
    let mut own: Vec<String> = Vec::new();
    let mut prefixes: Vec<Group> = Vec::new();
    let mut groups: Vec<Group> = groups
        .into_iter()
        .filter(|g| g.rows >= min_rows && g.rows <= max_rows)
        .filter_map(|g| {
            if g.spellings.iter().any(|s| names_subject(s, &subject)) {
                own.extend(g.spellings.iter().cloned());
                None
            } else if PREFIX_WORDS.contains(&group_name(&g)) {
                prefixes.push(g);
                None
            } else {
                Some(g)
            }
        })
        .collect();
    groups.sort_by(|a, b| {
        b.rows
            .cmp(&a.rows)
            .then_with(|| a.spellings[0].cmp(&b.spellings[0]))
    });

    let mut out = Vec::new();
    if opts.kinds.label {
        // One family: the words that exclude each other with the most rows.
        // Further "families" among the leftovers were mostly unrelated words
        // that happen not to meet; they stay flags.
        if let Some(family) = exclusive_family(corpus, &groups).filter(|f| {
            let rows: u64 = f.iter().map(|&i| groups[i].rows).sum();
            rows as f64 >= MIN_FAMILY_SHARE * total
        }) {
            let mut members: Vec<Group> = family.iter().rev().map(|&i| groups.remove(i)).collect();
            members.reverse();
            phrase_spellings(corpus, index, &mut members, &groups);
            join_other_names(corpus, &mut members, &groups);
            let mut label = label_proposal(corpus, &members, opts);
            if !own.is_empty() {
                label.notes.push(format!(
                    "words that name the column's own subject are no case: {}",
                    own.join(", ")
                ));
            }
            out.push(label);
        }
    }
    if opts.kinds.flag {
        for g in &prefixes {
            out.extend(prefix_phrase_flags(corpus, index, g, min_rows, opts));
        }
        for g in &groups {
            out.push(Proposal {
                name: rule_name(group_name(g)),
                rule: ProposedRule::Flag {
                    any: g.spellings.clone(),
                    pattern: None,
                },
                distinct: g.entries.len() as u64,
                rows: g.rows,
                examples: corpus.examples(&g.entries, opts.examples),
                notes: g.grouped.clone(),
            });
        }
    }
    out
}

/// A spelling joins a more frequent one only if it is at most this share
/// of its rows (plurals excepted): two words of similar frequency are two
/// words (`office` / `officer`).
const RARER: u64 = 3;
/// ... and if at least this share of its rows have it between the same
/// neighbours as the frequent one (`office managr` beside `office
/// manager`): a spelling with contexts of its own is a word of its own
/// (`austrian pinscher` is no `australian shepherd`).
const SAME_PLACE: f64 = 0.5;
/// ... and this share for a short form of three letters with a vowel after
/// the first (`man`, `tea`, `das`), which is often a word of its own.
const SAME_PLACE_SHORT: f64 = 0.8;

/// Where each word stands: the word before and after it in each value
/// (fillers and single letters skipped; `^` and `$` at the ends).
struct Contexts<'a> {
    /// Word -> (word before, word after, entry) for each place it stands.
    places: HashMap<&'a str, Vec<(&'a str, &'a str, u32)>>,
    before: HashMap<&'a str, HashSet<&'a str>>,
    after: HashMap<&'a str, HashSet<&'a str>>,
}

impl<'a> Contexts<'a> {
    fn build(corpus: &'a Corpus) -> Contexts<'a> {
        let mut places: HashMap<&str, Vec<(&str, &str, u32)>> = HashMap::new();
        let mut before: HashMap<&str, HashSet<&str>> = HashMap::new();
        let mut after: HashMap<&str, HashSet<&str>> = HashMap::new();
        for (e, value) in corpus.normalized.iter().enumerate() {
            let words: Vec<&str> = runs(value)
                .filter(|r| r.class == CharClass::Letter)
                .map(|r| r.text)
                .filter(|w| w.chars().count() >= 2 && !FILLER.contains(w))
                .collect();
            for (i, &w) in words.iter().enumerate() {
                let prev = if i == 0 { "^" } else { words[i - 1] };
                let next = words.get(i + 1).copied().unwrap_or("$");
                places.entry(w).or_default().push((prev, next, e as u32));
                before.entry(w).or_default().insert(prev);
                after.entry(w).or_default().insert(next);
            }
        }
        Contexts {
            places,
            before,
            after,
        }
    }

    /// Share of `rare`'s rows in which it stands where `frequent` also
    /// stands: the same word (or end) before it and after it.
    fn same_place(&self, corpus: &Corpus, rare: &str, frequent: &str) -> f64 {
        let (Some(places), Some(before), Some(after)) = (
            self.places.get(rare),
            self.before.get(frequent),
            self.after.get(frequent),
        ) else {
            return 0.0;
        };
        let mut all: Vec<u32> = places.iter().map(|p| p.2).collect();
        let mut alike: Vec<u32> = places
            .iter()
            .filter(|(prev, next, _)| before.contains(prev) && after.contains(next))
            .map(|p| p.2)
            .collect();
        all.sort_unstable();
        all.dedup();
        alike.sort_unstable();
        alike.dedup();
        corpus.rows_of(&alike) as f64 / corpus.rows_of(&all).max(1) as f64
    }
}

/// Spelling groups of the words in at least `min_rows` rows, with the rarer
/// spellings (typos, abbreviations) that belong to them.
/// A two-word phrase, the values holding it and their rows.
type PhraseRows<'a> = (&'a String, &'a Vec<u32>, u64);

fn word_groups(
    corpus: &Corpus,
    index: &WordIndex,
    marker_words: &HashSet<String>,
    min_rows: u64,
) -> Vec<Group> {
    let known = |w: &str| index.words.contains_key(w);
    let mut terms: Vec<(&String, &Vec<u32>, u64)> = index
        .words
        .iter()
        .filter(|(w, _)| {
            w.chars().count() >= 2 && !marker_words.contains(*w) && !FILLER.contains(&w.as_str())
        })
        .map(|(w, s)| (w, s, corpus.rows_of(s)))
        .collect();
    terms.sort_by(|a, b| b.2.cmp(&a.2).then_with(|| a.0.cmp(b.0)));
    let heads = terms.iter().take_while(|t| t.2 >= min_rows).count();
    let contexts = Contexts::build(corpus);
    // `rare` may join `frequent` (see RARER and SAME_PLACE).
    let evidence = |rare: usize, frequent: usize| {
        let (r, f) = (terms[rare].0.as_str(), terms[frequent].0.as_str());
        let rarer = terms[rare].2 * RARER <= terms[frequent].2 || plural(f, r) || plural(r, f);
        let short = r.chars().count() <= 3 && r.chars().skip(1).any(is_vowel);
        let needed = if short { SAME_PLACE_SHORT } else { SAME_PLACE };
        rarer && contexts.same_place(corpus, r, f) >= needed
    };
    let mut uf = UnionFind::new(terms.len());
    let mut joined: Vec<Option<(usize, &'static str)>> = vec![None; terms.len()];
    // Typos among the frequent words, with evidence.
    let links: Vec<(usize, usize, &'static str)> = (0..heads)
        .into_par_iter()
        .flat_map_iter(|i| {
            let terms = &terms;
            let evidence = &evidence;
            ((i + 1)..heads).filter_map(move |j| {
                (typo(terms[i].0, terms[j].0) && evidence(j, i)).then_some((i, j, "a typo of"))
            })
        })
        .collect();
    // A word always written with a more frequent one adds nothing to a flag
    // on that one: it is left out (`charles` beside `cavalier`).
    let together: Vec<(usize, usize)> = (0..heads)
        .into_par_iter()
        .flat_map_iter(|i| {
            let terms = &terms;
            // Terms are sorted by rows: past the first with too few rows to
            // share TOGETHER of `i`'s, none can.
            ((i + 1)..heads)
                .take_while(move |&j| terms[j].2 as f64 >= TOGETHER * terms[i].2 as f64)
                .filter_map(move |j| {
                    let shared = shared_rows(corpus, terms[i].1, terms[j].1);
                    (shared as f64 >= TOGETHER * terms[i].2.max(terms[j].2) as f64)
                        .then_some((i, j))
                })
        })
        .collect();
    let mut left_out: Vec<Option<usize>> = vec![None; terms.len()];
    for &(i, j) in &together {
        if left_out[i].is_none() {
            left_out[j].get_or_insert(i);
        }
    }
    for (i, j, how) in links {
        if left_out[i].is_none() && left_out[j].is_none() {
            uf.union(i as u32, j as u32);
            joined[j].get_or_insert((i, how));
        }
    }
    // Any other spelling joins the one frequent word it is a typo or an
    // abbreviation of, the one with the most rows, given the evidence;
    // abbreviations never chain two words together (`pwr` does not make
    // `power` a `powershift`).
    let attach: Vec<Option<(usize, &'static str)>> = (0..terms.len())
        .into_par_iter()
        .map(|j| {
            if left_out[j].is_some() {
                return None;
            }
            let w = terms[j].0;
            (0..heads)
                .filter(|&i| i != j && left_out[i].is_none())
                .find_map(|i| {
                    let h = terms[i].0;
                    let how = if j >= heads && typo(w, h) {
                        "a typo of"
                    } else if abbreviates(w, h, &known) {
                        "an abbreviation of"
                    } else {
                        return None;
                    };
                    evidence(j, i).then_some((i, how))
                })
        })
        .collect();
    for (j, found) in attach.into_iter().enumerate() {
        if let Some((i, how)) = found {
            if uf.find(i as u32) != uf.find(j as u32) {
                uf.union(i as u32, j as u32);
                joined[j] = Some((i, how));
            }
        }
    }
    // Two-word phrases by their letters (`power shift` under `powershift`),
    // most rows first, for the spellings of each group.
    let mut phrases_by_letters: HashMap<String, Vec<PhraseRows>> = HashMap::new();
    for (p, s) in &index.phrases {
        phrases_by_letters
            .entry(letters(p))
            .or_default()
            .push((p, s, corpus.rows_of(s)));
    }
    let mut by_root: HashMap<u32, Vec<usize>> = HashMap::new();
    for i in (0..terms.len()).filter(|&i| left_out[i].is_none()) {
        by_root.entry(uf.find(i as u32)).or_default().push(i);
    }
    // Members are in index order, so a group holding a frequent word starts with it.
    let mut groups: Vec<Group> = by_root
        .into_values()
        .filter(|members| members[0] < heads)
        .map(|members| {
            let mut spellings: Vec<String> = members.iter().map(|&i| terms[i].0.clone()).collect();
            let mut entries: Vec<u32> = Vec::new();
            for &i in &members {
                entries = union(&entries, terms[i].1);
            }
            // Two-word spellings with the same letters (`power shift` for `powershift`).
            let keys: HashSet<String> = spellings.iter().map(|s| letters(s)).collect();
            let mut phrases: Vec<&PhraseRows> = keys
                .iter()
                .filter_map(|k| phrases_by_letters.get(k))
                .flatten()
                .collect();
            phrases.sort_by(|a, b| b.2.cmp(&a.2).then_with(|| a.0.cmp(b.0)));
            for &&(p, s, _) in &phrases {
                spellings.push(p.clone());
                entries = union(&entries, s);
            }
            let mut grouped: Vec<String> = members
                .iter()
                .filter_map(|&j| {
                    joined[j].map(|(i, how)| {
                        format!(
                            "{:?} is {how} {:?} (at most 1/{RARER} of its rows, between the same words)",
                            terms[j].0, terms[i].0
                        )
                    })
                })
                .collect();
            for &(i, j) in &together {
                if members.contains(&i) && left_out[j] == Some(i) {
                    grouped.push(format!(
                        "{:?} is always written with {:?}, so it is left out",
                        terms[j].0, terms[i].0
                    ));
                }
            }
            // Acronyms are also written with periods (`hst`, `h.s.t.`).
            let dotted: Vec<String> = spellings
                .iter()
                .filter_map(|s| dotted_acronym(s))
                .filter(|d| !spellings.contains(d))
                .collect();
            if !dotted.is_empty() {
                grouped.push(format!(
                    "acronyms with periods added: {}",
                    dotted.join(", ")
                ));
                spellings.extend(dotted);
            }
            let rows = corpus.rows_of(&entries);
            let with = together
                .iter()
                .filter(|&&(i, j)| members.contains(&i) && left_out[j] == Some(i))
                .map(|&(_, j)| terms[j].0.clone())
                .collect();
            Group {
                spellings,
                entries,
                rows,
                grouped,
                with,
            }
        })
        .collect();
    groups.sort_by(|a, b| {
        b.rows
            .cmp(&a.rows)
            .then_with(|| a.spellings[0].cmp(&b.spellings[0]))
    });
    groups
}

/// The largest set (by rows) of at least three groups that rarely share a
/// value, each with its index in `groups` (ascending).
/// Groups are tried as cases in order of rows up to this many: a label of
/// kinds has a handful of cases, and the pairwise test would cost the square
/// of the groups on a column of many words.
const FAMILY_CANDIDATES: usize = 300;

fn exclusive_family(corpus: &Corpus, groups: &[Group]) -> Option<Vec<usize>> {
    // `groups` are sorted by rows, most first.
    let n = groups.len().min(FAMILY_CANDIDATES);
    let exclusive: Vec<Vec<bool>> = (0..n)
        .into_par_iter()
        .map(|a| {
            (0..n)
                .map(|b| {
                    let (ga, gb) = (&groups[a], &groups[b]);
                    a == b
                        || shared_rows(corpus, &ga.entries, &gb.entries) as f64
                            <= EXCLUSIVE * ga.rows.min(gb.rows) as f64
                })
                .collect()
        })
        .collect();
    let mut best: Option<(u64, Vec<usize>)> = None;
    for seed in 0..n {
        let mut family = vec![seed];
        for i in (seed + 1)..n {
            if family.iter().all(|&m| exclusive[m][i]) {
                family.push(i);
            }
        }
        if family.len() < 3 {
            continue;
        }
        let rows: u64 = family.iter().map(|&m| groups[m].rows).sum();
        if best.as_ref().is_none_or(|(r, _)| rows > *r) {
            best = Some((rows, family));
        }
    }
    best.map(|(_, f)| f)
}

/// A word written alone in at least half of its rows, and otherwise beside
/// one case only (`stepless`, `cvt stepless`), is another name of that
/// kind: it was left out of the family only because it meets that case, and
/// its spellings join it. It stays a flag too.
fn join_other_names(corpus: &Corpus, members: &mut [Group], others: &[Group]) {
    let mut all: Vec<u32> = Vec::new();
    for m in members.iter() {
        all = union(&all, &m.entries);
    }
    // Words of a case's phrases are parts of that kind's name (`shift` of
    // `power shift`), not names of their own.
    let phrase_words: HashSet<String> = members
        .iter()
        .flat_map(|m| &m.spellings)
        .filter(|s| s.contains([' ', '-', '/', '.']))
        .flat_map(|s| s.split(|c: char| !c.is_alphabetic()))
        .map(str::to_owned)
        .collect();
    for g in others {
        if g.spellings
            .iter()
            .any(|s| !s.chars().all(char::is_alphabetic) || phrase_words.contains(s))
        {
            continue;
        }
        let meets: Vec<usize> = (0..members.len())
            .filter(|&i| {
                let m = &members[i];
                shared_rows(corpus, &g.entries, &m.entries) as f64
                    > EXCLUSIVE * g.rows.min(m.rows) as f64
            })
            .collect();
        let [m] = meets[..] else { continue };
        let with_cases = shared_rows(corpus, &g.entries, &all);
        let with_m = shared_rows(corpus, &g.entries, &members[m].entries);
        // Alone in half of its rows, beside no other case, in two values or more.
        if 2 * with_cases > g.rows
            || with_cases > with_m
            || intersection_size(&g.entries, &members[m].entries) < 2
        {
            continue;
        }
        let target = &mut members[m];
        target.grouped.push(format!(
            "{:?} is written alone or beside {:?} ({with_m} of its {} rows), never beside another case: \
             another name of that kind",
            g.spellings[0],
            group_name(target),
            g.rows
        ));
        target.spellings.extend(g.spellings.iter().cloned());
        target.entries = union(&target.entries, &g.entries);
        target.rows = corpus.rows_of(&target.entries);
    }
}

/// The other ways the values write a case's two-word phrase: with the
/// other spellings of its words (`pwr shift` for `power shift`, `pwr`
/// being an abbreviation of `power`), or with its first word cut to an
/// initial and a slash (`p/shift`), each only where the values write it so.
/// Each phrase of the case is then also hyphenated, closed up when the case
/// has a closed-up spelling (`powershift`: `pwrshift`), and an initial with
/// a slash also written with a period (`p.shift`), for the next drop (a
/// compound is written open, hyphenated or closed: common practice).
fn phrase_spellings(corpus: &Corpus, index: &WordIndex, members: &mut [Group], others: &[Group]) {
    let single = |w: &String| w.chars().all(char::is_alphabetic);
    // Each word -> the one-word spellings of its group (the first holding it).
    let mut alternatives: HashMap<String, Vec<String>> = HashMap::new();
    for g in members.iter().chain(others) {
        let words: Vec<String> = g.spellings.iter().filter(|s| single(s)).cloned().collect();
        for w in &words {
            alternatives
                .entry(w.clone())
                .or_insert_with(|| words.clone());
        }
    }
    let spellings_of = |word: &str| -> Vec<String> {
        alternatives
            .get(word)
            .cloned()
            .unwrap_or_else(|| vec![word.to_owned()])
    };
    // `p/shift`: an initial, a slash and a word, standing apart.
    let mut slashed: HashMap<String, Vec<u32>> = HashMap::new();
    for (e, value) in corpus.normalized.iter().enumerate() {
        let rs: Vec<_> = runs(value).collect();
        for i in 0..rs.len().saturating_sub(2) {
            let apart = |k: Option<usize>| {
                k.and_then(|k| rs.get(k))
                    .is_none_or(|r| r.class != CharClass::Letter && r.class != CharClass::Digit)
            };
            if rs[i].class == CharClass::Letter
                && rs[i].text.chars().count() == 1
                && rs[i + 1].text == "/"
                && rs[i + 2].class == CharClass::Letter
                && rs[i + 2].text.chars().count() >= 2
                && apart(i.checked_sub(1))
                && apart(Some(i + 3))
            {
                let list = slashed
                    .entry(format!("{}/{}", rs[i].text, rs[i + 2].text))
                    .or_default();
                if list.last() != Some(&(e as u32)) {
                    list.push(e as u32);
                }
            }
        }
    }
    let taken: HashSet<String> = members
        .iter()
        .flat_map(|m| m.spellings.iter().cloned())
        .collect();
    for m in members.iter_mut() {
        let phrases: Vec<(String, String)> = m
            .spellings
            .iter()
            .filter_map(|s| {
                let (a, b) = s.split_once([' ', '-'])?;
                (single(&a.to_owned()) && single(&b.to_owned()))
                    .then(|| (a.to_owned(), b.to_owned()))
            })
            .collect();
        if phrases.is_empty() {
            continue;
        }
        let closed = m
            .spellings
            .iter()
            .any(|s| phrases.iter().any(|(a, b)| *s == format!("{a}{b}")));
        let mut found: Vec<String> = Vec::new();
        let mut entries = m.entries.clone();
        let mut add = |p: String, es: Option<&Vec<u32>>, found: &mut Vec<String>| {
            if !taken.contains(&p) && !found.contains(&p) {
                if let Some(es) = es {
                    entries = union(&entries, es);
                }
                found.push(p);
            }
        };
        for (a, b) in &phrases {
            let (alt_a, alt_b) = (spellings_of(a), spellings_of(b));
            for x in &alt_a {
                for y in &alt_b {
                    for sep in [" ", "-"] {
                        let p = format!("{x}{sep}{y}");
                        if let Some(es) = index.phrases.get(&p) {
                            add(p, Some(es), &mut found);
                        }
                    }
                }
            }
            for y in &alt_b {
                let initial: String = a.chars().take(1).collect();
                let p = format!("{initial}/{y}");
                if let Some(es) = slashed.get(&p) {
                    add(p, Some(es), &mut found);
                }
            }
        }
        if found.is_empty() {
            continue;
        }
        let mut written = found.clone();
        let mut more: Vec<String> = Vec::new();
        for p in &written {
            let variants: Vec<String> = if let Some((i, w)) = p.split_once('/') {
                vec![format!("{i}.{w}")]
            } else if let Some((x, y)) = p.split_once([' ', '-']) {
                let mut v = vec![format!("{x} {y}"), format!("{x}-{y}")];
                if closed {
                    v.push(format!("{x}{y}"));
                }
                v
            } else {
                Vec::new()
            };
            for v in variants {
                if !taken.contains(&v) && !written.contains(&v) && !more.contains(&v) {
                    more.push(v);
                }
            }
        }
        m.grouped.push(format!(
            "the phrase also written so in the values: {}",
            found.join(", ")
        ));
        if !more.is_empty() {
            m.grouped.push(format!(
                "and, for the next drop, hyphenated, closed up or with a period (common practice): {}",
                more.join(", ")
            ));
        }
        written.extend(more);
        m.spellings.extend(written);
        m.entries = entries;
        m.rows = corpus.rows_of(&m.entries);
    }
}

fn label_proposal(corpus: &Corpus, members: &[Group], opts: &ProposeOptions) -> Proposal {
    let mut entries = Vec::new();
    for m in members {
        entries = union(&entries, &m.entries);
    }
    let mut notes = vec![format!(
        "{} word groups that rarely share a value (each shares at most {:.0}% of its rows with another): one case each",
        members.len(),
        EXCLUSIVE * 100.0
    )];
    notes.extend(members.iter().flat_map(|m| m.grouped.iter().cloned()));
    Proposal {
        name: "family".to_owned(),
        rule: ProposedRule::Label {
            cases: members
                .iter()
                .map(|m| (group_name(m).to_owned(), m.spellings.clone()))
                .collect(),
            default: Some("other".to_owned()),
        },
        distinct: entries.len() as u64,
        rows: corpus.rows_of(&entries),
        examples: corpus.examples(&entries, opts.examples),
        notes,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn none(_: &str) -> bool {
        false
    }

    #[test]
    fn typos_and_abbreviations_group() {
        assert!(same_word("turbo", "trubo", &none));
        assert!(same_word("dsl", "diesel", &none));
        assert!(same_word("man", "manual", &none));
        assert!(same_word("auto", "automatic", &none));
        assert!(!same_word("gas", "diesel", &none));
        assert!(!same_word("x", "xl", &none));
        // `powershift` is `power` glued to `shift`, a word of its own.
        assert!(!same_word("power", "powershift", &|w| w == "shift"));
    }

    #[test]
    fn words_of_one_stem_are_different_words() {
        // Hand-picked look-alikes from job titles and art media (common
        // practice of English word formation: -er, -ed, -or, -ing, -ion).
        assert!(!same_word("office", "officer", &none));
        assert!(!same_word("operated", "operator", &none));
        assert!(!same_word("operating", "operation", &none));
        assert!(!same_word("direct", "director", &none));
        assert!(!same_word("manage", "manager", &none));
        assert!(!same_word("print", "printed", &none));
        // Two edits only between long words: `granite` is no `graphite`.
        assert!(!same_word("granite", "graphite", &none));
        // Dropped vowels abbreviate; kept ones in the middle do not.
        assert!(same_word("mgr", "manager", &none));
        assert!(same_word("acct", "account", &none));
        assert!(!same_word("tech", "teacher", &none));
        assert!(!same_word("des", "domestic", &none));
        // A plural is the same word.
        assert!(same_word("print", "prints", &none));
        assert!(same_word("manager", "managers", &none));
    }

    #[test]
    fn an_acronym_and_its_phrase_are_one_group_named_after_the_phrase() {
        assert_eq!(initials("totally enclosed fan cooled"), "tefc");
        assert_eq!(initials("tefc"), "");
        let g = Group {
            spellings: vec!["tefc".into(), "totally enclosed fan cooled".into()],
            entries: Vec::new(),
            rows: 0,
            grouped: Vec::new(),
            with: Vec::new(),
        };
        assert_eq!(group_name(&g), "totally enclosed fan cooled");
        // One letter more for the word the values leave out.
        assert!(is_acronym_of("dct", "dual clutch"));
        assert!(is_acronym_of("tefc", "totally enclosed fan cooled"));
        assert!(!is_acronym_of("dc", "dual clutch transmission"));
        assert!(!is_acronym_of("dcxt", "dual clutch"));
        assert!(!is_acronym_of("d", "dual"));
        let g = Group {
            spellings: vec!["dct".into(), "dual clutch".into()],
            entries: Vec::new(),
            rows: 0,
            grouped: Vec::new(),
            with: Vec::new(),
        };
        assert_eq!(group_name(&g), "dual clutch");
        // A prefix one letter short, or a singular, is no abbreviation.
        for (spellings, name) in [
            (["luna", "lunar"], "luna"),
            (["print", "prints"], "print"),
            (["mgr", "manager"], "manager"),
        ] {
            let g = Group {
                spellings: spellings.iter().map(|s| s.to_string()).collect(),
                entries: Vec::new(),
                rows: 0,
                grouped: Vec::new(),
                with: Vec::new(),
            };
            assert_eq!(group_name(&g), name);
        }
    }

    #[test]
    fn the_columns_own_noun_is_found_in_its_name() {
        assert_eq!(subject_words("transmission_type"), ["transmission"]);
        assert_eq!(subject_words("Engine Desc"), ["engine"]);
        assert!(subject_words("id").is_empty());
        let subject = subject_words("transmission");
        for w in ["transmission", "transmissions", "trans"] {
            assert!(names_subject(w, &subject), "{w}");
        }
        for w in ["tr", "manual", "trans shift", "tractor"] {
            assert!(!names_subject(w, &subject), "{w}");
        }
    }

    #[test]
    fn acronyms_get_their_dotted_spelling() {
        assert_eq!(dotted_acronym("hst").as_deref(), Some("h.s.t."));
        assert_eq!(dotted_acronym("cvt").as_deref(), Some("c.v.t."));
        assert_eq!(dotted_acronym("auto"), None);
        assert_eq!(dotted_acronym("shft"), Some("s.h.f.t.".to_owned()));
        assert_eq!(dotted_acronym("powershift"), None);
    }

    #[test]
    fn acronyms_with_periods_and_slashes_are_words_with_their_letters() {
        let (w, _) = words_of("tefc motor, t.e.f.c. frame");
        assert!(w.contains(&"t.e.f.c.".to_owned()), "{w:?}");
        let (w, _) = words_of("cast iron t.e.f.c");
        assert!(w.contains(&"t.e.f.c".to_owned()), "{w:?}");
        assert_eq!(acronym_key("t.e.f.c.").as_deref(), Some("tefc"));
        assert_eq!(acronym_key("a/t").as_deref(), Some("at"));
        assert_eq!(acronym_key("tefc").as_deref(), Some("tefc"));
        assert_eq!(acronym_key("at"), None);
        assert_eq!(acronym_key("st.john"), None);
        assert!(is_acronym_of("a/t", "automatic transmission"));
        assert!(is_acronym_of("t.e.f.c.", "totally enclosed fan cooled"));
        // Letters with periods are an acronym, not a phrase of their own.
        assert!(!is_acronym_of("cvt", "c.v.t."));
        assert!(!is_acronym_of("c.v.t.", "c.v.t."));
    }

    #[test]
    fn a_replaced_span_hashes_like_the_sequence_written_so() {
        let seq = SequenceHash::of(&["7", "speed", "dual", "clutch", "box"]);
        let twin = SequenceHash::of(&["7", "speed", "dct", "box"]);
        assert_eq!(seq.replaced(2, 4, "dct"), *twin.prefix.last().unwrap());
        let end = SequenceHash::of(&["7", "speed", "dct"]);
        let seq = SequenceHash::of(&["7", "speed", "dual", "clutch"]);
        assert_eq!(seq.replaced(2, 4, "dct"), *end.prefix.last().unwrap());
        assert_ne!(seq.replaced(1, 3, "dct"), *end.prefix.last().unwrap());
    }

    #[test]
    fn words_and_phrases_of_a_value() {
        let (w, p) = words_of("16 spd power-shift w/ creeper t/c");
        for word in ["spd", "power", "shift", "w/", "creeper", "t/c"] {
            assert!(w.contains(&word.to_owned()), "{word} in {w:?}");
        }
        assert!(p.contains(&"power-shift".to_owned()), "{p:?}");
        assert!(!w.contains(&"16".to_owned()));
    }
}
