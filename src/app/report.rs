//! `report`: one self-contained HTML page for a design review of a scene: what
//! `couple` and `sweep` find, with their plots, warnings and cautions.

use super::Outcome;
use super::couple::{couple_all, couple_warnings, spectrum_plot};
use super::sweep::{run_sweeps, sweep_plot};
use crate::Scene;
use crate::error::Error;
use crate::model::{SolverOptions, SweepSpec};
use crate::output::page::{Plots, ReviewPage};
use crate::output::{files, plot};
use crate::run::Solver;
use std::path::Path;

/// The environment variable that fixes the report's date: whole seconds since
/// 1970-01-01 UTC (the reproducible-builds convention).
pub const SOURCE_DATE_EPOCH: &str = "SOURCE_DATE_EPOCH";

/// `report SCENE [--out DIR]`: couple every victim and run every sweep as `couple` and
/// `sweep` do, and write `DIR/report.html`: one page with the scene drawn, the summary
/// of margins, each victim's lines and spectrum, each sweep's plot and safe value,
/// shield options, every warning and the cautions. A sweep that cannot run is named on
/// the page and among the warnings with its reason. Dated now (UTC), or at
/// `SOURCE_DATE_EPOCH` (whole seconds since 1970) when that is set. `progress` is called with (done, total),
/// first over the victims, then over the sweeps' steps.
pub fn report(
    path: &Path,
    out_dir: &Path,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Outcome, Error> {
    let date = report_date(std::env::var_os(SOURCE_DATE_EPOCH).as_deref())?;
    let scene = Scene::load(path)?;
    // The bytes just loaded, hashed so that a reviewer can tell which scene was run.
    let bytes = std::fs::read(path).map_err(|e| {
        Error::Run(format!(
            "cannot read the scene file \"{}\" again to hash it: {e}",
            path.display()
        ))
    })?;
    files::ensure_dir(out_dir)?;
    // As `couple` runs: its own solver, so that the numbers are `couple`'s.
    let victims = couple_all(&scene, &Solver::for_scene(&scene), progress)?;
    // As `sweep` runs (without --exact): a solver of its own, the caches fresh.
    let sweep_solver = Solver::new(&scene, SolverOptions::for_scene(&scene));
    let mut warnings = scene.warnings.clone();
    warnings.extend(couple_warnings(&victims));
    // A sweep that `sweep` would refuse (an ideal edge, a step a shield cannot be
    // solved at) is named on the page with its reason; the rest of the page stands.
    let mut sweeps = Vec::new();
    let mut not_run = Vec::new();
    for spec in &scene.sweeps {
        match run_sweeps(&scene, &sweep_solver, &[spec as &SweepSpec], progress) {
            Ok((mut done, sweep_warnings)) => {
                sweeps.append(&mut done);
                warnings.extend(sweep_warnings);
            }
            Err(why) => {
                warnings.push(format!("sweep \"{}\" was not run: {why}", spec.id));
                not_run.push((spec.id.clone(), why.to_string()));
            }
        }
    }
    let plots = Plots {
        drawing: plot::scene_views_svg(&scene)
            .map_err(|why| warnings.push(format!("the scene drawing: {why}")))
            .ok(),
        spectra: victims
            .iter()
            .map(|r| spectrum_plot(r).map_err(|why| warnings.push(why)).ok())
            .collect(),
        sweeps: sweeps
            .iter()
            .map(|r| sweep_plot(&scene, r).map_err(|why| warnings.push(why)).ok())
            .collect(),
    };
    let html = ReviewPage {
        scene: &scene,
        scene_file: &path.display().to_string(),
        sha256: &sha256_hex(&bytes),
        date,
        victims: &victims,
        sweeps: &sweeps,
        not_run: &not_run,
        plots: &plots,
        warnings: &warnings,
    }
    .render()
    .map_err(Error::Run)?;
    let target = out_dir.join("report.html");
    files::write_atomic(&target, html.as_bytes())?;
    Ok(Outcome {
        stdout: format!("wrote {}\n", target.display()),
        warnings,
        exit: 0,
    })
}

/// The report's date: `epoch` (the value of [`SOURCE_DATE_EPOCH`], whole seconds since
/// 1970-01-01 UTC) when given, else now. A value that is not whole seconds in range is
/// refused (exit 2), as the convention asks, rather than silently replaced by now.
fn report_date(epoch: Option<&std::ffi::OsStr>) -> Result<jiff::Timestamp, Error> {
    let Some(raw) = epoch else {
        return Ok(jiff::Timestamp::now());
    };
    let bad = || {
        Error::Usage(format!(
            "{SOURCE_DATE_EPOCH}={raw:?}: expected whole seconds since 1970-01-01 UTC, such \
             as 1767225600 (or leave it unset for today's date)"
        ))
    };
    let text = raw.to_str().ok_or_else(bad)?;
    let seconds: i64 = text.trim().parse().map_err(|_| bad())?;
    jiff::Timestamp::from_second(seconds).map_err(|_| bad())
}

/// The SHA-256 of `bytes` as 64 lower-case hex digits.
fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_date_comes_from_source_date_epoch_and_bad_values_are_refused() {
        // 1767225600 s after the epoch is 2026-01-01T00:00:00Z (365·56 + 14 leap days).
        let t = report_date(Some("1767225600".as_ref())).expect("a valid epoch");
        assert_eq!(t.to_string(), "2026-01-01T00:00:00Z");
        for bad in ["", "yesterday", "1.5", "99999999999999999999"] {
            let e = report_date(Some(bad.as_ref())).expect_err(bad);
            assert_eq!(e.exit_code(), 2, "{bad}");
        }
    }

    #[test]
    fn sha256_of_abc_is_the_published_digest() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }
}
