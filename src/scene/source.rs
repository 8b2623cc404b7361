//! `[[source]]` tables → placed conductors and their current.

use super::current::{CurrentContext, parse_current};
use super::reader::{Table, Value};
use super::windings::parse_winding;
use super::{Source, parse_frame, parse_id, parse_kind};
use crate::error::InputError;
use crate::field::{Conductors, FieldSource, Vec3};
use crate::geometry::{
    circle_source, dipole_source, polygon_source, polyline_source, rectangle_corners,
};
use crate::units::{Dimension, mm};

/// Solver settings every element needs while it is built.
pub(crate) struct Context {
    /// Relative accuracy target.
    pub tolerance: f64,
    /// Default wire radius, m.
    pub wire_radius: f64,
    /// Folder that relative paths in the scene (a `file` source) start from.
    pub base_dir: std::path::PathBuf,
}

const KINDS: &[&str] = &[
    "loop",
    "rectangle",
    "polygon",
    "polyline",
    "dipole",
    "helix",
    "toroid",
    "spiral",
    "saddle",
    "pair",
    "file",
];

/// Geometry keys of every source kind (for "not a key of this kind" messages).
const GEOMETRY_KEYS: &[&str] = &[
    "radius",
    "width",
    "height",
    "vertices",
    "effective_area",
    "length",
    "turns",
    "leads",
    "major_radius",
    "minor_radius",
    "inner_radius",
    "outer_radius",
    "shape",
    "opening",
    "separation",
    "twist_pitch",
    "path",
    "calibrate",
];

pub(crate) fn parse(
    t: &Table<'_, '_>,
    ctx: &Context,
    warnings: &mut Vec<String>,
) -> Result<Source, InputError> {
    t.declare(GEOMETRY_KEYS);
    t.declare(&[
        "id",
        "kind",
        "position",
        "axis",
        "reference",
        "wire_radius",
        "current",
    ]);
    let id = parse_id(t)?;
    let kind = parse_kind(t, KINDS, &[])?;
    let frame = parse_frame(t)?;
    let wire_radius = match t.get("wire_radius") {
        Some(v) => v.positive(Dimension::Length)?,
        None => ctx.wire_radius,
    };
    let mut conductors = match kind {
        "loop" => {
            let r = t.require("radius", "the loop radius, e.g. \"8 mm\"")?;
            let radius = r.positive(Dimension::Length)?;
            check_wire(&r, radius, wire_radius)?;
            Conductors {
                wires: vec![circle_source(&frame, radius, ctx.tolerance, wire_radius)],
                dipoles: vec![],
            }
        }
        "rectangle" => {
            let w = t.require("width", "the side along local x")?;
            let h = t.require("height", "the side along local y")?;
            let (wv, hv) = (
                w.positive(Dimension::Length)?,
                h.positive(Dimension::Length)?,
            );
            check_wire(&w, wv, wire_radius)?;
            check_wire(&h, hv, wire_radius)?;
            Conductors {
                wires: vec![polygon_source(
                    &frame,
                    &rectangle_corners(wv, hv),
                    wire_radius,
                )],
                dipoles: vec![],
            }
        }
        "polygon" => {
            let v = t.require("vertices", "an array of [x, y, z] corners")?;
            let corners = parse_polygon(&v, wire_radius)?;
            Conductors {
                wires: vec![polygon_source(&frame, &corners, wire_radius)],
                dipoles: vec![],
            }
        }
        "polyline" => {
            let v = t.require("vertices", "an array of [x, y, z] points")?;
            let points = parse_points(&v, 2)?;
            warnings.push(format!(
                "source \"{id}\" is an open polyline: its return path is not modelled, so its \
                 field is that of the drawn wire alone"
            ));
            Conductors {
                wires: vec![polyline_source(&frame, &points, wire_radius)],
                dipoles: vec![],
            }
        }
        "dipole" => {
            let a = t.require("effective_area", "N·A in m2, e.g. \"150 mm2\"")?;
            let area = a.quantity(Dimension::Area)?;
            if area == 0.0 {
                return Err(a.error("a dipole with zero effective area has no field"));
            }
            dipole_source(&frame, area, wire_radius)
        }
        other => parse_winding(other, t, &frame, ctx, wire_radius, warnings)?,
    };
    if matches!(kind, "loop" | "rectangle" | "polygon")
        && let Some(n) = t.get("turns")
    {
        let turns = n.count(1)? as f64;
        for w in &mut conductors.wires {
            w.weight = turns;
        }
    }
    let calibrate = t.get("calibrate");
    let mut lines = match t.get("current") {
        Some(c) => {
            let cctx = CurrentContext {
                source_id: &id,
                tolerance: ctx.tolerance,
                amplitude_required: calibrate.is_none(),
            };
            parse_current(&c, &cctx, warnings)?
        }
        None => {
            return Err(t.error(
                "missing key `current`, e.g. current = { waveform = \"sine\", peak = \"1 A\", \
                 frequency = \"50 Hz\" }",
            ));
        }
    };
    let calibration = match calibrate {
        Some(c) => Some(calibrate_lines(&c, &conductors, &mut lines)?),
        None => None,
    };
    t.finish(GEOMETRY_KEYS, &format!("a source of kind \"{kind}\""))?;
    // Extreme amplitudes or calibrations can overflow the line phasors.
    let finite = |c: &num_complex::Complex64| c.re.is_finite() && c.im.is_finite();
    if !lines
        .iter()
        .all(|l| finite(&l.current) && l.frequency.is_finite())
    {
        let key = if t.has("calibrate") {
            "calibrate"
        } else {
            "current"
        };
        return Err(t.error_at(
            key,
            "the current's spectral lines overflow double precision: check the amplitude \
             (or the calibration field and point)",
        ));
    }
    Ok(Source {
        id,
        kind: kind.to_string(),
        frame,
        conductors,
        lines,
        calibration,
        far: Default::default(),
        sphere: Default::default(),
    })
}

/// `calibrate = { at, field }`: scales `lines` so the rms of |B| at `at` equals `field`
/// (rms over all lines: √(Σ|B_k|²/2)). Returns the point (m) and field (T).
fn calibrate_lines(
    v: &Value<'_, '_>,
    conductors: &Conductors,
    lines: &mut [crate::spectrum::Line],
) -> Result<(Vec3, f64), InputError> {
    let t = v.table()?;
    let at_v = t.require("at", "the point [x, y, z] where the field is known")?;
    let at = at_v.vector(Dimension::Length)?;
    let fv = t.require("field", "the rms of |B| there, e.g. \"12 uT\"")?;
    let field = fv.positive(Dimension::Field)?;
    t.finish(&[], "`calibrate` (at, field)")?;
    if conductors.distance_to(&at) < conductors.wires.first().map_or(0.0, |w| w.wire_radius)
        || conductors
            .dipoles
            .iter()
            .any(|d| (at - d.position).norm() < d.radius)
    {
        return Err(at_v.error("the calibration point lies on the source's conductor"));
    }
    let b = conductors.b_per_amp(&at).norm();
    let i_rms = (lines.iter().map(|l| l.current.norm_sqr()).sum::<f64>() / 2.0).sqrt();
    if !(b > 0.0 && i_rms > 0.0) {
        return Err(at_v.error("the source makes no field at this point: choose another"));
    }
    let k = field / (b * i_rms);
    for l in lines.iter_mut() {
        l.current *= k;
    }
    Ok((at, field))
}

/// The wire must be thinner than the shape it is bent into.
pub(crate) fn check_wire(v: &Value<'_, '_>, size: f64, wire_radius: f64) -> Result<(), InputError> {
    if wire_radius * 2.0 >= size {
        return Err(v.error(format!(
            "{} is not larger than the wire diameter ({}); make it larger or set a smaller \
             `wire_radius`",
            mm(size),
            mm(2.0 * wire_radius)
        )));
    }
    Ok(())
}

/// An array of at least `min` points (local, m) with no two consecutive ones equal.
pub(crate) fn parse_points(v: &Value<'_, '_>, min: usize) -> Result<Vec<Vec3>, InputError> {
    let items = v.array()?;
    if items.len() < min {
        return Err(v.error(format!(
            "needs at least {min} vertices, found {}",
            items.len()
        )));
    }
    let mut pts = Vec::with_capacity(items.len());
    for item in &items {
        let p = item.vector(Dimension::Length)?;
        if pts.last() == Some(&p) {
            return Err(item.error("repeats the previous vertex: a zero-length segment"));
        }
        pts.push(p);
    }
    Ok(pts)
}

/// Corners of a closed polygon: at least three, a repeated first vertex at the end
/// dropped, non-zero area, no side shorter than the wire diameter.
pub(crate) fn parse_polygon(v: &Value<'_, '_>, wire_radius: f64) -> Result<Vec<Vec3>, InputError> {
    let mut pts = parse_points(v, 3)?;
    if pts.len() > 3 && pts.first() == pts.last() {
        pts.pop();
    }
    if pts.len() < 3 || pts.first() == pts.last() {
        return Err(v.error("a polygon needs at least 3 distinct corners"));
    }
    let n = pts.len();
    let area: Vec3 = (0..n)
        .map(|i| pts[i].cross(&pts[(i + 1) % n]))
        .sum::<Vec3>()
        * 0.5;
    let size = (0..n)
        .map(|i| (pts[(i + 1) % n] - pts[i]).norm())
        .fold(0.0, f64::max);
    if area.norm() <= 1e-12 * size * size {
        return Err(v.error("the corners are colinear: the polygon encloses no area"));
    }
    let shortest = (0..n)
        .map(|i| (pts[(i + 1) % n] - pts[i]).norm())
        .fold(f64::INFINITY, f64::min);
    if shortest <= 2.0 * wire_radius {
        return Err(v.error(format!(
            "a side of {} is not longer than the wire diameter ({})",
            mm(shortest),
            mm(2.0 * wire_radius)
        )));
    }
    Ok(pts)
}
