//! `probe`: B phasors at points given on the command line or in a CSV file.

use super::Outcome;
use crate::Scene;
use crate::error::Error;
use crate::field::Vec3;
use crate::model::SolverOptions;
use crate::output::{ProbeReport, Report};
use crate::run::Solver;
use crate::run::probe::probe;
use crate::scene::points_csv::read_points_csv;
use crate::units::{Dimension, parse_quantity};
use std::path::Path;

/// `probe SCENE --at ... --points FILE`: B phasors at points.
pub fn probe_points(
    path: &Path,
    at: &[String],
    points_file: Option<&Path>,
    as_json: bool,
    exact: bool,
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let solver = Solver::new(&scene, SolverOptions::for_scene(&scene).exact_if(exact));
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
    let result = probe(&scene, &solver, &points)?;
    let stdout = ProbeReport { points: &result }.render(as_json);
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
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
