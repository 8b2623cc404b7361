//! A victim's EMF spectrum: one stem per line, with the limit.

use super::*;
use plotters::style::full_palette::BLUE_700;

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
            draw_legend(&mut chart, SeriesLabelPosition::UpperRight)?;
        }
        root.present().map_err(err)?;
    }
    Ok(svg)
}
