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

/// The built-in unit table of `propose`, unit by unit, against the factors
/// printed in NIST SP 811 (2008) Appendix B.8 (seven significant digits; a
/// value marked "exact" there must agree to double precision) and the SI
/// Brochure (9th ed., 2019) for SI prefixes and units accepted with the SI.
#[test]
fn propose_unit_table_matches_nist_sp_811_and_the_si_brochure() {
    use descry::propose::units::{Quantity, UNITS};
    // (spelling, quantity, value printed in the source, in the table's base
    // unit, relative tolerance, source)
    let printed: &[(&str, Quantity, f64, f64, &str)] = &[
        (
            "inch",
            Quantity::Length,
            0.0254,
            1e-15,
            "NIST SP 811 B.8: inch = 2.54 E-02 m (exact)",
        ),
        (
            "ft",
            Quantity::Length,
            0.3048,
            1e-15,
            "NIST SP 811 B.8: foot = 3.048 E-01 m (exact)",
        ),
        (
            "mm",
            Quantity::Length,
            0.001,
            1e-15,
            "SI Brochure Table 7: milli = 10^-3",
        ),
        (
            "km",
            Quantity::Length,
            1000.0,
            1e-15,
            "SI Brochure Table 7: kilo = 10^3",
        ),
        (
            "l",
            Quantity::Volume,
            1.0,
            1e-15,
            "SI Brochure Table 8: litre = 1 dm³",
        ),
        (
            "cc",
            Quantity::Volume,
            0.001,
            1e-15,
            "SI Brochure Table 8: 1 cm³ = 10^-3 dm³",
        ),
        // cubic inch = 1.638 706 E-05 m³ = 0.01638706 L (printed, 7 digits)
        (
            "ci",
            Quantity::Volume,
            0.01638706,
            5e-7,
            "NIST SP 811 B.8: cubic inch = 1.638 706 E-05 m³",
        ),
        // gallon (U.S.) = 3.785 412 E-03 m³ = 3.785412 L (printed)
        (
            "gal",
            Quantity::Volume,
            3.785412,
            5e-7,
            "NIST SP 811 B.8: gallon (U.S.) = 3.785 412 E-03 m³",
        ),
        (
            "hp",
            Quantity::Power,
            745.6999,
            5e-7,
            "NIST SP 811 B.8: horsepower (550 ft·lbf/s) = 7.456 999 E+02 W",
        ),
        (
            "ps",
            Quantity::Power,
            735.4988,
            5e-7,
            "NIST SP 811 B.8: horsepower (metric) = 7.354 988 E+02 W",
        ),
        (
            "kw",
            Quantity::Power,
            1000.0,
            1e-15,
            "SI Brochure Table 7: kilo = 10^3",
        ),
        (
            "mph",
            Quantity::Speed,
            1.609344,
            1e-12,
            "NIST SP 811 B.8: mile per hour = 4.4704 E-01 m/s (exact), in km/h",
        ),
        (
            "lb",
            Quantity::Mass,
            0.4535924,
            5e-7,
            "NIST SP 811 B.8: pound (avoirdupois) = 4.535 924 E-01 kg",
        ),
        (
            "psi",
            Quantity::Pressure,
            6.894757,
            5e-7,
            "NIST SP 811 B.8: pound-force per square inch = 6.894 757 E+03 Pa, in kPa",
        ),
        (
            "bar",
            Quantity::Pressure,
            100.0,
            1e-15,
            "NIST SP 811 B.8: bar = 1.0 E+05 Pa (exact), in kPa",
        ),
        (
            "rps",
            Quantity::RotationSpeed,
            60.0,
            1e-15,
            "SI Brochure Table 8: 1 min = 60 s",
        ),
    ];
    for (spelling, quantity, want, tolerance, source) in printed {
        let u = UNITS
            .iter()
            .find(|u| u.spelling == *spelling)
            .unwrap_or_else(|| panic!("{spelling} is not in the table"));
        assert_eq!(u.quantity, *quantity, "{spelling}");
        let rel = (u.factor - want).abs() / want;
        assert!(
            rel <= *tolerance,
            "{spelling}: table {} vs {want} ({source})",
            u.factor
        );
    }
    // Every spelling is unique, and every factor names its source.
    let mut seen = std::collections::HashSet::new();
    for u in UNITS {
        assert!(seen.insert(u.spelling), "{} twice in the table", u.spelling);
        assert!(!u.source.is_empty() && u.factor > 0.0, "{}", u.spelling);
    }
}
