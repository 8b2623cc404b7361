//! `couple`: every source into every victim, with margins and spectrum plots.

use super::Outcome;
use crate::Scene;
use crate::coupling::Total;
use crate::error::{Error, SolveError};
use crate::output::{CoupleReport, Report};
use crate::output::{files, plot};
use crate::run::Solver;
use crate::run::couple::{VictimReport, couple_victim};
use crate::units::format_si;
use std::path::Path;

/// `couple SCENE`: M, EMF per line, totals and margins for every victim; with `plot_dir`
/// also each victim's EMF spectrum as `<dir>/<victim>-spectrum.svg`. `progress` is
/// called with (victims done, victims) as each victim is coupled.
pub fn couple(
    path: &Path,
    as_json: bool,
    strict: bool,
    plot_dir: Option<&Path>,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    if let Some(dir) = plot_dir {
        files::ensure_dir(dir)?;
    }
    let solver = Solver::for_scene(&scene);
    let reports = couple_all(&scene, &solver, progress)?;
    let mut warnings = scene.warnings.clone();
    warnings.extend(couple_warnings(&reports));
    // A victim with a limit but no converging total has no verdict: a gate fails it.
    let over = reports
        .iter()
        .any(|r| r.pass() == Some(false) || (r.limit.is_some() && r.pass().is_none()));
    if let Some(dir) = plot_dir {
        let mut files = Vec::new();
        for r in &reports {
            match spectrum_plot(r) {
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

/// Couples every source into every victim of `scene`, in scene order; `progress` is
/// called with (victims done, victims). Used by `couple` and `report`.
pub(crate) fn couple_all(
    scene: &Scene,
    solver: &Solver,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Vec<VictimReport>, SolveError> {
    let count = scene.victims.len();
    progress(0, count);
    scene
        .victims
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let r = couple_victim(scene, solver, v);
            progress(i + 1, count);
            r
        })
        .collect()
}

/// The warnings of a finished coupling, after the scene's own: per victim a flux that
/// missed the tolerance and shielding beyond the ideal-sheet figure, then every
/// victim whose unlisted lines add more than [`OMITTED_SHARE_WARN_DB`].
pub(crate) fn couple_warnings(reports: &[VictimReport]) -> Vec<String> {
    let mut warnings = Vec::new();
    for r in reports {
        for s in r.sources.iter().filter(|s| !s.converged) {
            warnings.push(format!(
                "the flux of source \"{}\" through victim \"{}\" did not reach the tolerance \
                 (a conductor passes very close to the victim's path)",
                s.id, r.id
            ));
        }
        warnings.extend(crate::run::warnings::couple_shielding_warning(r));
    }
    warnings.extend(reports.iter().filter_map(omitted_warning));
    warnings
}

/// The EMF spectrum plot of one victim (SVG text), as `couple --plot` writes it; the
/// reason as a warning when it cannot be drawn.
pub(crate) fn spectrum_plot(r: &VictimReport) -> Result<String, String> {
    let lines: Vec<(f64, f64)> = r
        .by_frequency
        .iter()
        .map(|(f, e)| (*f, e.norm() / std::f64::consts::SQRT_2))
        .collect();
    plot::spectrum_svg(&plot::SpectrumPlot {
        victim_id: &r.id,
        lines: &lines,
        total: r.total_rms(),
        limit: r.limit,
        margin_db: r.margin_db(),
    })
}

/// Unlisted lines that add more than this to a victim's listed total get a warning, dB.
pub const OMITTED_SHARE_WARN_DB: f64 = 1.0;

/// A warning when the lines left unlisted add more than [`OMITTED_SHARE_WARN_DB`] to a
/// victim's total, with the numbers.
fn omitted_warning(r: &VictimReport) -> Option<String> {
    let Total::Converged {
        rms,
        listed,
        omitted,
        omitted_exact,
    } = r.total
    else {
        return None;
    };
    let share = r.total.omitted_share_db()?;
    if share <= OMITTED_SHARE_WARN_DB {
        return None;
    }
    let how = if omitted_exact {
        "in closed form, so the total is complete"
    } else {
        "as an estimate (see docs/model.md, \"Lines above those listed\"): list more lines \
         with `harmonics` to narrow it"
    };
    Some(format!(
        "victim \"{}\": the listed spectral lines carry {} rms, but the lines above them \
         add {} rms ({share:.1} dB): the total {} rms includes them, {how}",
        r.id,
        format_si(listed, "V", 4),
        format_si(omitted, "V", 4),
        format_si(rms, "V", 4),
    ))
}
