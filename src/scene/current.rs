//! `current = { ... }`: a source's drive current as spectral lines.

use super::reader::{Table, Value};
use crate::error::InputError;
use crate::spectrum::{Line, Tail, same_frequency};
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

/// A source current read from its table: the listed spectral lines and what they leave
/// out.
pub struct Current {
    /// Peak phasors, A, ascending frequency.
    pub lines: Vec<Line>,
    /// The rest of the waveform's series above the listed lines.
    pub tail: Tail,
    /// The rms of the whole current (every line, listed or not), A.
    pub rms: f64,
}

/// Reads a `current` table into its spectral lines (peak phasors), ascending frequency,
/// and the closed-form description of the lines left out. A waveform other than a sine
/// becomes its Fourier series (see [`crate::waveform`]). A waveform with an ideal edge
/// gets a warning: its EMF has no converging total.
pub fn parse_current(
    value: &Value<'_, '_>,
    ctx: &CurrentContext<'_>,
    warnings: &mut Vec<String>,
) -> Result<Current, InputError> {
    let table = value.table()?;
    if let Some(lines) = table.get("lines") {
        let out = parse_lines(&lines)?;
        table.finish(&[], "a current given as `lines` (remove the other keys)")?;
        return Ok(Current {
            rms: lines_rms(&out),
            lines: out,
            tail: Tail::None,
        });
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
        let line = Line::new(frequency, amplitude.sine_peak(), phase);
        return Ok(Current {
            rms: lines_rms(&[line]),
            lines: vec![line],
            tail: Tail::None,
        });
    }
    let waveform = parse_waveform(&table, name, frequency)?;
    let count = line_count(&table, ctx.tolerance)?;
    table.finish(CURRENT_KEYS, &format!("a {name} current"))?;
    let shape = waveform.shape();
    let series = waveform::series(&shape, frequency, amplitude, phase, count);
    let tail = if shape.has_jump() {
        let note = ideal_edge_note(&table, value, name, ctx.source_id);
        warnings.push(note.clone());
        Tail::IdealEdge(note)
    } else {
        Tail::Slope(series.slope_mean_square)
    };
    Ok(Current {
        lines: series.lines,
        tail,
        rms: series.rms,
    })
}

/// The rms of a sum of lines at distinct frequencies, A: √(Σ|I|²/2).
fn lines_rms(lines: &[Line]) -> f64 {
    (lines.iter().map(|l| l.current.norm_sqr()).sum::<f64>() / 2.0).sqrt()
}

/// The located note for a waveform with an ideal edge, saying which key gives the
/// edge its duration.
fn ideal_edge_note(table: &Table<'_, '_>, value: &Value<'_, '_>, name: &str, id: &str) -> String {
    let (key, what) = match name {
        "sawtooth" => (
            "waveform",
            "a sawtooth's drop is ideal (instant); give the flyback time as `fall`, \
             e.g. fall = \"12 us\""
                .to_string(),
        ),
        "square" => (
            "waveform",
            "a square wave's edges are ideal (instant); give their duration as `rise` (and \
             `fall`), e.g. rise = \"100 ns\""
                .to_string(),
        ),
        _ => (
            if table.has("fall") { "fall" } else { "rise" },
            format!("a {name} edge of zero duration is ideal; give it a duration"),
        ),
    };
    let reason = format!(
        "source \"{id}\": {what}. The EMF of an ideal edge grows with frequency without \
         end, so its total does not converge: no verdict can be given"
    );
    match table.get(key) {
        Some(v) => v.error(reason).to_string(),
        None => value.error(reason).to_string(),
    }
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
        "square" if table.has("rise") || table.has("fall") => parse_edges(table, frequency, false)?,
        "square" => Waveform::Square,
        "triangle" => Waveform::Triangle,
        "sawtooth" => Waveform::Sawtooth {
            fall: match table.get("fall") {
                Some(f) => {
                    let fall = edge_fraction(&f, frequency)?;
                    if fall >= 1.0 {
                        return Err(f.error(format!(
                            "the flyback must be shorter than the period 1/frequency ({})",
                            format_si(1.0 / frequency, "s", 4)
                        )));
                    }
                    fall
                }
                None => 0.0,
            },
        },
        "trapezoid" => parse_edges(table, frequency, true)?,
        _ => unreachable!("waveform names checked by waveform_name"),
    })
}

/// An edge time as a fraction of the period at `frequency` Hz.
fn edge_fraction(v: &Value<'_, '_>, frequency: f64) -> Result<f64, InputError> {
    let t = v.quantity(Dimension::Time)?;
    if t < 0.0 {
        return Err(v.error(format!("an edge time cannot be negative, got {}", v.raw())));
    }
    Ok(t * frequency)
}

/// `rise` (required for a trapezoid; for a square either edge key may be given),
/// `fall` (default: rise) and `duty` (default 0.5; a square's duty is 0.5), as
/// fractions of the period: a trapezoid, or a square wave with edges that take time.
fn parse_edges(
    table: &Table<'_, '_>,
    frequency: f64,
    trapezoid: bool,
) -> Result<Waveform, InputError> {
    let rise_v = if trapezoid || !table.has("fall") {
        Some(table.require(
            "rise",
            "the full duration of the rising edge, e.g. \"50 ns\"",
        )?)
    } else {
        table.get("rise")
    };
    let fall_v = table.get("fall");
    let rise = match (&rise_v, &fall_v) {
        (Some(r), _) => edge_fraction(r, frequency)?,
        (None, Some(f)) => edge_fraction(f, frequency)?,
        (None, None) => unreachable!("one edge key is present"),
    };
    let fall = match fall_v {
        Some(f) => edge_fraction(&f, frequency)?,
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
    let duty = if trapezoid {
        parse_duty(table, rise + fall, edges_key)?
    } else {
        if let Some(d) = table.get("duty") {
            return Err(d.error(
                "a square wave's duty is 0.5; use waveform = \"trapezoid\" for another duty",
            ));
        }
        0.5
    };
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
        .map(|c| c.lines)
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
