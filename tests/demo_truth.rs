//! The demo rulesets against the demo generator's truth: on the committed
//! sample they cover at least 97% of non-blank rows and agree with the true
//! features on at least 99% of the rows they cover. (Invented data: this
//! checks the demo, not the outside world.)

mod common;

use descry::evaluate::Cell;
use descry::ruleset::{Feature, Rule};
use descry::Ruleset;

struct TruthRow {
    value: String,
    rows: u64,
    features: Vec<(String, String)>,
}

fn truth(name: &str) -> Vec<TruthRow> {
    let path = common::root()
        .join("samples/truth")
        .join(format!("{name}.csv"));
    let mut reader = csv::Reader::from_path(&path).unwrap();
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_owned)
        .collect();
    reader
        .records()
        .map(|r| {
            let r = r.unwrap();
            let get = |k: &str| {
                r.get(header.iter().position(|h| h == k).unwrap())
                    .unwrap()
                    .to_owned()
            };
            let features = header
                .iter()
                .zip(r.iter())
                .filter(|(h, _)| !["value", "rows", "placeholder"].contains(&h.as_str()))
                .map(|(h, v)| (h.clone(), v.to_owned()))
                .collect();
            TruthRow {
                value: get("value"),
                rows: get("rows").parse().unwrap(),
                features,
            }
        })
        .collect()
}

/// Does descry's cell agree with the true value (empty = no value)?
fn agrees(feature: &Feature, got: Cell, truth: &str) -> bool {
    match (&feature.rule, got) {
        (_, Cell::Null) => truth.is_empty(),
        (Rule::Flag(_), Cell::Bool(b)) => {
            truth == if b { "true" } else { "false" } || (truth.is_empty() && !b)
        }
        (Rule::Count(_), Cell::Int(i)) => truth.parse::<i64>().ok() == Some(i),
        (Rule::Measure(_), Cell::Float(x)) => {
            // Sellers round: "275 ci" is 4.506 L for a nominal 4.5 L engine.
            truth
                .parse::<f64>()
                .is_ok_and(|t| (x - t).abs() <= 0.01 * t.abs().max(1.0))
        }
        (Rule::Label(l), Cell::Label(c)) => {
            let label = &l.categories[c as usize];
            label == truth || (truth.is_empty() && l.default == Some(c))
        }
        _ => false,
    }
}

fn measure(name: &str) -> (f64, f64) {
    let rules = Ruleset::from_path(&common::ruleset(&format!("{name}.toml"))).unwrap();
    let (mut considered, mut covered, mut agreeing) = (0u64, 0u64, 0u64);
    let mut disagreements = Vec::new();
    for t in truth(name) {
        let normalized = rules.normalizer.apply(&t.value);
        if normalized.is_empty() {
            continue;
        }
        considered += t.rows;
        let outcomes = rules.evaluate(&normalized);
        if !outcomes.iter().any(|o| o.fired) {
            continue;
        }
        covered += t.rows;
        let wrong: Vec<String> = rules
            .features
            .iter()
            .zip(&outcomes)
            .filter_map(|(f, o)| {
                let truth = t.features.iter().find(|(k, _)| *k == f.name)?;
                (!agrees(f, o.cell, &truth.1))
                    .then(|| format!("{}: got {:?}, true {:?}", f.name, o.cell, truth.1))
            })
            .collect();
        if wrong.is_empty() {
            agreeing += t.rows;
        } else {
            disagreements.push(format!(
                "{:?} ({} rows): {}",
                t.value,
                t.rows,
                wrong.join("; ")
            ));
        }
    }
    let coverage = covered as f64 / considered as f64;
    let agreement = agreeing as f64 / covered as f64;
    println!(
        "{name}: coverage {:.2}% of {considered} rows, agreement {:.2}% of {covered} covered rows",
        coverage * 100.0,
        agreement * 100.0
    );
    for d in disagreements.iter().take(15) {
        println!("  disagrees: {d}");
    }
    (coverage, agreement)
}

#[test]
fn demo_rulesets_cover_and_agree_with_the_truth() {
    for name in ["transmission", "engine", "part_no"] {
        let (coverage, agreement) = measure(name);
        assert!(
            coverage >= 0.97,
            "{name}: coverage {coverage:.4} below 0.97"
        );
        assert!(
            agreement >= 0.99,
            "{name}: agreement {agreement:.4} below 0.99"
        );
    }
}
