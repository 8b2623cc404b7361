//! `sweep`: the scene's sweeps, their CSV and SVG files and safe distances.

use super::Outcome;
use crate::Scene;
use crate::error::{Error, SolveError};
use crate::model::SolverOptions;
use crate::model::SweepSpec;
use crate::output::{Report, SweepReport};
use crate::output::{csv, files, plot};
use crate::run::Solver;
use crate::run::sweep::SweepResult;
use std::path::{Path, PathBuf};

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
    let chosen = choose_sweeps(&scene, path, only)?;
    files::ensure_dir(out_dir)?;
    let (results, sweep_warnings) = run_sweeps(&scene, &solver, &chosen, progress)?;
    let mut warnings = scene.warnings.clone();
    warnings.extend(sweep_warnings);
    let outputs = sweep_files(&scene, &results, out_dir, &mut warnings)?;
    let mut written = Vec::new();
    for (p, text) in &outputs {
        files::write_atomic(p, text.as_bytes())?;
        written.push(p.display().to_string());
    }
    let stdout = SweepReport {
        scene: &scene,
        results: &results,
        written: &written,
    }
    .render(as_json);
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}

/// Runs the `chosen` sweeps of `scene` in order, with their warnings (contact,
/// shielding over the ideal-sheet figure; not the scene's own). `progress` is called
/// with (steps done, steps) once per finished step. Used by `sweep` and `report`.
pub(crate) fn run_sweeps(
    scene: &Scene,
    solver: &Solver,
    chosen: &[&SweepSpec],
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<(Vec<SweepResult>, Vec<String>), SolveError> {
    // Every step of every alternative, plus one for each sweep's closing work (the
    // safe-distance bisection and the orientation search at the placed position).
    let total_steps: usize = chosen
        .iter()
        .map(|s| s.steps * (1 + s.compare.len()) + 1)
        .sum();
    let done = std::sync::atomic::AtomicUsize::new(0);
    let tick = || {
        let n = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        progress(n, total_steps);
    };
    let results: Vec<SweepResult> = chosen
        .iter()
        .map(|s| {
            let r = crate::run::sweep::run(scene, solver, s, &tick);
            tick();
            r
        })
        .collect::<Result<_, SolveError>>()?;
    let warnings = results
        .iter()
        .flat_map(|r| crate::run::warnings::sweep_warnings(scene, r))
        .collect();
    Ok((results, warnings))
}

/// The plot of one finished sweep (SVG text), as `sweep` writes it; the reason as a
/// warning naming the sweep when it cannot be drawn.
pub(crate) fn sweep_plot(scene: &Scene, r: &SweepResult) -> Result<String, String> {
    plot::sweep_svg(r, scene).map_err(|why| format!("sweep \"{}\": {why}", r.spec.id))
}

/// The scene's sweeps that `only` (an id) selects, or all of them; an error when none.
fn choose_sweeps<'a>(
    scene: &'a Scene,
    path: &Path,
    only: Option<&str>,
) -> Result<Vec<&'a SweepSpec>, Error> {
    let chosen: Vec<&SweepSpec> = match only {
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
    Ok(chosen)
}

/// The files a run of sweeps writes into `out_dir`, with their contents: each sweep's
/// CSV and SVG (a plot that cannot be drawn becomes a warning), then `scene.vtp` so
/// that the sweep can be looked at in ParaView.
fn sweep_files(
    scene: &Scene,
    results: &[SweepResult],
    out_dir: &Path,
    warnings: &mut Vec<String>,
) -> Result<Vec<(PathBuf, String)>, Error> {
    let mut outputs = Vec::new();
    for r in results {
        outputs.push((
            out_dir.join(format!("{}.csv", r.spec.id)),
            csv::sweep_csv(r),
        ));
        match sweep_plot(scene, r) {
            Ok(svg) => outputs.push((out_dir.join(format!("{}.svg", r.spec.id)), svg)),
            Err(why) => warnings.push(why),
        }
    }
    let vtp = crate::output::vtk::scene_polydata(scene, 0.005).map_err(Error::Run)?;
    outputs.push((out_dir.join("scene.vtp"), vtp));
    Ok(outputs)
}
