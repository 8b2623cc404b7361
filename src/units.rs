//! Quantities with units, as written in scene files and on the command line.
//!
//! A quantity is a bare number in SI base units, or a string `"<number> <unit>"` whose
//! unit may carry one SI prefix (`p n u µ m c k M G`). [`parse_quantity`] turns either
//! into an SI value (`f64`) after checking that the unit measures the expected
//! [`Dimension`].

use std::fmt;

/// Metres.
pub type Metre = f64;
/// Amperes.
pub type Ampere = f64;
/// Hertz.
pub type Hertz = f64;
/// Tesla.
pub type Tesla = f64;
/// Volts.
pub type Volt = f64;
/// Henries.
pub type Henry = f64;
/// Radians.
pub type Radian = f64;

/// What a quantity measures; decides which units are accepted and the SI unit of the
/// value returned.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Dimension {
    /// Length, SI unit metre; also `in` (25.4 mm) and `mil` (25.4 µm).
    Length,
    /// Electric current, SI unit ampere.
    Current,
    /// Frequency, SI unit hertz.
    Frequency,
    /// Time, SI unit second.
    Time,
    /// Plane angle, SI unit radian; also `deg`.
    Angle,
    /// Magnetic flux density, SI unit tesla.
    Field,
    /// Voltage, SI unit volt; also `dBuV` (20·log10(V / 1 µV)).
    Voltage,
    /// Inductance, SI unit henry.
    Inductance,
    /// Resistance, SI unit ohm.
    Resistance,
    /// Area, SI unit square metre (`m2`; a prefix scales the metre, so `mm2` = 1e-6 m²).
    Area,
    /// Conductivity, SI unit siemens per metre (`S/m`; `MS/m` = 1e6 S/m).
    Conductivity,
}

impl Dimension {
    /// A short name for messages ("a length").
    pub fn noun(self) -> &'static str {
        match self {
            Dimension::Length => "a length",
            Dimension::Current => "a current",
            Dimension::Frequency => "a frequency",
            Dimension::Time => "a time",
            Dimension::Angle => "an angle",
            Dimension::Field => "a magnetic flux density",
            Dimension::Voltage => "a voltage",
            Dimension::Inductance => "an inductance",
            Dimension::Resistance => "a resistance",
            Dimension::Area => "an area",
            Dimension::Conductivity => "a conductivity",
        }
    }

    /// An example a message can suggest, e.g. `"3 mm"`.
    pub fn example(self) -> &'static str {
        match self {
            Dimension::Length => "\"3 mm\"",
            Dimension::Current => "\"0.5 A\"",
            Dimension::Frequency => "\"25 kHz\"",
            Dimension::Time => "\"50 ns\"",
            Dimension::Angle => "\"30 deg\"",
            Dimension::Field => "\"12 uT\"",
            Dimension::Voltage => "\"1.2 uV\" or \"-6 dBuV\"",
            Dimension::Inductance => "\"4.7 uH\"",
            Dimension::Resistance => "\"10 kohm\"",
            Dimension::Area => "\"25 mm2\"",
            Dimension::Conductivity => "\"3.5e7 S/m\"",
        }
    }
}

impl fmt::Display for Dimension {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.noun())
    }
}

/// How a unit turns its number into SI.
#[derive(Clone, Copy)]
enum Scale {
    /// Multiply by the factor; an SI prefix is allowed and multiplies too.
    Linear(f64),
    /// Multiply by the factor; no prefix allowed (`in`, `mil`, `deg`).
    Fixed(f64),
    /// A prefixed base unit raised to a power (`m2`: the prefix is squared too).
    Power(i32),
    /// dB relative to 1 µV.
    DbMicrovolt,
}

/// Every unit we accept: its symbol, what it measures and its scale.
const UNITS: &[(&str, Dimension, Scale)] = &[
    ("m", Dimension::Length, Scale::Linear(1.0)),
    ("in", Dimension::Length, Scale::Fixed(0.0254)),
    ("mil", Dimension::Length, Scale::Fixed(0.0254e-3)),
    ("A", Dimension::Current, Scale::Linear(1.0)),
    ("Hz", Dimension::Frequency, Scale::Linear(1.0)),
    ("s", Dimension::Time, Scale::Linear(1.0)),
    ("rad", Dimension::Angle, Scale::Linear(1.0)),
    (
        "deg",
        Dimension::Angle,
        Scale::Fixed(std::f64::consts::PI / 180.0),
    ),
    ("T", Dimension::Field, Scale::Linear(1.0)),
    ("V", Dimension::Voltage, Scale::Linear(1.0)),
    ("dBuV", Dimension::Voltage, Scale::DbMicrovolt),
    ("dBµV", Dimension::Voltage, Scale::DbMicrovolt),
    ("H", Dimension::Inductance, Scale::Linear(1.0)),
    ("ohm", Dimension::Resistance, Scale::Linear(1.0)),
    ("Ω", Dimension::Resistance, Scale::Linear(1.0)),
    ("m2", Dimension::Area, Scale::Power(2)),
    ("S/m", Dimension::Conductivity, Scale::Linear(1.0)),
];

/// SI prefixes; both the micro sign (U+00B5) and Greek mu (U+03BC) mean micro.
/// Returned as a power of ten so that scaling divides by an exact power for negative
/// prefixes ("50 ns" gives exactly 5e-8).
fn prefix_power(c: char) -> Option<i32> {
    Some(match c {
        'p' => -12,
        'n' => -9,
        'u' | 'µ' | 'μ' => -6,
        'm' => -3,
        'c' => -2,
        'k' => 3,
        'M' => 6,
        'G' => 9,
        _ => return None,
    })
}

/// Why a quantity could not be read. The message is one line, fit to follow a key name.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitError(pub String);

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for UnitError {}

/// Looks a unit symbol up, prefix included; returns what it measures and a function of
/// the number giving the SI value.
fn lookup(symbol: &str) -> Option<(Dimension, Scale, i32)> {
    for &(name, dim, scale) in UNITS {
        if symbol == name {
            return Some((dim, scale, 0));
        }
    }
    let mut chars = symbol.chars();
    let first = chars.next()?;
    let rest = chars.as_str();
    let factor = prefix_power(first)?;
    for &(name, dim, scale) in UNITS {
        if rest == name && matches!(scale, Scale::Linear(_) | Scale::Power(_)) {
            return Some((dim, scale, factor));
        }
    }
    None
}

fn to_si(x: f64, scale: Scale, prefix: i32) -> f64 {
    let by_power = |x: f64, p: i32| {
        if p < 0 {
            x / 10f64.powi(-p)
        } else {
            x * 10f64.powi(p)
        }
    };
    match scale {
        Scale::Linear(k) | Scale::Fixed(k) => by_power(x * k, prefix),
        Scale::Power(p) => by_power(x, prefix * p),
        Scale::DbMicrovolt => 1e-6 * 10f64.powf(x / 20.0),
    }
}

/// Which dimension a unit symbol measures, if it is one we know (for messages that say
/// "got a frequency").
pub fn dimension_of(symbol: &str) -> Option<Dimension> {
    lookup(symbol).map(|(d, _, _)| d)
}

/// Splits `"3.5e-3 mm"` or `"3.5mm"` into the number and the unit symbol.
fn split_number(text: &str) -> Option<(f64, &str)> {
    let t = text.trim();
    let bytes = t.as_bytes();
    let mut end = 0;
    if end < bytes.len() && (bytes[end] == b'+' || bytes[end] == b'-') {
        end += 1;
    }
    let digits_start = end;
    while end < bytes.len() && (bytes[end].is_ascii_digit() || bytes[end] == b'.') {
        end += 1;
    }
    if end == digits_start {
        return None;
    }
    // An exponent only if digits follow it: "3e-3 m" but "3 em" is not a number.
    if end < bytes.len() && (bytes[end] == b'e' || bytes[end] == b'E') {
        let mut k = end + 1;
        if k < bytes.len() && (bytes[k] == b'+' || bytes[k] == b'-') {
            k += 1;
        }
        if k < bytes.len() && bytes[k].is_ascii_digit() {
            while k < bytes.len() && bytes[k].is_ascii_digit() {
                k += 1;
            }
            end = k;
        }
    }
    let number: f64 = t[..end].parse().ok()?;
    Some((number, t[end..].trim_start()))
}

/// Reads a quantity written as `"<number> <unit>"` and returns its SI value.
///
/// The unit must measure `dim`; the number must be finite. A string with no unit is
/// refused (write a bare TOML number for SI base units).
pub fn parse_quantity(text: &str, dim: Dimension) -> Result<f64, UnitError> {
    // Messages quote the text: control characters are shown escaped so they stay on
    // one line.
    let shown = |s: &str| -> String {
        if s.chars().any(char::is_control) {
            s.escape_debug().to_string()
        } else {
            s.to_string()
        }
    };
    let Some((number, symbol)) = split_number(text) else {
        let text = shown(text);
        return Err(UnitError(format!(
            "\"{text}\" is not a quantity; write {} {}",
            dim.noun(),
            dim.example()
        )));
    };
    let (text, symbol) = (&shown(text), &shown(symbol));
    if symbol.is_empty() {
        return Err(UnitError(format!(
            "\"{text}\" has no unit; write {} {} or a bare number in SI units",
            dim.noun(),
            dim.example()
        )));
    }
    let Some((found, scale, prefix)) = lookup(symbol) else {
        return Err(UnitError(format!(
            "unknown unit \"{symbol}\" in \"{text}\"; write {} {}",
            dim.noun(),
            dim.example()
        )));
    };
    if found != dim {
        return Err(UnitError(format!(
            "\"{text}\" is {}, expected {} such as {}",
            found.noun(),
            dim.noun(),
            dim.example()
        )));
    }
    let value = to_si(number, scale, prefix);
    if !value.is_finite() {
        return Err(UnitError(format!("\"{text}\" is not a finite number")));
    }
    Ok(value)
}

/// Formats an SI value with an engineering prefix and `digits` significant figures,
/// e.g. `format_si(2.2e-6, "V", 3)` = `"2.20 µV"`.
pub fn format_si(value: f64, unit: &str, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value} {unit}");
    }
    const PREFIXES: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let mag = value.abs();
    if mag < 0.999_999_5e-15 {
        return format!("{value:.prec$e} {unit}", prec = digits.saturating_sub(1));
    }
    let (factor, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(f, _)| mag >= *f * 0.999_999_5)
        .unwrap_or((1e-15, "f"));
    let scaled = value / factor;
    let int_digits = (scaled.abs().log10().floor() as i64 + 1).max(1) as usize;
    let decimals = digits.saturating_sub(int_digits);
    format!("{scaled:.decimals$} {prefix}{unit}")
}

/// A length for messages, in engineering units: `mm(2e-4)` = `"200.0 µm"`.
pub fn mm(metres: f64) -> String {
    format_si(metres, "m", 4)
}

/// A point for messages, each coordinate in engineering units: `(1.000 mm, 0.000 m, ...)`.
pub fn mm_point(p: &nalgebra::Vector3<f64>) -> String {
    format!("({}, {}, {})", mm(p.x), mm(p.y), mm(p.z))
}

/// Formats an area in m² with the prefix on the metre, `digits` significant: mm² from
/// 1 mm² up to 10 000 mm² (every loop a circuit board holds, so two loops always
/// compare in one unit), m² from 0.01 m², µm² below 1 mm²; e.g. `"706.9 mm²"`. The
/// unit and the decimals are chosen after rounding, so 99.999 999 mm² prints as
/// `100.0 mm²`, never `100.00 mm²`.
pub fn format_area(value: f64, digits: usize) -> String {
    let digits = digits.max(1);
    let round = |x: f64| -> f64 {
        if x == 0.0 {
            return 0.0;
        }
        let p = (digits as i32 - 1) - x.abs().log10().floor() as i32;
        let k = 10f64.powi(p);
        (x * k).round() / k
    };
    let a = round(value).abs();
    let (factor, unit) = if a >= 1e-2 {
        (1.0, "m²")
    } else if a >= 1e-6 || a == 0.0 {
        (1e-6, "mm²")
    } else {
        (1e-12, "µm²")
    };
    let scaled = round(value / factor);
    let decimals = if scaled == 0.0 {
        digits - 1
    } else {
        (digits as i64 - 1 - scaled.abs().log10().floor() as i64).max(0) as usize
    };
    format!("{scaled:.decimals$} {unit}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(s: &str, d: Dimension) -> f64 {
        parse_quantity(s, d).unwrap()
    }

    #[test]
    fn prefixes_and_units_scale_as_si_defines() {
        // Values of the prefixes and of the inch (exactly 25.4 mm): SI Brochure, 9th ed.,
        // and the 1959 international yard and pound agreement.
        assert_eq!(q("3 mm", Dimension::Length), 3e-3);
        assert_eq!(q("35 um", Dimension::Length), 35e-6);
        assert_eq!(q("35 µm", Dimension::Length), 35e-6);
        assert_eq!(q("35 μm", Dimension::Length), 35e-6);
        assert_eq!(q("1 in", Dimension::Length), 0.0254);
        assert!((q("10 mil", Dimension::Length) - 254e-6).abs() < 1e-18);
        assert_eq!(q("2 cm", Dimension::Length), 0.02);
        assert_eq!(q("25 kHz", Dimension::Frequency), 25e3);
        assert_eq!(q("1 MHz", Dimension::Frequency), 1e6);
        assert_eq!(q("0.5 A", Dimension::Current), 0.5);
        assert_eq!(q("50 ns", Dimension::Time), 50e-9);
        assert_eq!(q("12 uT", Dimension::Field), 12e-6);
        assert_eq!(q("4.7 uH", Dimension::Inductance), 4.7e-6);
        assert_eq!(q("10 kohm", Dimension::Resistance), 1e4);
        assert_eq!(q("3.5e7 S/m", Dimension::Conductivity), 3.5e7);
        assert_eq!(q("58 MS/m", Dimension::Conductivity), 58e6);
        assert!((q("25 mm2", Dimension::Area) - 25e-6).abs() < 1e-20);
        assert!((q("180 deg", Dimension::Angle) - std::f64::consts::PI).abs() < 1e-15);
        assert_eq!(q("1.5 rad", Dimension::Angle), 1.5);
        assert_eq!(q("3mm", Dimension::Length), 3e-3);
        assert_eq!(q("-2.5e-1 m", Dimension::Length), -0.25);
    }

    #[test]
    fn dbuv_is_twenty_log_ratio_to_a_microvolt() {
        // Definition of dBµV: 20·log10(V / 1 µV).
        assert!((q("0 dBuV", Dimension::Voltage) - 1e-6).abs() < 1e-21);
        assert!((q("20 dBuV", Dimension::Voltage) - 1e-5).abs() < 1e-20);
        assert!((q("-6 dBuV", Dimension::Voltage) - 1e-6 * 10f64.powf(-0.3)).abs() < 1e-20);
        assert!((q("1.2 uV", Dimension::Voltage) - 1.2e-6).abs() < 1e-21);
    }

    #[test]
    fn wrong_unit_names_what_it_is() {
        let e = parse_quantity("8 kHz", Dimension::Length).unwrap_err();
        assert!(e.0.contains("frequency"), "{e}");
        assert!(parse_quantity("8", Dimension::Length).is_err());
        assert!(parse_quantity("8 furlong", Dimension::Length).is_err());
        assert!(parse_quantity("mm", Dimension::Length).is_err());
        assert!(parse_quantity("1 kin", Dimension::Length).is_err());
        assert!(parse_quantity("1 mdeg", Dimension::Angle).is_err());
        assert!(parse_quantity("1e999 m", Dimension::Length).is_err());
        assert!(parse_quantity("nan m", Dimension::Length).is_err());
    }

    #[test]
    fn engineering_format() {
        assert_eq!(format_si(2.2e-6, "V", 3), "2.20 µV");
        assert_eq!(format_si(1500.0, "Hz", 3), "1.50 kHz");
        assert_eq!(format_si(-0.0123, "H", 3), "-12.3 mH");
        assert_eq!(format_area(7.069e-4, 4), "706.9 mm²");
        assert_eq!(format_area(45e-6, 3), "45.0 mm²");
        // One unit for the same area, whatever rounding noise it carries.
        assert_eq!(format_area(1e-4, 4), "100.0 mm²");
        assert_eq!(format_area(0.999_999_999e-4, 4), "100.0 mm²");
        assert_eq!(format_area(9.999_9e-7, 4), "1.000 mm²");
        assert_eq!(format_area(0.02, 4), "0.02000 m²");
    }
}
