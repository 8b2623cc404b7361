//! EMF versus the swept value: totals, lines, design options, limit and safe distance.

use super::{
    Axis, Chart, LINE_COLOURS, PlotError, SIZE, axes_chart, draw_legend, err, limit_line, padded,
};
use crate::run::sweep::SweepResult;
use crate::units::format_si;
use plotters::prelude::*;
use plotters::style::full_palette::{BLUE_700, ORANGE_700};

/// The sweep's plot as SVG text: total EMF and each line's EMF versus the swept value,
/// the victim's limit, and the safe distance when there is one.
pub fn sweep_svg(result: &SweepResult, victim_id: &str) -> Result<String, PlotError> {
    let spec = &result.spec;
    let (x_axis, title) = sweep_x_axis(spec);
    let y_log = !matches!(spec.vary, crate::model::Vary::Angle(_));
    let y_axis = Axis {
        label: "induced EMF, rms".into(),
        log: y_log,
        unit: "V",
        scale: 1.0,
    };
    let totals: Vec<f64> = result.rows.iter().map(|r| r.total_rms).collect();
    let data_peak = totals
        .iter()
        .chain(result.compare.iter().flat_map(|a| a.totals.iter()))
        .copied()
        .fold(0.0, f64::max);
    // On a linear axis a limit far above the data would flatten it: leave it off scale.
    let limit_shown = result.limit.filter(|&l| y_log || l <= 3.0 * data_peak);
    let peak = data_peak.max(limit_shown.unwrap_or(0.0));
    if peak.is_nan() || peak <= 0.0 {
        return Err("the EMF is zero over the whole sweep: nothing to plot".into());
    }
    // A log axis needs a floor: 120 dB under the largest value.
    let floor = peak * 1e-6;
    let y_of = |v: f64| y_axis.to_plot(if y_log { v.max(floor) } else { v });
    let xs: Vec<f64> = result
        .rows
        .iter()
        .map(|r| x_axis.to_plot(r.value))
        .collect();
    let mut y_lo = totals
        .iter()
        .chain(result.compare.iter().flat_map(|a| a.totals.iter()))
        .map(|&v| y_of(v))
        .fold(f64::INFINITY, f64::min);
    let mut y_hi = y_of(peak);
    if let Some(l) = limit_shown {
        y_lo = y_lo.min(y_of(l));
        y_hi = y_hi.max(y_of(l));
    }
    if !y_log {
        y_lo = 0.0;
    }
    let (x0, x1) = padded(
        xs[0].min(xs[xs.len() - 1]),
        xs[0].max(xs[xs.len() - 1]),
        x_axis.log,
    );
    let (y0, y1) = padded(y_lo, y_hi, y_log);

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let caption = format!(
            "EMF induced in \"{victim_id}\" versus {title}{} (sweep \"{}\")",
            if spec.worst {
                ", worst-case orientation"
            } else {
                ""
            },
            spec.id
        );
        let mut chart = axes_chart(&root, caption, (&x_axis, &y_axis), (x0, x1), (y0, y1))?;
        draw_totals(&mut chart, result, &xs, &totals, &y_of)?;
        if let Some(l) = result.limit {
            let label = if limit_shown.is_some() {
                format!("limit {}", format_si(l, "V", 3))
            } else {
                format!("limit {} (above the plotted range)", format_si(l, "V", 3))
            };
            limit_line(&mut chart, (x0, x1), y_of(l), label)?;
        }
        draw_safe(&mut chart, result, &x_axis, (y0, y1))?;
        // EMF rises with frequency and falls with distance: keep the legend off the data.
        let corner = match spec.vary {
            crate::model::Vary::Frequency => SeriesLabelPosition::UpperLeft,
            _ => SeriesLabelPosition::UpperRight,
        };
        draw_legend(&mut chart, corner)?;
        root.present().map_err(err)?;
    }
    Ok(svg)
}

/// The x axis of a sweep's plot and the word for what varies.
fn sweep_x_axis(spec: &crate::model::SweepSpec) -> (Axis, &'static str) {
    match spec.vary {
        crate::model::Vary::Distance(d) => (
            Axis {
                label: format!(
                    "distance moved along [{:.3}, {:.3}, {:.3}] (mm)",
                    d.x, d.y, d.z
                ),
                log: spec.log,
                unit: "",
                scale: 1e-3,
            },
            "distance",
        ),
        crate::model::Vary::Angle(a) => (
            Axis {
                label: format!("rotation about [{:.3}, {:.3}, {:.3}] (deg)", a.x, a.y, a.z),
                log: spec.log,
                unit: "",
                scale: std::f64::consts::PI / 180.0,
            },
            "angle",
        ),
        crate::model::Vary::Frequency => (
            Axis {
                label: "fundamental frequency".into(),
                log: spec.log,
                unit: "Hz",
                scale: 1.0,
            },
            "frequency",
        ),
    }
}

/// The sweep's totals: without design options, each line thin and the total thick;
/// with them, one thick total per option.
fn draw_totals(
    chart: &mut Chart<'_, '_>,
    result: &SweepResult,
    xs: &[f64],
    totals: &[f64],
    y_of: &dyn Fn(f64) -> f64,
) -> Result<(), PlotError> {
    if result.compare.is_empty() {
        draw_lines(chart, result, xs, &y_of)?;
        chart
            .draw_series(LineSeries::new(
                xs.iter().zip(totals).map(|(&x, &v)| (x, y_of(v))),
                BLUE_700.stroke_width(3),
            ))
            .map_err(err)?
            .label("total (all lines)")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], BLUE_700.stroke_width(3)));
    } else {
        // Shield alternatives: one total per alternative.
        for (rank, a) in result.compare.iter().enumerate() {
            let colour = LINE_COLOURS[rank % LINE_COLOURS.len()];
            chart
                .draw_series(LineSeries::new(
                    xs.iter().zip(&a.totals).map(|(&x, &v)| (x, y_of(v))),
                    colour.stroke_width(3),
                ))
                .map_err(err)?
                .label(a.label())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(3))
                });
        }
    }
    Ok(())
}

/// The safe distance as an orange vertical line, when it is inside the range.
fn draw_safe(
    chart: &mut Chart<'_, '_>,
    result: &SweepResult,
    x_axis: &Axis,
    (y0, y1): (f64, f64),
) -> Result<(), PlotError> {
    let spec = &result.spec;
    if let Some(s) = result.safe_value.filter(|&s| s != spec.from) {
        let xs_ = x_axis.to_plot(s);
        chart
            .draw_series(LineSeries::new(
                vec![(xs_, y0), (xs_, y1)],
                ORANGE_700.stroke_width(2),
            ))
            .map_err(err)?
            .label(format!("safe beyond {:.2} mm moved", s * 1e3))
            .legend(|(x, y)| {
                PathElement::new(vec![(x, y), (x + 24, y)], ORANGE_700.stroke_width(2))
            });
    }
    Ok(())
}

/// Each spectral line's EMF as a thin line (up to eight lines, the largest ones).
fn draw_lines(
    chart: &mut Chart<'_, '_>,
    result: &SweepResult,
    xs: &[f64],
    y_of: &dyn Fn(f64) -> f64,
) -> Result<(), PlotError> {
    let n_lines = result.rows.first().map_or(0, |r| r.lines.len());
    if n_lines < 2 {
        return Ok(());
    }
    let mut order: Vec<(usize, f64)> = (0..n_lines)
        .map(|k| {
            let m = result
                .rows
                .iter()
                .map(|r| r.lines.get(k).map_or(0.0, |l| l.1.norm()))
                .fold(0.0, f64::max);
            (k, m)
        })
        .collect();
    order.sort_by(|a, b| b.1.total_cmp(&a.1));
    order.truncate(8);
    order.sort_by_key(|o| o.0); // the legend lists the lines by frequency
    for (rank, &(k, _)) in order.iter().enumerate() {
        let colour = LINE_COLOURS[rank % LINE_COLOURS.len()];
        let label = match result.rows.first().and_then(|r| r.lines.get(k)) {
            Some(l) if !matches!(result.spec.vary, crate::model::Vary::Frequency) => {
                format!("line at {}", format_si(l.0, "Hz", 3))
            }
            _ => format!("line {}", k + 1),
        };
        chart
            .draw_series(LineSeries::new(
                xs.iter().zip(&result.rows).map(|(&x, r)| {
                    let v = r
                        .lines
                        .get(k)
                        .map_or(0.0, |l| l.1.norm() / std::f64::consts::SQRT_2);
                    (x, y_of(v))
                }),
                colour.stroke_width(1),
            ))
            .map_err(err)?
            .label(label)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(1))
            });
    }
    Ok(())
}
