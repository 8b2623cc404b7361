//! EMF versus the swept value: totals, lines, design options, limit and safe distance.

use super::layout::{Entry, Sample, TitleLine, figure};
use super::separation::Separation;
use super::{
    Axis, LINE_COLOURS, PlotError, axes_chart, err, level_line, padded, runs_above, three_figures,
};
use crate::model::{Scene, Vary};
use crate::run::sweep::SweepResult;
use crate::units::format_si;
use plotters::prelude::*;
use plotters::style::full_palette::{BLUE_700, ORANGE_700, RED_700};

/// One curve of a sweep's plot: its legend text, colour, width (px) and value at every
/// step (V rms).
struct Curve {
    label: String,
    colour: RGBColor,
    width: u32,
    values: Vec<f64>,
}

/// The sweep's plot as SVG text: total EMF and each line's EMF (or each design
/// option's total) versus the swept value, the victim's limit on the total, and the safe
/// distance when there is one. Distance sweeps also show the separation between the
/// victim's centre and the nearest source's centre.
pub fn sweep_svg(result: &SweepResult, scene: &Scene) -> Result<String, PlotError> {
    let spec = &result.spec;
    let sep = match spec.vary {
        Vary::Distance(d) => Separation::new(scene, spec, d),
        _ => None,
    };
    let x_axis = sweep_x_axis(spec);
    let y_log = !matches!(spec.vary, Vary::Angle(_));
    let y_axis = Axis {
        label: "induced EMF, rms".into(),
        log: y_log,
        unit: "V",
        scale: 1.0,
        angle: false,
    };
    let curves = curves(result);
    let data_peak = curves
        .iter()
        .flat_map(|c| c.values.iter())
        .copied()
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    // On a linear axis a limit far above the data would flatten it: leave it off scale.
    let limit_shown = result.limit.filter(|&l| y_log || l <= 3.0 * data_peak);
    let peak = data_peak.max(limit_shown.unwrap_or(0.0));
    if peak.is_nan() || peak <= 0.0 {
        return Err("the EMF is zero over the whole sweep: nothing to plot".into());
    }
    let (floor, (y0, y1)) = y_range(&curves, peak, limit_shown, y_log);
    let xs: Vec<f64> = result
        .rows
        .iter()
        .map(|r| x_axis.to_plot(r.value))
        .collect();
    let (x0, x1) = padded(
        xs[0].min(xs[xs.len() - 1]),
        xs[0].max(xs[xs.len() - 1]),
        x_axis.log,
    );
    let y_of = |v: f64| y_axis.to_plot(v);
    let legend = legend(result, &curves, limit_shown, floor, sep.as_ref());
    let title = [TitleLine {
        text: format!(
            "EMF induced in \"{}\" versus {}{} (sweep \"{}\")",
            scene.victims[spec.victim].id,
            spec.vary.name(),
            if spec.worst {
                ", worst-case orientation"
            } else {
                ""
            },
            spec.id
        ),
        colour: BLACK,
        size: 21,
    }];
    let top_axis = sep.as_ref().filter(|s| s.receding(spec.from, spec.to));
    figure(&title, &legend, |area| {
        let top = if top_axis.is_some() { 52 } else { 6 };
        let mut chart = axes_chart(area, (&x_axis, &y_axis), (x0, x1), (y0, y1), top)?;
        for c in &curves {
            let pts: Vec<(f64, f64)> = xs
                .iter()
                .zip(&c.values)
                .map(|(&x, &v)| (x, y_of(v)))
                .collect();
            for run in runs_above(&pts, floor.unwrap_or(f64::NEG_INFINITY)) {
                chart
                    .draw_series(LineSeries::new(run, c.colour.stroke_width(c.width)))
                    .map_err(err)?;
            }
        }
        if let Some(l) = limit_shown {
            level_line(&mut chart, (x0, x1), y_of(l), RED_700.stroke_width(2), true)?;
        }
        if let Some(s) = result.safe_value.filter(|&s| s != spec.from) {
            let x = x_axis.to_plot(s);
            chart
                .draw_series(LineSeries::new(
                    vec![(x, y0), (x, y1)],
                    ORANGE_700.stroke_width(2),
                ))
                .map_err(err)?;
        }
        if let Some(s) = top_axis {
            s.draw_axis(&mut chart, &x_axis, (x0, x1), y1)?;
        }
        Ok(())
    })
}

/// The floor below which curves are cut (plotted units; `None` on a linear axis) and
/// the plotted y range. On a log axis the floor is the smallest value of any curve, but
/// no lower than the decade at or under 120 dB below the largest value; when a curve
/// goes under that, the plot's bottom is the floor itself, so that the cut curve leaves
/// through the bottom axis.
fn y_range(
    curves: &[Curve],
    peak: f64,
    limit: Option<f64>,
    log: bool,
) -> (Option<f64>, (f64, f64)) {
    if !log {
        let (_, hi) = padded(0.0, peak, false);
        return (None, (0.0, hi));
    }
    let cap = (peak * 1e-6).log10().floor();
    let lowest = curves
        .iter()
        .flat_map(|c| c.values.iter())
        .filter(|v| **v > 0.0 && v.is_finite())
        .fold(peak, |a, &v| a.min(v))
        .log10();
    let floor = lowest.max(cap).min(limit.map_or(f64::INFINITY, f64::log10));
    let (lo, hi) = padded(floor, peak.log10(), true);
    let clipped = curves
        .iter()
        .flat_map(|c| c.values.iter())
        .any(|&v| under(v, floor));
    (Some(floor), (if clipped { floor } else { lo }, hi))
}

/// The curves: without design options each line thin (the eight largest) and the total
/// thick; with them one thick total per option.
fn curves(result: &SweepResult) -> Vec<Curve> {
    if !result.compare.is_empty() {
        return result
            .compare
            .iter()
            .enumerate()
            .map(|(rank, a)| Curve {
                label: a.label(),
                colour: LINE_COLOURS[rank % LINE_COLOURS.len()],
                width: 3,
                values: a.totals.clone(),
            })
            .collect();
    }
    let mut out = line_curves(result);
    out.push(Curve {
        label: "total (all lines)".into(),
        colour: BLUE_700,
        width: 3,
        values: result.rows.iter().map(|r| r.total_rms).collect(),
    });
    out
}

/// Each spectral line's EMF (up to eight lines, the largest ones), by frequency.
fn line_curves(result: &SweepResult) -> Vec<Curve> {
    let n_lines = result.rows.first().map_or(0, |r| r.lines.len());
    if n_lines < 2 {
        return Vec::new();
    }
    let rms = |k: usize| -> Vec<f64> {
        result
            .rows
            .iter()
            .map(|r| {
                r.lines
                    .get(k)
                    .map_or(0.0, |l| l.1.norm() / std::f64::consts::SQRT_2)
            })
            .collect()
    };
    let mut order: Vec<(usize, f64)> = (0..n_lines)
        .map(|k| (k, rms(k).into_iter().fold(0.0, f64::max)))
        .collect();
    order.sort_by(|a, b| b.1.total_cmp(&a.1));
    order.truncate(8);
    order.sort_by_key(|o| o.0); // the legend lists the lines by frequency
    order
        .iter()
        .enumerate()
        .map(|(rank, &(k, _))| Curve {
            label: match result.rows.first().and_then(|r| r.lines.get(k)) {
                Some(l) if !matches!(result.spec.vary, Vary::Frequency) => {
                    format!("line at {}", format_si(l.0, "Hz", 3))
                }
                _ => format!("line {}", k + 1),
            },
            colour: LINE_COLOURS[rank % LINE_COLOURS.len()],
            width: 1,
            values: rms(k),
        })
        .collect()
}

/// The legend: every curve (and where it is off scale under `floor`, log10 of volts),
/// the limit, the safe distance.
fn legend(
    result: &SweepResult,
    curves: &[Curve],
    limit_shown: Option<f64>,
    floor: Option<f64>,
    sep: Option<&Separation>,
) -> Vec<Entry> {
    let mut out = Vec::new();
    for c in curves {
        let off = off_scale(result, c, floor);
        if off.as_deref().is_none_or(|t| !t.contains("everywhere")) {
            out.push(Entry {
                sample: Sample::Line(c.colour, c.width),
                text: c.label.clone(),
            });
        }
        if let Some(text) = off {
            out.push(Entry {
                sample: Sample::OffScale(c.colour),
                text,
            });
        }
    }
    if let Some(l) = result.limit {
        let l = format_si(l, "V", 3);
        out.push(match limit_shown {
            Some(_) => Entry {
                sample: Sample::Dashed(RED_700, 2),
                text: format!("limit (on the total): {l} rms"),
            },
            None => Entry {
                sample: Sample::Note,
                text: format!("limit (on the total) {l} rms: above the plotted range"),
            },
        });
    }
    if let Some(text) = sep.and_then(|p| p.passing_note(result.spec.from, result.spec.to)) {
        out.push(Entry {
            sample: Sample::Note,
            text,
        });
    }
    if let Some(s) = result.safe_value.filter(|&s| s != result.spec.from) {
        let apart = sep.map_or(String::new(), |p| {
            format!(", {} mm apart", three_figures(p.at(s) * 1e3))
        });
        out.push(Entry {
            sample: Sample::Line(ORANGE_700, 2),
            text: format!("safe beyond {:.2} mm moved{apart}", s * 1e3),
        });
    }
    out
}

/// Whether `v` (V) is under the floor (log10 of volts), as `runs_above` cuts curves:
/// zero and NaN are under it.
fn under(v: f64, floor: f64) -> bool {
    !matches!(
        v.log10().partial_cmp(&floor),
        Some(std::cmp::Ordering::Greater | std::cmp::Ordering::Equal)
    )
}

/// Where curve `c` is under the floor (log10 of volts), as a legend text; `None` when
/// nowhere.
fn off_scale(result: &SweepResult, c: &Curve, floor: Option<f64>) -> Option<String> {
    let floor = floor?;
    let steps: Vec<usize> = (0..c.values.len())
        .filter(|&k| under(c.values[k], floor))
        .collect();
    let (first, last) = (*steps.first()?, *steps.last()?);
    let f = format_si(10f64.powf(floor), "V", 3);
    let value = |k: usize| result.spec.vary.format_value(result.rows[k].value);
    let place = if steps.len() == c.values.len() {
        "everywhere".to_string()
    } else if first == last {
        format!("at {}", value(first))
    } else if last - first + 1 == steps.len() {
        format!("from {} to {}", value(first), value(last))
    } else {
        format!("at {} of {} steps", steps.len(), c.values.len())
    };
    Some(format!("{}: under {f} {place} (off scale)", c.label))
}

/// The x axis of a sweep's plot; a distance axis says along what.
fn sweep_x_axis(spec: &crate::model::SweepSpec) -> Axis {
    let v = |d: &crate::field::Vec3| {
        format!(
            "[{}, {}, {}]",
            three_figures(d.x),
            three_figures(d.y),
            three_figures(d.z)
        )
    };
    let (label, unit, scale, angle) = match spec.vary {
        Vary::Distance(d) => {
            let label = format!("distance moved along {} (mm)", v(&d));
            (label, "", 1e-3, false)
        }
        Vary::Angle(a) => (
            format!("rotation about {} (deg)", v(&a)),
            "",
            std::f64::consts::PI / 180.0,
            true,
        ),
        Vary::Frequency => ("fundamental frequency".into(), "Hz", 1.0, false),
    };
    Axis {
        label,
        log: spec.log,
        unit,
        scale,
        angle,
    }
}
