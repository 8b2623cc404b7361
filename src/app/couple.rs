//! `couple`: every source into every victim, with margins and spectrum plots.

use super::Outcome;
use crate::Scene;
use crate::error::{Error, SolveError};
use crate::output::{CoupleReport, Report};
use crate::output::{files, plot};
use crate::run::Solver;
use crate::run::couple::{VictimReport, couple_victim};
use std::path::Path;

/// `couple SCENE`: M, EMF per line, totals and margins for every victim; with `plot_dir`
/// also each victim's EMF spectrum as `<dir>/<victim>-spectrum.svg`.
pub fn couple(
    path: &Path,
    as_json: bool,
    strict: bool,
    plot_dir: Option<&Path>,
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    if let Some(dir) = plot_dir {
        files::ensure_dir(dir)?;
    }
    let solver = Solver::for_scene(&scene);
    let reports: Vec<VictimReport> = scene
        .victims
        .iter()
        .map(|v| couple_victim(&scene, &solver, v))
        .collect::<Result<_, SolveError>>()?;
    let mut warnings = scene.warnings.clone();
    for r in &reports {
        for s in r.sources.iter().filter(|s| !s.converged) {
            warnings.push(format!(
                "the flux of source \"{}\" through victim \"{}\" did not reach the tolerance \
                 (a conductor passes very close to the victim's path)",
                s.id, r.id
            ));
        }
        warnings.extend(crate::run::warnings::couple_shielding_warning(r));
    }
    let over = reports.iter().any(|r| r.pass() == Some(false));
    if let Some(dir) = plot_dir {
        let mut files = Vec::new();
        for r in &reports {
            let lines: Vec<(f64, f64)> = r
                .by_frequency
                .iter()
                .map(|(f, e)| (*f, e.norm() / std::f64::consts::SQRT_2))
                .collect();
            match plot::spectrum_svg(&r.id, &lines, r.limit) {
                Ok(svg) => files.push((dir.join(format!("{}-spectrum.svg", r.id)), svg)),
                Err(why) => warnings.push(why),
            }
        }
        for (p, svg) in &files {
            files::write_atomic(p, svg.as_bytes())?;
        }
    }
    let stdout = CoupleReport {
        scene: &scene,
        victims: &reports,
    }
    .render(as_json);
    Ok(Outcome {
        stdout,
        warnings,
        exit: if strict && over { 3 } else { 0 },
    })
}
