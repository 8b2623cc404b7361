//! SVG plots drawn with the plotters crate: EMF versus the swept value, and the EMF
//! spectrum of a victim. Logarithmic axes are drawn as linear axes of log10(value)
//! with their labels written back in engineering units.

use crate::run::sweep::SweepResult;
use crate::units::format_si;
use plotters::prelude::*;
use plotters::style::full_palette::{BLUE_700, GREY_500, ORANGE_700, RED_700};

const SIZE: (u32, u32) = (900, 560);

/// One axis: its label, whether it is logarithmic, and how to print a value.
struct Axis {
    label: String,
    log: bool,
    unit: &'static str,
    scale: f64,
}

impl Axis {
    fn to_plot(&self, v: f64) -> f64 {
        let v = v / self.scale;
        if self.log { v.log10() } else { v }
    }

    fn text(&self, p: f64) -> String {
        let v = if self.log { 10f64.powf(p) } else { p };
        if self.unit.is_empty() {
            three_figures(v)
        } else {
            format_si(v, self.unit, 3)
        }
    }
}

/// A number to three significant figures without trailing zeros ("3.16", "316", "0.5").
fn three_figures(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let digits = (2 - v.abs().log10().floor() as i32).max(0) as usize;
    let s = format!("{v:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Colours for individual lines: dark enough to read on white, distinct from the total
/// (blue), the limit (red) and the safe-distance marker (orange).
const LINE_COLOURS: [RGBColor; 8] = [
    plotters::style::full_palette::GREEN_700,
    plotters::style::full_palette::PURPLE_500,
    plotters::style::full_palette::BROWN_500,
    plotters::style::full_palette::CYAN_800,
    plotters::style::full_palette::PINK_500,
    plotters::style::full_palette::INDIGO_300,
    plotters::style::full_palette::LIME_900,
    plotters::style::full_palette::GREY_700,
];

/// A plotted axis (in log10 units on log axes) that places its own ticks: 1, 2 and 5
/// of each decade on a log axis spanning up to three decades, whole decades beyond
/// that; 1-2-5 steps on a linear axis.
#[derive(Clone)]
struct Ticked {
    lo: f64,
    hi: f64,
    ticks: Vec<f64>,
}

impl Ticked {
    fn new(lo: f64, hi: f64, log: bool) -> Self {
        let ticks = if log {
            log_ticks(lo, hi)
        } else {
            linear_ticks(lo, hi)
        };
        Ticked { lo, hi, ticks }
    }
}

fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = hi - lo;
    let mantissas: &[f64] = if span <= 3.2 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let every = if span > 9.0 { 2 } else { 1 };
    let mut out = Vec::new();
    for k in (lo.floor() as i64)..=(hi.ceil() as i64) {
        if k.rem_euclid(every) != 0 {
            continue;
        }
        for m in mantissas {
            let t = k as f64 + m.log10();
            if t >= lo && t <= hi {
                out.push(t);
            }
        }
    }
    out
}

fn linear_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let raw = (hi - lo) / 10.0;
    if raw.is_nan() || raw <= 0.0 || !raw.is_finite() {
        return vec![lo];
    }
    let base = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * base)
        .find(|st| *st >= raw)
        .unwrap_or(10.0 * base);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
}

impl plotters::coord::ranged1d::Ranged for Ticked {
    type FormatOption = plotters::coord::ranged1d::DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let t = (value - self.lo) / (self.hi - self.lo);
        limit.0 + (t * f64::from(limit.1 - limit.0)).round() as i32
    }

    fn key_points<H: plotters::coord::ranged1d::KeyPointHint>(&self, _hint: H) -> Vec<f64> {
        self.ticks.clone()
    }

    fn range(&self) -> std::ops::Range<f64> {
        self.lo..self.hi
    }
}

fn padded(lo: f64, hi: f64, log: bool) -> (f64, f64) {
    let (lo, hi) = if lo == hi {
        (lo - 1.0, hi + 1.0)
    } else {
        (lo, hi)
    };
    let pad = if log {
        0.05 * (hi - lo)
    } else {
        0.03 * (hi - lo)
    };
    (lo - pad, hi + pad)
}

type PlotError = String;

fn err<E: std::fmt::Display>(e: E) -> PlotError {
    format!("cannot draw the plot: {e}")
}

/// The sweep's plot as SVG text: total EMF and each line's EMF versus the swept value,
/// the victim's limit, and the safe distance when there is one.
pub fn sweep_svg(result: &SweepResult, victim_id: &str) -> Result<String, PlotError> {
    let spec = &result.spec;
    let (x_axis, title) = match spec.vary {
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
    };
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
        if result.compare.is_empty() {
            draw_lines(&mut chart, result, &xs, &y_of)?;
            chart
                .draw_series(LineSeries::new(
                    xs.iter().zip(&totals).map(|(&x, &v)| (x, y_of(v))),
                    BLUE_700.stroke_width(3),
                ))
                .map_err(err)?
                .label("total (all lines)")
                .legend(|(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], BLUE_700.stroke_width(3))
                });
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
        if let Some(l) = result.limit {
            let label = if limit_shown.is_some() {
                format!("limit {}", format_si(l, "V", 3))
            } else {
                format!("limit {} (above the plotted range)", format_si(l, "V", 3))
            };
            limit_line(&mut chart, (x0, x1), y_of(l), label)?;
        }
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
        // EMF rises with frequency and falls with distance: keep the legend off the data.
        let corner = match spec.vary {
            crate::model::Vary::Frequency => SeriesLabelPosition::UpperLeft,
            _ => SeriesLabelPosition::UpperRight,
        };
        chart
            .configure_series_labels()
            .position(corner)
            .background_style(WHITE.mix(0.9))
            .border_style(GREY_500)
            .label_font(("sans-serif", 15))
            .draw()
            .map_err(err)?;
        root.present().map_err(err)?;
    }
    Ok(svg)
}

/// A chart with our axes, labels and mesh on `root`.
fn axes_chart<'a, 'b>(
    root: &'a DrawingArea<SVGBackend<'b>, plotters::coord::Shift>,
    caption: String,
    (x_axis, y_axis): (&Axis, &Axis),
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Result<Chart<'a, 'b>, PlotError> {
    let mut chart = ChartBuilder::on(root)
        .caption(caption, ("sans-serif", 22))
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(86)
        .build_cartesian_2d(
            Ticked::new(x0, x1, x_axis.log),
            Ticked::new(y0, y1, y_axis.log),
        )
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc(x_axis.label.as_str())
        .y_desc(y_axis.label.as_str())
        .x_label_formatter(&|v| x_axis.text(*v))
        .y_label_formatter(&|v| y_axis.text(*v))
        .light_line_style(WHITE.mix(0.0))
        .label_style(("sans-serif", 15))
        .draw()
        .map_err(err)?;
    Ok(chart)
}

type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<Ticked, Ticked>>;

/// The limit as a red horizontal line at plotted height `y`, with its legend entry.
fn limit_line(
    chart: &mut Chart<'_, '_>,
    (x0, x1): (f64, f64),
    y: f64,
    label: String,
) -> Result<(), PlotError> {
    chart
        .draw_series(LineSeries::new(
            vec![(x0, y), (x1, y)],
            RED_700.stroke_width(2),
        ))
        .map_err(err)?
        .label(label)
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], RED_700.stroke_width(2)));
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

/// A victim's EMF spectrum as SVG: one stem per line (rms), with the limit.
pub fn spectrum_svg(
    victim_id: &str,
    lines: &[(f64, f64)],
    limit: Option<f64>,
) -> Result<String, PlotError> {
    let peak = lines
        .iter()
        .map(|l| l.1)
        .fold(limit.unwrap_or(0.0), f64::max);
    if lines.is_empty() || peak.is_nan() || peak <= 0.0 {
        return Err(format!("victim \"{victim_id}\" has no EMF to plot"));
    }
    let floor = peak * 1e-6;
    let x_axis = Axis {
        label: "frequency".into(),
        log: true,
        unit: "Hz",
        scale: 1.0,
    };
    let y_axis = Axis {
        label: "EMF of the line, rms".into(),
        log: true,
        unit: "V",
        scale: 1.0,
    };
    let pts: Vec<(f64, f64)> = lines
        .iter()
        .map(|&(f, v)| (x_axis.to_plot(f), y_axis.to_plot(v.max(floor))))
        .collect();
    let lo = pts.iter().map(|p| p.1).fold(y_axis.to_plot(peak), f64::min);
    let (y0, y1) = padded(
        lo.min(y_axis.to_plot(limit.unwrap_or(peak))),
        y_axis.to_plot(peak),
        true,
    );
    let fx: Vec<f64> = pts.iter().map(|p| p.0).collect();
    let (x0, x1) = padded(
        fx.iter().copied().fold(f64::INFINITY, f64::min) - 0.2,
        fx.iter().copied().fold(f64::NEG_INFINITY, f64::max) + 0.2,
        true,
    );
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let caption = format!("EMF spectrum induced in \"{victim_id}\"");
        let mut chart = axes_chart(&root, caption, (&x_axis, &y_axis), (x0, x1), (y0, y1))?;
        for &(x, y) in &pts {
            chart
                .draw_series(LineSeries::new(
                    vec![(x, y0), (x, y)],
                    BLUE_700.stroke_width(4),
                ))
                .map_err(err)?;
        }
        chart
            .draw_series(pts.iter().map(|&p| Circle::new(p, 4, BLUE_700.filled())))
            .map_err(err)?;
        if let Some(l) = limit {
            let label = format!("limit on the total {}", format_si(l, "V", 3));
            limit_line(&mut chart, (x0, x1), y_axis.to_plot(l), label)?;
            chart
                .configure_series_labels()
                .position(SeriesLabelPosition::UpperRight)
                .background_style(WHITE.mix(0.9))
                .border_style(GREY_500)
                .label_font(("sans-serif", 15))
                .draw()
                .map_err(err)?;
        }
        root.present().map_err(err)?;
    }
    Ok(svg)
}
