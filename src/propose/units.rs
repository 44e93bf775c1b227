//! The built-in unit table `propose` recognises after numbers.
//!
//! Each spelling belongs to one quantity and carries its factor to that
//! quantity's base unit, with the source of the factor. `propose` picks the
//! target unit of a measure (the unit written most often in the column) and
//! writes, for every spelling seen, the factor to that target: the ratio of
//! the two factors below.
//!
//! Spellings are in normalized form (lower case). Left out on purpose: `in`
//! (far more often the word than the inch) and single letters that are also
//! common grade or size codes (`t`, `g`, `a`, `m`): after a number in a part
//! code they are far more often a code than a unit.

/// A kind of quantity; a measure proposal converts within one quantity.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    Length,
    Volume,
    Power,
    Voltage,
    Current,
    RotationSpeed,
    Speed,
    Mass,
    Pressure,
}

impl Quantity {
    /// The stem of the proposed measure's name (`volume` gives `volume_l`).
    pub fn stem(self) -> &'static str {
        match self {
            Quantity::Length => "length",
            Quantity::Volume => "volume",
            Quantity::Power => "power",
            Quantity::Voltage => "voltage",
            Quantity::Current => "current",
            Quantity::RotationSpeed => "rotation",
            Quantity::Speed => "speed",
            Quantity::Mass => "mass",
            Quantity::Pressure => "pressure",
        }
    }
}

/// One spelling of a unit.
#[derive(Debug, Clone, Copy)]
pub struct UnitSpelling {
    /// Normalized spelling, as written after a number (`cu in`, `km/h`).
    pub spelling: &'static str,
    pub quantity: Quantity,
    /// The unit it names, for people (`cubic inch`).
    pub unit: &'static str,
    /// One of this unit in the quantity's base unit.
    pub factor: f64,
    /// Where the factor comes from.
    pub source: &'static str,
}

const SI: &str = "SI prefix (SI Brochure, 9th ed., Table 7)";
const LITRE: &str = "1 L = 1 dm³ (SI Brochure, 9th ed., Table 8)";
const NIST_B8: &str = "NIST SP 811 (2008), Appendix B.8";
const EXACT_INCH: &str = "1 in = 2.54 cm exactly (NIST SP 811, Appendix B.8)";

macro_rules! table {
    ($($q:ident, $unit:literal, $factor:expr, $source:expr; [$($s:literal),+])*) => {
        &[$($(UnitSpelling { spelling: $s, quantity: Quantity::$q, unit: $unit, factor: $factor, source: $source },)+)*]
    };
}

/// Base units: metre, litre, watt, volt, ampere, revolution per minute,
/// kilometre per hour, kilogram, kilopascal.
pub const UNITS: &[UnitSpelling] = table! {
    // Length (base: metre).
    Length, "millimetre", 0.001, SI; ["mm"]
    Length, "centimetre", 0.01, SI; ["cm"]
    Length, "metre", 1.0, SI; ["metre", "metres", "meter", "meters"]
    Length, "kilometre", 1000.0, SI; ["km"]
    // inch = 2.54 E-02 m (exact); foot = 3.048 E-01 m (exact).
    Length, "inch", 0.0254, NIST_B8; ["inch", "inches"]
    Length, "foot", 0.3048, NIST_B8; ["ft", "foot", "feet"]
    // Foot and inch marks: the prime and double prime (NFKC writes ″ as
    // ′′), the apostrophe and quotation mark typed for them, and their
    // typographic forms (common practice).
    Length, "inch", 0.0254, NIST_B8; ["\"", "''", "′′", "”"]
    Length, "foot", 0.3048, NIST_B8; ["'", "′", "’"]
    // Volume and displacement (base: litre).
    Volume, "litre", 1.0, LITRE; ["l", "lt", "lts", "ltr", "ltrs", "litre", "litres", "liter", "liters"]
    Volume, "millilitre", 0.001, SI; ["ml"]
    Volume, "cubic centimetre", 0.001, LITRE; ["cc", "ccm", "cm3", "cm³"]
    // cubic inch = 1.638 706 E-05 m³; exactly 2.54³ cm³ = 16.387064 cm³.
    Volume, "cubic inch", 0.016387064, EXACT_INCH; ["ci", "cid", "cu in", "cu. in", "cu.in", "cu inch", "cu.inch", "cubic in", "cubic inch", "cubic inches", "in3", "in³"]
    // gallon (U.S.) = 3.785 412 E-03 m³; exactly 231 in³ = 3.785411784 L.
    Volume, "gallon (U.S.)", 3.785411784, NIST_B8; ["gal", "gallon", "gallons"]
    // Power (base: watt).
    Power, "watt", 1.0, SI; ["w", "watt", "watts"]
    Power, "kilowatt", 1000.0, SI; ["kw", "kilowatt", "kilowatts"]
    // horsepower (550 ft·lbf/s) = 7.456 999 E+02 W; to double precision
    // 745.69987158227022 W (550 × 0.3048 m × 4.4482216152605 N).
    Power, "horsepower", 745.69987158227022, NIST_B8; ["hp", "bhp", "h.p", "horse", "horsepower"]
    // horsepower (metric) = 7.354 988 E+02 W; exactly 75 kgf·m/s = 735.49875 W.
    Power, "horsepower (metric)", 735.49875, NIST_B8; ["ps", "cv"]
    // Voltage (base: volt).
    Voltage, "volt", 1.0, SI; ["v", "volt", "volts", "vdc", "vac"]
    Voltage, "kilovolt", 1000.0, SI; ["kv"]
    // Current (base: ampere).
    Current, "ampere", 1.0, SI; ["amp", "amps", "ampere", "amperes"]
    Current, "milliampere", 0.001, SI; ["ma"]
    // Speed of rotation (base: revolution per minute).
    RotationSpeed, "revolution per minute", 1.0, "definition"; ["rpm", "r/min", "rev/min"]
    RotationSpeed, "revolution per second", 60.0, "1 min = 60 s (SI Brochure, 9th ed., Table 8)"; ["rps", "r/s"]
    // Speed (base: kilometre per hour).
    Speed, "kilometre per hour", 1.0, SI; ["km/h", "kmh", "kph", "km/hr"]
    // mile per hour = 4.4704 E-01 m/s (exact) = 1.609344 km/h.
    Speed, "mile per hour", 1.609344, NIST_B8; ["mph"]
    Speed, "metre per second", 3.6, "1 h = 3600 s (SI Brochure, 9th ed., Table 8)"; ["m/s"]
    // Mass (base: kilogram).
    Mass, "kilogram", 1.0, SI; ["kg", "kgs"]
    Mass, "tonne", 1000.0, "1 t = 1000 kg (SI Brochure, 9th ed., Table 8)"; ["tonne", "tonnes"]
    // pound (avoirdupois) = 4.535 924 E-01 kg; exactly 0.45359237 kg.
    Mass, "pound", 0.45359237, NIST_B8; ["lb", "lbs", "pound", "pounds"]
    // Pressure (base: kilopascal).
    Pressure, "kilopascal", 1.0, SI; ["kpa"]
    Pressure, "megapascal", 1000.0, SI; ["mpa"]
    // bar = 1.0 E+05 Pa (exact).
    Pressure, "bar", 100.0, NIST_B8; ["bar"]
    // pound-force per square inch = 6.894 757 E+03 Pa.
    Pressure, "pound-force per square inch", 6.894757, NIST_B8; ["psi"]
};
