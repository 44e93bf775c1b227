//! Every unit factor in the demo rulesets, checked against NIST Special
//! Publication 811 (2008), "Guide for the Use of the International System of
//! Units", Appendix B.8 (factors for units listed alphabetically), and the
//! SI definition of the litre.

mod common;

use descry::ruleset::Rule;
use descry::Ruleset;

/// (target unit, spelling, factor into the target unit, source)
fn reference(target: &str, spelling: &str) -> Option<(f64, &'static str)> {
    // 1 in = 2.54 cm exactly, so 1 in³ = 16.387064 cm³ = 0.016387064 L exactly
    // (NIST SP 811, B.8: "cubic inch (in³) ... 1.638 706 4 E-05 m³", exact).
    const CUBIC_INCH_L: f64 = 0.016387064;
    // NIST SP 811, B.8: "horsepower (550 ft · lbf/s) ... 7.456 999 E+02 W".
    // 550 ft·lbf/s = 550 × 0.3048 m × 4.4482216152605 N /s = 745.69987158227022 W.
    const HP_W: f64 = 550.0 * 0.3048 * 4.4482216152605;
    // NIST SP 811, B.8: "mile (based on U.S. survey foot)" differs; the
    // international mile is 1.609 344 E+03 m exactly.
    const MILE_KM: f64 = 1.609344;
    let r = match (target, spelling) {
        // The litre is 1 dm³ (SI Brochure, 9th ed., Table 8), so 1 cm³ = 0.001 L.
        ("l", "l" | "litre" | "litres" | "liter" | "liters" | "ltr") => (1.0, "SI: the litre"),
        ("l", "cc") => (0.001, "SI: 1 cm³ = 10⁻³ dm³"),
        ("l", "ci" | "cid" | "cu" | "cu in" | "cu. in" | "cuin") => {
            (CUBIC_INCH_L, "NIST SP 811 B.8 cubic inch")
        }
        ("hp", "hp" | "bhp") => (1.0, "same unit"),
        ("hp", "kw") => (1000.0 / HP_W, "NIST SP 811 B.8 horsepower (550 ft·lbf/s)"),
        ("km/h", "km/h" | "kph" | "kmh") => (1.0, "same unit"),
        ("km/h", "mph") => (MILE_KM, "NIST SP 811 B.8 mile (international)"),
        _ => return None,
    };
    Some(r)
}

#[test]
fn nist_reference_values_themselves() {
    // NIST SP 811 B.8 prints 1 hp = 7.456 999 E+02 W (seven significant digits).
    let hp_w: f64 = 550.0 * 0.3048 * 4.4482216152605;
    assert!((hp_w - 745.6999).abs() < 5e-5, "{hp_w}");
    // 1 in³ = 1.638 706 4 E-05 m³ exactly.
    assert!((2.54f64.powi(3) / 1000.0 - 0.016387064).abs() < 1e-15);
}

#[test]
fn demo_ruleset_unit_factors_match_nist_sp_811() {
    let mut checked = 0;
    for name in ["transmission.toml", "engine.toml", "part_no.toml"] {
        let rules = Ruleset::from_path(&common::ruleset(name)).unwrap();
        for f in &rules.features {
            let Rule::Measure(m) = &f.rule else { continue };
            for (spelling, factor) in &m.units {
                let (want, source) = reference(&m.unit, spelling).unwrap_or_else(|| {
                    panic!(
                        "{name} {}: no reference for unit {spelling:?} -> {:?}",
                        f.output, m.unit
                    )
                });
                let rel = (factor - want).abs() / want;
                assert!(
                    rel < 1e-9,
                    "{name} {}: {spelling} = {factor}, {source} gives {want}",
                    f.output
                );
                checked += 1;
            }
        }
    }
    assert!(checked >= 10, "only {checked} factors checked");
}
