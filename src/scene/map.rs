//! `[[map]]` tables → validated field-map grids.

use super::common::parse_id;
use super::reader::{Table, Value};
use crate::error::InputError;
use crate::field::Vec3;
use crate::model::map::{MapLines, MapSpec};
use crate::units::Dimension;

/// The double a VTK reader gets back for `x` (m): vtkio stores origin and spacing as
/// f32 and writes the shortest decimal text of that f32, which readers parse as a
/// double. Computing the field at exactly that value keeps file and field in step.
fn as_vtk_reads(x: f64) -> f64 {
    (x as f32).to_string().parse::<f64>().unwrap_or(x)
}

/// More points than this on one map is refused before any memory estimate (1e9).
const MAX_POINTS: f64 = 1e9;

/// Builds a [`MapSpec`] from one `[[map]]` table; `line_count` is the number of
/// distinct line frequencies over the scene's sources.
pub(crate) fn parse(t: &Table<'_, '_>, line_count: usize) -> Result<MapSpec, InputError> {
    let id = parse_id(t)?;
    let kv = t.require("kind", "box or plane")?;
    let kind = kv.string()?;
    if kind != "box" && kind != "plane" {
        return Err(kv.error(format!("unknown kind \"{kind}\"; expected box or plane")));
    }
    let min_v = t.require("min", "the lower corner [x, y, z]")?;
    let min = min_v.vector(Dimension::Length)?;
    let max_v = t.require("max", "the upper corner [x, y, z]")?;
    let max = max_v.vector(Dimension::Length)?;
    check_extent(kind, &min, &max, &max_v)?;
    let cells = grid_cells(t, &min, &max)?;
    let origin = min.map(as_vtk_reads);
    let mut spacing = Vec3::zeros();
    for a in 0..3 {
        if cells[a] > 0 {
            spacing[a] = as_vtk_reads((max[a] - min[a]) / cells[a] as f64);
        }
    }
    let lines = parse_lines(t, line_count)?;
    t.finish(&["step", "cells"], &format!("a {kind} map"))?;
    Ok(MapSpec {
        id,
        origin,
        spacing,
        points: [cells[0] + 1, cells[1] + 1, cells[2] + 1],
        plane: kind == "plane",
        lines,
    })
}

/// `max` no lower than `min` on any axis, and flat on no axis for a box, on exactly
/// one for a plane.
fn check_extent(
    kind: &str,
    min: &Vec3,
    max: &Vec3,
    max_v: &Value<'_, '_>,
) -> Result<(), InputError> {
    let mut flat = 0;
    for a in 0..3 {
        if max[a] < min[a] {
            return Err(max_v.error(format!(
                "max is below min on the {} axis",
                ["x", "y", "z"][a]
            )));
        }
        if max[a] == min[a] {
            flat += 1;
        }
    }
    match (kind, flat) {
        ("box", 0) | ("plane", 1) => Ok(()),
        ("box", _) => {
            Err(max_v
                .error("a box needs max > min on every axis (for a plane, use kind = \"plane\")"))
        }
        _ => {
            Err(max_v
                .error("a plane needs min == max on exactly one axis and max > min on the others"))
        }
    }
}

/// The optional `line`: a line number (1 = fundamental, the default) or "all".
fn parse_lines(t: &Table<'_, '_>, line_count: usize) -> Result<MapLines, InputError> {
    Ok(match t.get("line") {
        None => MapLines::One(1),
        Some(v) => match v.string() {
            Ok("all") => MapLines::All,
            Ok(other) => {
                return Err(v.error(format!(
                    "expected a line number (1 = fundamental) or \"all\", got \"{other}\""
                )));
            }
            Err(_) => {
                let n = v.count(1)? as usize;
                if n > line_count {
                    return Err(v.error(format!(
                        "line {n} does not exist: the scene's sources have {line_count} \
                         distinct line(s)"
                    )));
                }
                MapLines::One(n)
            }
        },
    })
}

/// Cells per axis from exactly one of `step` (a length; each extent is split into the
/// whole number of cells nearest to extent/step) or `cells` ([nx, ny, nz]; 0 on a
/// plane's flat axis).
fn grid_cells(t: &Table<'_, '_>, min: &Vec3, max: &Vec3) -> Result<[usize; 3], InputError> {
    let extent = max - min;
    let mut cells = [0usize; 3];
    match (t.get("step"), t.get("cells")) {
        (Some(s), None) => {
            let step = s.positive(Dimension::Length)?;
            let total: f64 = (0..3)
                .map(|a| (extent[a] / step).round().max(0.0) + 1.0)
                .product();
            if total > MAX_POINTS {
                return Err(s.error(format!(
                    "this step gives {total:.3e} points, more than {MAX_POINTS:.0e}; use a larger step"
                )));
            }
            for a in 0..3 {
                if extent[a] > 0.0 {
                    cells[a] = ((extent[a] / step).round() as usize).max(1);
                }
            }
        }
        (None, Some(c)) => {
            let items = c.array()?;
            if items.len() != 3 {
                return Err(c.error("expected three cell counts [nx, ny, nz]"));
            }
            let mut total = 1.0;
            for a in 0..3 {
                let n = items[a].count(0)? as usize;
                if extent[a] > 0.0 && n == 0 {
                    return Err(items[a].error("an axis with max > min needs at least 1 cell"));
                }
                if extent[a] == 0.0 && n != 0 {
                    return Err(items[a].error("the flat axis of a plane has 0 cells"));
                }
                total *= n as f64 + 1.0;
                cells[a] = n;
            }
            if total > MAX_POINTS {
                return Err(c.error(format!("{total:.3e} points is more than {MAX_POINTS:.0e}")));
            }
        }
        (Some(_), Some(_)) => return Err(t.error_at("cells", "give `step` or `cells`, not both")),
        (None, None) => {
            return Err(t.error("missing key `step` (e.g. \"1 mm\") or `cells` ([nx, ny, nz])"));
        }
    }
    Ok(cells)
}
