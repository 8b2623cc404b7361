//! Helpers every table reader shares: the build context, ids, kinds, frames and the
//! checks on wires and polygons.

use super::reader::{Table, Value, did_you_mean};
use crate::error::InputError;
use crate::field::Vec3;
use crate::geometry::Frame;
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

/// Reads `id`: required, `[A-Za-z0-9_-]+`.
pub(crate) fn parse_id(t: &Table<'_, '_>) -> Result<String, InputError> {
    let v = t.require("id", "a unique name such as \"choke\"")?;
    let id = v.string()?;
    if id.is_empty()
        || !id
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(v.error(format!(
            "\"{id}\" is not a valid id: use letters, digits, '_' and '-'"
        )));
    }
    Ok(id.to_string())
}

/// Reads `kind` and checks it against `known`, refusing `later` kinds by name.
pub(crate) fn parse_kind<'a>(
    t: &Table<'a, '_>,
    known: &[&str],
    later: &[&str],
) -> Result<&'a str, InputError> {
    let v = t.require("kind", &format!("one of {}", known.join(", ")))?;
    let kind = v.string()?;
    if known.contains(&kind) {
        return Ok(kind);
    }
    if later.contains(&kind) {
        return Err(v.error(format!(
            "kind \"{kind}\" is not supported yet in this version of strayflux"
        )));
    }
    let hint = did_you_mean(kind, known)
        .map(|s| format!("; did you mean \"{s}\"?"))
        .unwrap_or_default();
    Err(v.error(format!(
        "unknown kind \"{kind}\"; expected one of {}{hint}",
        known.join(", ")
    )))
}

/// Reads the placement keys `position`, `axis`, `reference` into a frame.
pub(crate) fn parse_frame(t: &Table<'_, '_>) -> Result<Frame, InputError> {
    let origin = match t.get("position") {
        Some(v) => v.vector(Dimension::Length)?,
        None => Vec3::zeros(),
    };
    let axis = match t.get("axis") {
        Some(v) => v.direction()?,
        None => Vec3::z(),
    };
    let reference = match t.get("reference") {
        Some(v) => Some((v.direction()?, v)),
        None => None,
    };
    match Frame::new(origin, axis, reference.as_ref().map(|r| r.0)) {
        Some(f) => Ok(f),
        None => Err(match reference {
            Some((_, v)) => {
                v.error("`reference` is parallel to `axis`; give a direction across it")
            }
            None => t.error_at("axis", "cannot build a frame from this axis"),
        }),
    }
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

/// Reads the required length `key` (m; `what` describes it) and checks that it exceeds
/// the wire's diameter (`wire_radius`, m).
pub(crate) fn wire_size(
    t: &Table<'_, '_>,
    key: &str,
    what: &str,
    wire_radius: f64,
) -> Result<f64, InputError> {
    let v = t.require(key, what)?;
    let size = v.positive(Dimension::Length)?;
    check_wire(&v, size, wire_radius)?;
    Ok(size)
}

/// A rectangle's `width` and `height` (m): both required (checked first), then both
/// positive, then both larger than the wire (`wire_radius`, m).
pub(crate) fn rectangle_sides(
    t: &Table<'_, '_>,
    wire_radius: f64,
) -> Result<(f64, f64), InputError> {
    let w = t.require("width", "the side along local x")?;
    let h = t.require("height", "the side along local y")?;
    let (wv, hv) = (
        w.positive(Dimension::Length)?,
        h.positive(Dimension::Length)?,
    );
    check_wire(&w, wv, wire_radius)?;
    check_wire(&h, hv, wire_radius)?;
    Ok((wv, hv))
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
/// dropped, non-zero area, and a wire that fits its bends (see [`closed_corners`]). An
/// error names the vertex it is about when there is one.
pub(crate) fn parse_polygon(v: &Value<'_, '_>, wire_radius: f64) -> Result<Vec<Vec3>, InputError> {
    let pts = parse_points(v, 3)?;
    closed_corners(pts, wire_radius).map_err(|(at, why)| {
        match at.and_then(|k| v.array().ok().and_then(|items| items.get(k).cloned())) {
            Some(item) => item.error(why),
            None => v.error(why),
        }
    })
}

/// The corners (m) of the closed path through `pts`: a repeated first point at the end
/// is dropped (with more than three points), at least 3 distinct corners must remain,
/// they must enclose an area, and the wire (radius `wire_radius`, m) must fit every
/// bend ([`check_bends`]). An error carries the index of the point it is about, if any.
pub(crate) fn closed_corners(
    mut pts: Vec<Vec3>,
    wire_radius: f64,
) -> Result<Vec<Vec3>, (Option<usize>, String)> {
    if pts.len() > 3 && pts.first() == pts.last() {
        pts.pop();
    }
    if pts.len() < 3 || pts.first() == pts.last() {
        return Err((
            None,
            "a closed path needs at least 3 distinct corners".into(),
        ));
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
        return Err((
            None,
            "the corners are colinear: the polygon encloses no area".into(),
        ));
    }
    check_bends(&pts, wire_radius)?;
    Ok(pts)
}

/// Checks that a round wire of radius `wire_radius` (m) can follow the closed path
/// through `corners` (m). A corner whose two sides are both longer than the wire
/// diameter always passes. A side not longer than the diameter passes where the path
/// bends gently, as a finely sampled curve does: at each corner it touches, the arc
/// tangent to both sides at their midpoints (radius min(side)/2 / tan(turn/2)) must be
/// no tighter than the wire radius. For a 90° corner that is the same as "both sides
/// longer than the diameter"; a regular N-gon of radius R bends with radius R cos(π/N).
/// An error carries the index of the offending corner.
pub(crate) fn check_bends(
    corners: &[Vec3],
    wire_radius: f64,
) -> Result<(), (Option<usize>, String)> {
    let n = corners.len();
    for k in 0..n {
        let before = corners[k] - corners[(k + n - 1) % n];
        let after = corners[(k + 1) % n] - corners[k];
        let shortest = before.norm().min(after.norm());
        if shortest > 2.0 * wire_radius {
            continue;
        }
        let cos_turn = (before.dot(&after) / (before.norm() * after.norm())).clamp(-1.0, 1.0);
        let turn = cos_turn.acos();
        let bend = shortest / 2.0 / (turn / 2.0).tan();
        if bend < wire_radius {
            return Err((
                Some(k),
                format!(
                    "a side of {} (not longer than the wire diameter, {}) turns by {:.1}° \
                     here, a bend of radius {} that the wire (radius {}) cannot follow; \
                     sample the curve more finely, round the corner, or set a smaller \
                     `wire_radius`",
                    mm(shortest),
                    mm(2.0 * wire_radius),
                    turn.to_degrees(),
                    mm(bend),
                    mm(wire_radius)
                ),
            ));
        }
    }
    Ok(())
}
