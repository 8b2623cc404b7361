//! `current = { ... }`: a source's drive current as spectral lines.

use super::reader::{Table, Value};
use crate::error::InputError;
use crate::spectrum::{Line, same_frequency};
use crate::units::{Dimension, format_si};
use crate::waveform::{self, Amplitude, LineCount, Waveform};

/// Waveforms a scene may name (docs/scene-reference.md, "Currents and waveforms").
const WAVEFORMS: &[&str] = &["sine", "square", "triangle", "sawtooth", "trapezoid"];

/// Edges that fit the period to this fraction of it are accepted (unit conversions
/// round; the shape absorbs the rest).
const FIT_SLACK: f64 = 1e-9;

/// Every key a current table may hold, for "did you mean" hints.
const CURRENT_KEYS: &[&str] = &[
    "waveform",
    "peak",
    "rms",
    "peak_to_peak",
    "frequency",
    "harmonics",
    "phase",
    "rise",
    "fall",
    "duty",
    "lines",
];

/// What reading a current needs from its source.
pub struct CurrentContext<'a> {
    /// The source's id, for warnings.
    pub source_id: &'a str,
    /// The scene's relative tolerance (default harmonic cut).
    pub tolerance: f64,
    /// False when the source is scaled by `calibrate`: a missing amplitude then means a
    /// 1 A peak waveform that calibration rescales.
    pub amplitude_required: bool,
}

/// Reads a `current` table into its spectral lines (peak phasors), ascending frequency.
/// A waveform other than a sine becomes its Fourier series (see [`crate::waveform`]);
/// a note goes into `warnings` when the default rule stops at its line cap.
pub fn parse_current(
    value: &Value<'_, '_>,
    ctx: &CurrentContext<'_>,
    warnings: &mut Vec<String>,
) -> Result<Vec<Line>, InputError> {
    let table = value.table()?;
    if let Some(lines) = table.get("lines") {
        let out = parse_lines(&lines)?;
        table.finish(&[], "a current given as `lines` (remove the other keys)")?;
        return Ok(out);
    }
    let name = waveform_name(&table)?;
    let amplitude = match amplitude(&table, &["peak", "rms", "peak_to_peak"])? {
        Some(a) => a,
        None if !ctx.amplitude_required => Amplitude::Peak(1.0),
        None => return Err(missing_amplitude(&table, &["peak", "rms", "peak_to_peak"])),
    };
    let frequency = table
        .require("frequency", "the fundamental frequency, e.g. \"50 Hz\"")?
        .positive(Dimension::Frequency)?;
    let phase = match table.get("phase") {
        Some(p) => p.quantity(Dimension::Angle)?,
        None => 0.0,
    };
    if name == "sine" {
        if let Some(h) = table.get("harmonics") {
            h.count(1)?;
        }
        table.finish(CURRENT_KEYS, "a sine current")?;
        return Ok(vec![Line::new(frequency, amplitude.sine_peak(), phase)]);
    }
    let waveform = parse_waveform(&table, name, frequency)?;
    let count = line_count(&table, ctx.tolerance)?;
    table.finish(CURRENT_KEYS, &format!("a {name} current"))?;
    let series = waveform::series(&waveform.shape(), frequency, amplitude, phase, count);
    if series.capped {
        warnings.push(cap_warning(ctx, name, &series.lines));
    }
    Ok(series.lines)
}

/// The `waveform` key (default sine), checked against the known names.
fn waveform_name<'a>(table: &Table<'a, '_>) -> Result<&'a str, InputError> {
    let Some(w) = table.get("waveform") else {
        return Ok("sine");
    };
    let name = w.string()?;
    if !WAVEFORMS.contains(&name) {
        return Err(w.error(format!(
            "unknown waveform \"{name}\"; expected one of {}",
            WAVEFORMS.join(", ")
        )));
    }
    Ok(name)
}

/// A non-sine waveform; a trapezoid's edge keys are checked against the period.
fn parse_waveform(
    table: &Table<'_, '_>,
    name: &str,
    frequency: f64,
) -> Result<Waveform, InputError> {
    Ok(match name {
        "square" => Waveform::Square,
        "triangle" => Waveform::Triangle,
        "sawtooth" => Waveform::Sawtooth,
        "trapezoid" => parse_trapezoid(table, frequency)?,
        _ => unreachable!("waveform names checked by waveform_name"),
    })
}

/// `rise`, `fall` (default: rise) and `duty` (default 0.5), as fractions of the period.
fn parse_trapezoid(table: &Table<'_, '_>, frequency: f64) -> Result<Waveform, InputError> {
    let edge = |v: Value<'_, '_>| -> Result<f64, InputError> {
        let t = v.quantity(Dimension::Time)?;
        if t < 0.0 {
            return Err(v.error(format!("an edge time cannot be negative, got {}", v.raw())));
        }
        Ok(t * frequency)
    };
    let rise = edge(table.require(
        "rise",
        "the full duration of the rising edge, e.g. \"50 ns\"",
    )?)?;
    let fall = match table.get("fall") {
        Some(f) => edge(f)?,
        None => rise,
    };
    let edges_key = if table.has("fall") { "fall" } else { "rise" };
    if rise + fall > 1.0 + FIT_SLACK {
        return Err(table.error_at(
            edges_key,
            format!(
                "rise + fall ({}) is longer than the period 1/frequency ({})",
                format_si((rise + fall) / frequency, "s", 4),
                format_si(1.0 / frequency, "s", 4)
            ),
        ));
    }
    let duty = parse_duty(table, rise + fall, edges_key)?;
    Ok(Waveform::Trapezoid { rise, fall, duty })
}

/// `duty` (default 0.5), checked to leave room for edges taking `edges` of the period;
/// `edges_key` is where a misfit is reported when `duty` is not given.
fn parse_duty(table: &Table<'_, '_>, edges: f64, edges_key: &str) -> Result<f64, InputError> {
    let duty = match table.get("duty") {
        Some(d) => {
            let x = d.number()?;
            if !(x > 0.0 && x < 1.0) {
                return Err(d.error(format!(
                    "must be between 0 and 1 (a fraction of the period), got {x}"
                )));
            }
            x
        }
        None => 0.5,
    };
    let half = edges / 2.0;
    if duty < half - FIT_SLACK || duty > 1.0 - half + FIT_SLACK {
        let key = if table.has("duty") { "duty" } else { edges_key };
        return Err(table.error_at(
            key,
            format!(
                "the edges do not fit: with rise and fall taking {edges:.4} of the period, \
                 duty must be between {half:.4} and {:.4}",
                1.0 - half
            ),
        ));
    }
    Ok(duty)
}

/// `harmonics` (a count of non-zero lines) or, without it, the scene tolerance.
fn line_count(table: &Table<'_, '_>, tolerance: f64) -> Result<LineCount, InputError> {
    let Some(h) = table.get("harmonics") else {
        return Ok(LineCount::Tolerance(tolerance));
    };
    let n = h.count(1)?;
    if n > waveform::MAX_HARMONICS {
        return Err(h.error(format!(
            "at most {} lines can be kept, got {n}",
            waveform::MAX_HARMONICS
        )));
    }
    Ok(LineCount::Exactly(n))
}

/// The note for a series cut at the default line cap.
fn cap_warning(ctx: &CurrentContext<'_>, name: &str, lines: &[Line]) -> String {
    let top = lines.last().map_or(0.0, |l| l.frequency);
    let advice = if matches!(name, "square" | "sawtooth") {
        "an ideal edge's EMF lines do not fall off (EMF grows as n times the nth line's \
         current); set `harmonics` to choose how many lines to keep, or use waveform = \
         \"trapezoid\" with a `rise` time"
    } else {
        "set `harmonics` to choose how many lines to keep"
    };
    format!(
        "source \"{}\": the {name} current still has lines above the tolerance ({:e} of the \
         largest) beyond its first {} lines, so the series is cut there (at {}); {advice}",
        ctx.source_id,
        ctx.tolerance,
        waveform::MAX_DEFAULT_LINES,
        format_si(top, "Hz", 4)
    )
}

/// Exactly one of `keys` as an [`Amplitude`], or `None` when none is given.
fn amplitude(table: &Table<'_, '_>, keys: &[&str]) -> Result<Option<Amplitude>, InputError> {
    let given: Vec<&str> = keys.iter().copied().filter(|k| table.has(k)).collect();
    match given.as_slice() {
        [] => Ok(None),
        [one] => {
            let v = table.get(one).expect("present");
            let x = v.quantity(Dimension::Current)?;
            if x < 0.0 {
                return Err(v.error("an amplitude cannot be negative; use `phase` to invert"));
            }
            Ok(Some(match *one {
                "peak" => Amplitude::Peak(x),
                "rms" => Amplitude::Rms(x),
                _ => Amplitude::PeakToPeak(x),
            }))
        }
        [_, second, ..] => {
            Err(table.error_at(second, format!("give only one of {}", given.join(", "))))
        }
    }
}

fn missing_amplitude(table: &Table<'_, '_>, keys: &[&str]) -> InputError {
    table.error(format!(
        "missing amplitude: give one of {}",
        keys.iter()
            .map(|k| format!("`{k}`"))
            .collect::<Vec<_>>()
            .join(", ")
    ))
}

fn parse_lines(value: &Value<'_, '_>) -> Result<Vec<Line>, InputError> {
    let items = value.array()?;
    if items.is_empty() {
        return Err(value.error("`lines` is empty; list at least one line"));
    }
    let mut out: Vec<Line> = Vec::new();
    for item in &items {
        let t = item.table()?;
        let f = t
            .require("frequency", "the line's frequency, e.g. \"25 kHz\"")?
            .positive(Dimension::Frequency)?;
        let peak = amplitude(&t, &["peak", "rms"])?
            .ok_or_else(|| missing_amplitude(&t, &["peak", "rms"]))?
            .sine_peak();
        let phase = match t.get("phase") {
            Some(p) => p.quantity(Dimension::Angle)?,
            None => 0.0,
        };
        t.finish(&[], "a spectral line (frequency, peak or rms, phase)")?;
        if out.iter().any(|l| same_frequency(l.frequency, f)) {
            return Err(t.error_at(
                "frequency",
                "two lines at the same frequency; merge them into one phasor",
            ));
        }
        out.push(Line::new(f, peak, phase));
    }
    out.sort_by(|a, b| a.frequency.total_cmp(&b.frequency));
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scene::reader::Doc;

    fn read(text: &str, amplitude_required: bool) -> Result<Vec<Line>, InputError> {
        let doc = Doc::new("t.toml", text);
        let root = toml::de::DeTable::parse(text).expect("valid TOML");
        let root = Table::root(&doc, &root);
        let ctx = CurrentContext {
            source_id: "s",
            tolerance: 1e-6,
            amplitude_required,
        };
        parse_current(
            &root.get("current").expect("a current"),
            &ctx,
            &mut Vec::new(),
        )
    }

    #[test]
    fn a_calibrated_source_without_amplitude_gets_a_1_a_peak_shape() {
        let text = r#"current = { waveform = "square", frequency = "1 kHz", harmonics = 3 }"#;
        assert!(read(text, true).is_err());
        let lines = read(text, false).expect("accepted");
        // Square wave of peak 1 A: fundamental 4/π A (Kreyszig, "Advanced Engineering
        // Mathematics", 10th ed., §11.1, rectangular wave; from memory).
        assert!((lines[0].current.norm() - 4.0 / std::f64::consts::PI).abs() < 1e-14);
    }
}
