//! `[[sweep]]` tables → validated sweep specifications.

use super::common::parse_id;
use super::reader::Table;
use crate::error::InputError;
use crate::model::Victim;
use crate::model::sweep::{SweepSpec, Vary};
use crate::units::Dimension;

/// Largest number of steps a sweep may take (each step is a full coupling solve).
const MAX_STEPS: u64 = 100_000;

/// Builds a [`SweepSpec`] from one `[[sweep]]` table.
pub(crate) fn parse(
    t: &Table<'_, '_>,
    victims: &[Victim],
    shield_ids: &[&str],
) -> Result<SweepSpec, InputError> {
    let id = parse_id(t)?;
    let victim = parse_victim(t, victims)?;
    let (vary, dim) = parse_vary(t)?;
    let fv = t.require("from", &format!("the first value, {}", dim.noun()))?;
    let from = fv.quantity(dim)?;
    let tv = t.require("to", &format!("the last value, {}", dim.noun()))?;
    let to = tv.quantity(dim)?;
    if from == to {
        return Err(tv.error("`to` equals `from`: the sweep would cover no range"));
    }
    let sv = t.require("steps", "the number of samples, at least 2")?;
    let steps = sv.count(2)?;
    if steps > MAX_STEPS {
        return Err(sv.error(format!("{steps} steps is more than {MAX_STEPS}")));
    }
    let default_scale = if matches!(vary, Vary::Angle(_)) {
        ["linear", "log"]
    } else {
        ["log", "linear"]
    };
    let log = t.one_of("scale", &default_scale)? == "log";
    if log && (from <= 0.0 || to <= 0.0) {
        return Err(
            fv.error("a log scale needs `from` and `to` greater than zero; use scale = \"linear\"")
        );
    }
    if matches!(vary, Vary::Frequency) && (from <= 0.0 || to <= 0.0) {
        return Err(fv.error("frequencies must be greater than zero"));
    }
    let worst = t.one_of("orientation", &["as-placed", "worst"])? == "worst";
    let compare = parse_compare(t, shield_ids)?;
    let context = format!("a sweep of {}", vary.name());
    t.finish(&["along", "about", "compare"], &context)?;
    Ok(SweepSpec {
        id,
        victim,
        vary,
        from,
        to,
        steps: steps as usize,
        log,
        worst,
        compare,
    })
}

/// The index of the victim named by the required `victim`.
fn parse_victim(t: &Table<'_, '_>, victims: &[Victim]) -> Result<usize, InputError> {
    let vv = t.require("victim", "the id of the victim to sweep")?;
    let vid = vv.string()?;
    let Some(victim) = victims.iter().position(|v| v.id == vid) else {
        let known: Vec<&str> = victims.iter().map(|v| v.id.as_str()).collect();
        return Err(vv.error(format!(
            "no victim has id \"{vid}\" (victims: {})",
            if known.is_empty() {
                "none".to_string()
            } else {
                known.join(", ")
            }
        )));
    };
    Ok(victim)
}

/// The required `vary` (with its `along` or `about`) and the dimension of `from`/`to`.
fn parse_vary(t: &Table<'_, '_>) -> Result<(Vary, Dimension), InputError> {
    let kv = t.require("vary", "distance, angle or frequency")?;
    Ok(match kv.string()? {
        "distance" => {
            let d = t.require("along", "the direction the victim moves, e.g. [1, 0, 0]")?;
            (Vary::Distance(d.direction()?), Dimension::Length)
        }
        "angle" => {
            let a = t.require("about", "the axis the victim turns about, e.g. [0, 0, 1]")?;
            (Vary::Angle(a.direction()?), Dimension::Angle)
        }
        "frequency" => (Vary::Frequency, Dimension::Frequency),
        other => {
            return Err(kv.error(format!(
                "unknown vary \"{other}\"; expected distance, angle or frequency"
            )));
        }
    })
}

/// The optional `compare`: shield ids, `None` standing for "none" (no sheet).
fn parse_compare(
    t: &Table<'_, '_>,
    shield_ids: &[&str],
) -> Result<Vec<Option<String>>, InputError> {
    let mut compare = Vec::new();
    let Some(c) = t.get("compare") else {
        return Ok(compare);
    };
    let items = c.array()?;
    if items.is_empty() {
        return Err(c.error("list shield ids to compare, and \"none\" for no sheet"));
    }
    for item in items {
        let name = item.string()?;
        if name == "none" {
            compare.push(None);
        } else if shield_ids.contains(&name) {
            compare.push(Some(name.to_string()));
        } else {
            let mut known = shield_ids.to_vec();
            known.push("none");
            let hint = crate::scene::reader::did_you_mean(name, &known)
                .map(|s| format!("; did you mean \"{s}\"?"))
                .unwrap_or_default();
            return Err(item.error(format!(
                "no shield has id \"{name}\" (give [[shield]] ids or \"none\"){hint}"
            )));
        }
    }
    Ok(compare)
}
