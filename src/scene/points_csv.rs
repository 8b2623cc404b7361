//! Points from CSV files: `x,y,z` per row in metres, or in the length unit a header
//! row names (`x_mm,y_mm,z_mm`). Used by `probe --points` and by `file` sources.

use crate::error::InputError;
use crate::field::Vec3;
use crate::scene::reader::{Doc, Value};
use crate::units::{Dimension, parse_quantity};
use std::path::Path;

/// Reads a CSV of points: `x,y,z` per row in metres, or in the unit its header names
/// (`x_mm,y_mm,z_mm`). Blank lines and lines starting with `#` are skipped.
pub fn read_points_csv(path: &Path) -> Result<Vec<Vec3>, InputError> {
    Ok(read_point_rows(path)?.into_iter().map(|(p, _)| p).collect())
}

/// Like [`read_points_csv`], with each point's one-based line number in the file.
pub fn read_point_rows(path: &Path) -> Result<Vec<(Vec3, usize)>, InputError> {
    let name = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|e| InputError {
        file: name.clone(),
        line: 1,
        col: 1,
        key: String::new(),
        reason: format!("cannot read the points file: {e}"),
    })?;
    let doc = Doc::new(&name, &text);
    let mut scale = 1.0;
    let mut out = Vec::new();
    let mut offset = 0;
    let mut header_seen = false;
    for (number, line) in text.split_inclusive('\n').enumerate() {
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
            return Err(doc.error(
                &(start..start),
                "row",
                format!("expected 3 values x,y,z, found {}", cells.len()),
            ));
        }
        let mut v = Vec3::zeros();
        let mut col = start;
        for (k, c) in cells.iter().enumerate() {
            let x: f64 = c
                .parse()
                .map_err(|_| doc.error(&(col..col), "row", format!("\"{c}\" is not a number")))?;
            if !x.is_finite() {
                return Err(doc.error(&(col..col), "row", format!("\"{c}\" is not finite")));
            }
            v[k] = x * scale;
            col += line[col - start..].find(',').map_or(0, |i| i + 1);
        }
        out.push((v, number + 1));
    }
    if out.is_empty() {
        return Err(doc.error(&(0..0), "", "the points file has no rows"));
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

/// A conductor path read from the CSV file a scene's `path` key names: the points
/// (local, m) with their one-based line numbers, and the file's name for messages.
pub(crate) struct PathRows {
    /// Each point (m, in the element's local frame) and its line in the file.
    pub rows: Vec<(Vec3, usize)>,
    /// The file as it appears in messages (the scene's folder joined with `path`).
    pub name: String,
}

impl PathRows {
    /// An error at line `line` of the CSV file, about its `row`.
    pub fn error(&self, line: usize, reason: impl Into<String>) -> InputError {
        InputError {
            file: self.name.clone(),
            line,
            col: 1,
            key: "row".into(),
            reason: reason.into(),
        }
    }
}

/// Reads the CSV named by the `path` value `pv`, relative to `base_dir` (the scene's
/// folder): at least 2 points and no two equal consecutive ones. A missing file is
/// reported at `pv`; a bad row at the CSV's own line and column.
pub(crate) fn read_path(pv: &Value<'_, '_>, base_dir: &Path) -> Result<PathRows, InputError> {
    let rel = pv.string()?;
    let path = base_dir.join(rel);
    if !path.is_file() {
        return Err(pv.error(format!("cannot read \"{}\": no such file", path.display())));
    }
    let rows = read_point_rows(&path)?;
    let out = PathRows {
        rows,
        name: path.display().to_string(),
    };
    if out.rows.len() < 2 {
        return Err(out.error(
            out.rows.first().map_or(1, |r| r.1),
            "a path needs at least 2 points",
        ));
    }
    for w in out.rows.windows(2) {
        if w[0].0 == w[1].0 {
            return Err(out.error(w[1].1, "repeats the previous point: a zero-length segment"));
        }
    }
    Ok(out)
}
