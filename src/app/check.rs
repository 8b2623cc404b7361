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

/// `materials [--frequency F] [--json]`: the built-in shield materials with their skin
/// depth. A bare number for `frequency` is in Hz ("1000" is 1 kHz).
pub fn materials(frequency: Option<&str>, as_json: bool) -> Result<Outcome, Error> {
    let chosen = frequency.map(parse_frequency).transpose()?;
    let list = crate::model::material::all();
    let stdout = if as_json {
        crate::output::json::materials(&list, chosen)
    } else {
        let freqs = chosen.map_or_else(|| vec![50.0, 1e3, 1e5, 1e6], |f| vec![f]);
        text::materials(&list, &freqs)
    };
    Ok(Outcome {
        stdout,
        warnings: Vec::new(),
        exit: 0,
    })
}

/// A `--frequency` argument in Hz: a quantity with its unit ("60 Hz", "1 MHz") or a
/// bare number, read in Hz; finite and greater than zero.
fn parse_frequency(text: &str) -> Result<f64, Error> {
    let f = match text.trim().parse::<f64>() {
        Ok(hz) => hz,
        Err(_) => parse_quantity(text, Dimension::Frequency)
            .map_err(|e| Error::Usage(format!("--frequency \"{text}\": {}", e.0)))?,
    };
    if !f.is_finite() || f <= 0.0 {
        return Err(Error::Usage(format!(
            "--frequency \"{text}\": must be a finite frequency greater than zero (a bare \
             number is in Hz)"
        )));
    }
    Ok(f)
}
