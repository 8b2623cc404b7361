//! `sweep`: the scene's sweeps, their CSV and SVG files and safe distances.

use super::Outcome;
use crate::Scene;
use crate::error::{Error, SolveError};
use crate::model::SolverOptions;
use crate::output::{csv, files, json, plot, text};
use crate::run::Solver;
use std::path::Path;

/// `sweep SCENE [--only ID] [--out DIR]`: run the scene's sweeps, write `<id>.csv` and
/// `<id>.svg` into `out_dir`, report the safe distance. `progress` is called once per
/// finished step.
pub fn sweep(
    path: &Path,
    only: Option<&str>,
    out_dir: &Path,
    as_json: bool,
    exact: bool,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let solver = Solver::new(&scene, SolverOptions::for_scene(&scene).exact_if(exact));
    let chosen: Vec<&crate::model::SweepSpec> = match only {
        Some(id) => {
            let s: Vec<_> = scene.sweeps.iter().filter(|s| s.id == id).collect();
            if s.is_empty() {
                let known: Vec<&str> = scene.sweeps.iter().map(|s| s.id.as_str()).collect();
                return Err(Error::Usage(format!(
                    "--only {id}: the scene has no sweep with that id (sweeps: {})",
                    if known.is_empty() {
                        "none".into()
                    } else {
                        known.join(", ")
                    }
                )));
            }
            s
        }
        None => scene.sweeps.iter().collect(),
    };
    if chosen.is_empty() {
        return Err(Error::Usage(format!(
            "{}: the scene has no [[sweep]]; add one (see docs/scene-reference.md, Sweeps)",
            path.display()
        )));
    }
    files::ensure_dir(out_dir)?;
    let total_steps: usize = chosen.iter().map(|s| s.steps * (1 + s.compare.len())).sum();
    let done = std::sync::atomic::AtomicUsize::new(0);
    let tick = || {
        let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        progress(n, total_steps);
    };
    let results: Vec<crate::run::sweep::SweepResult> = chosen
        .iter()
        .map(|s| crate::run::sweep::run(&scene, &solver, s, &tick))
        .collect::<Result<_, SolveError>>()?;
    let mut outputs = Vec::new();
    let mut warnings = scene.warnings.clone();
    for r in &results {
        let victim = &scene.victims[r.spec.victim].id;
        outputs.push((
            out_dir.join(format!("{}.csv", r.spec.id)),
            csv::sweep_csv(r),
        ));
        match plot::sweep_svg(r, victim) {
            Ok(svg) => outputs.push((out_dir.join(format!("{}.svg", r.spec.id)), svg)),
            Err(why) => warnings.push(format!("sweep \"{}\": {why}", r.spec.id)),
        }
    }
    // The scene's geometry too, so the sweep can be looked at in ParaView.
    let vtp = crate::output::vtk::scene_polydata(&scene, 0.005).map_err(Error::Run)?;
    outputs.push((out_dir.join("scene.vtp"), vtp));
    let mut written = Vec::new();
    for (p, text) in &outputs {
        files::write_atomic(p, text.as_bytes())?;
        written.push(p.display().to_string());
    }
    let stdout = if as_json {
        json::sweeps(&results)
    } else {
        text::sweeps(&scene, &results, &written)
    };
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}
