//! Scene files: TOML as written → a validated [`Scene`] in SI units.
//!
//! Loading runs in two stages. `toml` parses the text into a tree that keeps every
//! value's byte span; [`reader`] walks that tree, checking types, units, ranges and
//! unknown keys, and the `source` and `victim` modules build the geometry the solver trusts. Any
//! problem stops the load with one located [`InputError`].

mod common;
mod current;
mod map;
pub mod points_csv;
pub mod reader;
mod shield;
mod source;
mod sweep;
mod victim;
mod warnings;
mod windings;

use crate::error::InputError;
use crate::model::{Barrier, Scene, Source, Victim};
pub use crate::model::{DEFAULT_TOLERANCE, DEFAULT_WIRE_RADIUS};
use crate::units::Dimension;
use common::Context;
use reader::{Doc, Table};
use std::path::Path;
use warnings::{contact_warning, inside_winding_warning, shield_warnings};

impl Scene {
    /// Reads and validates the scene file at `path`.
    pub fn load(path: &Path) -> Result<Scene, InputError> {
        let name = path.display().to_string();
        let bytes = std::fs::read(path).map_err(|e| InputError {
            file: name.clone(),
            line: 1,
            col: 1,
            key: String::new(),
            reason: format!("cannot read the scene file: {e}"),
        })?;
        let text = String::from_utf8(bytes).map_err(|e| {
            let doc = Doc::new(&name, "");
            let _ = doc;
            InputError {
                file: name.clone(),
                line: 1 + e.as_bytes()[..e.utf8_error().valid_up_to()]
                    .iter()
                    .filter(|&&b| b == b'\n')
                    .count(),
                col: 1,
                key: String::new(),
                reason: "the scene file is not UTF-8 text".into(),
            }
        })?;
        Scene::parse(&name, &text)
    }

    /// Validates scene text; `name` is used in messages.
    pub fn parse(name: &str, text: &str) -> Result<Scene, InputError> {
        let doc = Doc::new(name, text);
        let root = toml::de::DeTable::parse(text).map_err(|e| {
            let span = e.span().unwrap_or(0..0);
            let msg = e.message().lines().next().unwrap_or("invalid TOML").trim();
            doc.error(&span, "", format!("not valid TOML: {msg}"))
        })?;
        let root = Table::root(&doc, &root);
        let base_dir = Path::new(name)
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        let mut scene = build(&root, base_dir)?;
        let mut warnings = doc.take_warnings();
        warnings.append(&mut scene.warnings);
        scene.warnings = warnings;
        Ok(scene)
    }
}

/// Top-level tables, those of later versions refused by name.
const TOP_KEYS: &[&str] = &[
    "scene",
    "solver",
    "source",
    "victim",
    "shield",
    "enclosure",
    "sweep",
    "map",
];

fn build(root: &Table<'_, '_>, base_dir: std::path::PathBuf) -> Result<Scene, InputError> {
    let title = parse_title(root)?;
    let (tolerance, wire_radius) = parse_solver(root)?;
    let ctx = Context {
        tolerance,
        wire_radius,
        base_dir,
    };
    let mut warnings = Vec::new();
    let mut ids: Vec<String> = Vec::new();
    let mut sources = Vec::new();
    for item in array_of_tables(root, "source")? {
        let s = source::parse(&item, &ctx, &mut warnings)?;
        check_unique(&item, &s.id, &mut ids)?;
        sources.push(s);
    }
    let mut victims = Vec::new();
    for item in array_of_tables(root, "victim")? {
        let v = victim::parse(&item, &ctx)?;
        check_unique(&item, &v.id, &mut ids)?;
        victims.push(v);
    }
    let shield_tables = array_of_tables(root, "shield")?;
    let (shields, barrier) = shield::parse_shields(&shield_tables, &sources, &victims)?;
    for (t, s) in shield_tables.iter().zip(&shields) {
        check_unique(t, &s.id, &mut ids)?;
    }
    let mut enclosures = Vec::new();
    for item in array_of_tables(root, "enclosure")? {
        let e = shield::parse_enclosure(&item, &sources, &victims)?;
        check_unique(&item, &e.id, &mut ids)?;
        enclosures.push(e);
    }
    let sweeps = parse_sweeps(root, &victims, &shields, barrier.as_ref(), &mut ids)?;
    let maps = parse_maps(root, &sources, barrier.as_ref(), &mut ids)?;
    root.finish(TOP_KEYS, "a scene file")?;
    if sources.is_empty() {
        return Err(root.error("the scene has no [[source]]: add at least one"));
    }
    let mut scene = Scene {
        title,
        tolerance,
        wire_radius,
        sources,
        victims,
        sweeps,
        maps,
        shields,
        barrier,
        enclosures,
        warnings,
    };
    let extra = scene_warnings(&scene);
    scene.warnings.extend(extra);
    Ok(scene)
}

/// The optional `[scene]` table's `title` (empty without one).
fn parse_title(root: &Table<'_, '_>) -> Result<String, InputError> {
    let Some(v) = root.get("scene") else {
        return Ok(String::new());
    };
    let t = v.table()?;
    let title = match t.get("title") {
        Some(s) => s.string()?.to_string(),
        None => String::new(),
    };
    t.finish(&[], "[scene]")?;
    Ok(title)
}

/// The `[[sweep]]` tables, each checked against the barrier and against each sheet
/// it compares.
fn parse_sweeps(
    root: &Table<'_, '_>,
    victims: &[Victim],
    shields: &[crate::model::Sheet],
    barrier: Option<&Barrier>,
    ids: &mut Vec<String>,
) -> Result<Vec<crate::model::sweep::SweepSpec>, InputError> {
    let shield_ids: Vec<&str> = shields.iter().map(|s| s.id.as_str()).collect();
    let mut sweeps = Vec::new();
    for item in array_of_tables(root, "sweep")? {
        let s = sweep::parse(&item, victims, &shield_ids)?;
        check_unique(&item, &s.id, ids)?;
        if let Some(b) = barrier {
            shield::check_sweep(&item, &s, b, victims)?;
        }
        for sheet in shields
            .iter()
            .filter(|sh| s.compare.contains(&Some(sh.id.clone())))
        {
            if let Ok(alone) = Barrier::new(std::slice::from_ref(sheet)) {
                shield::check_sweep(&item, &s, &alone, victims)?;
            }
        }
        sweeps.push(s);
    }
    Ok(sweeps)
}

/// The `[[map]]` tables, each checked against the barrier.
fn parse_maps(
    root: &Table<'_, '_>,
    sources: &[Source],
    barrier: Option<&Barrier>,
    ids: &mut Vec<String>,
) -> Result<Vec<crate::model::MapSpec>, InputError> {
    let line_count = distinct_line_count(sources);
    let mut maps = Vec::new();
    for item in array_of_tables(root, "map")? {
        let m = map::parse(&item, line_count)?;
        check_unique(&item, &m.id, ids)?;
        if let Some(b) = barrier {
            shield::check_map(&item, &m, b)?;
        }
        maps.push(m);
    }
    Ok(maps)
}

/// Warnings on the built scene: each victim's distance, contact and place inside a
/// winding, then the shields' validity.
fn scene_warnings(scene: &Scene) -> Vec<String> {
    let mut extra = Vec::new();
    for v in &scene.victims {
        let centre = v.frame.origin;
        extra.extend(scene.far_point_warning(&format!("victim \"{}\"", v.id), &centre));
        extra.extend(contact_warning(scene, v));
        extra.extend(inside_winding_warning(scene, v));
    }
    extra.extend(shield_warnings(scene));
    extra
}

/// Number of distinct line frequencies over all sources.
fn distinct_line_count(sources: &[Source]) -> usize {
    let mut f: Vec<f64> = sources
        .iter()
        .flat_map(|s| s.lines.iter().map(|l| l.frequency))
        .collect();
    f.sort_by(f64::total_cmp);
    f.dedup_by(|a, b| crate::spectrum::same_frequency(*a, *b));
    f.len()
}

fn parse_solver(root: &Table<'_, '_>) -> Result<(f64, f64), InputError> {
    let Some(v) = root.get("solver") else {
        return Ok((DEFAULT_TOLERANCE, DEFAULT_WIRE_RADIUS));
    };
    let t = v.table()?;
    let tolerance = match t.get("tolerance") {
        Some(x) => {
            let tol = x.number()?;
            if !(1e-12..=0.1).contains(&tol) {
                return Err(x.error(format!(
                    "must be between 1e-12 and 0.1 (a relative accuracy), got {tol}"
                )));
            }
            tol
        }
        None => DEFAULT_TOLERANCE,
    };
    let wire_radius = match t.get("wire_radius") {
        Some(x) => x.positive(Dimension::Length)?,
        None => DEFAULT_WIRE_RADIUS,
    };
    t.finish(&[], "[solver]")?;
    Ok((tolerance, wire_radius))
}

/// The tables of `[[name]]`, each keyed `name[n]` (one-based).
fn array_of_tables<'a, 'i>(
    root: &Table<'a, 'i>,
    name: &str,
) -> Result<Vec<Table<'a, 'i>>, InputError> {
    let Some(v) = root.get(name) else {
        return Ok(Vec::new());
    };
    if v.is_table() {
        return Err(v.error(format!(
            "write [[{name}]] (an array of tables), not [{name}]"
        )));
    }
    v.array()?.iter().map(|item| item.table()).collect()
}

fn check_unique(t: &Table<'_, '_>, id: &str, ids: &mut Vec<String>) -> Result<(), InputError> {
    if ids.iter().any(|i| i == id) {
        return Err(t.error_at(
            "id",
            format!("id \"{id}\" is already used; every id must be unique"),
        ));
    }
    ids.push(id.to_string());
    Ok(())
}
