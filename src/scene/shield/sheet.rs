//! `[[shield]]` tables → sheets and the combined stack; checks that no sheet cuts a
//! source, a victim, a sweep's path or a map's grid.

use super::parse_material;
use crate::error::InputError;
use crate::field::Vec3;
use crate::model::material::Material;
use crate::model::{Barrier, Place, Sheet};
use crate::model::{Source, Victim, source_points, victim_points};
use crate::scene::common::parse_id;
use crate::scene::reader::{Table, Value};
use crate::units::Dimension;

/// Reads one `[[shield]]`.
pub(crate) fn parse_sheet(t: &Table<'_, '_>) -> Result<Sheet, InputError> {
    let id = parse_id(t)?;
    let origin = t
        .require(
            "position",
            "a point on the sheet's first face, e.g. [\"20 mm\", 0, 0]",
        )?
        .vector(Dimension::Length)?;
    let normal = t
        .require("axis", "the sheet normal, e.g. [1, 0, 0]")?
        .direction()?;
    let layers = parse_layers(t)?;
    let fitted = match t.get("fitted") {
        Some(v) => v.boolean()?,
        None => true,
    };
    t.finish(
        &[
            "id",
            "position",
            "axis",
            "material",
            "thickness",
            "layers",
            "fitted",
        ],
        "[[shield]]",
    )?;
    Ok(Sheet {
        id,
        origin,
        normal,
        layers,
        fitted,
    })
}

/// A sheet's layers from either `material` and `thickness` or `layers`.
fn parse_layers(t: &Table<'_, '_>) -> Result<Vec<(Material, f64)>, InputError> {
    match (t.get("layers"), t.get("material")) {
        (Some(l), None) => {
            if t.has("thickness") {
                return Err(t.error_at(
                    "thickness",
                    "with `layers`, give each layer its own thickness and leave this out",
                ));
            }
            parse_layer_list(&l)
        }
        (None, Some(m)) => {
            let m = parse_material(&m)?;
            let th = t
                .require("thickness", "the sheet thickness, e.g. \"1 mm\"")?
                .positive(Dimension::Length)?;
            Ok(vec![(m, th)])
        }
        (Some(_), Some(_)) => Err(t.error_at(
            "material",
            "give either `material` and `thickness` or `layers`, not both",
        )),
        (None, None) => {
            Err(t.error("missing key `material` (a material name and a `thickness`, or `layers`)"))
        }
    }
}

/// `layers = [{ material, thickness }, ...]`, at least one.
fn parse_layer_list(l: &Value<'_, '_>) -> Result<Vec<(Material, f64)>, InputError> {
    let items = l.array()?;
    if items.is_empty() {
        return Err(l.error("needs at least one { material, thickness }"));
    }
    let mut out = Vec::new();
    for item in items {
        let lt = item.table()?;
        let m = parse_material(&lt.require("material", "a material name")?)?;
        let th = lt
            .require("thickness", "the layer's thickness, e.g. \"35 um\"")?
            .positive(Dimension::Length)?;
        lt.finish(&[], "a layer (material, thickness)")?;
        out.push((m, th));
    }
    Ok(out)
}

/// Reads the `[[shield]]` tables and checks them against the sources and victims.
pub(crate) fn parse_shields(
    tables: &[Table<'_, '_>],
    sources: &[Source],
    victims: &[Victim],
) -> Result<(Vec<Sheet>, Option<Barrier>), InputError> {
    let mut sheets = Vec::new();
    for t in tables {
        sheets.push(parse_sheet(t)?);
    }
    // Every sheet alone must leave each source and victim on one side (sweeps may
    // compare it alone); the fitted ones together must form one stack.
    for (t, sheet) in tables.iter().zip(&sheets) {
        let alone =
            Barrier::new(std::slice::from_ref(sheet)).map_err(|(_, r)| t.error_at("axis", r))?;
        check_sides(t, &alone, sources, victims)?;
    }
    let fitted: Vec<Sheet> = sheets.iter().filter(|s| s.fitted).cloned().collect();
    if fitted.is_empty() {
        return Ok((sheets, None));
    }
    let index: Vec<usize> = (0..sheets.len()).filter(|&i| sheets[i].fitted).collect();
    let barrier =
        Barrier::new(&fitted).map_err(|(i, reason)| tables[index[i]].error_at("axis", reason))?;
    check_sides(&tables[index[0]], &barrier, sources, victims)?;
    Ok((sheets, Some(barrier)))
}

fn check_sides(
    at: &Table<'_, '_>,
    barrier: &Barrier,
    sources: &[Source],
    victims: &[Victim],
) -> Result<(), InputError> {
    for s in sources {
        barrier
            .side_of(&source_points(s), &format!("source \"{}\"", s.id))
            .map_err(|r| {
                at.error_at(
                    "position",
                    format!("{r}: a sheet may not cut a source; move the sheet or the source"),
                )
            })?;
    }
    for v in victims {
        barrier
            .side_of(&victim_points(&v.edges), &format!("victim \"{}\"", v.id))
            .map_err(|r| {
                at.error_at(
                    "position",
                    format!("{r}: a sheet may not cut a victim; move the sheet or the victim"),
                )
            })?;
    }
    Ok(())
}

/// Checks that every step of `spec` keeps its victim outside the sheets and on one side.
pub(crate) fn check_sweep(
    t: &Table<'_, '_>,
    spec: &crate::model::SweepSpec,
    barrier: &Barrier,
    victims: &[Victim],
) -> Result<(), InputError> {
    let base = &victims[spec.victim];
    let placed = barrier
        .side_of(&victim_points(&base.edges), "the victim")
        .ok();
    for x in spec.values() {
        let v = crate::model::sweep::victim_at(base, spec, x);
        let what = format!("at {} the victim \"{}\"", spec.vary.format_value(x), v.id);
        let side = barrier
            .side_of(&victim_points(&v.edges), &what)
            .map_err(|r| {
                t.error_at(
                    "to",
                    format!("{r}: end the sweep before the sheet, or start it on the other side"),
                )
            })?;
        if placed.is_some_and(|p| p != side) {
            return Err(t.error_at(
                "to",
                format!(
                    "{what} has passed through the shields: end the sweep before the sheet \
                     (a sweep stays on one side of them)"
                ),
            ));
        }
    }
    Ok(())
}

/// Checks that no grid point of `spec` lies inside a sheet or between two sheets.
pub(crate) fn check_map(
    t: &Table<'_, '_>,
    spec: &crate::model::MapSpec,
    barrier: &Barrier,
) -> Result<(), InputError> {
    let Some((p, place)) = first_in_stack(spec, barrier) else {
        return Ok(());
    };
    match place {
        Place::Between(a, b) => Err(t.error(format!(
            "map \"{}\" has grid points between shields \"{a}\" and \"{b}\", which \
             strayflux does not model",
            spec.id
        ))),
        Place::Inside(id) => Err(t.error(format!(
            "map \"{}\" has grid points inside shield \"{id}\" (at {}): put the grid \
             on one side of the sheet, or shift it so no point falls inside",
            spec.id,
            crate::units::mm_point(&p)
        ))),
        _ => Ok(()),
    }
}

/// The grid points that can lie within the stack's thickness, found without visiting
/// the whole grid (a map may have 1e9 points): the height along the normal is linear in
/// the grid index, so along the longest axis the indices inside `[0, thickness]` form
/// an interval, solved for each row of the two shorter axes (at most 1e6 rows for a
/// 1e9-point map). Each interval's ends and their neighbours are tested with
/// `Barrier::place`, which makes the exact decision with its own rounding; the first
/// point inside or between sheets is returned with its place.
fn first_in_stack(spec: &crate::model::MapSpec, barrier: &Barrier) -> Option<(Vec3, Place)> {
    let mut axes = [0usize, 1, 2];
    axes.sort_by_key(|&a| spec.points[a]);
    let [a, b, c] = axes;
    let d = barrier.thickness();
    let index = |ia: usize, ib: usize, ic: usize| {
        let mut ix = [0usize; 3];
        ix[a] = ia;
        ix[b] = ib;
        ix[c] = ic;
        spec.point(ix[0], ix[1], ix[2])
    };
    let nc = spec.points[c];
    for ia in 0..spec.points[a] {
        for ib in 0..spec.points[b] {
            let s0 = barrier.height(&index(ia, ib, 0));
            let ds = if nc > 1 {
                barrier.height(&index(ia, ib, 1)) - s0
            } else {
                0.0
            };
            let ends = if ds == 0.0 || !ds.is_finite() {
                [0.0, 0.0]
            } else {
                [(0.0 - s0) / ds, (d - s0) / ds]
            };
            for k in ends {
                for dk in [-1.0, 0.0, 1.0, 2.0] {
                    let kk = k.floor() + dk;
                    if kk >= 0.0 && kk < nc as f64 {
                        let p = index(ia, ib, kk as usize);
                        let place = barrier.place(&p);
                        if matches!(place, Place::Inside(_) | Place::Between(..)) {
                            return Some((p, place));
                        }
                    }
                }
            }
        }
    }
    None
}
