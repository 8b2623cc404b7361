//! `map`: VTK image files of B on the scene's grids, with a quick-look SVG per plane.

use super::Outcome;
use crate::Scene;
use crate::error::Error;
use crate::model::SolverOptions;
use crate::output::files;
use crate::run::map::{line_field, map_frequencies, memory_estimate, per_amp_fields};
use crate::shield::shielded_lines;
use std::path::Path;

/// `map SCENE [--only ID] [--out DIR]`: write `<id>.vti` per map (one per line and a
/// `.pvd` with `line = "all"`), `scene.vtp`, and for plane maps a quick-look `<id>.svg`.
/// Refuses (exit 2) a map whose memory estimate exceeds `max_memory` bytes.
pub fn map(
    path: &Path,
    only: Option<&str>,
    out_dir: &Path,
    max_memory: u64,
    exact: bool,
    progress: &(dyn Fn(usize, usize) + Sync),
) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let options = SolverOptions::for_scene(&scene).exact_if(exact);
    let chosen: Vec<&crate::model::MapSpec> = match only {
        Some(id) => scene.maps.iter().filter(|m| m.id == id).collect(),
        None => scene.maps.iter().collect(),
    };
    if chosen.is_empty() {
        return Err(Error::Usage(match only {
            Some(id) => format!("--only {id}: the scene has no map with that id"),
            None => format!(
                "{}: the scene has no [[map]]; add one (see docs/scene-reference.md, Field maps)",
                path.display()
            ),
        }));
    }
    for m in &chosen {
        let need = memory_estimate(&scene, m);
        if need > max_memory {
            return Err(Error::Usage(format!(
                "map \"{}\" ({} points) needs about {} of memory, more than the limit of {}; \
                 use a larger step or fewer cells, or raise --max-memory",
                m.id,
                m.point_count(),
                crate::units::format_si(need as f64, "B", 3),
                crate::units::format_si(max_memory as f64, "B", 3)
            )));
        }
    }
    let lines_hz = scene.line_frequencies();
    let mut warnings = scene.warnings.clone();
    // Shielded maps tick once per source per point.
    let per_point = if crate::shield::scene_is_shielded(&scene) {
        scene.sources.len()
    } else {
        1
    };
    let total: usize = chosen.iter().map(|m| m.point_count() * per_point).sum();
    let done = std::sync::atomic::AtomicUsize::new(0);
    files::ensure_dir(out_dir)?;
    let mut written = Vec::new();
    for m in &chosen {
        let points = m.all_points();
        let [nx, ny, nz] = m.points;
        let mut corners = Vec::new();
        for i in [0, nx - 1] {
            for j in [0, ny - 1] {
                for k in [0, nz - 1] {
                    corners.push(m.point(i, j, k));
                }
            }
        }
        let far = corners
            .iter()
            .find_map(|p| scene.far_point_warning(&format!("a corner of map \"{}\"", m.id), p));
        warnings.extend(far);
        let tick = |n: usize| {
            let d = done.fetch_add(n, std::sync::atomic::Ordering::Relaxed) + n;
            progress(d, total);
        };
        let freqs = map_frequencies(m, &lines_hz);
        // Shielded maps solve every line per chunk of points; free-space maps keep B
        // per ampere and scale it line by line.
        let (mut per_amp, mut shielded) = if crate::shield::scene_is_shielded(&scene) {
            (
                Vec::new(),
                Some(shielded_lines(&scene, &options, &points, &freqs, &tick)?),
            )
        } else {
            (per_amp_fields(&scene, &options, &points, &tick), None)
        };
        // Memory: the grid's points are not needed any more, and each line's phasors are
        // built (or taken) one line at a time; the per-ampere fields go with the last.
        drop(points);
        let mut entries = Vec::new();
        for (k, f) in freqs.iter().enumerate() {
            let b = match &mut shielded {
                Some(lines) => std::mem::take(&mut lines[k]),
                None => line_field(&scene, &per_amp, *f),
            };
            if k + 1 == freqs.len() {
                per_amp = Vec::new();
            }
            let name = if freqs.len() > 1 {
                format!("{}-line{}.vti", m.id, k + 1)
            } else {
                format!("{}.vti", m.id)
            };
            let vti = crate::output::vtk::image_data(m, *f, &b).map_err(Error::Run)?;
            files::write_atomic(&out_dir.join(&name), &vti)?;
            written.push(out_dir.join(&name).display().to_string());
            if m.plane && k == 0 {
                match crate::output::quicklook::plane_svg(&scene, m, *f, &b) {
                    Ok(svg) => {
                        let p = out_dir.join(format!("{}.svg", m.id));
                        files::write_atomic(&p, svg.as_bytes())?;
                        written.push(p.display().to_string());
                    }
                    Err(why) => warnings.push(format!("map \"{}\": {why}", m.id)),
                }
            }
            entries.push((*f, name));
        }
        if freqs.len() > 1 {
            let p = out_dir.join(format!("{}.pvd", m.id));
            files::write_atomic(&p, crate::output::vtk::collection(&entries).as_bytes())?;
            written.push(p.display().to_string());
        }
    }
    let size = chosen
        .iter()
        .map(|m| (m.spacing.x.max(m.spacing.y).max(m.spacing.z)) * 4.0)
        .fold(1e-3, f64::max);
    let vtp = crate::output::vtk::scene_polydata(&scene, size).map_err(Error::Run)?;
    let p = out_dir.join("scene.vtp");
    files::write_atomic(&p, vtp.as_bytes())?;
    written.push(p.display().to_string());
    let mut stdout = String::new();
    for w in &written {
        stdout.push_str(&format!("wrote {w}\n"));
    }
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}
