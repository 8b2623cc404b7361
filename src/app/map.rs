//! `map`: VTK image files of B on the scene's grids, with a quick-look SVG per plane.

use super::Outcome;
use crate::Scene;
use crate::error::Error;
use crate::field::Vec3;
use crate::model::{MapSpec, SolverOptions};
use crate::output::files;
use crate::run::map::{line_field, map_frequencies, memory_estimate, per_amp_fields};
use crate::shield::{scene_is_shielded, shielded_lines};
use num_complex::Complex64;
use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};

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
    let chosen = choose_maps(&scene, path, only)?;
    check_memory(&scene, &chosen, max_memory)?;
    let mut warnings = scene.warnings.clone();
    // Shielded maps tick once per source per point.
    let per_point = if scene_is_shielded(&scene) {
        scene.sources.len()
    } else {
        1
    };
    let total: usize = chosen.iter().map(|m| m.point_count() * per_point).sum();
    let done = AtomicUsize::new(0);
    let tick = |n: usize| progress(done.fetch_add(n, Ordering::Relaxed) + n, total);
    files::ensure_dir(out_dir)?;
    let mut written = Vec::new();
    let run = MapRun {
        scene: &scene,
        options: &options,
        out_dir,
        lines_hz: scene.line_frequencies(),
    };
    for m in &chosen {
        warnings.extend(far_corner_warning(&scene, m));
        run.write_map(m, &tick, &mut written, &mut warnings)?;
    }
    written.push(write_scene_vtp(&scene, &chosen, out_dir)?);
    let stdout: String = written.iter().map(|w| format!("wrote {w}\n")).collect();
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}

/// The scene's maps that `only` (an id) selects, or all of them; an error when none.
fn choose_maps<'a>(
    scene: &'a Scene,
    path: &Path,
    only: Option<&str>,
) -> Result<Vec<&'a MapSpec>, Error> {
    let chosen: Vec<&MapSpec> = match only {
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
    Ok(chosen)
}

/// Refuses the run when any chosen map needs more than `max_memory` bytes.
fn check_memory(scene: &Scene, chosen: &[&MapSpec], max_memory: u64) -> Result<(), Error> {
    for m in chosen {
        let need = memory_estimate(scene, m);
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
    Ok(())
}

/// A warning when a corner of map `m` lies beyond the near-field limit.
fn far_corner_warning(scene: &Scene, m: &MapSpec) -> Option<String> {
    let [nx, ny, nz] = m.points;
    let mut corners = Vec::new();
    for i in [0, nx - 1] {
        for j in [0, ny - 1] {
            for k in [0, nz - 1] {
                corners.push(m.point(i, j, k));
            }
        }
    }
    corners
        .iter()
        .find_map(|p| scene.far_point_warning(&format!("a corner of map \"{}\"", m.id), p))
}

/// What every map of one run shares.
struct MapRun<'a> {
    scene: &'a Scene,
    options: &'a SolverOptions,
    out_dir: &'a Path,
    /// The scene's distinct line frequencies, Hz.
    lines_hz: Vec<f64>,
}

impl MapRun<'_> {
    /// Solves map `m` and writes its files, adding their paths to `written`.
    fn write_map(
        &self,
        m: &MapSpec,
        tick: &(dyn Fn(usize) + Sync),
        written: &mut Vec<String>,
        warnings: &mut Vec<String>,
    ) -> Result<(), Error> {
        let points = m.all_points();
        let freqs = map_frequencies(m, &self.lines_hz);
        let mut fields = self.solve(&points, &freqs, tick)?;
        // Memory: the grid's points are not needed any more, and each line's phasors
        // are built (or taken) one line at a time.
        drop(points);
        let mut entries = Vec::new();
        for (k, f) in freqs.iter().enumerate() {
            let b = fields.line(self.scene, k, *f, k + 1 == freqs.len());
            let name = if freqs.len() > 1 {
                format!("{}-line{}.vti", m.id, k + 1)
            } else {
                format!("{}.vti", m.id)
            };
            let vti = crate::output::vtk::image_data(m, *f, &b).map_err(Error::Run)?;
            written.push(self.write(&name, &vti)?);
            if m.plane && k == 0 {
                match crate::output::quicklook::plane_svg(self.scene, m, *f, &b) {
                    Ok(svg) => written.push(self.write(&format!("{}.svg", m.id), svg.as_bytes())?),
                    Err(why) => warnings.push(format!("map \"{}\": {why}", m.id)),
                }
            }
            entries.push((*f, name));
        }
        if freqs.len() > 1 {
            let pvd = crate::output::vtk::collection(&entries);
            written.push(self.write(&format!("{}.pvd", m.id), pvd.as_bytes())?);
        }
        Ok(())
    }

    /// Shielded maps solve every line per chunk of points; free-space maps keep B per
    /// ampere and scale it line by line.
    fn solve(
        &self,
        points: &[Vec3],
        freqs: &[f64],
        tick: &(dyn Fn(usize) + Sync),
    ) -> Result<MapFields, Error> {
        Ok(if scene_is_shielded(self.scene) {
            MapFields::Lines(shielded_lines(
                self.scene,
                self.options,
                points,
                freqs,
                tick,
            )?)
        } else {
            MapFields::PerAmp(per_amp_fields(self.scene, self.options, points, tick))
        })
    }

    /// Writes `bytes` to `name` in the output folder; returns the path written.
    fn write(&self, name: &str, bytes: &[u8]) -> Result<String, Error> {
        let p = self.out_dir.join(name);
        files::write_atomic(&p, bytes)?;
        Ok(p.display().to_string())
    }
}

/// A map's solved fields before they are cut into lines.
enum MapFields {
    /// B phasors (T peak) `[line][point]`, as the shielded solve gives them.
    Lines(Vec<Vec<[Complex64; 3]>>),
    /// B per ampere (T/A) `[source][point]`.
    PerAmp(Vec<Vec<Vec3>>),
}

impl MapFields {
    /// The B phasors of line `k` at frequency `f` (Hz); with `last`, the per-ampere
    /// fields are released afterwards.
    fn line(&mut self, scene: &Scene, k: usize, f: f64, last: bool) -> Vec<[Complex64; 3]> {
        match self {
            MapFields::Lines(lines) => std::mem::take(&mut lines[k]),
            MapFields::PerAmp(per_amp) => {
                let b = line_field(scene, per_amp, f);
                if last {
                    *per_amp = Vec::new();
                }
                b
            }
        }
    }
}

/// Writes `scene.vtp`, its markers sized from the maps' spacing; returns its path.
fn write_scene_vtp(scene: &Scene, chosen: &[&MapSpec], out_dir: &Path) -> Result<String, Error> {
    let size = chosen
        .iter()
        .map(|m| (m.spacing.x.max(m.spacing.y).max(m.spacing.z)) * 4.0)
        .fold(1e-3, f64::max);
    let vtp = crate::output::vtk::scene_polydata(scene, size).map_err(Error::Run)?;
    let p = out_dir.join("scene.vtp");
    files::write_atomic(&p, vtp.as_bytes())?;
    Ok(p.display().to_string())
}
