//! Property: evaluating once per distinct value and gathering to rows gives
//! exactly what evaluating every row on its own gives.

use descry::evaluate::Cell;
use descry::ruleset::Rule;
use descry::{encode, Ruleset, Vocabulary};
use polars::prelude::*;
use proptest::prelude::*;

const TOKENS: &[&str] = &[
    "6", "12", "spd", "Speed", "auto", "MANUAL", "turbo", "4.5L", "1,800cc", "cyl", "-", "  ",
    "\u{a0}", "ｖ8", "x",
];

const RULE_POOL: &[&str] = &[
    "[[flag]]\nname = 'f_auto'\nany = ['auto', 'automatic']\n",
    "[[flag]]\nname = 'f_turbo'\npattern = 'turbo\\w*'\n",
    "[[count]]\nname = 'c_speed'\npattern = '({int})\\s*-?\\s*(spd|speed)'\nrange = [1, 10]\n",
    "[[count]]\nname = 'c_any'\npattern = '({int})'\nmissing = 0\n",
    "[[count]]\nname = 'c_v'\npattern = 'v({int})'\n",
    "[[measure]]\nname = 'm_l'\npattern = '({num})\\s*(l|cc)\\b'\nunit = 'l'\nunits = { l = 1, cc = 0.001 }\n",
    "[[label]]\nname = 'l_kind'\ndefault = 'other'\nmap = { 'x' = 'odd' }\n[[label.case]]\nlabel = 'manual'\nany = ['manual']\n[[label.case]]\nlabel = 'auto'\npattern = 'auto'\n",
];

fn row_strategy() -> impl Strategy<Value = Option<String>> {
    prop_oneof![
        1 => Just(None),
        9 => prop::collection::vec(prop::sample::select(TOKENS), 0..5).prop_map(|t| Some(t.join(" "))),
    ]
}

fn ruleset_strategy() -> impl Strategy<Value = Ruleset> {
    prop::sample::subsequence(RULE_POOL, 1..=RULE_POOL.len()).prop_map(|rules| {
        Ruleset::from_toml(&rules.concat(), "<property>").expect("pool rules compile")
    })
}

/// A feature column's row values as comparable cells.
fn column_cells(rules: &Ruleset, i: usize, col: &Column) -> Vec<Cell> {
    let s = col.as_materialized_series();
    match &rules.features[i].rule {
        Rule::Flag(_) => s
            .bool()
            .unwrap()
            .iter()
            .map(|v| v.map_or(Cell::Null, Cell::Bool))
            .collect(),
        Rule::Count(_) => {
            let s = s.cast(&DataType::Int64).unwrap();
            s.i64()
                .unwrap()
                .iter()
                .map(|v| v.map_or(Cell::Null, Cell::Int))
                .collect()
        }
        Rule::Measure(_) => {
            let s = s.cast(&DataType::Float64).unwrap();
            s.f64()
                .unwrap()
                .iter()
                .map(|v| v.map_or(Cell::Null, Cell::Float))
                .collect()
        }
        Rule::Label(l) => {
            let s = s.cast(&DataType::String).unwrap();
            s.str()
                .unwrap()
                .iter()
                .map(|v| {
                    v.map_or(Cell::Null, |t| {
                        Cell::Label(l.categories.iter().position(|c| c == t).unwrap() as u32)
                    })
                })
                .collect()
        }
    }
}

/// What one row gives on its own, with the output's float precision.
fn row_cell(rules: &Ruleset, i: usize, row: &Option<String>) -> Cell {
    let Some(value) = row else { return Cell::Null };
    let cell = rules.evaluate(&rules.normalizer.apply(value))[i].cell;
    match cell {
        Cell::Float(x) => Cell::Float(x as f32 as f64),
        other => other,
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]
    #[test]
    fn vocabulary_shortcut_changes_nothing(
        rows in prop::collection::vec(row_strategy(), 0..60),
        rules in ruleset_strategy(),
    ) {
        let vocab = Vocabulary::build(rows.iter().map(|r| r.as_deref()));
        let eval = rules.evaluate_all(&vocab.values);
        let columns = encode::encode(&rules, &vocab, &eval).unwrap();
        for (i, col) in columns.iter().enumerate() {
            let got = column_cells(&rules, i, col);
            let expected: Vec<Cell> = rows.iter().map(|r| row_cell(&rules, i, r)).collect();
            prop_assert_eq!(got, expected, "feature {}", rules.features[i].output);
        }
    }
}
