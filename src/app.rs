//! The commands, as library calls: each takes parsed arguments and returns what to print
//! and the exit status. The binary only parses flags, calls these and writes.

use crate::coupling::{VictimReport, couple_victim};
use crate::error::{Error, InputError};
use crate::field::Vec3;
use crate::output::{json, text};
use crate::probe::probe;
use crate::spectrum::same_frequency;
use crate::units::{Dimension, parse_quantity};
use crate::{Scene, scene::reader::Doc};
use std::path::Path;

/// What a command produced.
#[derive(Debug, Default)]
pub struct Outcome {
    /// Text for standard output (a JSON document with `--json`).
    pub stdout: String,
    /// Warnings for standard error, one line each.
    pub warnings: Vec<String>,
    /// Exit status: 0, or 3 with `--strict` when a victim exceeds its limit.
    pub exit: i32,
}

/// `check SCENE`: validate and summarise.
pub fn check(path: &Path, as_json: bool) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let lines = distinct_lines(&scene);
    let stdout = if as_json {
        json::check(&scene, &lines)
    } else {
        text::check(&scene, &lines)
    };
    Ok(Outcome {
        stdout,
        warnings: scene.warnings.clone(),
        exit: 0,
    })
}

/// `couple SCENE`: M, EMF per line, totals and margins for every victim.
pub fn couple(path: &Path, as_json: bool, strict: bool) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let reports: Vec<VictimReport> = scene
        .victims
        .iter()
        .map(|v| couple_victim(&scene, v))
        .collect();
    let mut warnings = scene.warnings.clone();
    for r in &reports {
        for s in r.sources.iter().filter(|s| !s.converged) {
            warnings.push(format!(
                "the flux of source \"{}\" through victim \"{}\" did not reach the tolerance \
                 (a conductor passes very close to the victim's path)",
                s.id, r.id
            ));
        }
    }
    let over = reports.iter().any(|r| r.pass() == Some(false));
    let stdout = if as_json {
        json::couple(&reports)
    } else {
        text::couple(&scene, &reports)
    };
    Ok(Outcome {
        stdout,
        warnings,
        exit: if strict && over { 3 } else { 0 },
    })
}

/// `probe SCENE --at ... --points FILE`: B phasors at points.
pub fn probe_points(
    path: &Path,
    at: &[String],
    points_file: Option<&Path>,
    as_json: bool,
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let mut points = Vec::new();
    for a in at {
        points.push(parse_point_arg(a)?);
    }
    if let Some(file) = points_file {
        points.extend(read_points_csv(file)?);
    }
    if points.is_empty() {
        return Err(Error::Usage(
            "probe: give at least one point with --at X,Y,Z or --points FILE.csv".into(),
        ));
    }
    let mut warnings = scene.warnings.clone();
    for p in &points {
        check_not_on_wire(&scene, p)?;
        warnings.extend(scene.far_point_warning(&format!("probe point {p:?}"), p));
    }
    let result = probe(&scene, &points);
    let stdout = if as_json {
        json::probe(&result)
    } else {
        text::probe(&result)
    };
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}

/// Distinct line frequencies of all sources, ascending, Hz.
pub fn distinct_lines(scene: &Scene) -> Vec<f64> {
    let mut f: Vec<f64> = scene
        .sources
        .iter()
        .flat_map(|s| s.lines.iter().map(|l| l.frequency))
        .collect();
    f.sort_by(f64::total_cmp);
    f.dedup_by(|a, b| same_frequency(*a, *b));
    f
}

fn check_not_on_wire(scene: &Scene, p: &Vec3) -> Result<(), Error> {
    for s in &scene.sources {
        for w in &s.conductors.wires {
            let d = w.distance_to(p);
            if d < w.wire_radius {
                return Err(Error::Usage(format!(
                    "probe: point ({}, {}, {}) m lies inside the wire of source \"{}\" ({d:.3e} m \
                     from its axis, wire radius {:.3e} m); probe outside the conductor",
                    p.x, p.y, p.z, s.id, w.wire_radius
                )));
            }
        }
        for d in &s.conductors.dipoles {
            if (p - d.position).norm() < d.radius {
                return Err(Error::Usage(format!(
                    "probe: point ({}, {}, {}) m is at the centre of dipole source \"{}\"; a point \
                     dipole's field is only meaningful away from it",
                    p.x, p.y, p.z, s.id
                )));
            }
        }
    }
    Ok(())
}

/// Parses `X,Y,Z` in metres or `X,Y,Z unit` (e.g. `"10,0,5 mm"`).
pub fn parse_point_arg(arg: &str) -> Result<Vec3, Error> {
    let bad = |why: &str| Error::Usage(format!("--at \"{arg}\": {why}"));
    let parts: Vec<&str> = arg.split(',').map(str::trim).collect();
    if parts.len() != 3 {
        return Err(bad(
            "expected three coordinates X,Y,Z (metres) or X,Y,Z with a unit, e.g. \"10,0,5 mm\"",
        ));
    }
    // A unit written once after the last number applies to all three.
    let last = parts[2];
    let split = last
        .find(|c: char| c.is_whitespace() || c.is_alphabetic() || c == 'µ' || c == 'μ')
        .filter(|&i| {
            !last[i..].trim().is_empty() && !matches!(last[i..].chars().next(), Some('e' | 'E'))
        });
    let (z_text, unit) = match split {
        Some(i) => (last[..i].trim(), Some(last[i..].trim())),
        None => (last, None),
    };
    let mut v = Vec3::zeros();
    for (k, t) in [parts[0], parts[1], z_text].iter().enumerate() {
        let value = match unit {
            Some(u) => {
                parse_quantity(&format!("{t} {u}"), Dimension::Length).map_err(|e| bad(&e.0))?
            }
            None => t
                .parse::<f64>()
                .map_err(|_| bad(&format!("\"{t}\" is not a number")))?,
        };
        if !value.is_finite() {
            return Err(bad(&format!("\"{t}\" is not a finite number")));
        }
        v[k] = value;
    }
    Ok(v)
}

/// Reads a CSV of points: `x,y,z` per row in metres, or in the unit its header names
/// (`x_mm,y_mm,z_mm`). Blank lines and lines starting with `#` are skipped.
pub fn read_points_csv(path: &Path) -> Result<Vec<Vec3>, Error> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| {
        Error::Input(InputError {
            file: name.clone(),
            line: 1,
            col: 1,
            key: String::new(),
            reason: format!("cannot read the points file: {e}"),
        })
    })?;
    let doc = Doc::new(&name, &text);
    let mut scale = 1.0;
    let mut out = Vec::new();
    let mut offset = 0;
    let mut header_seen = false;
    for line in text.split_inclusive('\n') {
        let start = offset;
        offset += line.len();
        let row = line.trim();
        if row.is_empty() || row.starts_with('#') {
            continue;
        }
        let cells: Vec<&str> = row.split(',').map(str::trim).collect();
        if !header_seen && out.is_empty() && cells.iter().any(|c| c.parse::<f64>().is_err()) {
            header_seen = true;
            scale =
                header_scale(&cells).map_err(|why| doc.error(&(start..start), "header", why))?;
            continue;
        }
        if cells.len() != 3 {
            return Err(doc
                .error(
                    &(start..start),
                    "row",
                    format!("expected 3 values x,y,z, found {}", cells.len()),
                )
                .into());
        }
        let mut v = Vec3::zeros();
        let mut col = start;
        for (k, c) in cells.iter().enumerate() {
            let x: f64 = c
                .parse()
                .map_err(|_| doc.error(&(col..col), "row", format!("\"{c}\" is not a number")))?;
            if !x.is_finite() {
                return Err(doc
                    .error(&(col..col), "row", format!("\"{c}\" is not finite"))
                    .into());
            }
            v[k] = x * scale;
            col += line[col - start..].find(',').map_or(0, |i| i + 1);
        }
        out.push(v);
    }
    if out.is_empty() {
        return Err(doc.error(&(0..0), "", "the points file has no rows").into());
    }
    Ok(out)
}

/// The length unit named by a header like `x_mm,y_mm,z_mm` (metres for `x,y,z`).
fn header_scale(cells: &[&str]) -> Result<f64, String> {
    if cells.len() != 3 {
        return Err(format!(
            "expected a header of 3 columns, found {}",
            cells.len()
        ));
    }
    let units: Vec<&str> = cells
        .iter()
        .map(|c| c.split_once('_').map_or("m", |(_, u)| u))
        .collect();
    if units.iter().any(|u| *u != units[0]) {
        return Err("all three columns must use the same unit".into());
    }
    parse_quantity(&format!("1 {}", units[0]), Dimension::Length)
        .map_err(|e| format!("header unit: {}", e.0))
}
