//! `current = { ... }`: a source's drive current as spectral lines.

use super::reader::{Table, Value};
use crate::error::InputError;
use crate::spectrum::{Line, same_frequency};
use crate::units::Dimension;

/// Waveforms the spec names; those not yet built are refused by name.
const WAVEFORMS: &[&str] = &["sine", "square", "triangle", "sawtooth", "trapezoid"];

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
pub fn parse_current(
    value: &Value<'_, '_>,
    ctx: &CurrentContext<'_>,
    warnings: &mut Vec<String>,
) -> Result<Vec<Line>, InputError> {
    let _ = (ctx, &warnings);
    let table = value.table()?;
    if let Some(lines) = table.get("lines") {
        let out = parse_lines(&lines)?;
        table.finish(&[], "a current given as `lines` (remove the other keys)")?;
        return Ok(out);
    }
    let waveform = match table.get("waveform") {
        Some(w) => {
            let name = w.string()?;
            if !WAVEFORMS.contains(&name) {
                return Err(w.error(format!(
                    "unknown waveform \"{name}\"; expected one of {}",
                    WAVEFORMS.join(", ")
                )));
            }
            if name != "sine" {
                return Err(w.error(format!(
                    "waveform \"{name}\" is not supported yet in this version; list its \
                     harmonics with `lines = [...]` instead"
                )));
            }
            name
        }
        None => "sine",
    };
    let peak = amplitude(&table, true)?;
    let frequency = table
        .require("frequency", "the fundamental frequency, e.g. \"50 Hz\"")?
        .positive(Dimension::Frequency)?;
    let phase = match table.get("phase") {
        Some(p) => p.quantity(Dimension::Angle)?,
        None => 0.0,
    };
    if let Some(h) = table.get("harmonics") {
        h.count(1)?;
    }
    table.finish(CURRENT_KEYS, &format!("a {waveform} current"))?;
    Ok(vec![Line::new(frequency, peak, phase)])
}

/// The peak amplitude from exactly one of `peak`, `rms` or (when `whole_waveform`)
/// `peak_to_peak`, for a sine.
fn amplitude(table: &Table<'_, '_>, whole_waveform: bool) -> Result<f64, InputError> {
    let keys: &[&str] = if whole_waveform {
        &["peak", "rms", "peak_to_peak"]
    } else {
        &["peak", "rms"]
    };
    let given: Vec<&str> = keys.iter().copied().filter(|k| table.has(k)).collect();
    match given.as_slice() {
        [] => Err(table.error(format!(
            "missing amplitude: give one of {}",
            keys.iter()
                .map(|k| format!("`{k}`"))
                .collect::<Vec<_>>()
                .join(", ")
        ))),
        [one] => {
            let v = table.get(one).expect("present");
            let x = v.quantity(Dimension::Current)?;
            if x < 0.0 {
                return Err(v.error("an amplitude cannot be negative; use `phase` to invert"));
            }
            Ok(match *one {
                "peak" => x,
                "rms" => x * std::f64::consts::SQRT_2,
                _ => x / 2.0,
            })
        }
        [_, second, ..] => {
            Err(table.error_at(second, format!("give only one of {}", given.join(", "))))
        }
    }
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
        let peak = amplitude(&t, false)?;
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
