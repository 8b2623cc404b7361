//! `check` and `materials`: a scene's summary and the built-in shield materials.

use super::Outcome;
use crate::Scene;
use crate::error::Error;
use crate::output::text;
use crate::output::{CheckReport, Report};
use crate::units::{Dimension, parse_quantity};
use std::path::Path;

/// `check SCENE`: validate and summarise.
pub fn check(path: &Path, as_json: bool) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let lines = scene.line_frequencies();
    let stdout = CheckReport {
        scene: &scene,
        lines_hz: &lines,
    }
    .render(as_json);
    Ok(Outcome {
        stdout,
        warnings: scene.warnings.clone(),
        exit: 0,
    })
}

/// `materials [--frequency F]`: the built-in shield materials with their skin depth.
pub fn materials(frequency: Option<&str>) -> Result<Outcome, Error> {
    let freqs = match frequency {
        Some(text) => {
            let f = parse_quantity(text, Dimension::Frequency)
                .map_err(|e| Error::Usage(format!("--frequency \"{text}\": {}", e.0)))?;
            if f.is_nan() || f <= 0.0 {
                return Err(Error::Usage(format!(
                    "--frequency \"{text}\": must be greater than zero"
                )));
            }
            vec![f]
        }
        None => vec![50.0, 1e3, 1e5, 1e6],
    };
    Ok(Outcome {
        stdout: text::materials(&crate::model::material::all(), &freqs),
        warnings: Vec::new(),
        exit: 0,
    })
}
