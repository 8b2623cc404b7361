//! SVG plots drawn with the plotters crate: EMF versus the swept value, and the EMF
//! spectrum of a victim. Logarithmic axes are drawn as linear axes of log10(value)
//! with their labels written back in engineering units.

use crate::units::format_si;
use plotters::prelude::*;
use plotters::style::full_palette::{GREY_500, RED_700};

mod spectrum;
mod sweep;

pub use spectrum::spectrum_svg;
pub use sweep::sweep_svg;

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

/// The legend in `corner`, on a nearly opaque white box.
fn draw_legend<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    corner: SeriesLabelPosition,
) -> Result<(), PlotError> {
    chart
        .configure_series_labels()
        .position(corner)
        .background_style(WHITE.mix(0.9))
        .border_style(GREY_500)
        .label_font(("sans-serif", 15))
        .draw()
        .map_err(err)
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
