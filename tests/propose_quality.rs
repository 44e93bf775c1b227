//! How good an unedited `propose` draft is, on data it was not drafted from.
//!
//! The draft is proposed from the demo generator's standard spellings
//! (seed 7) and scored on two drops drawn with other seeds (8 and 9) and the
//! extended variants: formats the drafting data never contains (`six-speed`,
//! `(6)`, `cyl x4`, `straight-6`, `4 1/2 L`, `1,800 cc`, `PS`, ...). Scored
//! against the generator's truth:
//!
//! - coverage: share of non-blank rows on which at least one rule fires;
//! - for every true numeric attribute, the proposed count or measure that
//!   agrees best with it, and its agreement on the rows where the truth has
//!   a value (measures within 1%: sellers round);
//! - for every true family attribute, the best proposed label's agreement,
//!   each proposed category read as the true family it most often goes
//!   with (proposed labels are named after spellings, not families).
//!
//! The figures are printed (`cargo test --release --test propose_quality --
//! --nocapture`) and written in docs/propose.md; the floors asserted below sit a
//! little under them so that a regression fails. This is the demo scenario
//! (invented data), not an outside-world check.

use std::collections::BTreeMap;

use descry::evaluate::Cell;
use descry::propose::{propose, ProposeOptions};
use descry::ruleset::Rule;
use descry::sample::{generate, Entry, Sample, SampleOptions, Variants};
use descry::{CoverageReport, Ruleset, Vocabulary};

const ROWS: usize = 20_000;
/// Seeds of the drops the draft is scored on (it is drafted from seed 7).
const DROP_SEEDS: [u64; 2] = [8, 9];

fn sample(seed: u64, variants: Variants) -> Sample {
    generate(&SampleOptions {
        rows: ROWS,
        seed,
        variants,
        ..SampleOptions::default()
    })
}

type Numeric<F> = (&'static str, fn(&F) -> Option<f64>);
type Family<F> = (&'static str, fn(&F) -> Option<String>);

struct Scores {
    coverage: f64,
    numeric: Vec<(String, String, f64)>,
    family: Vec<(String, String, f64)>,
    /// Disagreements of the best rules, most rows first.
    notes: Vec<String>,
}

fn vocabulary<'a>(values: impl Iterator<Item = Option<&'a str>>) -> Vocabulary {
    Vocabulary::build(values)
}

fn score<F>(
    rules: &Ruleset,
    vocab: &Vocabulary,
    truth: &BTreeMap<String, Entry<F>>,
    numeric: &[Numeric<F>],
    family: &[Family<F>],
) -> Scores {
    let eval = rules.evaluate_all(&vocab.values);
    let report = CoverageReport::build(rules, "column", vocab, &eval);
    let cell = |value: usize, feature: usize| eval.outcomes[value][feature].cell;
    let mut scores = Scores {
        coverage: report.coverage.row_share,
        numeric: Vec::new(),
        family: Vec::new(),
        notes: Vec::new(),
    };
    for (attr, get) in numeric {
        let mut best = ("(none)".to_owned(), 0.0);
        for (f, feature) in rules.features.iter().enumerate() {
            let (mut rows, mut agree) = (0u64, 0u64);
            for (v, value) in vocab.values.iter().enumerate() {
                let Some(t) = truth[value].features.as_ref().and_then(get) else {
                    continue;
                };
                rows += vocab.counts[v];
                let ok = match (&feature.rule, cell(v, f)) {
                    (Rule::Count(_), Cell::Int(i)) => i as f64 == t,
                    (Rule::Measure(_), Cell::Float(x)) => (x - t).abs() <= 0.01 * t.abs().max(1.0),
                    _ => false,
                };
                agree += u64::from(ok) * vocab.counts[v];
            }
            let share = agree as f64 / rows.max(1) as f64;
            if share > best.1 {
                best = (feature.name.clone(), share);
            }
        }
        // The disagreements of the best rule with the most rows, to read.
        if let Some(f) = rules.features.iter().position(|x| x.name == best.0) {
            let mut wrong: Vec<(u64, String)> = Vec::new();
            for (v, value) in vocab.values.iter().enumerate() {
                let Some(t) = truth[value].features.as_ref().and_then(get) else {
                    continue;
                };
                let ok = match cell(v, f) {
                    Cell::Int(i) => i as f64 == t,
                    Cell::Float(x) => (x - t).abs() <= 0.01 * t.abs().max(1.0),
                    _ => false,
                };
                if !ok {
                    wrong.push((
                        vocab.counts[v],
                        format!("{value:?}: true {t}, read {:?}", cell(v, f)),
                    ));
                }
            }
            wrong.sort_by(|a, b| b.0.cmp(&a.0).then_with(|| a.1.cmp(&b.1)));
            for (n, w) in wrong.iter().take(8) {
                scores.notes.push(format!("{attr}: {n} rows {w}"));
            }
        }
        scores.numeric.push((attr.to_string(), best.0, best.1));
    }
    for (attr, get) in family {
        let mut best = ("(none)".to_owned(), 0.0);
        let mut best_wrong: Vec<(u64, String)> = Vec::new();
        for (f, feature) in rules.features.iter().enumerate() {
            if !matches!(feature.rule, Rule::Label(_)) {
                continue;
            }
            // Rows per (proposed category, true family).
            let mut together: BTreeMap<(Option<u32>, String), u64> = BTreeMap::new();
            let mut rows = 0u64;
            for (v, value) in vocab.values.iter().enumerate() {
                let Some(t) = truth[value].features.as_ref().and_then(get) else {
                    continue;
                };
                rows += vocab.counts[v];
                let c = match cell(v, f) {
                    Cell::Label(c) => Some(c),
                    _ => None,
                };
                *together.entry((c, t)).or_default() += vocab.counts[v];
            }
            let mut majority: BTreeMap<Option<u32>, u64> = BTreeMap::new();
            for ((c, _), n) in &together {
                let m = majority.entry(*c).or_default();
                *m = (*m).max(*n);
            }
            let agree: u64 = majority.values().sum();
            let share = agree as f64 / rows.max(1) as f64;
            if share > best.1 {
                best = (feature.name.clone(), share);
                // The true family each category is read as.
                let mut read_as: BTreeMap<Option<u32>, (u64, &str)> = BTreeMap::new();
                for ((c, t), n) in &together {
                    let e = read_as.entry(*c).or_insert((0, t));
                    if *n > e.0 {
                        *e = (*n, t);
                    }
                }
                best_wrong.clear();
                for (v, value) in vocab.values.iter().enumerate() {
                    let Some(t) = truth[value].features.as_ref().and_then(get) else {
                        continue;
                    };
                    let c = match cell(v, f) {
                        Cell::Label(c) => Some(c),
                        _ => None,
                    };
                    let read = read_as[&c].1;
                    if read != t {
                        best_wrong.push((
                            vocab.counts[v],
                            format!("{value:?}: true {t}, read as {read}"),
                        ));
                    }
                }
            }
        }
        best_wrong.sort_by(|a, b| b.0.cmp(&a.0).then_with(|| a.1.cmp(&b.1)));
        for (n, w) in best_wrong.iter().take(8) {
            scores.notes.push(format!("{attr}: {n} rows {w}"));
        }
        scores.family.push((attr.to_string(), best.0, best.1));
    }
    scores
}

fn run<F>(
    column: &str,
    pick: fn(&descry::sample::Listing) -> Option<&str>,
    truth: fn(&Sample) -> &BTreeMap<String, Entry<F>>,
    numeric: &[Numeric<F>],
    family: &[Family<F>],
) -> Vec<Scores> {
    let drafting = sample(7, Variants::Standard);
    let vocab = vocabulary(drafting.listings.iter().map(pick));
    let draft = propose(&vocab, column, &ProposeOptions::default()).unwrap();
    let toml = draft.to_toml();
    let rules = Ruleset::from_toml(&toml, "draft.toml").expect("the draft loads unchanged");
    let inside = score(&rules, &vocab, truth(&drafting), numeric, family);
    // Two new drops, so that a figure is not the luck of one seed.
    let drops: Vec<(String, Scores)> = DROP_SEEDS
        .iter()
        .map(|&seed| {
            let drop = sample(seed, Variants::Extended);
            let test_vocab = vocabulary(drop.listings.iter().map(pick));
            let scores = score(&rules, &test_vocab, truth(&drop), numeric, family);
            (format!("new drop (seed {seed}, extended)"), scores)
        })
        .collect();
    println!(
        "\n== {column}: draft of {} rules from {} distinct values",
        draft.proposals.len(),
        vocab.distinct()
    );
    if std::env::var_os("DESCRY_SHOW_DRAFT").is_some() {
        println!("{toml}");
    }
    let inside_name = "drafting data (seed 7, standard)".to_owned();
    for (what, s) in
        std::iter::once((&inside_name, &inside)).chain(drops.iter().map(|(w, s)| (w, s)))
    {
        println!(
            "{column}, {what}: coverage {:.2}% of rows",
            s.coverage * 100.0
        );
        for (attr, rule, share) in s.numeric.iter().chain(&s.family) {
            println!(
                "  {attr:<16} best rule {rule:<20} agreement {:.2}%",
                share * 100.0
            );
        }
        for note in &s.notes {
            println!("    disagrees: {note}");
        }
    }
    drops.into_iter().map(|(_, s)| s).collect()
}

fn share_of(s: &Scores, attr: &str) -> f64 {
    s.numeric
        .iter()
        .chain(&s.family)
        .find(|(a, _, _)| a == attr)
        .map(|(_, _, share)| *share)
        .unwrap_or_else(|| panic!("{attr} was not scored"))
}

fn assert_floor(what: &str, got: f64, floor: f64) {
    assert!(got >= floor, "{what}: {got:.4} is below the floor {floor}");
}

#[test]
fn transmission_draft_on_a_new_drop() {
    use descry::sample::GearboxFeatures as G;
    let drops = run(
        "transmission",
        |l| l.transmission.as_deref(),
        |s| &s.truth.transmission,
        &[
            ("gears", |f: &G| f.gears.map(f64::from)),
            ("max_speed_kmh", |f: &G| f.max_speed_kmh),
        ],
        &[("kind", |f: &G| Some(f.kind.label().to_owned()))],
    );
    // Floors a little under the lowest of the two drops; the figures are in
    // docs/propose.md ("How good is an unedited draft?"). The misses are forms the
    // drafting data never shows (`(8)`, `F5/R1`, `hydraulic drive`, `autom.`).
    for s in &drops {
        assert_floor("transmission coverage", s.coverage, 0.98);
        for (attr, floor) in [("gears", 0.975), ("max_speed_kmh", 0.99), ("kind", 0.93)] {
            assert_floor(attr, share_of(s, attr), floor);
        }
    }
}

#[test]
fn engine_draft_on_a_new_drop() {
    use descry::sample::EngineFeatures as E;
    let drops = run(
        "engine",
        |l| l.engine.as_deref(),
        |s| &s.truth.engine,
        &[
            ("cylinders", |f: &E| f.cylinders.map(f64::from)),
            ("displacement_l", |f: &E| f.displacement_l),
            ("power_hp", |f: &E| f.power_hp),
        ],
        &[("fuel", |f: &E| f.fuel.map(|x| x.label().to_owned()))],
    );
    // Floors a little under the lowest of the two drops (docs/propose.md). Cylinder
    // misses are forms the drafting data never shows (`straight-8`, `4 pot`)
    // and new typos (`six-cylidner`).
    for s in &drops {
        assert_floor("engine coverage", s.coverage, 0.99);
        for (attr, floor) in [
            ("cylinders", 0.975),
            ("displacement_l", 0.99),
            ("power_hp", 0.99),
            ("fuel", 0.92),
        ] {
            assert_floor(attr, share_of(s, attr), floor);
        }
    }
}
