//! `[[victim]]` tables → closed edge chains, turns, limits and self-inductance.

use super::common::{
    Context, check_wire, closed_corners, parse_frame, parse_id, parse_kind, parse_polygon,
    rectangle_sides, wire_size,
};
use super::points_csv::read_path;
use super::reader::Table;
use crate::error::InputError;
use crate::field::Vec3;
use crate::geometry::{Edge, Frame, rectangle_corners, vector_area};
use crate::inductance;
use crate::model::{Victim, VictimKind};
use crate::units::Dimension;
use std::f64::consts::TAU;

const KINDS: &[&str] = &["loop", "rectangle", "polygon", "trace", "file"];
const GEOMETRY_KEYS: &[&str] = &[
    "radius", "width", "height", "vertices", "length", "load", "path",
];

/// e^{−5/4}: a thin strip of width w has the self-GMD w·e^{−3/2} (Maxwell; Grover,
/// "Inductance Calculations", table of GMDs), a round wire of radius a has a·e^{−1/4};
/// equal GMDs give the round wire of the same external inductance, a = w·e^{−5/4}.
const STRIP_TO_ROUND: f64 = 0.286_504_796_860_190_1;

/// Builds a [`Victim`] from one `[[victim]]` table.
pub(crate) fn parse(t: &Table<'_, '_>, ctx: &Context) -> Result<Victim, InputError> {
    t.declare(GEOMETRY_KEYS);
    t.declare(&[
        "id",
        "kind",
        "position",
        "axis",
        "reference",
        "wire_radius",
        "turns",
        "limit",
    ]);
    let id = parse_id(t)?;
    let kind = parse_kind(t, KINDS, &[])?;
    let frame = parse_frame(t)?;
    let explicit_radius = match t.get("wire_radius") {
        Some(v) => Some(v.positive(Dimension::Length)?),
        None => None,
    };
    let mut wire_radius = explicit_radius.unwrap_or(ctx.wire_radius);
    let turns = match t.get("turns") {
        Some(n) => n.count(1)? as f64,
        None => 1.0,
    };
    let limit = match t.get("limit") {
        Some(v) => Some(v.positive(Dimension::Voltage)?),
        None => None,
    };
    let load = parse_load(t)?;
    let (edges, one_turn_l) = match kind {
        "loop" => parse_loop(t, &frame, wire_radius)?,
        "rectangle" => parse_rectangle(t, &frame, wire_radius, ctx)?,
        "polygon" => {
            let v = t.require("vertices", "an array of [x, y, z] corners")?;
            let corners = parse_polygon(&v, wire_radius)?;
            straight(&frame, &corners, wire_radius, ctx)
        }
        "trace" => parse_trace(t, &frame, explicit_radius, &mut wire_radius, ctx)?,
        "file" => parse_file(t, &frame, wire_radius, ctx)?,
        _ => unreachable!("kind checked by parse_kind"),
    };
    t.finish(GEOMETRY_KEYS, &format!("a victim of kind \"{kind}\""))?;
    let area = vector_area(&edges).norm();
    Ok(Victim {
        id,
        kind: VictimKind::from_name(kind)
            .ok_or_else(|| t.error_at("kind", format!("unknown victim kind \"{kind}\"")))?,
        frame,
        edges,
        turns,
        limit,
        wire_radius,
        area,
        self_inductance: one_turn_l * turns * turns,
        load,
        turning_reach: None,
    })
}

/// The optional `load = { resistance }` (ohm).
fn parse_load(t: &Table<'_, '_>) -> Result<Option<f64>, InputError> {
    let Some(v) = t.get("load") else {
        return Ok(None);
    };
    let lt = v.table()?;
    let r = lt
        .require("resistance", "the load resistance, e.g. \"10 kohm\"")?
        .positive(Dimension::Resistance)?;
    lt.finish(&[], "`load` (resistance)")?;
    Ok(Some(r))
}

/// The edge and one-turn self-inductance of a `loop` victim (`radius`).
fn parse_loop(
    t: &Table<'_, '_>,
    frame: &Frame,
    wire_radius: f64,
) -> Result<(Vec<Edge>, f64), InputError> {
    let radius = wire_size(t, "radius", "the loop radius, e.g. \"5 mm\"", wire_radius)?;
    Ok((
        vec![circle(frame, radius)],
        inductance::circle(radius, wire_radius),
    ))
}

/// The edges and one-turn self-inductance of a `rectangle` victim (`width`, `height`).
fn parse_rectangle(
    t: &Table<'_, '_>,
    frame: &Frame,
    wire_radius: f64,
    ctx: &Context,
) -> Result<(Vec<Edge>, f64), InputError> {
    let (wv, hv) = rectangle_sides(t, wire_radius)?;
    Ok(straight(
        frame,
        &rectangle_corners(wv, hv),
        wire_radius,
        ctx,
    ))
}

/// The edges and one-turn self-inductance of a `trace` victim (`length`, `height`,
/// `width`) over its return plane; without an explicit `wire_radius`, the strip's
/// equivalent round wire sets `wire_radius`.
fn parse_trace(
    t: &Table<'_, '_>,
    frame: &Frame,
    explicit_radius: Option<f64>,
    wire_radius: &mut f64,
    ctx: &Context,
) -> Result<(Vec<Edge>, f64), InputError> {
    let l = t.require("length", "the trace length along local x")?;
    let h = t.require("height", "the trace's height above its return plane")?;
    let w = t.require("width", "the trace width")?;
    let (lv, hv) = (
        l.positive(Dimension::Length)?,
        h.positive(Dimension::Length)?,
    );
    let wv = w.positive(Dimension::Length)?;
    if explicit_radius.is_none() {
        *wire_radius = wv * STRIP_TO_ROUND;
    }
    check_wire(&h, hv, *wire_radius)?;
    check_wire(&l, lv, *wire_radius)?;
    let corners = [
        Vec3::new(-lv / 2.0, 0.0, 0.0),
        Vec3::new(lv / 2.0, 0.0, 0.0),
        Vec3::new(lv / 2.0, hv, 0.0),
        Vec3::new(-lv / 2.0, hv, 0.0),
    ];
    Ok(straight(frame, &corners, *wire_radius, ctx))
}

/// The edges and one-turn self-inductance of a `file` victim: the closed path through
/// the CSV's points (local, m), closed by a straight side when the last point is not the
/// first. Problems with the points are reported at the CSV's own lines.
fn parse_file(
    t: &Table<'_, '_>,
    frame: &Frame,
    wire_radius: f64,
    ctx: &Context,
) -> Result<(Vec<Edge>, f64), InputError> {
    let pv = t.require("path", "a CSV file of x,y,z points, relative to the scene")?;
    let path = read_path(&pv, &ctx.base_dir)?;
    let pts = path.rows.iter().map(|r| r.0).collect();
    let corners = closed_corners(pts, wire_radius).map_err(|(at, why)| {
        let line = path.rows[at.unwrap_or(0)].1;
        path.error(line, why)
    })?;
    Ok(straight(frame, &corners, wire_radius, ctx))
}

/// The exact circle of `radius` (m) about the frame's z, counter-clockwise.
fn circle(frame: &Frame, radius: f64) -> Edge {
    Edge::Arc {
        centre: frame.origin,
        u: frame.x,
        v: frame.y,
        radius,
        start: 0.0,
        end: TAU,
    }
}

/// Straight edges through the local `corners` and the one-turn self-inductance.
fn straight(frame: &Frame, corners: &[Vec3], wire_radius: f64, ctx: &Context) -> (Vec<Edge>, f64) {
    let world: Vec<Vec3> = corners.iter().map(|c| frame.point(c)).collect();
    let n = world.len();
    let edges = (0..n)
        .map(|i| Edge::Line {
            a: world[i],
            b: world[(i + 1) % n],
        })
        .collect();
    let l = inductance::polygon(&world, wire_radius, ctx.tolerance);
    (edges, l)
}
