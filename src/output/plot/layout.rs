//! The figure around a chart: a title of one or more lines above it and the legend in a
//! band of its own below it, so that the legend never covers data. The figure's height
//! grows with the legend.

use super::{PlotError, err};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::full_palette::{GREY_500, GREY_700};
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Width of every figure, px.
pub(super) const WIDTH: u32 = 900;
/// Height of the chart (axes, ticks and plotting area), px.
const CHART_HEIGHT: u32 = 480;
/// Height of one title line, px.
const TITLE_LINE: u32 = 27;
/// Height of one legend row, px.
const ROW: u32 = 21;
/// Legend font size, px.
const LEGEND_FONT: u32 = 14;
/// Left and right margin of the title and legend, px.
const MARGIN: i32 = 16;
/// Width of a legend entry's sample and the gap after it, px.
const SAMPLE: i32 = 40;

/// How a legend entry shows what it names.
pub(super) enum Sample {
    /// A solid line of this colour and width (px).
    Line(RGBColor, u32),
    /// A dashed line of this colour and width (px).
    Dashed(RGBColor, u32),
    /// A stem with a dot on top, as the spectrum draws each line.
    Stem(RGBColor),
    /// A downward arrow: the curve of this colour leaves the plot through its floor.
    OffScale(RGBColor),
    /// Text only.
    Note,
}

/// One legend entry: its sample and its text.
pub(super) struct Entry {
    /// The sample drawn before the text.
    pub sample: Sample,
    /// The text.
    pub text: String,
}

/// One line of the title: its text, colour and font size (px).
pub(super) struct TitleLine {
    /// The text.
    pub text: String,
    /// Its colour.
    pub colour: RGBColor,
    /// Font size, px.
    pub size: u32,
}

/// The drawing area a chart is drawn on.
pub(super) type Area<'b> = DrawingArea<SVGBackend<'b>, plotters::coord::Shift>;

/// An SVG figure: `title` above, the chart that `chart` draws on its area, `legend`
/// below.
pub(super) fn figure(
    title: &[TitleLine],
    legend: &[Entry],
    chart: impl FnOnce(&Area<'_>) -> Result<(), PlotError>,
) -> Result<String, PlotError> {
    let (cols, rows) = legend_grid(legend);
    let legend_h = if legend.is_empty() {
        0
    } else {
        rows * ROW + 16
    };
    let title_h = 14 + TITLE_LINE * title.len() as u32;
    let mut svg = String::new();
    {
        let size = (WIDTH, title_h + CHART_HEIGHT + legend_h);
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let (top, rest) = root.split_vertically(title_h);
        let (plot, below) = rest.split_vertically(CHART_HEIGHT);
        for (k, line) in title.iter().enumerate() {
            let style = ("sans-serif", line.size)
                .into_font()
                .color(&line.colour)
                .pos(Pos::new(HPos::Center, VPos::Top));
            let y = 10 + TITLE_LINE as i32 * k as i32;
            top.draw_text(&line.text, &style, (WIDTH as i32 / 2, y))
                .map_err(err)?;
        }
        chart(&plot)?;
        if !legend.is_empty() {
            draw_legend(&below, legend, cols, legend_h)?;
        }
        root.present().map_err(err)?;
    }
    Ok(svg)
}

/// About how wide `text` is in the legend font, px (DejaVu Sans averages a little over
/// half the font size per character; rounded up so that columns do not collide).
fn text_width(text: &str) -> i32 {
    (text.chars().count() as f64 * 0.56 * f64::from(LEGEND_FONT)).ceil() as i32
}

/// Columns and rows of the legend: two columns when every entry fits in half the width.
fn legend_grid(legend: &[Entry]) -> (u32, u32) {
    let half = (WIDTH as i32 - 2 * MARGIN) / 2;
    let widest = legend
        .iter()
        .map(|e| SAMPLE + 12 + text_width(&e.text))
        .max()
        .unwrap_or(0);
    let cols = if legend.len() > 1 && widest <= half {
        2
    } else {
        1
    };
    (cols, (legend.len() as u32).div_ceil(cols))
}

/// The legend in a framed box filling `area`, entries down the first column first.
fn draw_legend(area: &Area<'_>, legend: &[Entry], cols: u32, height: u32) -> Result<(), PlotError> {
    let right = WIDTH as i32 - MARGIN;
    area.draw(&Rectangle::new(
        [(MARGIN, 2), (right, height as i32 - 6)],
        GREY_500.stroke_width(1),
    ))
    .map_err(err)?;
    let rows = (legend.len() as u32).div_ceil(cols);
    let col_w = (right - MARGIN) / cols as i32;
    let font = ("sans-serif", LEGEND_FONT)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Left, VPos::Center));
    for (k, e) in legend.iter().enumerate() {
        let (col, row) = (k as u32 / rows, k as u32 % rows);
        let x = MARGIN + 10 + col as i32 * col_w;
        let y = 4 + ROW as i32 / 2 + 2 + row as i32 * ROW as i32;
        draw_sample(area, &e.sample, x, y)?;
        area.draw_text(&e.text, &font, (x + SAMPLE, y))
            .map_err(err)?;
    }
    Ok(())
}

/// A legend sample whose left end is at `x`, centred on `y`.
fn draw_sample(area: &Area<'_>, sample: &Sample, x: i32, y: i32) -> Result<(), PlotError> {
    let w = SAMPLE - 10;
    match *sample {
        Sample::Line(c, width) => area
            .draw(&PathElement::new(
                vec![(x, y), (x + w, y)],
                c.stroke_width(width),
            ))
            .map_err(err),
        Sample::Dashed(c, width) => area
            .draw(&DashedPathElement::new(
                vec![(x, y), (x + w, y)],
                6,
                4,
                c.stroke_width(width),
            ))
            .map_err(err),
        Sample::Stem(c) => {
            let mid = x + w / 2;
            area.draw(&PathElement::new(
                vec![(mid, y + 8), (mid, y - 4)],
                c.stroke_width(4),
            ))
            .map_err(err)?;
            area.draw(&Circle::new((mid, y - 4), 4, c.filled()))
                .map_err(err)
        }
        Sample::OffScale(c) => {
            let mid = x + w / 2;
            area.draw(&PathElement::new(
                vec![(mid, y - 8), (mid, y + 2)],
                c.stroke_width(2),
            ))
            .map_err(err)?;
            area.draw(&Polygon::new(
                vec![(mid - 5, y + 2), (mid + 5, y + 2), (mid, y + 8)],
                c.filled(),
            ))
            .map_err(err)
        }
        Sample::Note => area
            .draw(&Circle::new((x + w / 2, y), 3, GREY_700.filled()))
            .map_err(err),
    }
}
