//! Parsing of physical quantities written in a case file.
//!
//! A quantity is either a JSON number, taken as already in SI units, or a string
//! `"number [prefix]unit"` such as `"200 uF"`, `"8kV"` or `"20 µs"`; the space is optional.
//! Each field expects one [`Dimension`], and a unit of another dimension is rejected with a
//! message naming both, so a value typed into the wrong field does not pass silently.
//! Range checks (> 0 and so on) are not done here; they belong to validation.
//!
//! Prefixes are applied by dividing or multiplying by an exact power of ten, so `"200 uF"`
//! gives the same `f64` as the literal `200e-6`.

use serde_json::Value;

/// The kind of physical quantity a field expects, and so which units it accepts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Dimension {
    /// Capacitance, in farads (`F`, with SI prefixes: `"200 uF"`).
    Capacitance,
    /// Voltage, in volts (`V`, with SI prefixes: `"8 kV"`).
    Voltage,
    /// Inductance, in henries (`H`, with SI prefixes: `"50 nH"`).
    Inductance,
    /// Resistance, in ohms (`Ohm`, `ohm` or `Ω`, with SI prefixes: `"2 mOhm"`).
    Resistance,
    /// Length, in metres (`m`, with SI prefixes including `c`: `"1.5 mm"`, `"2 cm"`).
    Length,
    /// Time, in seconds (`s`, with SI prefixes: `"20 us"`).
    Time,
    /// Frequency, in hertz (`Hz`, with SI prefixes: `"10 kHz"`).
    Frequency,
    /// Absolute temperature, in kelvin (`K`, or Celsius as `degC`, `°C` or `℃`).
    Temperature,
    /// Electrical resistivity, in ohm metres (`"1.72e-8 Ohm m"`, `"Ω·m"`, `"1.72 uOhm cm"`).
    Resistivity,
    /// Mass density, in kg/m^3 (`kg/m3`, `kg/m^3`, `kg/m³`, `g/cm3`).
    Density,
    /// Specific heat capacity, in J/(kg K) (`J/(kg K)`, `J/kgK`, `J/kg/K`, `kJ/(kg K)`).
    SpecificHeat,
    /// Stress or pressure, in pascals (`Pa`, with SI prefixes: `"276 MPa"`).
    Stress,
    /// Linear temperature coefficient, in 1/K (`1/K`, `K^-1`, `1/degC`, `ppm/K`).
    TemperatureCoefficient,
    /// A plain number without unit (a JSON number, or a string holding only a number).
    Dimensionless,
    /// Electric current, in amperes (`A`, with SI prefixes: `"150 kA"`).
    Current,
    /// Rate of rise of current, in A/s (`A/s` with prefixes on both parts: `"20 kA/us"`).
    CurrentRate,
    /// Electric charge, in coulombs (`C`, with SI prefixes: `"12 C"`, `"500 mC"`).
    Charge,
    /// Action integral ∫i² dt, in A² s (`A2s`, `A^2s`, `A²s`, `A^2 s`; a prefix scales the
    /// whole unit as in ringpulse's reports: `"500 kA²s"` is 5e5 A² s).
    Action,
    /// Force, in newtons (`N`, with SI prefixes: `"400 kN"`).
    Force,
    /// A percentage (`%`; a JSON number is taken as percent too: `20` is 20 %).
    Percent,
    /// A temperature difference, in kelvin (`K` only: a Celsius reading would be ambiguous
    /// between a rise and an absolute temperature).
    TemperatureDifference,
}

impl Dimension {
    /// Every dimension, in the order used to identify an unexpected unit.
    ///
    /// [`Dimension::TemperatureDifference`] is left out: its only unit, `K`, identifies as a
    /// temperature.
    pub const ALL: [Dimension; 20] = [
        Dimension::Capacitance,
        Dimension::Voltage,
        Dimension::Inductance,
        Dimension::Resistance,
        Dimension::Length,
        Dimension::Time,
        Dimension::Frequency,
        Dimension::Temperature,
        Dimension::Resistivity,
        Dimension::Density,
        Dimension::SpecificHeat,
        Dimension::Stress,
        Dimension::TemperatureCoefficient,
        Dimension::Dimensionless,
        Dimension::Current,
        Dimension::CurrentRate,
        Dimension::Charge,
        Dimension::Action,
        Dimension::Force,
        Dimension::Percent,
    ];

    /// The quantity's name with its article, as used in messages: "a voltage".
    pub fn name(self) -> &'static str {
        match self {
            Dimension::Capacitance => "a capacitance",
            Dimension::Voltage => "a voltage",
            Dimension::Inductance => "an inductance",
            Dimension::Resistance => "a resistance",
            Dimension::Length => "a length",
            Dimension::Time => "a time",
            Dimension::Frequency => "a frequency",
            Dimension::Temperature => "a temperature",
            Dimension::Resistivity => "a resistivity",
            Dimension::Density => "a density",
            Dimension::SpecificHeat => "a specific heat",
            Dimension::Stress => "a stress or pressure",
            Dimension::TemperatureCoefficient => "a temperature coefficient",
            Dimension::Dimensionless => "a plain number",
            Dimension::Current => "a current",
            Dimension::CurrentRate => "a rate of rise of current",
            Dimension::Charge => "a charge",
            Dimension::Action => "an action integral",
            Dimension::Force => "a force",
            Dimension::Percent => "a percentage",
            Dimension::TemperatureDifference => "a temperature difference",
        }
    }

    /// The SI unit a JSON number is taken to be in, as written in messages.
    pub fn si_unit(self) -> &'static str {
        match self {
            Dimension::Capacitance => "F",
            Dimension::Voltage => "V",
            Dimension::Inductance => "H",
            Dimension::Resistance => "Ohm",
            Dimension::Length => "m",
            Dimension::Time => "s",
            Dimension::Frequency => "Hz",
            Dimension::Temperature => "K",
            Dimension::Resistivity => "Ohm m",
            Dimension::Density => "kg/m3",
            Dimension::SpecificHeat => "J/(kg K)",
            Dimension::Stress => "Pa",
            Dimension::TemperatureCoefficient => "1/K",
            Dimension::Dimensionless => "no unit",
            Dimension::Current => "A",
            Dimension::CurrentRate => "A/s",
            Dimension::Charge => "C",
            Dimension::Action => "A2s",
            Dimension::Force => "N",
            Dimension::Percent => "%",
            Dimension::TemperatureDifference => "K",
        }
    }

    /// A typical way to write a value of this dimension, as it would appear in JSON.
    pub fn example(self) -> &'static str {
        match self {
            Dimension::Capacitance => "\"200 uF\"",
            Dimension::Voltage => "\"8 kV\"",
            Dimension::Inductance => "\"50 nH\"",
            Dimension::Resistance => "\"2 mOhm\"",
            Dimension::Length => "\"1.5 mm\"",
            Dimension::Time => "\"20 us\"",
            Dimension::Frequency => "\"10 kHz\"",
            Dimension::Temperature => "\"20 degC\"",
            Dimension::Resistivity => "\"1.72e-8 Ohm m\"",
            Dimension::Density => "\"2700 kg/m3\"",
            Dimension::SpecificHeat => "\"900 J/(kg K)\"",
            Dimension::Stress => "\"276 MPa\"",
            Dimension::TemperatureCoefficient => "\"0.0039 1/K\"",
            Dimension::Dimensionless => "1.5",
            Dimension::Current => "\"150 kA\"",
            Dimension::CurrentRate => "\"20 kA/us\"",
            Dimension::Charge => "\"12 C\"",
            Dimension::Action => "\"500 kA2s\"",
            Dimension::Force => "\"400 kN\"",
            Dimension::Percent => "\"20 %\"",
            Dimension::TemperatureDifference => "\"100 K\"",
        }
    }

    /// The start of every error message for this dimension:
    /// `expected a voltage (V, e.g. "8 kV")`.
    pub fn expectation(self) -> String {
        let unit = match self {
            Dimension::Temperature => "K or degC",
            other => other.si_unit(),
        };
        format!("expected {} ({unit}, e.g. {})", self.name(), self.example())
    }
}

/// How a recognised unit converts to SI.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Conversion {
    /// Multiply by 10^n.
    Pow10(i32),
    /// Degrees Celsius to kelvin: add 273.15.
    Celsius,
}

impl Conversion {
    fn apply(self, x: f64) -> f64 {
        match self {
            // Dividing by an exact power of ten rounds once; multiplying by 1e-6 (itself
            // inexact) would round twice and make "200 uF" differ from 200e-6.
            Conversion::Pow10(n) if n < 0 => x / 10f64.powi(-n),
            Conversion::Pow10(n) => x * 10f64.powi(n),
            Conversion::Celsius => x + CELSIUS_OFFSET,
        }
    }
}

/// Kelvin at 0 °C (exact by definition of the Celsius scale).
const CELSIUS_OFFSET: f64 = 273.15;

/// SI prefixes accepted before units that take prefixes, with their power of ten.
/// `u`, `µ` (U+00B5 micro sign) and `μ` (U+03BC Greek mu) all mean micro.
const PREFIXES: [(&str, i32); 10] = [
    ("p", -12),
    ("n", -9),
    ("u", -6),
    ("\u{b5}", -6),
    ("\u{3bc}", -6),
    ("m", -3),
    ("c", -2),
    ("k", 3),
    ("M", 6),
    ("G", 9),
];

/// Which prefixes a unit symbol takes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Prefixes {
    /// No prefix at all.
    None,
    /// SI prefixes except centi.
    Si,
    /// SI prefixes including centi (only the metre).
    SiAndCenti,
}

/// A unit symbol with its conversion to SI (as a power of ten) and the prefixes it takes.
type UnitDef = (&'static str, i32, Prefixes);

const OHM_SYMBOLS: [&str; 4] = ["Ohm", "ohm", "\u{3a9}", "\u{2126}"];

/// Units whose spelling is a symbol with an optional prefix.
fn simple_units(dim: Dimension) -> &'static [UnitDef] {
    use Prefixes::{None as No, Si, SiAndCenti};
    match dim {
        Dimension::Capacitance => &[("F", 0, Si)],
        Dimension::Voltage => &[("V", 0, Si)],
        Dimension::Inductance => &[("H", 0, Si)],
        Dimension::Resistance => {
            &[("Ohm", 0, Si), ("ohm", 0, Si), ("\u{3a9}", 0, Si), ("\u{2126}", 0, Si)]
        }
        Dimension::Length => &[("m", 0, SiAndCenti)],
        Dimension::Time => &[("s", 0, Si)],
        Dimension::Frequency => &[("Hz", 0, Si)],
        Dimension::Stress => &[("Pa", 0, Si)],
        Dimension::Current => &[("A", 0, Si)],
        Dimension::Charge => &[("C", 0, Si)],
        Dimension::Force => &[("N", 0, Si)],
        Dimension::Percent => &[("%", 0, No)],
        Dimension::TemperatureDifference => &[("K", 0, No)],
        Dimension::Density => &[
            ("kg/m3", 0, No),
            ("kg/m^3", 0, No),
            ("kg/m\u{b3}", 0, No),
            ("g/cm3", 3, No),
            ("g/cm^3", 3, No),
            ("g/cm\u{b3}", 3, No),
        ],
        Dimension::TemperatureCoefficient => &[
            ("1/K", 0, No),
            ("K^-1", 0, No),
            ("1/degC", 0, No),
            ("1/\u{b0}C", 0, No),
            ("ppm/K", -6, No),
        ],
        Dimension::Temperature
        | Dimension::Resistivity
        | Dimension::SpecificHeat
        | Dimension::CurrentRate
        | Dimension::Action
        | Dimension::Dimensionless => &[],
    }
}

/// The power of ten of a prefix string, if it is one (centi only when `centi` is true).
fn prefix_exponent(prefix: &str, centi: bool) -> Option<i32> {
    PREFIXES.iter().find(|(p, e)| *p == prefix && (centi || *e != -2)).map(|(_, e)| *e)
}

fn match_simple(unit: &str, table: &[UnitDef]) -> Option<i32> {
    // An exact symbol wins over a prefixed reading: "m" is the metre, not a bare milli.
    if let Some((_, e, _)) = table.iter().find(|(sym, _, _)| *sym == unit) {
        return Some(*e);
    }
    for (sym, e, rule) in table {
        if *rule == Prefixes::None {
            continue;
        }
        if let Some(prefix) = unit.strip_suffix(sym) {
            if let Some(pe) = prefix_exponent(prefix, *rule == Prefixes::SiAndCenti) {
                return Some(e + pe);
            }
        }
    }
    None
}

fn match_length(unit: &str) -> Option<i32> {
    match_simple(unit, simple_units(Dimension::Length))
}

/// Resistivity is a resistance unit times a length unit, optionally separated by a space,
/// `*`, `·` (U+00B7), `⋅` (U+22C5) or `.`: "Ohm m", "Ω·m", "uOhm cm", "nΩm".
fn match_resistivity(unit: &str) -> Option<i32> {
    for ohm in OHM_SYMBOLS {
        let Some(idx) = unit.find(ohm) else { continue };
        let prefix = &unit[..idx];
        let prefix_e = if prefix.is_empty() { 0 } else { prefix_exponent(prefix, false)? };
        let rest = unit[idx + ohm.len()..].trim_start();
        let rest = rest.strip_prefix(['*', '\u{b7}', '\u{22c5}', '.']).unwrap_or(rest).trim_start();
        if rest.is_empty() {
            return None;
        }
        return match_length(rest).map(|e| prefix_e + e);
    }
    None
}

/// Specific heat after dropping spaces and multiplication signs: "J/(kg K)" becomes "J/(kgK)".
fn match_specific_heat(unit: &str) -> Option<i32> {
    let compact: String = unit
        .chars()
        .filter(|c| !c.is_whitespace() && !matches!(c, '*' | '\u{b7}' | '\u{22c5}' | '.'))
        .collect();
    let (scale, rest) = match compact.strip_prefix('k') {
        Some(rest) => (3, rest),
        None => (0, compact.as_str()),
    };
    matches!(rest, "J/(kgK)" | "J/kgK" | "J/kg/K").then_some(scale)
}

/// A rate of rise of current: a prefixed ampere over a prefixed second, "kA/us", "A/µs".
fn match_current_rate(unit: &str) -> Option<i32> {
    let (num, den) = unit.split_once('/')?;
    let num_e = match_simple(num.trim(), simple_units(Dimension::Current))?;
    let den_e = match_simple(den.trim(), simple_units(Dimension::Time))?;
    Some(num_e - den_e)
}

/// An action integral after dropping spaces and multiplication signs: "A2s", "A^2s", "A²s",
/// with an optional prefix that scales the whole unit ("kA²s" is 1e3 A² s, as ringpulse's
/// reports print it).
fn match_action(unit: &str) -> Option<i32> {
    let compact: String = unit
        .chars()
        .filter(|c| !c.is_whitespace() && !matches!(c, '*' | '\u{b7}' | '\u{22c5}' | '.'))
        .collect();
    for body in ["A2s", "A^2s", "A\u{b2}s"] {
        if let Some(prefix) = compact.strip_suffix(body) {
            if prefix.is_empty() {
                return Some(0);
            }
            return prefix_exponent(prefix, false);
        }
    }
    None
}

/// The conversion of `unit` if it is a unit of `dim`.
fn match_unit(unit: &str, dim: Dimension) -> Option<Conversion> {
    match dim {
        Dimension::Temperature => match unit {
            "K" => Some(Conversion::Pow10(0)),
            "degC" | "\u{b0}C" | "\u{2103}" => Some(Conversion::Celsius),
            _ => None,
        },
        Dimension::Resistivity => match_resistivity(unit).map(Conversion::Pow10),
        Dimension::SpecificHeat => match_specific_heat(unit).map(Conversion::Pow10),
        Dimension::CurrentRate => match_current_rate(unit).map(Conversion::Pow10),
        Dimension::Action => match_action(unit).map(Conversion::Pow10),
        Dimension::Dimensionless => None,
        other => match_simple(unit, simple_units(other)).map(Conversion::Pow10),
    }
}

/// The dimension and conversion of a unit string, whatever field it appears in.
fn identify(unit: &str) -> Option<(Dimension, Conversion)> {
    Dimension::ALL.iter().find_map(|&dim| match_unit(unit, dim).map(|c| (dim, c)))
}

/// Spellings that differ from `unit` only in ASCII case, for a "did you mean" hint.
fn case_insensitive_candidates(unit: &str, dim: Dimension) -> Vec<String> {
    let mut out = Vec::new();
    let dims: Vec<Dimension> =
        std::iter::once(dim).chain(Dimension::ALL.iter().copied().filter(|d| *d != dim)).collect();
    for d in dims {
        let mut spellings: Vec<String> = Vec::new();
        for (sym, _, rule) in simple_units(d) {
            spellings.push((*sym).to_string());
            if *rule != Prefixes::None {
                for (p, e) in PREFIXES {
                    if e != -2 || *rule == Prefixes::SiAndCenti {
                        spellings.push(format!("{p}{sym}"));
                    }
                }
            }
        }
        if d == Dimension::Temperature {
            spellings.extend(["K", "degC"].map(String::from));
        }
        for s in spellings {
            if s != unit && s.eq_ignore_ascii_case(unit) && !out.contains(&s) {
                out.push(s);
            }
        }
        if !out.is_empty() {
            break;
        }
    }
    out
}

/// Splits a leading decimal number (sign, digits, point, exponent) off `text`.
///
/// Returns `None` when `text` does not start with a number. The exponent is taken only when
/// digits follow the `e`, so that a unit could in principle start with `e`.
fn split_number(text: &str) -> Option<(&str, &str)> {
    let b = text.as_bytes();
    let mut i = 0;
    if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
        i += 1;
    }
    let mut digits = 0;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
        digits += 1;
    }
    if i < b.len() && b[i] == b'.' {
        i += 1;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
            digits += 1;
        }
    }
    if digits == 0 {
        return None;
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        let start = j;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        if j > start {
            i = j;
        }
    }
    // Every byte consumed is ASCII, so `i` is a character boundary.
    Some((&text[..i], &text[i..]))
}

/// Longest text quoted back in a message, in characters.
const QUOTE_LIMIT: usize = 60;

/// `text` as a quoted JSON-like string for messages, shortened when very long.
fn quote(text: &str) -> String {
    if text.chars().count() > QUOTE_LIMIT {
        let mut short: String = text.chars().take(QUOTE_LIMIT).collect();
        short.push_str("...");
        format!("{short:?}")
    } else {
        format!("{text:?}")
    }
}

/// A short rendering of any JSON value for messages: strings quoted, long values shortened.
pub fn describe_value(value: &Value) -> String {
    match value {
        Value::String(s) => quote(s),
        Value::Array(_) => "an array".to_string(),
        Value::Object(_) => "an object".to_string(),
        other => other.to_string(),
    }
}

/// Parses a quantity of dimension `dim` from a JSON value and returns it in SI units.
///
/// A JSON number is taken as already in SI units (kelvin for temperatures). A string must
/// be `"number [prefix]unit"`, with an optional space between number and unit, for example
/// `"200 uF"`, `"8kV"`, `"-3 mm"`, `"20 µs"` or `"20 degC"`. For [`Dimension::Dimensionless`]
/// a string holding only a number is accepted too.
///
/// The error message says what was expected and what was found:
/// `expected a voltage (V, e.g. "8 kV"), got "8 uF" (a capacitance)`.
pub fn parse_quantity(value: &Value, dim: Dimension) -> Result<f64, String> {
    match value {
        Value::Number(n) => match n.as_f64() {
            Some(x) if x.is_finite() => Ok(x),
            _ => Err(format!("{}, got {n} (not a finite number)", dim.expectation())),
        },
        Value::String(s) => parse_str(s, dim),
        Value::Null => Err(format!("{}, got null", dim.expectation())),
        Value::Bool(b) => Err(format!("{}, got {b}", dim.expectation())),
        Value::Array(_) => Err(format!("{}, got an array", dim.expectation())),
        Value::Object(_) => Err(format!("{}, got an object", dim.expectation())),
    }
}

/// Parses a quantity written as text, `"number [prefix]unit"`; see [`parse_quantity`].
pub fn parse_str(text: &str, dim: Dimension) -> Result<f64, String> {
    let expected = dim.expectation();
    let got = quote(text);
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(format!("{expected}, got an empty string"));
    }
    // Accept the typographic minus sign (U+2212) that word processors put in.
    let normalised;
    let trimmed = match trimmed.strip_prefix('\u{2212}') {
        Some(rest) => {
            normalised = format!("-{rest}");
            normalised.as_str()
        }
        None => trimmed,
    };
    let Some((number, rest)) = split_number(trimmed) else {
        return Err(format!("{expected}, got {got} (does not start with a number)"));
    };
    if rest.starts_with(|c: char| c.is_ascii_digit() || c == '.' || c == '+' || c == '-') {
        return Err(format!("{expected}, got {got} (not a number)"));
    }
    let x: f64 = match number.parse() {
        Ok(x) => x,
        Err(_) => return Err(format!("{expected}, got {got} (not a number)")),
    };
    if !x.is_finite() {
        return Err(format!("{expected}, got {got} (not a finite number)"));
    }
    let unit = rest.trim();
    if unit.is_empty() {
        if dim == Dimension::Dimensionless {
            return Ok(x);
        }
        return Err(format!(
            "{expected}, got {got} (a number without a unit: add the unit, or write a JSON \
             number for {})",
            dim.si_unit()
        ));
    }
    if let Some(conversion) = match_unit(unit, dim) {
        let si = conversion.apply(x);
        if !si.is_finite() {
            return Err(format!("{expected}, got {got} (not a finite number)"));
        }
        return Ok(si);
    }
    if let Some((found, _)) = identify(unit) {
        return Err(format!("{expected}, got {got} ({})", found.name()));
    }
    let candidates = case_insensitive_candidates(unit, dim);
    if candidates.is_empty() {
        Err(format!("{expected}, got {got} (unknown unit {})", quote(unit)))
    } else {
        let list: Vec<String> = candidates.iter().map(|c| quote(c)).collect();
        Err(format!(
            "{expected}, got {got} (unknown unit {}; units are case-sensitive: did you mean {}?)",
            quote(unit),
            list.join(" or ")
        ))
    }
}

#[cfg(test)]
// A failing test is a panic; the helpers below report which input failed.
#[allow(clippy::panic)]
mod tests {
    use super::*;
    use serde_json::json;

    fn p(text: &str, dim: Dimension) -> f64 {
        match parse_str(text, dim) {
            Ok(x) => x,
            Err(e) => panic!("{text:?} as {dim:?} failed: {e}"),
        }
    }

    fn err(text: &str, dim: Dimension) -> String {
        match parse_str(text, dim) {
            Ok(x) => panic!("{text:?} as {dim:?} unexpectedly parsed to {x}"),
            Err(e) => e,
        }
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    #[test]
    fn json_numbers_are_si() {
        assert_eq!(parse_quantity(&json!(2e-4), Dimension::Capacitance), Ok(2e-4));
        assert_eq!(parse_quantity(&json!(8000), Dimension::Voltage), Ok(8000.0));
        assert_eq!(parse_quantity(&json!(-3), Dimension::Length), Ok(-3.0));
        assert_eq!(parse_quantity(&json!(293.15), Dimension::Temperature), Ok(293.15));
        assert_eq!(parse_quantity(&json!(1.5), Dimension::Dimensionless), Ok(1.5));
    }

    #[test]
    fn every_dimension_parses_its_units() {
        use Dimension::*;
        assert_eq!(p("200 uF", Capacitance), 200e-6);
        assert_eq!(p("8 kV", Voltage), 8000.0);
        assert_eq!(p("30 nH", Inductance), 30e-9);
        assert_eq!(p("2 mOhm", Resistance), 2e-3);
        assert_eq!(p("1.5 mm", Length), 1.5e-3);
        assert_eq!(p("20 us", Time), 20e-6);
        assert_eq!(p("10 kHz", Frequency), 1e4);
        assert_eq!(p("293.15 K", Temperature), 293.15);
        assert!(close(p("20 degC", Temperature), 293.15));
        assert_eq!(p("1.72e-8 Ohm m", Resistivity), 1.72e-8);
        assert_eq!(p("2700 kg/m3", Density), 2700.0);
        assert_eq!(p("900 J/(kg K)", SpecificHeat), 900.0);
        assert_eq!(p("276 MPa", Stress), 276e6);
        assert_eq!(p("0.0039 1/K", TemperatureCoefficient), 0.0039);
        assert_eq!(p("1.5", Dimensionless), 1.5);
    }

    #[test]
    fn prefixes_scale_exactly() {
        use Dimension::*;
        assert_eq!(p("5 pF", Capacitance), 5e-12);
        assert_eq!(p("5 nF", Capacitance), 5e-9);
        assert_eq!(p("5 mF", Capacitance), 5e-3);
        assert_eq!(p("3 F", Capacitance), 3.0);
        assert_eq!(p("2 cm", Length), 0.02);
        assert_eq!(p("2 km", Length), 2000.0);
        assert_eq!(p("2 um", Length), 2e-6);
        assert_eq!(p("7 nm", Length), 7e-9);
        assert_eq!(p("1 m", Length), 1.0);
        assert_eq!(p("3 ms", Time), 3e-3);
        assert_eq!(p("3 ns", Time), 3e-9);
        assert_eq!(p("3 s", Time), 3.0);
        assert_eq!(p("2 MHz", Frequency), 2e6);
        assert_eq!(p("3 kOhm", Resistance), 3000.0);
        assert_eq!(p("3 MOhm", Resistance), 3e6);
        assert_eq!(p("3 mohm", Resistance), 3e-3);
        assert_eq!(p("1 uH", Inductance), 1e-6);
        assert_eq!(p("1 mH", Inductance), 1e-3);
        assert_eq!(p("20 kPa", Stress), 2e4);
        assert_eq!(p("20 Pa", Stress), 20.0);
        assert_eq!(p("69 GPa", Stress), 69e9);
        assert_eq!(p("1 GV", Voltage), 1e9);
    }

    #[test]
    fn metre_milli_and_mega_are_told_apart() {
        use Dimension::*;
        assert_eq!(p("3 m", Length), 3.0);
        assert_eq!(p("3 mm", Length), 3e-3);
        assert_eq!(p("3 Mm", Length), 3e6);
        assert_eq!(p("3 mOhm", Resistance), 3e-3);
        assert_eq!(p("3 MPa", Stress), 3e6);
        assert_eq!(p("3 mPa", Stress), 3e-3);
        // "m" alone in a resistance field is a length, not a stray prefix.
        assert!(err("3 m", Resistance).ends_with("(a length)"));
        // Centi only goes with the metre.
        assert!(err("3 cF", Capacitance).contains("unknown unit \"cF\""));
    }

    #[test]
    fn space_is_optional_and_whitespace_is_trimmed() {
        use Dimension::*;
        assert_eq!(p("200uF", Capacitance), 200e-6);
        assert_eq!(p("  8 kV ", Voltage), 8000.0);
        assert_eq!(p("8\u{a0}kV", Voltage), 8000.0);
        assert_eq!(p("1.5e-3 m", Length), 1.5e-3);
        assert_eq!(p("1.5E-3m", Length), 1.5e-3);
        assert_eq!(p(".5 mm", Length), 0.5e-3);
        assert_eq!(p("5. mm", Length), 5e-3);
    }

    #[test]
    fn signs_are_parsed() {
        use Dimension::*;
        assert_eq!(p("-3 mm", Length), -3e-3);
        assert_eq!(p("+3 mm", Length), 3e-3);
        assert_eq!(p("\u{2212}3 mm", Length), -3e-3);
        assert!(close(p("-20 degC", Temperature), 253.15));
    }

    #[test]
    fn both_micro_signs_and_ohm_signs() {
        use Dimension::*;
        assert_eq!(p("20 \u{b5}s", Time), 20e-6);
        assert_eq!(p("20 \u{3bc}s", Time), 20e-6);
        assert_eq!(p("20 us", Time), 20e-6);
        assert_eq!(p("200 \u{3bc}F", Capacitance), 200e-6);
        assert_eq!(p("2 m\u{3a9}", Resistance), 2e-3);
        assert_eq!(p("2 m\u{2126}", Resistance), 2e-3);
        assert_eq!(p("2 \u{3a9}", Resistance), 2.0);
        assert_eq!(p("2 \u{b5}\u{3a9}", Resistance), 2e-6);
    }

    #[test]
    fn temperature_spellings() {
        use Dimension::Temperature;
        assert!(close(p("20 \u{b0}C", Temperature), 293.15));
        assert!(close(p("20\u{2103}", Temperature), 293.15));
        assert!(close(p("0 degC", Temperature), 273.15));
        assert_eq!(p("77 K", Temperature), 77.0);
        // A bare C is the coulomb; the expectation names degC.
        assert!(err("20 C", Temperature).ends_with("(a charge)"));
    }

    #[test]
    fn resistivity_spellings() {
        use Dimension::Resistivity;
        for text in ["1.72e-8 Ohm m", "1.72e-8 Ohm*m", "1.72e-8 \u{3a9}\u{b7}m", "1.72e-8 Ohmm"] {
            assert_eq!(p(text, Resistivity), 1.72e-8, "{text}");
        }
        assert_eq!(p("1.72e-8 ohm \u{22c5} m", Resistivity), 1.72e-8);
        assert!(close(p("1.72 uOhm cm", Resistivity), 1.72e-8));
        assert!(close(p("1.72 \u{b5}\u{3a9}\u{b7}cm", Resistivity), 1.72e-8));
        assert!(close(p("17.2 nOhm m", Resistivity), 1.72e-8));
        assert!(close(p("0.0172 Ohm mm", Resistivity), 1.72e-5));
        assert!(err("1.72e-8 Ohm", Resistivity).ends_with("(a resistance)"));
    }

    #[test]
    fn density_specific_heat_and_coefficient_spellings() {
        use Dimension::*;
        assert_eq!(p("2700 kg/m^3", Density), 2700.0);
        assert_eq!(p("2700 kg/m\u{b3}", Density), 2700.0);
        assert_eq!(p("2.7 g/cm3", Density), 2700.0);
        assert_eq!(p("8.96 g/cm^3", Density), 8960.0);
        assert_eq!(p("385 J/kgK", SpecificHeat), 385.0);
        assert_eq!(p("385 J/(kg*K)", SpecificHeat), 385.0);
        assert_eq!(p("385 J/(kg\u{b7}K)", SpecificHeat), 385.0);
        assert_eq!(p("385 J/kg/K", SpecificHeat), 385.0);
        assert_eq!(p("0.385 kJ/(kg K)", SpecificHeat), 385.0);
        assert_eq!(p("0.0039 K^-1", TemperatureCoefficient), 0.0039);
        assert_eq!(p("0.0039 1/degC", TemperatureCoefficient), 0.0039);
        assert!(close(p("3900 ppm/K", TemperatureCoefficient), 0.0039));
    }

    #[test]
    fn wrong_dimension_names_both() {
        assert_eq!(
            err("8 uF", Dimension::Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got \"8 uF\" (a capacitance)"
        );
        assert_eq!(
            err("3 mm", Dimension::Time),
            "expected a time (s, e.g. \"20 us\"), got \"3 mm\" (a length)"
        );
        assert_eq!(
            err("20 degC", Dimension::Length),
            "expected a length (m, e.g. \"1.5 mm\"), got \"20 degC\" (a temperature)"
        );
        assert_eq!(
            err("3 mm", Dimension::Dimensionless),
            "expected a plain number (no unit, e.g. 1.5), got \"3 mm\" (a length)"
        );
        assert!(err("276 MPa", Dimension::Resistivity).ends_with("(a stress or pressure)"));
        assert!(err("1 uOhm cm", Dimension::Resistance).ends_with("(a resistivity)"));
        assert!(err("50 nH", Dimension::Capacitance).ends_with("(an inductance)"));
        assert!(err("10 kHz", Dimension::Time).ends_with("(a frequency)"));
        assert!(err("2700 kg/m3", Dimension::Stress).ends_with("(a density)"));
        assert!(err("900 J/kgK", Dimension::Stress).ends_with("(a specific heat)"));
        assert!(err("0.004 1/K", Dimension::Temperature).ends_with("(a temperature coefficient)"));
        assert!(err("8 kV", Dimension::Capacitance).ends_with("(a voltage)"));
    }

    #[test]
    fn every_unit_belongs_to_exactly_one_dimension() {
        let samples = [
            "F", "uF", "V", "kV", "H", "nH", "Ohm", "mOhm", "\u{3a9}", "m", "mm", "cm", "s", "us",
            "ms", "Hz", "kHz", "K", "degC", "Ohm m", "uOhm cm", "kg/m3", "g/cm3", "J/(kg K)", "Pa",
            "MPa", "1/K", "ppm/K", "A", "kA", "A/s", "kA/us", "C", "mC", "A2s", "kA^2 s", "N",
            "kN", "%",
        ];
        for unit in samples {
            let dims: Vec<Dimension> =
                Dimension::ALL.iter().copied().filter(|&d| match_unit(unit, d).is_some()).collect();
            assert_eq!(dims.len(), 1, "unit {unit:?} matched {dims:?}");
        }
    }

    #[test]
    fn garbage_gets_clear_messages() {
        use Dimension::Voltage;
        assert_eq!(err("", Voltage), "expected a voltage (V, e.g. \"8 kV\"), got an empty string");
        assert_eq!(
            err("   ", Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got an empty string"
        );
        assert_eq!(
            err("kV", Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got \"kV\" (does not start with a number)"
        );
        assert!(err("NaN V", Voltage).ends_with("(does not start with a number)"));
        assert!(err("inf V", Voltage).ends_with("(does not start with a number)"));
        assert!(err("1e999 V", Voltage).ends_with("(not a finite number)"));
        assert!(err("1.2.3 V", Voltage).ends_with("(not a number)"));
        assert!(err("8 - 9 V", Voltage).contains("unknown unit"));
        assert_eq!(
            err("8 kW", Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got \"8 kW\" (unknown unit \"kW\")"
        );
        assert_eq!(
            err("8000", Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got \"8000\" (a number without a unit: add \
             the unit, or write a JSON number for V)"
        );
        assert!(err("abc", Dimension::Dimensionless).ends_with("(does not start with a number)"));
    }

    #[test]
    fn case_mistakes_get_a_hint() {
        assert_eq!(
            err("8 kv", Dimension::Voltage),
            "expected a voltage (V, e.g. \"8 kV\"), got \"8 kv\" (unknown unit \"kv\"; units are \
             case-sensitive: did you mean \"kV\"?)"
        );
        assert!(err("276 MPA", Dimension::Stress).contains("did you mean \"mPa\" or \"MPa\"?"));
    }

    #[test]
    fn non_string_non_number_values() {
        let d = Dimension::Length;
        assert_eq!(
            parse_quantity(&json!(null), d),
            Err("expected a length (m, e.g. \"1.5 mm\"), got null".to_string())
        );
        assert_eq!(
            parse_quantity(&json!(true), d),
            Err("expected a length (m, e.g. \"1.5 mm\"), got true".to_string())
        );
        assert!(parse_quantity(&json!([1]), d).is_err_and(|e| e.ends_with("got an array")));
        assert!(parse_quantity(&json!({"a": 1}), d).is_err_and(|e| e.ends_with("got an object")));
    }

    #[test]
    fn long_input_is_shortened_in_messages() {
        let long = format!("1 {}", "x".repeat(500));
        let e = err(&long, Dimension::Length);
        assert!(e.len() < 300, "{e}");
        assert!(e.contains("...\""), "{e}");
    }

    #[test]
    fn temperature_expectation_mentions_celsius() {
        assert_eq!(
            err("3 mm", Dimension::Temperature),
            "expected a temperature (K or degC, e.g. \"20 degC\"), got \"3 mm\" (a length)"
        );
    }

    #[test]
    fn ratings_units() {
        use Dimension::*;
        assert_eq!(p("150 kA", Current), 150e3);
        assert_eq!(p("2 MA", Current), 2e6);
        assert_eq!(p("20 kA/us", CurrentRate), 2e10);
        assert_eq!(p("20 kA/\u{b5}s", CurrentRate), 2e10);
        assert_eq!(p("5 GA/s", CurrentRate), 5e9);
        assert_eq!(p("3 A/ns", CurrentRate), 3e9);
        assert_eq!(p("12 C", Charge), 12.0);
        assert_eq!(p("500 mC", Charge), 0.5);
        assert_eq!(p("5e5 A2s", Action), 5e5);
        assert_eq!(p("500 kA\u{b2}s", Action), 5e5);
        assert_eq!(p("500 kA^2 s", Action), 5e5);
        assert_eq!(p("2 MA2s", Action), 2e6);
        assert_eq!(p("400 kN", Force), 4e5);
        assert_eq!(p("20 %", Percent), 20.0);
        assert_eq!(p("20%", Percent), 20.0);
        assert_eq!(parse_quantity(&json!(20), Percent), Ok(20.0));
        assert_eq!(p("100 K", TemperatureDifference), 100.0);
        assert!(err("100 degC", TemperatureDifference).ends_with("(a temperature)"));
        assert!(err("150 kA", Voltage).ends_with("(a current)"));
        assert!(err("20 kA/us", Current).ends_with("(a rate of rise of current)"));
        assert!(err("20 kA/m", CurrentRate).contains("unknown unit"));
        assert!(err("400 kN", Stress).ends_with("(a force)"));
    }
}
