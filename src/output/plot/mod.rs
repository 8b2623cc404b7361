//! SVG plots drawn with the plotters crate: EMF versus the swept value, and the EMF
//! spectrum of a victim. Logarithmic axes are drawn as linear axes of log10(value)
//! with their labels written back in engineering units. Each figure has its title
//! above the chart and its legend in a band below it (`layout`), never over the data;
//! a curve that falls below the plot's floor is cut where it crosses the floor and
//! named in the legend, not drawn along the floor.

use crate::units::format_si;
use plotters::prelude::*;

mod layout;
mod scene_view;
mod separation;
mod spectrum;
mod sweep;

pub use scene_view::scene_views_svg;
pub use spectrum::{SpectrumPlot, spectrum_svg};
pub use sweep::sweep_svg;

/// One axis: its label, whether it is logarithmic, and how to print a value.
struct Axis {
    label: String,
    log: bool,
    unit: &'static str,
    scale: f64,
    /// An axis of angles in degrees: ticks every 30° (or 90° over wide ranges).
    angle: bool,
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
/// that; 1-2-5 steps on a linear axis; multiples of 30° on a linear axis of angles.
#[derive(Clone)]
struct Ticked {
    lo: f64,
    hi: f64,
    ticks: Vec<f64>,
}

impl Ticked {
    fn new(lo: f64, hi: f64, axis: &Axis) -> Self {
        let ticks = if axis.log {
            log_ticks(lo, hi)
        } else if axis.angle {
            angle_ticks(lo, hi)
        } else {
            linear_ticks(lo, hi)
        };
        Ticked { lo, hi, ticks }
    }
}

/// Ticks of an axis in degrees: every 30° over spans from 60° to 400°, every 90° over
/// wider ones, 1-2-5 steps over narrower ones.
fn angle_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let span = hi - lo;
    let step = if span > 400.0 {
        90.0
    } else if span >= 60.0 {
        30.0
    } else {
        return linear_ticks(lo, hi);
    };
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|k| k as f64 * step).collect()
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

/// A chart with our axes, labels and mesh on `area`, `top` px under its top edge.
fn axes_chart<'a, 'b>(
    area: &'a layout::Area<'b>,
    (x_axis, y_axis): (&Axis, &Axis),
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
    top: u32,
) -> Result<Chart<'a, 'b>, PlotError> {
    let mut chart = ChartBuilder::on(area)
        .margin(16)
        .margin_top(top)
        .margin_right(24)
        .x_label_area_size(48)
        .y_label_area_size(86)
        .build_cartesian_2d(Ticked::new(x0, x1, x_axis), Ticked::new(y0, y1, y_axis))
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

/// A horizontal line across the plot at plotted height `y`, dashed or solid.
fn level_line(
    chart: &mut Chart<'_, '_>,
    (x0, x1): (f64, f64),
    y: f64,
    style: ShapeStyle,
    dashed: bool,
) -> Result<(), PlotError> {
    if dashed {
        chart
            .draw_series(DashedLineSeries::new(vec![(x0, y), (x1, y)], 10, 6, style))
            .map_err(err)?;
    } else {
        chart
            .draw_series(LineSeries::new(vec![(x0, y), (x1, y)], style))
            .map_err(err)?;
    }
    Ok(())
}

/// The runs of a curve (plotted units) that lie at or above `floor`. A run that meets
/// the floor ends (or starts) exactly on it, interpolated on the plotted axes, so that
/// the curve is seen to leave the plot through its floor instead of running along it.
/// Points with a non-finite height (a zero on a log axis) count as below the floor.
fn runs_above(pts: &[(f64, f64)], floor: f64) -> Vec<Vec<(f64, f64)>> {
    let above = |p: &(f64, f64)| p.1.is_finite() && p.1 >= floor;
    let crossing = |a: (f64, f64), b: (f64, f64)| {
        // `a` above the floor, `b` below it.
        if b.1.is_finite() {
            let t = (a.1 - floor) / (a.1 - b.1);
            (a.0 + t * (b.0 - a.0), floor)
        } else {
            (a.0, floor)
        }
    };
    let mut runs = Vec::new();
    let mut run: Vec<(f64, f64)> = Vec::new();
    for (k, p) in pts.iter().enumerate() {
        if above(p) {
            if run.is_empty() && k > 0 {
                run.push(crossing(*p, pts[k - 1]));
            }
            run.push(*p);
        } else if !run.is_empty() {
            run.push(crossing(pts[k - 1], *p));
            runs.push(std::mem::take(&mut run));
        }
    }
    if !run.is_empty() {
        runs.push(run);
    }
    runs
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_curve_below_the_floor_is_cut_where_it_crosses_it() {
        // Straight segments: the crossing of y = 0 between (1, 1) and (2, -1) is x = 1.5.
        let pts = [(0.0, 2.0), (1.0, 1.0), (2.0, -1.0), (3.0, -3.0), (4.0, 1.0)];
        let runs = runs_above(&pts, 0.0);
        assert_eq!(runs.len(), 2);
        assert_eq!(runs[0], vec![(0.0, 2.0), (1.0, 1.0), (1.5, 0.0)]);
        assert_eq!(runs[1], vec![(3.75, 0.0), (4.0, 1.0)]);
        assert!(runs_above(&[(0.0, f64::NEG_INFINITY), (1.0, -1.0)], 0.0).is_empty());
    }

    #[test]
    fn angle_axes_tick_every_thirty_degrees() {
        assert_eq!(
            angle_ticks(-5.0, 185.0),
            [0.0, 30.0, 60.0, 90.0, 120.0, 150.0, 180.0]
        );
        assert_eq!(angle_ticks(0.0, 720.0)[1], 90.0);
    }
}
