//! `[[source]]` tables → placed conductors and their current.

use super::common::{
    Context, parse_frame, parse_id, parse_kind, parse_points, parse_polygon, rectangle_sides,
    wire_size,
};
use super::current::{CurrentContext, parse_current};
use super::reader::{Table, Value};
use super::windings::parse_winding;
use crate::error::InputError;
use crate::field::{Conductors, FieldSource, Polyline, Vec3};
use crate::geometry::{
    circle_source, dipole_source, polygon_source, polyline_source, rectangle_corners,
};
use crate::model::{Source, SourceKind};
use crate::units::Dimension;

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

/// Keys a user may write for a magnetic core, which is not modelled.
const CORE_KEYS: &[&str] = &[
    "core",
    "core_material",
    "permeability",
    "relative_permeability",
    "mu_r",
    "mur",
    "gap",
    "air_gap",
    "ferrite",
];

/// Why [`CORE_KEYS`] are refused, and what to write instead.
const NO_CORES: &str = "magnetic cores are not modelled: sources are air-cored \
    conductors. Scale the source to a measured or datasheet stray field with \
    calibrate = { at = [x, y, z], field = \"...\" }, or give its far field as \
    kind = \"dipole\" with an effective_area";

/// Builds a [`Source`] from one `[[source]]` table.
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
    t.refuse_unmodelled(CORE_KEYS, NO_CORES)?;
    let id = parse_id(t)?;
    let kind = parse_kind(t, KINDS, &[])?;
    let frame = parse_frame(t)?;
    let wire_radius = match t.get("wire_radius") {
        Some(v) => v.positive(Dimension::Length)?,
        None => ctx.wire_radius,
    };
    let place = Placement {
        frame: &frame,
        ctx,
        wire_radius,
        id: &id,
    };
    let mut conductors = parse_conductors(t, kind, &place, warnings)?;
    apply_turns(t, kind, &mut conductors)?;
    let calibrate = t.get("calibrate");
    let current = parse_lines(t, &id, ctx, calibrate.is_none(), warnings)?;
    let (mut lines, mut tail, mut current_rms) = (current.lines, current.tail, current.rms);
    let calibration = match calibrate {
        Some(c) => {
            let (at, field, k) = calibrate_lines(&c, &conductors, &mut lines, current_rms)?;
            tail = tail.scaled(k, 1.0);
            current_rms *= k;
            Some((at, field))
        }
        None => None,
    };
    t.finish(GEOMETRY_KEYS, &format!("a source of kind \"{kind}\""))?;
    check_finite(t, &lines)?;
    Ok(Source {
        id,
        kind: SourceKind::from_name(kind)
            .ok_or_else(|| t.error_at("kind", format!("unknown source kind \"{kind}\"")))?,
        frame,
        conductors,
        lines,
        tail,
        current_rms,
        calibration,
    })
}

/// What every kind's geometry is built against: the source's frame, the scene's
/// context, the wire radius (m) and the id (for warnings).
struct Placement<'p> {
    frame: &'p crate::geometry::Frame,
    ctx: &'p Context,
    wire_radius: f64,
    id: &'p str,
}

/// The conductors of a source of `kind`, from its geometry keys.
fn parse_conductors(
    t: &Table<'_, '_>,
    kind: &str,
    place: &Placement<'_>,
    warnings: &mut Vec<String>,
) -> Result<Conductors, InputError> {
    let (frame, ctx, wire_radius) = (place.frame, place.ctx, place.wire_radius);
    Ok(match kind {
        "loop" => single_wire(parse_loop(t, place)?),
        "rectangle" => single_wire(parse_rectangle(t, place)?),
        "polygon" => {
            let v = t.require("vertices", "an array of [x, y, z] corners")?;
            let corners = parse_polygon(&v, wire_radius)?;
            single_wire(polygon_source(frame, &corners, wire_radius))
        }
        "polyline" => {
            let v = t.require("vertices", "an array of [x, y, z] points")?;
            let points = parse_points(&v, 2)?;
            warnings.push(format!(
                "source \"{}\" is an open polyline: its return path is not modelled, so its \
                 field is that of the drawn wire alone",
                place.id
            ));
            single_wire(polyline_source(frame, &points, wire_radius))
        }
        "dipole" => {
            let a = t.require("effective_area", "N·A in m2, e.g. \"150 mm2\"")?;
            let area = a.quantity(Dimension::Area)?;
            if area == 0.0 {
                return Err(a.error("a dipole with zero effective area has no field"));
            }
            dipole_source(frame, area, wire_radius)
        }
        other => parse_winding(other, t, frame, ctx, wire_radius, warnings)?,
    })
}

/// Conductors made of one wire and no dipole.
fn single_wire(wire: Polyline) -> Conductors {
    Conductors {
        wires: vec![wire],
        dipoles: vec![],
    }
}

/// The wire of a `loop` source (`radius`).
fn parse_loop(t: &Table<'_, '_>, place: &Placement<'_>) -> Result<Polyline, InputError> {
    let radius = wire_size(
        t,
        "radius",
        "the loop radius, e.g. \"8 mm\"",
        place.wire_radius,
    )?;
    Ok(circle_source(
        place.frame,
        radius,
        place.ctx.tolerance,
        place.wire_radius,
    ))
}

/// The wire of a `rectangle` source (`width`, `height`).
fn parse_rectangle(t: &Table<'_, '_>, place: &Placement<'_>) -> Result<Polyline, InputError> {
    let wire_radius = place.wire_radius;
    let (wv, hv) = rectangle_sides(t, wire_radius)?;
    Ok(polygon_source(
        place.frame,
        &rectangle_corners(wv, hv),
        wire_radius,
    ))
}

/// `turns` on a single-loop kind weights each of its wires.
fn apply_turns(
    t: &Table<'_, '_>,
    kind: &str,
    conductors: &mut Conductors,
) -> Result<(), InputError> {
    if matches!(kind, "loop" | "rectangle" | "polygon")
        && let Some(n) = t.get("turns")
    {
        let turns = n.count(1)? as f64;
        for w in &mut conductors.wires {
            w.weight = turns;
        }
    }
    Ok(())
}

/// The spectral lines of the required `current`.
fn parse_lines(
    t: &Table<'_, '_>,
    id: &str,
    ctx: &Context,
    amplitude_required: bool,
    warnings: &mut Vec<String>,
) -> Result<super::current::Current, InputError> {
    match t.get("current") {
        Some(c) => {
            let cctx = CurrentContext {
                source_id: id,
                tolerance: ctx.tolerance,
                amplitude_required,
            };
            parse_current(&c, &cctx, warnings)
        }
        None => Err(t.error(
            "missing key `current`, e.g. current = { waveform = \"sine\", peak = \"1 A\", \
             frequency = \"50 Hz\" }",
        )),
    }
}

/// Extreme amplitudes or calibrations can overflow the line phasors.
fn check_finite(t: &Table<'_, '_>, lines: &[crate::spectrum::Line]) -> Result<(), InputError> {
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
    Ok(())
}

/// `calibrate = { at, field }`: scales `lines` so the rms of |B| at `at` equals `field`
/// (rms over every line of the waveform, listed or not: |B per ampere| times the
/// current's rms `i_rms`, A). Returns the point (m), the field (T) and the factor the
/// currents were multiplied by.
fn calibrate_lines(
    v: &Value<'_, '_>,
    conductors: &Conductors,
    lines: &mut [crate::spectrum::Line],
    i_rms: f64,
) -> Result<(Vec3, f64, f64), InputError> {
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
    if !(b > 0.0 && i_rms > 0.0) {
        return Err(at_v.error("the source makes no field at this point: choose another"));
    }
    let k = field / (b * i_rms);
    for l in lines.iter_mut() {
        l.current *= k;
    }
    Ok((at, field, k))
}
