//! `[[source]]` winding kinds: helix, toroid, spiral, saddle, pair, file.

use super::common::{Context, check_wire};
use super::points_csv::read_path;
use super::reader::{Table, Value};
use crate::error::InputError;
use crate::field::{Conductors, Polyline, Vec3};
use crate::geometry::{Frame, helix, pair, round_spiral, saddle, square_spiral, toroid};
use crate::units::{Dimension, mm};
use std::f64::consts::PI;

/// Reads the geometry of a winding `kind` into conductors.
pub(crate) fn parse_winding(
    kind: &str,
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
    warnings: &mut Vec<String>,
) -> Result<Conductors, InputError> {
    let wires = match kind {
        "helix" => vec![parse_helix(t, frame, ctx, wire_radius, warnings)?],
        "toroid" => vec![parse_toroid(t, frame, ctx, wire_radius)?],
        "spiral" => vec![parse_spiral(t, frame, ctx, wire_radius)?],
        "saddle" => parse_saddle(t, frame, ctx, wire_radius)?,
        "pair" => vec![parse_pair(t, frame, ctx, wire_radius)?],
        "file" => vec![parse_file(t, frame, ctx, wire_radius, warnings)?],
        _ => unreachable!("kind checked by parse_kind"),
    };
    Ok(Conductors {
        wires,
        dipoles: vec![],
    })
}

/// A positive length and its value (for later messages).
fn positive<'a, 'i>(
    t: &Table<'a, 'i>,
    key: &str,
    what: &str,
) -> Result<(f64, Value<'a, 'i>), InputError> {
    let v = t.require(key, what)?;
    Ok((v.positive(Dimension::Length)?, v))
}

/// Most straight segments one source may have: about 0.12 GB of geometry, built in
/// well under a second.
const MAX_SEGMENTS: f64 = 2e6;

/// Refuses, at `v`, a winding of `turns` full turns (at `tolerance`) that would need more
/// than [`MAX_SEGMENTS`] segments.
fn check_segments(v: &Value<'_, '_>, turns: f64, tolerance: f64) -> Result<(), InputError> {
    let n = turns * crate::geometry::circle_segments(tolerance) as f64;
    if n.is_finite() && n <= MAX_SEGMENTS {
        return Ok(());
    }
    Err(v.error(format!(
        "this winding would need about {n:.1e} straight segments, more than strayflux \
         holds ({MAX_SEGMENTS:.0e}); raise [solver] tolerance, model fewer turns, or use a \
         dipole with the same effective area"
    )))
}

/// A positive, possibly fractional number of turns.
fn turns_real(t: &Table<'_, '_>) -> Result<f64, InputError> {
    let v = t.require("turns", "the number of turns, e.g. 40")?;
    let n = v.number()?;
    if n > 0.0 && n <= 1e6 {
        Ok(n)
    } else {
        Err(v.error(format!("must be between 0 and 1e6 turns, got {}", v.raw())))
    }
}

/// A whole number of turns, at least one.
fn turns_whole(t: &Table<'_, '_>) -> Result<u64, InputError> {
    let v = t.require("turns", "the number of turns, a whole number")?;
    let n = v.count(1)?;
    if n > 1_000_000 {
        return Err(v.error(format!("{n} turns is more than this tool models (1e6)")));
    }
    Ok(n)
}

fn check_pitch(v: &Value<'_, '_>, pitch: f64, wire_radius: f64) -> Result<(), InputError> {
    if pitch < 2.0 * wire_radius * (1.0 - 1e-9) {
        return Err(v.error(format!(
            "the turns would overlap: the pitch {} is less than the wire diameter {}; use \
             fewer turns or a smaller `wire_radius`",
            mm(pitch),
            mm(2.0 * wire_radius)
        )));
    }
    Ok(())
}

fn parse_helix(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
    warnings: &mut Vec<String>,
) -> Result<Polyline, InputError> {
    let (radius, rv) = positive(t, "radius", "the winding radius")?;
    let (len, lv) = positive(t, "length", "the winding length along local z")?;
    let turns = turns_real(t)?;
    check_wire(&rv, radius, wire_radius)?;
    check_pitch(&lv, len / turns, wire_radius)?;
    check_segments(&t.require("turns", "")?, turns, ctx.tolerance)?;
    let axial = t.one_of("leads", &["axial", "none"])? == "axial";
    if !axial {
        warnings.push(
            "a helix with leads = \"none\" is an open path: its return is not modelled".into(),
        );
    }
    Ok(helix(
        frame,
        radius,
        len,
        turns,
        axial,
        ctx.tolerance,
        wire_radius,
    ))
}

fn parse_toroid(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
) -> Result<Polyline, InputError> {
    let (major, _) = positive(t, "major_radius", "radius of the core's centre line")?;
    let (minor, mv) = positive(t, "minor_radius", "radius of the winding's cross-section")?;
    let turns = turns_whole(t)?;
    check_segments(&t.require("turns", "")?, turns as f64, ctx.tolerance)?;
    if minor >= major {
        return Err(mv.error(format!(
            "must be smaller than major_radius ({}), got {}",
            mm(major),
            mm(minor)
        )));
    }
    check_wire(&mv, minor, wire_radius)?;
    let tv = t.get("turns").expect("read above");
    check_pitch(
        &tv,
        std::f64::consts::TAU * (major - minor) / turns as f64,
        wire_radius,
    )?;
    Ok(toroid(
        frame,
        major,
        minor,
        turns,
        ctx.tolerance,
        wire_radius,
    ))
}

fn parse_spiral(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
) -> Result<Polyline, InputError> {
    let (inner, _) = positive(t, "inner_radius", "radius where the spiral starts")?;
    let (outer, ov) = positive(t, "outer_radius", "radius where the spiral ends")?;
    let turns = turns_real(t)?;
    check_segments(&t.require("turns", "")?, turns, ctx.tolerance)?;
    if inner >= outer {
        return Err(ov.error(format!(
            "must be larger than inner_radius ({}), got {}",
            mm(inner),
            mm(outer)
        )));
    }
    check_pitch(&ov, (outer - inner) / turns, wire_radius)?;
    let round = t.one_of("shape", &["round", "square"])? == "round";
    Ok(if round {
        round_spiral(frame, inner, outer, turns, ctx.tolerance, wire_radius)
    } else {
        square_spiral(frame, inner, outer, turns, wire_radius)
    })
}

fn parse_saddle(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
) -> Result<Vec<Polyline>, InputError> {
    let (radius, rv) = positive(t, "radius", "the cylinder radius")?;
    let (len, lv) = positive(t, "length", "the coil length along local z")?;
    let ov = t.require("opening", "the angle each coil spans, e.g. \"120 deg\"")?;
    let opening = ov.quantity(Dimension::Angle)?;
    if !(opening > 0.0 && opening < PI) {
        return Err(ov.error(format!(
            "must be between 0 and 180 deg so the two coils do not overlap, got {}",
            ov.raw()
        )));
    }
    let turns = turns_whole(t)? as f64;
    check_wire(&rv, radius, wire_radius)?;
    check_wire(&lv, len, wire_radius)?;
    // The two axial runs of one coil are 2 r sin(opening/2) apart: they must clear the
    // wire, and the arc must be long enough to be drawn in floating point.
    let gap = 2.0 * radius * (opening / 2.0).sin();
    if gap < 1e-9 || gap <= 2.0 * wire_radius {
        return Err(ov.error(format!(
            "is so small that each coil's two axial runs ({} apart) touch; open it up \
             or use a smaller `wire_radius`",
            mm(gap)
        )));
    }
    let mut coils = saddle(frame, radius, len, opening, ctx.tolerance, wire_radius);
    for c in &mut coils {
        c.weight = turns;
    }
    Ok(coils.to_vec())
}

fn parse_pair(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
) -> Result<Polyline, InputError> {
    let (len, _) = positive(t, "length", "the cable length along local z")?;
    let (sep, sv) = positive(
        t,
        "separation",
        "centre-to-centre distance of the conductors",
    )?;
    check_wire(&sv, sep, wire_radius)?;
    if sep >= len {
        return Err(sv.error("must be smaller than the cable length"));
    }
    let pitch = match t.get("twist_pitch") {
        Some(v) => {
            let p = v.positive(Dimension::Length)?;
            // Two conductors, each turning once per pitch.
            check_segments(&v, 2.0 * len / p, ctx.tolerance)?;
            Some(p)
        }
        None => None,
    };
    Ok(pair(frame, len, sep, pitch, ctx.tolerance, wire_radius))
}

fn parse_file(
    t: &Table<'_, '_>,
    frame: &Frame,
    ctx: &Context,
    wire_radius: f64,
    warnings: &mut Vec<String>,
) -> Result<Polyline, InputError> {
    let pv = t.require("path", "a CSV file of x,y,z points, relative to the scene")?;
    let rows = read_path(&pv, &ctx.base_dir)?.rows;
    let pts: Vec<Vec3> = rows.iter().map(|r| frame.point(&r.0)).collect();
    let closed = pts.len() > 3 && rows.first().map(|r| r.0) == rows.last().map(|r| r.0);
    if !closed {
        warnings.push(format!(
            "the path in \"{}\" is open (its first and last points differ): its return path \
             is not modelled",
            pv.string()?
        ));
    }
    Ok(Polyline::new(pts, wire_radius))
}
