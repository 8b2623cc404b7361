//! CSV tables of sweeps: one row per step.

use crate::model::Vary;
use crate::run::sweep::{SweepResult, SweepRow};
use num_complex::Complex64;
use std::fmt::Write;

/// Header name of the swept value's column, with its unit.
pub fn value_column(vary: &Vary) -> &'static str {
    match vary {
        Vary::Distance(_) => "distance_m",
        Vary::Angle(_) => "angle_deg",
        Vary::Frequency => "fundamental_hz",
    }
}

/// The swept value in the unit of [`value_column`].
pub fn value_in_unit(vary: &Vary, v: f64) -> f64 {
    match vary {
        Vary::Angle(_) => v.to_degrees(),
        _ => v,
    }
}

/// The sweep as CSV: the swept value, every line's EMF (rms, V), with shields every
/// line's shielding (dB), the total, the margin
/// (dB, empty without a limit), for worst-case sweeps the worst axis, with
/// `compare` the total with each shield alternative, and last `contact` (1 where the
/// victim touches or crosses a source at that step, else 0). Values and EMFs are
/// written with at most 10 significant digits ([`number`]).
pub fn sweep_csv(result: &SweepResult) -> String {
    let first = result
        .rows
        .first()
        .map(|r| r.lines.as_slice())
        .unwrap_or(&[]);
    let shielded = result
        .rows
        .first()
        .is_some_and(|r| !r.shielding_db.is_empty());
    let mut out = String::new();
    write_header(&mut out, result, first, shielded);
    for (i, r) in result.rows.iter().enumerate() {
        write_row(&mut out, result, i, r, first.len(), shielded);
    }
    out
}

/// The header line: the swept value, one EMF column per spectral line `first`
/// (frequency in Hz, V rms), with `shielded` one shielding column per line (dB),
/// the total (V rms), the margin (dB), the worst axis and each compared alternative.
fn write_header(
    out: &mut String,
    result: &SweepResult,
    first: &[(f64, Complex64)],
    shielded: bool,
) {
    let vary = &result.spec.vary;
    out.push_str(value_column(vary));
    for (k, (f, _)) in first.iter().enumerate() {
        if matches!(vary, Vary::Frequency) {
            let _ = write!(out, ",line{}_emf_v_rms", k + 1);
        } else {
            let _ = write!(out, ",emf_v_rms_at_{}_hz", trim_float(*f));
        }
    }
    if shielded {
        for (k, (f, _)) in first.iter().enumerate() {
            if matches!(vary, Vary::Frequency) {
                let _ = write!(out, ",line{}_shielding_db", k + 1);
            } else {
                let _ = write!(out, ",shielding_db_at_{}_hz", trim_float(*f));
            }
        }
    }
    out.push_str(",total_emf_v_rms,margin_db");
    if result.spec.worst {
        out.push_str(",worst_axis_x,worst_axis_y,worst_axis_z");
    }
    for a in &result.compare {
        match &a.shield {
            None => out.push_str(",total_emf_v_rms_no_shield"),
            Some(id) => {
                let _ = write!(out, ",total_emf_v_rms_with_{id}");
            }
        }
    }
    out.push_str(",contact\n");
}

/// Row `i` (step `r`): the swept value in its column's unit, `lines` EMFs (V rms),
/// with `shielded` as many shieldings (dB), the total (V rms), the margin (dB),
/// the worst axis (unit vector), each compared alternative's total (V rms) and the
/// contact mark (1 or 0).
fn write_row(
    out: &mut String,
    result: &SweepResult,
    i: usize,
    r: &SweepRow,
    lines: usize,
    shielded: bool,
) {
    out.push_str(&number(value_in_unit(&result.spec.vary, r.value)));
    for k in 0..lines {
        let e = r
            .lines
            .get(k)
            .map_or(0.0, |l| l.1.norm() / std::f64::consts::SQRT_2);
        let _ = write!(out, ",{}", number(e));
    }
    if shielded {
        for k in 0..lines {
            let _ = write!(out, ",{:.4}", r.shielding_db.get(k).copied().unwrap_or(0.0));
        }
    }
    let _ = write!(out, ",{},", number(r.total_rms));
    if let Some(l) = result.limit {
        let m = crate::coupling::margin_db(l, r.total_rms);
        if m.is_finite() {
            let _ = write!(out, "{m:.4}");
        }
    }
    if let Some(a) = r.worst_axis {
        let _ = write!(out, ",{:.6},{:.6},{:.6}", a.x, a.y, a.z);
    }
    for a in &result.compare {
        let _ = write!(
            out,
            ",{}",
            number(a.totals.get(i).copied().unwrap_or(f64::NAN))
        );
    }
    let _ = writeln!(out, ",{}", u8::from(!r.contact.is_empty()));
}

/// A CSV number: scientific notation with at most 10 significant digits, trailing zeros
/// of the mantissa trimmed (`1.5e-2`, `5e1`, `5.89730837e1`), so that rounding noise in
/// the last bits (`1.4999999999999998e1`) does not show; `NaN` and `inf` as Rust
/// writes them.
pub fn number(x: f64) -> String {
    if !x.is_finite() {
        return format!("{x}");
    }
    let s = format!("{x:.9e}");
    let (mantissa, exponent) = s.split_once('e').unwrap_or((&s, "0"));
    let mantissa = if mantissa.contains('.') {
        mantissa.trim_end_matches('0').trim_end_matches('.')
    } else {
        mantissa
    };
    format!("{mantissa}e{exponent}")
}

fn trim_float(f: f64) -> String {
    let s = format!("{f}");
    s.trim_end_matches(".0").to_string()
}
