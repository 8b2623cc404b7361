//! A victim's EMF spectrum: one stem per line, the total over all lines and the limit
//! on that total, with the margin and the verdict in the title.

use super::layout::{Entry, Sample, TitleLine, figure};
use super::*;
use plotters::style::full_palette::{BLUE_700, GREEN_800, RED_700, TEAL_700};

/// What the spectrum plot of one victim shows.
#[derive(Clone, Copy, Debug)]
pub struct SpectrumPlot<'a> {
    /// Victim id.
    pub victim_id: &'a str,
    /// Each line: its frequency (Hz) and its EMF (V rms).
    pub lines: &'a [(f64, f64)],
    /// The victim's total EMF over all lines, V rms; `None` when the total does not
    /// converge (then the plot gives no verdict).
    pub total: Option<f64>,
    /// The limit on the total, V rms.
    pub limit: Option<f64>,
    /// The margin 20·log10(limit / total), dB.
    pub margin_db: Option<f64>,
}

/// Lines more than this factor under the largest one (120 dB) are not drawn.
const DYNAMIC_RANGE: f64 = 1e-6;

/// The colours of the stems, the total and the limit.
const STEM: RGBColor = TEAL_700;
const TOTAL: RGBColor = BLUE_700;
const LIMIT: RGBColor = RED_700;

impl SpectrumPlot<'_> {
    /// The largest line, V rms (zero when there is none).
    fn peak(&self) -> f64 {
        self.lines.iter().map(|l| l.1).fold(0.0, f64::max)
    }

    /// The lines that are drawn: those within 120 dB of the largest.
    fn drawn(&self) -> impl Iterator<Item = &(f64, f64)> {
        let cut = self.peak() * DYNAMIC_RANGE;
        self.lines.iter().filter(move |l| l.1 > 0.0 && l.1 >= cut)
    }

    /// The second title line: the total, the limit, the margin and the verdict, and its
    /// colour (red over the limit, green within it).
    fn verdict(&self) -> (String, RGBColor) {
        let v = |x: f64| format_si(x, "V", 3);
        match (self.total, self.limit) {
            (Some(t), Some(l)) => {
                let margin = self
                    .margin_db
                    .filter(|m| m.is_finite())
                    .map_or(String::new(), |m| {
                        format!(", margin {} dB", crate::output::text::signed(m, 1))
                    });
                let (word, colour) = if t > l {
                    ("OVER LIMIT", LIMIT)
                } else {
                    ("within limit", GREEN_800)
                };
                (
                    format!("total {} rms, limit {}{margin}: {word}", v(t), v(l)),
                    colour,
                )
            }
            (Some(t), None) => (format!("total {} rms (no limit set)", v(t)), BLACK),
            (None, Some(l)) => (
                format!("total does not converge: no verdict (limit {} rms)", v(l)),
                BLACK,
            ),
            (None, None) => ("total does not converge".into(), BLACK),
        }
    }

    /// The legend: the stems, the total, the limit and what is not drawn.
    fn legend(&self) -> Vec<Entry> {
        let n = self.drawn().count();
        let mut out = vec![Entry {
            sample: Sample::Stem(STEM),
            text: format!(
                "EMF of each line, rms ({n} line{})",
                if n == 1 { "" } else { "s" }
            ),
        }];
        out.push(match self.total {
            Some(t) => Entry {
                sample: Sample::Line(TOTAL, 3),
                text: format!("total (all lines): {} rms", format_si(t, "V", 3)),
            },
            None => Entry {
                sample: Sample::Note,
                text: "total: does not converge, not drawn".into(),
            },
        });
        if let Some(l) = self.limit {
            out.push(Entry {
                sample: Sample::Dashed(LIMIT, 2),
                text: format!("limit (on the total): {} rms", format_si(l, "V", 3)),
            });
        }
        let hidden = self.lines.len() - n;
        if hidden > 0 {
            out.push(Entry {
                sample: Sample::Note,
                text: format!(
                    "{hidden} line{} more than 120 dB under the largest: not drawn",
                    if hidden == 1 { "" } else { "s" }
                ),
            });
        }
        out
    }
}

/// The plotted EMF range of a spectrum as log10 of volts, (bottom, top); `None` when
/// there is no EMF to plot. The bottom is a decade under the smallest value drawn (line,
/// total or limit), so that the shortest stem is a decade tall; the top is 5 % of the
/// span over the largest.
fn spectrum_range(p: &SpectrumPlot<'_>) -> Option<(f64, f64)> {
    let levels = || p.drawn().map(|l| l.1).chain(p.total).chain(p.limit);
    let lo = levels().filter(|v| *v > 0.0).fold(f64::INFINITY, f64::min);
    let hi = levels().fold(0.0, f64::max);
    if !(hi > 0.0 && hi.is_finite()) || p.drawn().next().is_none() {
        return None;
    }
    let (lo, hi) = (lo.log10() - 1.0, hi.log10());
    Some((lo, hi + 0.05 * (hi - lo)))
}

/// A victim's EMF spectrum as SVG: one stem per line (rms), the total over all lines
/// and the limit on that total as horizontal lines, the verdict in the title.
pub fn spectrum_svg(p: &SpectrumPlot<'_>) -> Result<String, PlotError> {
    let Some((y0, y1)) = spectrum_range(p) else {
        return Err(format!("victim \"{}\" has no EMF to plot", p.victim_id));
    };
    let x_axis = Axis {
        label: "frequency".into(),
        log: true,
        unit: "Hz",
        scale: 1.0,
        angle: false,
    };
    let y_axis = Axis {
        label: "EMF, rms".into(),
        log: true,
        unit: "V",
        scale: 1.0,
        angle: false,
    };
    let pts: Vec<(f64, f64)> = p
        .drawn()
        .map(|&(f, v)| (x_axis.to_plot(f), y_axis.to_plot(v)))
        .collect();
    let (x0, x1) = padded(
        pts.iter().map(|p| p.0).fold(f64::INFINITY, f64::min) - 0.2,
        pts.iter().map(|p| p.0).fold(f64::NEG_INFINITY, f64::max) + 0.2,
        true,
    );
    let (verdict, colour) = p.verdict();
    let title = [
        TitleLine {
            text: format!("EMF spectrum induced in \"{}\"", p.victim_id),
            colour: BLACK,
            size: 22,
        },
        TitleLine {
            text: verdict,
            colour,
            size: 18,
        },
    ];
    figure(&title, &p.legend(), |area| {
        let mut chart = axes_chart(area, (&x_axis, &y_axis), (x0, x1), (y0, y1), 6)?;
        for &(x, y) in &pts {
            chart
                .draw_series(LineSeries::new(vec![(x, y0), (x, y)], STEM.stroke_width(4)))
                .map_err(err)?;
        }
        chart
            .draw_series(pts.iter().map(|&q| Circle::new(q, 4, STEM.filled())))
            .map_err(err)?;
        if let Some(t) = p.total {
            let style = TOTAL.stroke_width(3);
            level_line(&mut chart, (x0, x1), y_axis.to_plot(t), style, false)?;
        }
        if let Some(l) = p.limit {
            let style = LIMIT.stroke_width(2);
            level_line(&mut chart, (x0, x1), y_axis.to_plot(l), style, true)?;
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plot<'a>(
        lines: &'a [(f64, f64)],
        total: Option<f64>,
        limit: Option<f64>,
    ) -> SpectrumPlot<'a> {
        SpectrumPlot {
            victim_id: "v",
            lines,
            total,
            limit,
            margin_db: None,
        }
    }

    #[test]
    fn the_floor_is_a_decade_under_the_smallest_line_drawn() {
        // Lines of 20 µV, 8 µV and 80 nV; the total is their root-sum-square.
        let lines = [(50.0, 80e-9), (65e3, 20e-6), (195e3, 8e-6)];
        let total = lines.iter().map(|l| l.1 * l.1).sum::<f64>().sqrt();
        let (lo, hi) = spectrum_range(&plot(&lines, Some(total), Some(10e-6))).unwrap();
        assert!((lo - (80e-9f64.log10() - 1.0)).abs() < 1e-12, "{lo}");
        assert!(hi > total.log10());
        // A limit under every line sets the floor instead.
        let (lo, _) = spectrum_range(&plot(&lines, Some(total), Some(1e-9))).unwrap();
        assert!((lo - (-10.0)).abs() < 1e-12, "{lo}");
        // A line 130 dB under the largest is not drawn and does not set the floor.
        let lines = [(50.0, 20e-6 * 10f64.powf(-6.5)), (65e3, 20e-6)];
        let (lo, _) = spectrum_range(&plot(&lines, None, None)).unwrap();
        assert!((lo - (20e-6f64.log10() - 1.0)).abs() < 1e-12, "{lo}");
        assert!(spectrum_range(&plot(&[(50.0, 0.0)], None, None)).is_none());
    }

    #[test]
    fn the_verdict_follows_the_total_and_the_limit() {
        let lines = [(1e3, 3e-3)];
        let mut p = plot(&lines, Some(3.27e-3), Some(2e-3));
        // 20·log10(2 / 3.27) = −4.27 dB (the margin's definition, docs/model.md).
        p.margin_db = Some(20.0 * (2.0f64 / 3.27).log10());
        let (text, colour) = p.verdict();
        assert_eq!(
            text,
            "total 3.27 mV rms, limit 2.00 mV, margin -4.3 dB: OVER LIMIT"
        );
        assert_eq!(colour, LIMIT);
        assert!(
            plot(&lines, Some(1e-3), Some(2e-3))
                .verdict()
                .0
                .ends_with("within limit")
        );
        let (text, _) = plot(&lines, None, Some(2e-3)).verdict();
        assert!(
            text.contains("no verdict") && !text.contains("LIMIT"),
            "{text}"
        );
    }

    #[test]
    fn a_total_that_does_not_converge_gets_no_line_and_no_verdict() {
        let lines = [(1e3, 1e-3), (3e3, 0.33e-3)];
        let svg = spectrum_svg(&plot(&lines, None, Some(2e-3))).unwrap();
        assert!(svg.contains("total does not converge: no verdict (limit 2.00 mV rms)"));
        assert!(svg.contains("total: does not converge, not drawn"));
        assert!(!svg.contains("LIMIT") && !svg.contains("within limit"));
        // The total's colour (BLUE_700) appears nowhere: no total line, no sample.
        assert!(!svg.contains("#1976D2"));
    }
}
