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
mod windings;

use crate::error::InputError;
use crate::field::Vec3;
use crate::geometry::Edge;
use crate::model::{Barrier, Scene, Source, Victim};
pub use crate::model::{DEFAULT_TOLERANCE, DEFAULT_WIRE_RADIUS};
use crate::units::Dimension;
use common::Context;
use reader::{Doc, Table};
use std::path::Path;

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
        build(&root, base_dir)
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
    let title = match root.get("scene") {
        Some(v) => {
            let t = v.table()?;
            let title = match t.get("title") {
                Some(s) => s.string()?.to_string(),
                None => String::new(),
            };
            t.finish(&[], "[scene]")?;
            title
        }
        None => String::new(),
    };
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
    let shield_ids: Vec<&str> = shields.iter().map(|s| s.id.as_str()).collect();
    let mut sweeps = Vec::new();
    for item in array_of_tables(root, "sweep")? {
        let s = sweep::parse(&item, &victims, &shield_ids)?;
        check_unique(&item, &s.id, &mut ids)?;
        if let Some(b) = &barrier {
            shield::check_sweep(&item, &s, b, &victims)?;
        }
        for sheet in shields
            .iter()
            .filter(|sh| s.compare.contains(&Some(sh.id.clone())))
        {
            if let Ok(alone) = Barrier::new(std::slice::from_ref(sheet)) {
                shield::check_sweep(&item, &s, &alone, &victims)?;
            }
        }
        sweeps.push(s);
    }
    let line_count = distinct_line_count(&sources);
    let mut maps = Vec::new();
    for item in array_of_tables(root, "map")? {
        let m = map::parse(&item, line_count)?;
        check_unique(&item, &m.id, &mut ids)?;
        if let Some(b) = &barrier {
            shield::check_map(&item, &m, b)?;
        }
        maps.push(m);
    }
    root.finish(TOP_KEYS, "a scene file")?;
    if sources.is_empty() {
        return Err(root.error("the scene has no [[source]]: add at least one"));
    }
    let scene = Scene {
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
    let mut extra = Vec::new();
    for v in &scene.victims {
        let centre = v.frame.origin;
        extra.extend(scene.far_point_warning(&format!("victim \"{}\"", v.id), &centre));
        extra.extend(contact_warning(&scene, v));
        extra.extend(inside_winding_warning(&scene, v));
    }
    extra.extend(shield_warnings(&scene));
    let mut scene = scene;
    scene.warnings.extend(extra);
    Ok(scene)
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

fn inside_winding_warning(scene: &Scene, v: &Victim) -> Option<String> {
    let c = v.frame.origin;
    for s in scene.sources.iter().filter(|s| s.kind.is_winding()) {
        let f = &s.frame;
        let local = |p: &Vec3| {
            let d = p - f.origin;
            Vec3::new(d.dot(&f.x), d.dot(&f.y), d.dot(&f.z))
        };
        let (mut lo, mut hi) = (Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY));
        for p in s.conductors.wires.iter().flat_map(|w| w.vertices.iter()) {
            let q = local(p);
            lo = lo.inf(&q);
            hi = hi.sup(&q);
        }
        let q = local(&c);
        let inside = (0..3).all(|k| q[k] > lo[k] && q[k] < hi[k]);
        if inside {
            return Some(format!(
                "victim \"{}\" sits inside the extent of winding \"{}\": its EMF depends on \
                 exactly where it lies among the turns, which are modelled as thin filaments",
                v.id, s.id
            ));
        }
    }
    None
}

/// Shield results outside the model: a conductivity so low that displacement current
/// matters at the highest line (σ < 100 ωε0), and enclosures far from the sphere the
/// estimate assumes (edge ratio over 3).
fn shield_warnings(scene: &Scene) -> Vec<String> {
    const EPS0: f64 = 8.854_187_812_8e-12; // F/m, CODATA 2018
    let omega = std::f64::consts::TAU * scene.highest_frequency();
    let mut out = Vec::new();
    for sh in &scene.shields {
        for (m, _) in &sh.layers {
            if m.conductivity > 0.0 && m.conductivity < 100.0 * omega * EPS0 {
                out.push(format!(
                    "shield \"{}\": at {} the {} layer's conductivity {} is under 100 ωε0, \
                     so its displacement current is not negligible and the quasi-static \
                     sheet model may not hold",
                    sh.id,
                    crate::units::format_si(scene.highest_frequency(), "Hz", 4),
                    m.name,
                    crate::units::format_si(m.conductivity, "S/m", 3)
                ));
            }
        }
    }
    for e in &scene.enclosures {
        let ratio = e.size.max() / e.size.min();
        if ratio > 3.0 {
            out.push(format!(
                "enclosure \"{}\" is {ratio:.1} times longer than it is thin: the \
                 equal-volume sphere overstates what such a box does (it is closer to an open \
                 tube along its length)",
                e.id
            ));
        }
    }
    out
}

fn contact_warning(scene: &Scene, v: &Victim) -> Option<String> {
    for s in &scene.sources {
        // Gap from a point to the nearest conductor surface, minus the victim's radius.
        let gap = |p: &Vec3| {
            let w = s
                .conductors
                .wires
                .iter()
                .map(|w| w.distance_to(p) - w.wire_radius);
            let d = s
                .conductors
                .dipoles
                .iter()
                .map(|d| (p - d.position).norm() - d.radius);
            w.chain(d).fold(f64::INFINITY, f64::min) - v.wire_radius
        };
        if v.edges.iter().any(|e| edge_touches(e, &gap)) {
            return Some(format!(
                "victim \"{}\" touches or crosses source \"{}\": the result is dominated by \
                 the contact and depends on the wire radii",
                v.id, s.id
            ));
        }
    }
    None
}

/// Whether `gap` (m, Lipschitz 1 in the point) falls to zero anywhere along `e`: the
/// gap can fall by at most half an interval's length between its ends, so intervals
/// that stay clear by more are done, and the rest are halved (to a depth of 40).
fn edge_touches(e: &Edge, gap: &dyn Fn(&Vec3) -> f64) -> bool {
    let len = e.length();
    let mut stack: Vec<(f64, f64, f64, f64, u32)> = Vec::new();
    let n = 64;
    let mut prev = (0.0, gap(&e.point(0.0)));
    for k in 1..=n {
        let t = k as f64 / n as f64;
        let g = gap(&e.point(t));
        stack.push((prev.0, prev.1, t, g, 0));
        prev = (t, g);
    }
    // A budget of gap evaluations keeps absurd geometry (a 1e200 m edge) from taking
    // forever; within it, every crossing of a wire is found.
    let mut budget = 4096;
    while let Some((t0, g0, t1, g1, depth)) = stack.pop() {
        if g0 <= 0.0 || g1 <= 0.0 {
            return true;
        }
        if g0.min(g1) > 0.5 * len * (t1 - t0) || depth >= 40 || budget == 0 {
            continue;
        }
        budget -= 1;
        let tm = 0.5 * (t0 + t1);
        let gm = gap(&e.point(tm));
        stack.push((t0, g0, tm, gm, depth + 1));
        stack.push((tm, gm, t1, g1, depth + 1));
    }
    false
}
