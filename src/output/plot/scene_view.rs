//! The scene drawn to scale for a design review: a plan view (x right, y up, looking
//! down −z) above a side view (x right, z up, looking along +y). Both views usually
//! share one scale, equal on both axes, and the same x range, so that a part sits above
//! itself; when their best scales differ more than fourfold (a 2 m cable run beside a
//! 30 mm cross-section) each view takes its own. Sources are solid lines, victims
//! dashed, fitted sheets filled bands with solid edges, design options (`fitted =
//! false`) faded bands with dotted edges; enclosures are their outer and inner wall
//! outlines. Sheets are infinite: a band is the cut of the sheet by the plane through
//! the middle of the drawn parts (the plan's middle z, the side's middle y); a sheet
//! parallel to a view is named under it instead. Long polylines are thinned to one point
//! per pixel and at most `BUDGET` points per view; a part too small to see is ringed and
//! noted. Labels are placed clear of each other, inside the frame, with a leader when
//! set apart from their part.

use super::{PlotError, err, three_figures};
use crate::Scene;
use crate::field::Vec3;
use crate::model::{Sheet, victim_points};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::full_palette::{
    BLUE_700, BLUEGREY_500, BLUEGREY_800, DEEPORANGE_800, GREY_200, GREY_700,
};
use plotters::style::text_anchor::{HPos, Pos, VPos};

type Root<'b> = DrawingArea<SVGBackend<'b>, plotters::coord::Shift>;
type Px = (i32, i32);

/// Figure width, px; left band for the vertical ticks and right margin, px.
const WIDTH: i32 = 900;
const LEFT: i32 = 74;
const RIGHT: i32 = 20;
/// Largest and smallest height of a view's frame, px.
const MAX_PANEL: f64 = 380.0;
const MIN_PANEL: f64 = 150.0;
/// Bands above (heading) and below (ticks, axis name) a frame; the title band, px.
const HEAD: i32 = 30;
const FOOT: i32 = 48;
const TITLE: i32 = 62;
/// One legend or note row, px.
const ROW: i32 = 20;
/// Most polyline points drawn per view.
const BUDGET: usize = 3000;
/// Paths of at most this many pixel-thinned points are never thinned further, so that
/// the corners of a victim's rectangle survive.
const SHORT: usize = 300;
/// A part whose drawing spans fewer pixels than this is also ringed and noted.
const TINY_PX: f64 = 6.0;
/// Label font size, px.
const LABEL: u32 = 13;

const SOURCE: RGBColor = DEEPORANGE_800;
const VICTIM: RGBColor = BLUE_700;
const SHIELD: RGBColor = BLUEGREY_500;
const SHIELD_TEXT: RGBColor = BLUEGREY_800;

/// Which scene axes (0 x, 1 y, 2 z) run right, up and towards the depth of a view.
#[derive(Clone, Copy)]
struct View {
    h: usize,
    v: usize,
    d: usize,
    heading: &'static str,
}

const PLAN: View = View {
    h: 0,
    v: 1,
    d: 2,
    heading: "Plan view, looking down −z",
};
const SIDE: View = View {
    h: 0,
    v: 2,
    d: 1,
    heading: "Side view, looking along +y",
};
const AXES: [&str; 3] = ["x", "y", "z"];

/// A source or victim as drawn: its id, colour and paths, dipoles (position, moment).
struct Part {
    id: String,
    source: bool,
    paths: Vec<Vec<Vec3>>,
    dipoles: Vec<(Vec3, Vec3)>,
}

/// A view placed on the figure: frame (px), lower-left corner (m), scale (px/m) and the
/// depth (m) of the plane where sheets are cut.
struct Panel {
    view: View,
    left: i32,
    top: i32,
    w: i32,
    h: i32,
    x0: f64,
    y0: f64,
    scale: f64,
    depth: f64,
    notes: Vec<String>,
}

impl Panel {
    fn at(&self, p: &Vec3) -> (f64, f64) {
        self.plane(p[self.view.h], p[self.view.v])
    }
    fn plane(&self, a: f64, b: f64) -> (f64, f64) {
        (
            f64::from(self.left) + (a - self.x0) * self.scale,
            f64::from(self.top + self.h) - (b - self.y0) * self.scale,
        )
    }
    fn bounds(&self) -> [i32; 4] {
        [self.left, self.top, self.left + self.w, self.top + self.h]
    }
}

/// The plan view (x right, y up) above the side view (x right, z up) of `scene`, in one
/// SVG document 900 px wide. The scene's coordinates are in m; the axes are labelled in
/// mm and each view has a scale bar. Within a view 1 mm is as many px across as up; the
/// two views share that scale (px per mm) unless their best scales differ more than
/// fourfold, which the subtitle then says. Every source, victim, sheet and enclosure is
/// drawn and labelled with its id. A scene without victims or without sources draws
/// what it has; one with neither, or with a coordinate that is not finite, is an error
/// (one line).
pub fn scene_views_svg(scene: &Scene) -> Result<String, String> {
    let parts = parts(scene);
    let mut pts: Vec<Vec3> = parts
        .iter()
        .flat_map(|p| {
            p.paths
                .iter()
                .flatten()
                .copied()
                .chain(p.dipoles.iter().map(|d| d.0))
        })
        .collect();
    if pts.is_empty() {
        return Err("nothing to draw: the scene has no sources and no victims".into());
    }
    pts.extend(scene.enclosures.iter().flat_map(|e| corners(e, 0.0)));
    if pts.iter().any(|p| !p.iter().all(|c| c.is_finite())) {
        return Err("cannot draw the scene: a coordinate is not finite".into());
    }
    let (lo, hi) = bounds(&pts);
    let (panels, shared, top) = layout(scene, lo, hi);
    let smallest = panels.iter().map(|p| p.scale).fold(f64::INFINITY, f64::min);
    let notes = tiny_notes(&parts, smallest);
    let entries = legend_entries(scene, &parts);
    let rows = entries.last().map_or(0, |e| e.3 + 1);
    let legend_top = top - HEAD + 4;
    let height = legend_top + ROW * (rows + notes.len() as i32) + 12;
    let mut svg = String::new();
    {
        let root =
            SVGBackend::with_string(&mut svg, (WIDTH as u32, height as u32)).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let centre = Pos::new(HPos::Center, VPos::Top);
        let title = ("sans-serif", 19).into_font().color(&BLACK).pos(centre);
        let name = if scene.title.trim().is_empty() {
            "Scene views"
        } else {
            scene.title.as_str()
        };
        root.draw_text(name, &title, (WIDTH / 2, 10)).map_err(err)?;
        let sub = ("sans-serif", 13).into_font().color(&GREY_700).pos(centre);
        let line = if shared {
            "The scene to scale: both views share one scale (see the scale bars)"
        } else {
            "The scene to scale: the views have different scales (see each scale bar)"
        };
        root.draw_text(line, &sub, (WIDTH / 2, 38)).map_err(err)?;
        for p in &panels {
            draw_panel(&root, p, scene, &parts)?;
        }
        legend(&root, &entries, legend_top, &notes)?;
        root.present().map_err(err)?;
    }
    Ok(svg)
}

/// Sources and victims in file order, as paths of scene points (m).
fn parts(scene: &Scene) -> Vec<Part> {
    let sources = scene.sources.iter().map(|s| Part {
        id: s.id.clone(),
        source: true,
        paths: s
            .conductors
            .wires
            .iter()
            .map(|w| w.vertices.clone())
            .collect(),
        dipoles: s
            .conductors
            .dipoles
            .iter()
            .map(|d| (d.position, d.moment_per_amp))
            .collect(),
    });
    let victims = scene.victims.iter().map(|v| Part {
        id: v.id.clone(),
        source: false,
        paths: vec![victim_points(&v.edges)],
        dipoles: Vec::new(),
    });
    sources.chain(victims).collect()
}

/// The views placed from the top of the figure, whether they share one scale, and the
/// height (px) they fill. Each view's best scale (px/m) fits its parts with a margin of a
/// tenth of their larger extent into the width and `MAX_PANEL`; both views take the
/// smaller of the two unless one is more than four times the other.
fn layout(scene: &Scene, lo: [f64; 3], hi: [f64; 3]) -> (Vec<Panel>, bool, i32) {
    let w = f64::from(WIDTH - LEFT - RIGHT);
    let span = |view: View| {
        let (a, b) = (hi[view.h] - lo[view.h], hi[view.v] - lo[view.v]);
        let pad = if a.max(b) > 0.0 { 0.1 * a.max(b) } else { 5e-3 };
        (a + 2.0 * pad, b + 2.0 * pad)
    };
    let best = |view: View| {
        let (a, b) = span(view);
        (w / a).min(MAX_PANEL / b)
    };
    let (plan, side) = (best(PLAN), best(SIDE));
    let shared = plan.max(side) < 4.0 * plan.min(side);
    let mut top = TITLE + HEAD;
    let panels = [(PLAN, plan), (SIDE, side)]
        .into_iter()
        .map(|(view, own)| {
            let scale = if shared { plan.min(side) } else { own };
            let h = (span(view).1 * scale).max(MIN_PANEL).round();
            let mid = |k: usize| 0.5 * (lo[k] + hi[k]);
            let p = Panel {
                view,
                left: LEFT,
                top,
                w: w as i32,
                h: h as i32,
                x0: mid(view.h) - 0.5 * w / scale,
                y0: mid(view.v) - 0.5 * h / scale,
                scale,
                depth: mid(view.d),
                notes: scene
                    .shields
                    .iter()
                    .filter_map(|s| parallel_note(view, s))
                    .collect(),
            };
            top += h as i32 + FOOT + HEAD + ROW * p.notes.len() as i32;
            p
        })
        .collect();
    (panels, shared, top)
}

/// The smallest box around `pts` (lowest and highest x, y, z), m.
fn bounds(pts: &[Vec3]) -> ([f64; 3], [f64; 3]) {
    let mut lo = [f64::INFINITY; 3];
    let mut hi = [f64::NEG_INFINITY; 3];
    for p in pts {
        for k in 0..3 {
            lo[k] = lo[k].min(p[k]);
            hi[k] = hi[k].max(p[k]);
        }
    }
    (lo, hi)
}

/// The eight corners of an enclosure's box shrunk by `inset` (m) on every side.
fn corners(e: &crate::model::Enclosure, inset: f64) -> Vec<Vec3> {
    let f = &e.frame;
    let half = (e.size * 0.5).add_scalar(-inset);
    (0..8)
        .map(|k| {
            let s = |bit: usize| if k & bit == 0 { -1.0 } else { 1.0 };
            f.origin + f.x * (s(1) * half.x) + f.y * (s(2) * half.y) + f.z * (s(4) * half.z)
        })
        .collect()
}

/// Notes for parts drawn smaller than `TINY_PX` in a view at `scale` px/m.
fn tiny_notes(parts: &[Part], scale: f64) -> Vec<String> {
    parts
        .iter()
        .filter_map(|p| {
            let size = extent(p);
            (size * scale < TINY_PX && p.dipoles.is_empty()).then(|| {
                let what = if p.source { "source" } else { "victim" };
                format!(
                    "{what} \"{}\" is {} mm across, too small to see at the scale of \
                     a view: it is ringed where it is",
                    p.id,
                    three_figures(size * 1e3)
                )
            })
        })
        .collect()
}

/// The largest extent of a part along x, y or z, m.
fn extent(p: &Part) -> f64 {
    let pts: Vec<Vec3> = p.paths.iter().flatten().copied().collect();
    let (lo, hi) = bounds(&pts);
    (0..3).map(|k| hi[k] - lo[k]).fold(0.0, f64::max)
}

fn draw_panel(root: &Root<'_>, p: &Panel, scene: &Scene, parts: &[Part]) -> Result<(), PlotError> {
    let step = tick_step(p.scale);
    grid(root, p, step)?;
    let mut labels = Labels::new(p.bounds());
    for s in &scene.shields {
        sheet(root, p, s, &mut labels)?;
    }
    for e in &scene.enclosures {
        enclosure(root, p, e, &mut labels)?;
    }
    let budget = budget_stride(p, parts);
    for part in parts {
        draw_part(root, p, part, budget, &mut labels)?;
    }
    labels.draw(root)?;
    let [l, t, r, b] = p.bounds();
    root.draw(&Rectangle::new([(l, t), (r, b)], GREY_700.stroke_width(1)))
        .map_err(err)?;
    let head = ("sans-serif", 15)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Left, VPos::Bottom));
    root.draw_text(p.view.heading, &head, (l, t - 6))
        .map_err(err)?;
    let note = ("sans-serif", LABEL).into_font().color(&SHIELD_TEXT);
    for (k, n) in p.notes.iter().enumerate() {
        root.draw_text(n, &note, (l, b + FOOT - 4 + ROW * k as i32))
            .map_err(err)?;
    }
    scale_bar(root, p, step)
}

/// The tick step (m): 1, 2 or 5 times a power of ten, at least 55 px apart.
fn tick_step(scale: f64) -> f64 {
    let raw = 55.0 / scale;
    let base = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * base)
        .find(|s| *s >= raw * (1.0 - 1e-9))
        .unwrap_or(10.0 * base)
}

/// Light grid lines and mm tick labels on both axes, and the axis names.
fn grid(root: &Root<'_>, p: &Panel, step: f64) -> Result<(), PlotError> {
    let [l, t, r, b] = p.bounds();
    let tick = ("sans-serif", 12).into_font().color(&BLACK);
    let (a0, a1) = (p.x0, p.x0 + f64::from(p.w) / p.scale);
    for k in (a0 / step).ceil() as i64..=(a1 / step).floor() as i64 {
        let x = p.plane(k as f64 * step, p.y0).0.round() as i32;
        root.draw(&PathElement::new(
            [(x, t), (x, b)],
            GREY_200.stroke_width(1),
        ))
        .map_err(err)?;
        let style = tick.pos(Pos::new(HPos::Center, VPos::Top));
        root.draw_text(&mm(k as f64 * step), &style, (x, b + 5))
            .map_err(err)?;
    }
    let (b0, b1) = (p.y0, p.y0 + f64::from(p.h) / p.scale);
    // A low frame gets finer vertical ticks (the next 1-2-5 steps down) to show two.
    let mut step = step;
    while (b1 / step).floor() - (b0 / step).ceil() < 1.0 && step * p.scale > 25.0 {
        let base = 10f64.powf(step.log10().floor());
        let m = (step / base).round();
        step = if m == 1.0 {
            0.5 * base
        } else {
            0.5 * m.min(4.0) * base
        };
    }
    for k in (b0 / step).ceil() as i64..=(b1 / step).floor() as i64 {
        let y = p.plane(p.x0, k as f64 * step).1.round() as i32;
        root.draw(&PathElement::new(
            [(l, y), (r, y)],
            GREY_200.stroke_width(1),
        ))
        .map_err(err)?;
        let style = tick.pos(Pos::new(HPos::Right, VPos::Center));
        root.draw_text(&mm(k as f64 * step), &style, (l - 6, y))
            .map_err(err)?;
    }
    let name = ("sans-serif", 13).into_font().color(&GREY_700);
    let below = name.pos(Pos::new(HPos::Center, VPos::Top));
    let across = format!("{} (mm)", AXES[p.view.h]);
    root.draw_text(&across, &below, ((l + r) / 2, b + 24))
        .map_err(err)?;
    let up = format!("{} (mm)", AXES[p.view.v]);
    let side = name.pos(Pos::new(HPos::Left, VPos::Center));
    root.draw_text(&up, &side, (6, (t + b) / 2)).map_err(err)
}

/// A length in m as a number of mm, three figures.
fn mm(v: f64) -> String {
    three_figures(v * 1e3)
}

/// A black bar one tick step long in the lower right of the frame, its length above it.
fn scale_bar(root: &Root<'_>, p: &Panel, step: f64) -> Result<(), PlotError> {
    let [_, _, r, b] = p.bounds();
    let len = (step * p.scale).round() as i32;
    let (x1, y) = (r - 14, b - 14);
    let back = [(x1 - len - 8, y - 26), (x1 + 8, y + 10)];
    root.draw(&Rectangle::new(back, WHITE.mix(0.85).filled()))
        .map_err(err)?;
    root.draw(&Rectangle::new(
        [(x1 - len, y), (x1, y + 4)],
        BLACK.filled(),
    ))
    .map_err(err)?;
    let style = ("sans-serif", 12)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Center, VPos::Bottom));
    let text = format!("{} mm", mm(step));
    root.draw_text(&text, &style, (x1 - len / 2, y - 3))
        .map_err(err)
}

/// One sheet in a view: the band where it cuts the view's middle plane, clipped to the
/// frame, or a line of text when the sheet lies parallel to the view.
fn sheet(root: &Root<'_>, p: &Panel, s: &Sheet, labels: &mut Labels) -> Result<(), PlotError> {
    let (n, o, t) = (s.normal, s.origin, s.thickness());
    let (nh, nv, nd) = (n[p.view.h], n[p.view.v], n[p.view.d]);
    let kind = kind(s);
    if nh.hypot(nv) < 1e-6 {
        return Ok(());
    }
    // Height above the first face of the in-view point (a, b) on the middle plane, m.
    let height = |a: f64, b: f64| {
        nh * (a - o[p.view.h]) + nv * (b - o[p.view.v]) + nd * (p.depth - o[p.view.d])
    };
    let (a1, b1) = (
        p.x0 + f64::from(p.w) / p.scale,
        p.y0 + f64::from(p.h) / p.scale,
    );
    let frame = vec![(p.x0, p.y0), (a1, p.y0), (a1, b1), (p.x0, b1)];
    let band = clip(clip(frame, |q| height(q.0, q.1)), |q| t - height(q.0, q.1));
    if band.len() < 3 {
        return Ok(());
    }
    let px: Vec<Px> = band
        .iter()
        .map(|q| {
            let (x, y) = p.plane(q.0, q.1);
            (x.round() as i32, y.round() as i32)
        })
        .collect();
    let (fill, edge) = if s.fitted { (0.55, 1.0) } else { (0.18, 0.6) };
    root.draw(&Polygon::new(px.clone(), SHIELD.mix(fill).filled()))
        .map_err(err)?;
    let mut ring = px.clone();
    ring.push(px[0]);
    let style = SHIELD.mix(edge).stroke_width(1);
    if s.fitted {
        root.draw(&PathElement::new(ring, style)).map_err(err)?;
    } else {
        root.draw(&DashedPathElement::new(ring, 2, 4, style))
            .map_err(err)?;
    }
    // Label beside the band's top end (a steep band) or above its left end (a flat one).
    let anchor = if nh.abs() >= nv.abs() {
        let top = px
            .iter()
            .min_by_key(|q| (q.1, -q.0))
            .copied()
            .unwrap_or(px[0]);
        (top.0 + 5, top.1 + 6)
    } else {
        let left = px
            .iter()
            .min_by_key(|q| (q.0, q.1))
            .copied()
            .unwrap_or(px[0]);
        (left.0 + 6, left.1 - i32::try_from(LABEL).unwrap_or(13) - 6)
    };
    let left = px.iter().map(|q| q.0).min().unwrap_or(anchor.0) - 5;
    let text = format!("{} {kind}", s.id);
    labels.place(text, anchor, left, SHIELD_TEXT, nh.abs() < nv.abs());
    Ok(())
}

/// What a sheet's label says it is: "(infinite sheet)", and "(option)" for a design
/// option that is not fitted.
fn kind(s: &Sheet) -> &'static str {
    if s.fitted {
        "(infinite sheet)"
    } else {
        "(infinite sheet) (option)"
    }
}

/// The line under a view that names a sheet lying parallel to it, if `s` does.
fn parallel_note(view: View, s: &Sheet) -> Option<String> {
    let (n, o, t) = (s.normal, s.origin, s.thickness());
    if n[view.h].hypot(n[view.v]) >= 1e-6 {
        return None;
    }
    let (a, b) = (o[view.d], o[view.d] + t * n[view.d]);
    let kind = kind(s);
    Some(format!(
        "{} {kind} lies parallel to this view: from {} = {} mm, {} thick; not drawn here",
        s.id,
        AXES[view.d],
        mm(a.min(b)),
        crate::units::format_si(t, "m", 3)
    ))
}

/// The part of `poly` where `f` ≥ 0 (one Sutherland–Hodgman step; `f` linear).
fn clip(poly: Vec<(f64, f64)>, f: impl Fn((f64, f64)) -> f64) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for (k, &a) in poly.iter().enumerate() {
        let b = poly[(k + 1) % poly.len()];
        let (fa, fb) = (f(a), f(b));
        if fa >= 0.0 {
            out.push(a);
        }
        if (fa >= 0.0) != (fb >= 0.0) {
            let s = fa / (fa - fb);
            out.push((a.0 + s * (b.0 - a.0), a.1 + s * (b.1 - a.1)));
        }
    }
    out
}

/// An enclosure's outer and inner walls: the twelve edges of each box.
fn enclosure(
    root: &Root<'_>,
    p: &Panel,
    e: &crate::model::Enclosure,
    labels: &mut Labels,
) -> Result<(), PlotError> {
    let (mut top_right, mut left) = ((i32::MIN, i32::MAX), i32::MAX);
    for (inset, width) in [(0.0, 2), (e.thickness, 1)] {
        let c: Vec<Px> = corners(e, inset)
            .iter()
            .map(|q| {
                let (x, y) = p.at(q);
                (x.round() as i32, y.round() as i32)
            })
            .collect();
        for (a, b) in (0..8).flat_map(|a| [1, 2, 4].map(|bit| (a, a | bit))) {
            if a != b {
                let edge = [c[a], c[b]];
                root.draw(&PathElement::new(edge, SHIELD.stroke_width(width)))
                    .map_err(err)?;
            }
        }
        for q in &c {
            top_right = (top_right.0.max(q.0), top_right.1.min(q.1));
            left = left.min(q.0 - 5);
        }
    }
    let text = format!("{} (enclosure)", e.id);
    labels.place(
        text,
        (top_right.0 + 5, top_right.1),
        left,
        SHIELD_TEXT,
        false,
    );
    Ok(())
}

/// How many of the pixel-thinned points to skip so that a view draws at most `BUDGET`.
fn budget_stride(p: &Panel, parts: &[Part]) -> usize {
    let kept: usize = parts
        .iter()
        .flat_map(|part| &part.paths)
        .map(|path| thin(p, path, 1).len())
        .sum();
    kept.div_ceil(BUDGET).max(1)
}

/// `path` in pixels, points closer than 1 px to the last one kept dropped, then, in a
/// path of more than `SHORT` such points, every `stride`-th point kept (the last always).
fn thin(p: &Panel, path: &[Vec3], stride: usize) -> Vec<Px> {
    let mut out: Vec<(f64, f64)> = Vec::new();
    for (k, q) in path.iter().enumerate() {
        let xy = p.at(q);
        let far = out
            .last()
            .is_none_or(|l| (l.0 - xy.0).hypot(l.1 - xy.1) >= 1.0);
        if far || k + 1 == path.len() {
            out.push(xy);
        }
    }
    let n = out.len();
    let stride = if n > SHORT { stride } else { 1 };
    out.iter()
        .enumerate()
        .filter(|(k, _)| k % stride == 0 || k + 1 == n)
        .map(|(_, q)| (q.0.round() as i32, q.1.round() as i32))
        .collect()
}

/// A source (solid) or victim (dashed) with its dipoles and its label.
fn draw_part(
    root: &Root<'_>,
    p: &Panel,
    part: &Part,
    stride: usize,
    labels: &mut Labels,
) -> Result<(), PlotError> {
    let colour = if part.source { SOURCE } else { VICTIM };
    let mut all: Vec<Px> = Vec::new();
    for path in &part.paths {
        let px = thin(p, path, stride);
        // Close turns of a winding in one px lines, so that they stay apart.
        let width = if winding(&px) { 1 } else { 2 };
        if part.source {
            root.draw(&PathElement::new(px.clone(), colour.stroke_width(width)))
                .map_err(err)?;
        } else {
            let style = colour.stroke_width(2);
            root.draw(&DashedPathElement::new(edge_on(&px), 8, 5, style))
                .map_err(err)?;
        }
        all.extend(px);
    }
    for (at, m) in &part.dipoles {
        let c = p.at(at);
        let c = (c.0.round() as i32, c.1.round() as i32);
        dipole(root, p, c, m)?;
        all.extend([(c.0 - 7, c.1 - 7), (c.0 + 7, c.1 + 7)]);
    }
    let (x0, x1) = (all.iter().map(|q| q.0).min(), all.iter().map(|q| q.0).max());
    let (y0, y1) = (all.iter().map(|q| q.1).min(), all.iter().map(|q| q.1).max());
    let (Some(x0), Some(x1), Some(y0), Some(y1)) = (x0, x1, y0, y1) else {
        return Ok(());
    };
    let mut right = x1;
    let tiny = part.dipoles.is_empty() && f64::from((x1 - x0).max(y1 - y0)) < TINY_PX;
    if tiny {
        let c = ((x0 + x1) / 2, (y0 + y1) / 2);
        root.draw(&Circle::new(c, 10, colour.stroke_width(2)))
            .map_err(err)?;
        right = c.0 + 10;
    }
    let at = (right + 5, y0.min((y0 + y1) / 2 - 8));
    let (x, y) = labels.place(part.id.clone(), at, x0 - 5, colour, false);
    // A leader from a label set apart from its part to the part's nearest point.
    let (w, h) = (text_width(&part.id), LABEL as i32 + 3);
    let edge = |q: &Px| (q.0.clamp(x, x + w), q.1.clamp(y, y + h));
    let gap = |q: &Px| {
        let e = edge(q);
        f64::from(q.0 - e.0).hypot(f64::from(q.1 - e.1))
    };
    if let Some(near) = all.iter().min_by(|a, b| gap(a).total_cmp(&gap(b)))
        && gap(near) > 16.0
    {
        labels.leaders.push((edge(near), *near));
    }
    Ok(())
}

/// Whether a drawn path goes round more than once: longer than one and a half times the
/// perimeter of its box.
fn winding(px: &[Px]) -> bool {
    let len: f64 = px
        .windows(2)
        .map(|w| f64::from(w[1].0 - w[0].0).hypot(f64::from(w[1].1 - w[0].1)))
        .sum();
    let span = |f: fn(&Px) -> i32| {
        let v = px.iter().map(f);
        f64::from(v.clone().max().unwrap_or(0) - v.min().unwrap_or(0))
    };
    len > 3.0 * (span(|q| q.0) + span(|q| q.1))
}

/// A loop seen edge-on (its drawing at most 2 px thick) as one line between its ends, so
/// that the dashes of its near and far sides do not fill each other's gaps.
fn edge_on(px: &[Px]) -> Vec<Px> {
    let (Some(x0), Some(x1)) = (px.iter().min_by_key(|q| q.0), px.iter().max_by_key(|q| q.0))
    else {
        return px.to_vec();
    };
    let (Some(y0), Some(y1)) = (px.iter().min_by_key(|q| q.1), px.iter().max_by_key(|q| q.1))
    else {
        return px.to_vec();
    };
    if y1.1 - y0.1 <= 2 && x1.0 - x0.0 > 2 {
        vec![*x0, *x1]
    } else if x1.0 - x0.0 <= 2 && y1.1 - y0.1 > 2 {
        vec![*y0, *y1]
    } else {
        px.to_vec()
    }
}

/// A dipole: a ring with an arrow along the moment's part in the view, or with a dot
/// (moment towards the viewer) or a cross (away) when the moment is along the depth.
fn dipole(root: &Root<'_>, p: &Panel, c: Px, m: &Vec3) -> Result<(), PlotError> {
    root.draw(&Circle::new(c, 6, SOURCE.stroke_width(2)))
        .map_err(err)?;
    let (mh, mv, md) = (m[p.view.h], m[p.view.v], m[p.view.d]);
    let size = m.norm();
    if mh.hypot(mv) > 0.2 * size {
        let (ux, uy) = (mh / mh.hypot(mv), -mv / mh.hypot(mv));
        let at = |l: f64, s: f64| {
            let (x, y) = (
                f64::from(c.0) + l * ux - s * uy,
                f64::from(c.1) + l * uy + s * ux,
            );
            (x.round() as i32, y.round() as i32)
        };
        root.draw(&PathElement::new(
            [c, at(24.0, 0.0)],
            SOURCE.stroke_width(2),
        ))
        .map_err(err)?;
        let head = vec![at(32.0, 0.0), at(22.0, 5.0), at(22.0, -5.0)];
        return root.draw(&Polygon::new(head, SOURCE.filled())).map_err(err);
    }
    // The viewer looks along −(h × v); depth axis d: plan +z is towards the viewer,
    // side +y away from it.
    let towards = if p.view.d == 2 { md > 0.0 } else { md < 0.0 };
    if towards {
        root.draw(&Circle::new(c, 2, SOURCE.filled())).map_err(err)
    } else {
        for (a, b) in [((-4, -4), (4, 4)), ((-4, 4), (4, -4))] {
            let line = [(c.0 + a.0, c.1 + a.1), (c.0 + b.0, c.1 + b.1)];
            root.draw(&PathElement::new(line, SOURCE.stroke_width(2)))
                .map_err(err)?;
        }
        Ok(())
    }
}

/// Labels of one view: each kept inside the frame, put left of its part (ending at
/// `left`) when it does not fit on the right, and moved up or down by whole lines until
/// it overlaps no earlier label. They are drawn after the parts, over them.
struct Labels {
    frame: [i32; 4],
    taken: Vec<[i32; 4]>,
    queue: Vec<(Px, String, RGBColor)>,
    leaders: Vec<(Px, Px)>,
}

impl Labels {
    fn new(frame: [i32; 4]) -> Self {
        Labels {
            frame,
            taken: Vec::new(),
            queue: Vec::new(),
            leaders: Vec::new(),
        }
    }

    /// Places `text` with its top left at `at` or as near as it is free, looking upwards
    /// first when `up`, else alternately below and above.
    /// Returns the top left taken, px.
    fn place(&mut self, text: String, at: Px, left: i32, colour: RGBColor, up: bool) -> Px {
        let w = text_width(&text);
        let h = LABEL as i32 + 3;
        let [l, t, r, b] = self.frame;
        let x = if at.0 + w > r - 4 && left - w >= l + 4 {
            left - w
        } else {
            at.0.min(r - 4 - w).max(l + 4)
        };
        let fit = |y: i32| y.clamp(t + 3, b - 3 - h);
        let free = |y: i32| {
            self.taken
                .iter()
                .all(|o| x + w <= o[0] || x >= o[2] || y + h <= o[1] || y >= o[3])
        };
        let shift = |k: i32| match (up, k % 2) {
            (true, _) if k < 12 => -k,
            (true, _) => k - 11,
            (false, 0) => k / 2,
            (false, _) => -(k + 1) / 2,
        };
        let y = (0..24)
            .map(|k| fit(at.1 + shift(k) * h))
            .find(|y| free(*y))
            .unwrap_or(fit(at.1));
        self.taken.push([x, y, x + w, y + h]);
        self.queue.push(((x, y), text, colour));
        (x, y)
    }

    /// Draws the placed labels on a light backing.
    fn draw(&self, root: &Root<'_>) -> Result<(), PlotError> {
        for (a, b) in &self.leaders {
            let end = (
                b.0 + (a.0 - b.0).signum() * 3,
                b.1 + (a.1 - b.1).signum() * 3,
            );
            root.draw(&PathElement::new(
                [*a, end],
                GREY_700.mix(0.8).stroke_width(1),
            ))
            .map_err(err)?;
        }
        for ((x, y), text, colour) in &self.queue {
            let (w, h) = (text_width(text), LABEL as i32 + 3);
            let back = [(x - 2, *y), (x + w + 1, y + h)];
            root.draw(&Rectangle::new(back, WHITE.mix(0.7).filled()))
                .map_err(err)?;
            let style = ("sans-serif", LABEL)
                .into_font()
                .color(colour)
                .pos(Pos::new(HPos::Left, VPos::Top));
            root.draw_text(text, &style, (*x, y + 1)).map_err(err)?;
        }
        Ok(())
    }
}

/// About how wide `text` is drawn at the label size, px (the backend writes a font size
/// of about 0.8 of the one asked for; sans-serif letters average about 0.55 em).
fn text_width(text: &str) -> i32 {
    (text.chars().count() as f64 * 0.47 * f64::from(LABEL)).ceil() as i32
}

/// The legend's entries (style, text) and where each goes: (x px, row).
fn legend_entries(scene: &Scene, parts: &[Part]) -> Vec<(u8, &'static str, i32, i32)> {
    let mut entries: Vec<(u8, &str)> = Vec::new();
    if parts.iter().any(|p| p.source) {
        entries.push((0, "source conductor"));
    }
    if parts.iter().any(|p| !p.source) {
        entries.push((1, "victim loop"));
    }
    if scene.shields.iter().any(|s| s.fitted) {
        entries.push((2, "sheet, fitted"));
    }
    if scene.shields.iter().any(|s| !s.fitted) {
        entries.push((3, "sheet, design option"));
    }
    if !scene.enclosures.is_empty() {
        entries.push((4, "enclosure walls"));
    }
    if parts.iter().any(|p| !p.dipoles.is_empty()) {
        entries.push((5, "dipole: arrow along its moment, ⊙ towards you, ⊗ away"));
    }
    let (mut x, mut row) = (LEFT, 0);
    let mut out = Vec::new();
    for (kind, text) in entries {
        let w = 36 + text_width(text) + 28;
        if x > LEFT && x + w - 28 > WIDTH - RIGHT {
            (x, row) = (LEFT, row + 1);
        }
        out.push((kind, text, x, row));
        x += w;
    }
    out
}

/// The legend rows (what each style stands for) from `top` px, and the notes below.
fn legend(
    root: &Root<'_>,
    entries: &[(u8, &str, i32, i32)],
    top: i32,
    notes: &[String],
) -> Result<(), PlotError> {
    let font = ("sans-serif", LABEL)
        .into_font()
        .color(&BLACK)
        .pos(Pos::new(HPos::Left, VPos::Center));
    let rows = entries.last().map_or(0, |e| e.3 + 1);
    for &(kind, text, x, row) in entries {
        let y = top + ROW / 2 + ROW * row;
        let line = [(x, y), (x + 30, y)];
        match kind {
            0 => root.draw(&PathElement::new(line, SOURCE.stroke_width(2))),
            1 => root.draw(&DashedPathElement::new(line, 8, 5, VICTIM.stroke_width(2))),
            4 => root.draw(&Rectangle::new(
                [(x, y - 6), (x + 30, y + 6)],
                SHIELD.stroke_width(2),
            )),
            5 => dipole_sample(root, (x + 15, y)),
            k => {
                let fill = if k == 2 { 0.55 } else { 0.18 };
                let band = [(x, y - 5), (x + 30, y + 5)];
                root.draw(&Rectangle::new(band, SHIELD.mix(fill).filled()))
            }
        }
        .map_err(err)?;
        root.draw_text(text, &font, (x + 36, y)).map_err(err)?;
    }
    let note = font.color(&GREY_700);
    for (k, n) in notes.iter().enumerate() {
        let y = top + ROW / 2 + ROW * (rows + k as i32);
        root.draw_text(n, &note, (LEFT, y)).map_err(err)?;
    }
    Ok(())
}

/// The legend's dipole: a ring with an arrow to the right.
fn dipole_sample(root: &Root<'_>, c: Px) -> Result<(), DrawingAreaErrorKind<std::io::Error>> {
    root.draw(&Circle::new((c.0 - 8, c.1), 5, SOURCE.stroke_width(2)))?;
    root.draw(&PathElement::new(
        [(c.0 - 8, c.1), (c.0 + 8, c.1)],
        SOURCE.stroke_width(2),
    ))?;
    root.draw(&Polygon::new(
        vec![(c.0 + 14, c.1), (c.0 + 7, c.1 - 4), (c.0 + 7, c.1 + 4)],
        SOURCE.filled(),
    ))
}
