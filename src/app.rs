//! The commands, as library calls: each takes parsed arguments and returns what to print
//! and the exit status. The binary only parses flags, calls these and writes.

use crate::Scene;
use crate::coupling::{VictimReport, couple_victim};
use crate::error::Error;
use crate::field::Vec3;
use crate::output::{json, text};
use crate::points_csv::read_points_csv;
use crate::probe::probe;
use crate::spectrum::same_frequency;
use crate::units::{Dimension, parse_quantity};
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
