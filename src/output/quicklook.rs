//! Quick-look picture of a plane map: |B| rms in dB re 1 µT as colour, contours every
//! 10 dB (the `contour` crate's marching squares), the scene's wires that lie in the
//! plane drawn on top and those that pierce it marked, axes in mm, a colour bar.

use crate::Scene;
use crate::field::Vec3;
use crate::model::MapSpec;
use crate::units::format_si;
use num_complex::Complex64;
use plotters::prelude::*;

/// Most coloured cells drawn per axis (the SVG stays a few MB at most).
const MAX_CELLS: usize = 160;
/// Dynamic range shown: 60 dB under the largest value.
const RANGE_DB: f64 = 60.0;

/// Colour of `t` ∈ [0, 1] on a dark-blue → green → yellow scale (perceptually ordered,
/// readable in grey print).
fn colour(t: f64) -> RGBColor {
    const STOPS: [(f64, [f64; 3]); 5] = [
        (0.0, [40.0, 20.0, 90.0]),
        (0.25, [50.0, 80.0, 150.0]),
        (0.5, [40.0, 145.0, 140.0]),
        (0.75, [120.0, 200.0, 80.0]),
        (1.0, [250.0, 230.0, 40.0]),
    ];
    let t = t.clamp(0.0, 1.0);
    let k = STOPS.iter().position(|s| s.0 >= t).unwrap_or(4).max(1);
    let (t0, c0) = STOPS[k - 1];
    let (t1, c1) = STOPS[k];
    let f = (t - t0) / (t1 - t0);
    let mix = |a: f64, b: f64| (a + (b - a) * f).round() as u8;
    RGBColor(mix(c0[0], c1[0]), mix(c0[1], c1[1]), mix(c0[2], c1[2]))
}

/// The plane's two in-plane axes (indices) and its flat axis.
fn axes(spec: &MapSpec) -> (usize, usize, usize) {
    let flat = (0..3).find(|&a| spec.points[a] == 1).unwrap_or(2);
    let inplane: Vec<usize> = (0..3).filter(|&a| a != flat).collect();
    (inplane[0], inplane[1], flat)
}

/// The plane map's picture as SVG text, for line `frequency` (Hz) with field `b`.
pub fn plane_svg(
    scene: &Scene,
    spec: &MapSpec,
    frequency: f64,
    b: &[[Complex64; 3]],
) -> Result<String, String> {
    let (u, v, flat) = axes(spec);
    let (nu, nv) = (spec.points[u], spec.points[v]);
    let db = level_db(b);
    let top = db.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !top.is_finite() {
        return Err("the field is zero over the whole plane: nothing to draw".into());
    }
    let bottom = top - RANGE_DB;
    let mm = |x: f64| x * 1e3;
    let (u0, v0) = (mm(spec.origin[u]), mm(spec.origin[v]));
    let (du, dv) = (mm(spec.spacing[u]), mm(spec.spacing[v]));
    let (u1, v1) = (u0 + du * (nu - 1) as f64, v0 + dv * (nv - 1) as f64);

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 720)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let (main, bar) = root.split_horizontally(780);
        let names = ["x", "y", "z"];
        let mut chart = ChartBuilder::on(&main)
            .caption(
                format!(
                    "|B| rms at {} on {} = {:.2} mm (map \"{}\")",
                    format_si(frequency, "Hz", 3),
                    names[flat],
                    mm(spec.origin[flat]),
                    spec.id
                ),
                ("sans-serif", 20),
            )
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(60)
            .build_cartesian_2d(u0..u1, v0..v1)
            .map_err(err)?;
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(format!("{} (mm)", names[u]))
            .y_desc(format!("{} (mm)", names[v]))
            .label_style(("sans-serif", 14))
            .draw()
            .map_err(err)?;
        draw_cells(&mut chart, &db, (nu, nv), (u0, v0, du, dv), bottom)?;
        draw_contours(&mut chart, &db, (nu, nv), (u0, v0, du, dv), bottom, top)?;
        draw_geometry(&mut chart, scene, spec, (u, v, flat))?;
        colour_bar(&bar, bottom, top)?;
        root.present().map_err(err)?;
    }
    Ok(svg)
}

/// |B| rms of each point of `b` (peak phasors, T) in dB relative to 1 µT.
fn level_db(b: &[[Complex64; 3]]) -> Vec<f64> {
    b.iter()
        .map(|p| {
            let rms = (p.iter().map(|c| c.norm_sqr()).sum::<f64>() / 2.0).sqrt();
            20.0 * (rms / 1e-6).max(1e-30).log10()
        })
        .collect()
}

/// Coloured cells of the levels `db` (dB) on the `nu` × `nv` grid with origin
/// (`u0`, `v0`) and spacing (`du`, `dv`) in mm, coloured from `bottom` (dB) upwards.
fn draw_cells(
    chart: &mut Chart<'_, '_>,
    db: &[f64],
    (nu, nv): (usize, usize),
    (u0, v0, du, dv): (f64, f64, f64, f64),
    bottom: f64,
) -> Result<(), String> {
    let (u1, v1) = (u0 + du * (nu - 1) as f64, v0 + dv * (nv - 1) as f64);
    // Coloured cells, every `stride`-th point so at most MAX_CELLS per axis.
    let su = nu.div_ceil(MAX_CELLS).max(1);
    let sv = nv.div_ceil(MAX_CELLS).max(1);
    let at = |i: usize, j: usize| db[i + nu * j];
    let mut cells = Vec::new();
    for j in (0..nv).step_by(sv) {
        for i in (0..nu).step_by(su) {
            let x0 = (u0 + du * (i as f64 - su as f64 / 2.0)).max(u0);
            let x1 = (u0 + du * (i as f64 + su as f64 / 2.0)).min(u1);
            let y0 = (v0 + dv * (j as f64 - sv as f64 / 2.0)).max(v0);
            let y1 = (v0 + dv * (j as f64 + sv as f64 / 2.0)).min(v1);
            let t = (at(i, j) - bottom) / RANGE_DB;
            cells.push(Rectangle::new([(x0, y0), (x1, y1)], colour(t).filled()));
        }
    }
    chart.draw_series(cells).map_err(err)?;
    Ok(())
}

type Chart<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

fn err<E: std::fmt::Display>(e: E) -> String {
    format!("cannot draw the map picture: {e}")
}

fn draw_contours(
    chart: &mut Chart<'_, '_>,
    db: &[f64],
    (nu, nv): (usize, usize),
    (u0, v0, du, dv): (f64, f64, f64, f64),
    bottom: f64,
    top: f64,
) -> Result<(), String> {
    if nu < 2 || nv < 2 {
        return Ok(());
    }
    let first = (bottom / 10.0).ceil() as i64;
    let last = (top / 10.0).floor() as i64;
    let thresholds: Vec<f64> = (first..=last).map(|k| k as f64 * 10.0).collect();
    let builder = contour::ContourBuilder::new(nu, nv, true)
        .x_origin(u0)
        .y_origin(v0)
        .x_step(du)
        .y_step(dv);
    let lines = builder.lines(db, &thresholds).map_err(err)?;
    let style = WHITE.mix(0.75).stroke_width(1);
    for line in &lines {
        for ls in line.geometry().iter() {
            let pts: Vec<(f64, f64)> = ls.coords().map(|c| (c.x, c.y)).collect();
            chart
                .draw_series(std::iter::once(PathElement::new(pts, style)))
                .map_err(err)?;
        }
    }
    Ok(())
}

/// Wires and victims: segments lying in the plane as lines, crossings as dots.
fn draw_geometry(
    chart: &mut Chart<'_, '_>,
    scene: &Scene,
    spec: &MapSpec,
    (u, v, flat): (usize, usize, usize),
) -> Result<(), String> {
    let plane = spec.origin[flat];
    let size =
        (spec.spacing[u] * spec.points[u] as f64).max(spec.spacing[v] * spec.points[v] as f64);
    let tol = 1e-9 * size.max(1e-6);
    let mut paths: Vec<(Vec<Vec3>, RGBColor)> = Vec::new();
    for s in &scene.sources {
        for w in &s.conductors.wires {
            paths.push((w.vertices.clone(), RGBColor(230, 60, 40)));
        }
    }
    for vct in &scene.victims {
        let mut ring = Vec::new();
        for e in &vct.edges {
            for k in 0..64 {
                ring.push(e.point(k as f64 / 64.0));
            }
        }
        if let Some(&f) = ring.first() {
            ring.push(f);
        }
        paths.push((ring, RGBColor(255, 255, 255)));
    }
    let mm = |p: &Vec3| (p[u] * 1e3, p[v] * 1e3);
    for (path, c) in &paths {
        let mut dots = Vec::new();
        for w in path.windows(2) {
            let (a, b) = (w[0][flat] - plane, w[1][flat] - plane);
            if a.abs() <= tol && b.abs() <= tol {
                chart
                    .draw_series(std::iter::once(PathElement::new(
                        vec![mm(&w[0]), mm(&w[1])],
                        c.stroke_width(2),
                    )))
                    .map_err(err)?;
            } else if a.abs() <= tol {
                dots.push(mm(&w[0])); // a vertex on the plane
            } else if a * b < 0.0 {
                let t = a / (a - b);
                dots.push(mm(&(w[0] + (w[1] - w[0]) * t)));
            }
        }
        chart
            .draw_series(dots.into_iter().map(|p| Circle::new(p, 3, c.filled())))
            .map_err(err)?;
    }
    Ok(())
}

fn colour_bar(
    area: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
    bottom: f64,
    top: f64,
) -> Result<(), String> {
    let mut chart = ChartBuilder::on(area)
        .margin_top(50)
        .margin_bottom(58)
        .margin_right(8)
        .y_label_area_size(58)
        .caption("dB re 1 µT", ("sans-serif", 14))
        .build_cartesian_2d(0.0..1.0, bottom..top)
        .map_err(err)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_labels(7)
        .label_style(("sans-serif", 13))
        .draw()
        .map_err(err)?;
    let n = 120;
    chart
        .draw_series((0..n).map(|k| {
            let a = bottom + (top - bottom) * k as f64 / n as f64;
            let b = bottom + (top - bottom) * (k + 1) as f64 / n as f64;
            Rectangle::new([(0.0, a), (1.0, b)], colour(k as f64 / n as f64).filled())
        }))
        .map_err(err)?;
    Ok(())
}
