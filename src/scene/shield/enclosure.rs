//! `[[enclosure]]` tables → enclosures; checks that each holds its victims and that no
//! wall cuts a source.

use super::parse_material;
use crate::error::InputError;
use crate::field::Vec3;
use crate::model::{Enclosure, Source, Victim, source_points, victim_points};
use crate::scene::common::{parse_frame, parse_id};
use crate::scene::reader::{Table, Value, did_you_mean};
use crate::units::Dimension;

/// Reads one `[[enclosure]]`.
pub(crate) fn parse_enclosure(
    t: &Table<'_, '_>,
    sources: &[Source],
    victims: &[Victim],
) -> Result<Enclosure, InputError> {
    let id = parse_id(t)?;
    let frame = parse_frame(t)?;
    let size_v = t.require(
        "size",
        "outside edge lengths [x, y, z], e.g. [\"40 mm\", \"30 mm\", \"10 mm\"]",
    )?;
    let size = size_v.vector(Dimension::Length)?;
    if size.iter().any(|&s| s <= 0.0) {
        return Err(size_v.error("every edge length must be greater than zero"));
    }
    let material = parse_material(&t.require("material", "a material name")?)?;
    let th_v = t.require("thickness", "the wall thickness, e.g. \"0.5 mm\"")?;
    let thickness = th_v.positive(Dimension::Length)?;
    if 2.0 * thickness >= size.min() {
        return Err(th_v
            .error("the walls would fill the box: make them thinner than half its smallest edge"));
    }
    let c = t.require(
        "contains",
        "the ids of the victims inside, e.g. [\"adc-in\"]",
    )?;
    let contains = parse_contains(&c, victims)?;
    t.finish(
        &[
            "id",
            "position",
            "axis",
            "reference",
            "size",
            "material",
            "thickness",
            "contains",
        ],
        "[[enclosure]]",
    )?;
    let e = Enclosure {
        id,
        frame,
        size,
        material,
        thickness,
        contains,
    };
    check_walls(&e, t, &c, sources, victims)?;
    Ok(e)
}

/// `contains`: the ids of known victims, at least one.
fn parse_contains(c: &Value<'_, '_>, victims: &[Victim]) -> Result<Vec<String>, InputError> {
    let mut contains = Vec::new();
    for item in c.array()? {
        let name = item.string()?;
        let Some(v) = victims.iter().find(|v| v.id == name) else {
            let ids: Vec<&str> = victims.iter().map(|v| v.id.as_str()).collect();
            let hint = did_you_mean(name, &ids)
                .map(|s| format!("; did you mean \"{s}\"?"))
                .unwrap_or_default();
            return Err(item.error(format!("no victim has id \"{name}\"{hint}")));
        };
        contains.push(v.id.clone());
    }
    if contains.is_empty() {
        return Err(c.error("list at least one victim id"));
    }
    Ok(contains)
}

/// Checks that every contained victim lies within the walls' inner faces and that no
/// source is cut by a wall (`c` is the `contains` value).
fn check_walls(
    e: &Enclosure,
    t: &Table<'_, '_>,
    c: &Value<'_, '_>,
    sources: &[Source],
    victims: &[Victim],
) -> Result<(), InputError> {
    let inner = Enclosure {
        size: e.size - Vec3::repeat(2.0 * e.thickness),
        ..e.clone()
    };
    for name in &e.contains {
        let outside = victims
            .iter()
            .filter(|v| &v.id == name)
            .any(|v| victim_points(&v.edges).iter().any(|p| !inner.holds(p)));
        if outside {
            return Err(c.error(format!(
                "victim \"{name}\" is not inside enclosure \"{}\": enlarge or move the box",
                e.id
            )));
        }
    }
    for s in sources {
        let pts = source_points(s);
        let inside = pts.iter().filter(|p| e.holds(p)).count();
        let in_wall = pts.iter().any(|p| e.holds(p) && !inner.holds(p));
        if in_wall || (inside > 0 && inside < pts.len()) {
            return Err(t.error_at(
                "size",
                format!(
                    "a wall of enclosure \"{}\" cuts source \"{}\": a source is either wholly \
                     inside or wholly outside",
                    e.id, s.id
                ),
            ));
        }
    }
    Ok(())
}
