//! `[[shield]]` and `[[enclosure]]` tables → sheets, the combined stack, enclosures;
//! checks that no sheet cuts a source or a victim and that no enclosure wall does.

mod enclosure;
mod sheet;

use super::reader::{Value, did_you_mean};
use crate::error::InputError;
use crate::model::material::{self, Material};
use crate::units::Dimension;

pub(crate) use enclosure::parse_enclosure;
pub(crate) use sheet::{check_map, check_sweep, parse_shields};

/// Reads a `material`: a built-in name or `{ conductivity, relative_permeability }`.
pub(crate) fn parse_material(v: &Value<'_, '_>) -> Result<Material, InputError> {
    if v.is_table() {
        let t = v.table()?;
        let c = t.require("conductivity", "e.g. \"3.5e7 S/m\"")?;
        let sigma = c.quantity(Dimension::Conductivity)?;
        if sigma < 0.0 {
            return Err(c.error(format!("must not be negative, got {}", c.raw())));
        }
        let mu_r = match t.get("relative_permeability") {
            Some(m) => {
                let x = m.number()?;
                if x < 1.0 {
                    return Err(m.error(format!(
                        "must be at least 1 (strayflux models conductors and \
                         paramagnetic or ferromagnetic materials), got {x}"
                    )));
                }
                x
            }
            None => 1.0,
        };
        t.finish(
            &[],
            "a custom material (conductivity, relative_permeability)",
        )?;
        return Ok(Material::custom(sigma, mu_r));
    }
    let name = v.string().map_err(|_| {
        v.error(format!(
            "give a material name ({}) or {{ conductivity = \"3.5e7 S/m\", \
             relative_permeability = 1 }}",
            material::names().join(", ")
        ))
    })?;
    if let Some(m) = material::built_in(name) {
        return Ok(m);
    }
    let names = material::names();
    let hint = did_you_mean(name, &names)
        .map(|s| format!("; did you mean \"{s}\"?"))
        .unwrap_or_default();
    Err(v.error(format!(
        "unknown material \"{name}\"; built in: {}{hint} (or give \
         {{ conductivity, relative_permeability }})",
        names.join(", ")
    )))
}
