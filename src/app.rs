//! The commands, as library calls: each takes parsed arguments and returns what to print
//! and the exit status. The binary only parses flags, calls these and writes.

use crate::Scene;
use crate::coupling::{VictimReport, couple_victim};
use crate::error::Error;
use crate::field::Vec3;
use crate::output::{csv, files, json, plot, text};
use crate::points_csv::read_points_csv;
use crate::probe::probe;
use crate::spectrum::same_frequency;
use crate::units::{Dimension, parse_quantity};
use std::path::Path;

/// What a command produced.
#[derive(Debug, Default)]
pub struct Outcome {
    /// Text for standard output (a JSON document with `--json`).
    pub stdout: String,
    /// Warnings for standard error, one line each.
    pub warnings: Vec<String>,
    /// Exit status: 0, or 3 with `--strict` when a victim exceeds its limit.
    pub exit: i32,
}

/// `check SCENE`: validate and summarise.
pub fn check(path: &Path, as_json: bool) -> Result<Outcome, Error> {
    let scene = Scene::load(path)?;
    let lines = distinct_lines(&scene);
    let stdout = if as_json {
        json::check(&scene, &lines)
    } else {
        text::check(&scene, &lines)
    };
    Ok(Outcome {
        stdout,
        warnings: scene.warnings.clone(),
        exit: 0,
    })
}

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
    let reports: Vec<VictimReport> = scene
        .victims
        .iter()
        .map(|v| couple_victim(&scene, v))
        .collect::<Result<_, String>>()
        .map_err(Error::Usage)?;
    let mut warnings = scene.warnings.clone();
    for r in &reports {
        for s in r.sources.iter().filter(|s| !s.converged) {
            warnings.push(format!(
                "the flux of source \"{}\" through victim \"{}\" did not reach the tolerance \
                 (a conductor passes very close to the victim's path)",
                s.id, r.id
            ));
        }
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
    let stdout = if as_json {
        json::couple(&reports)
    } else {
        text::couple(&scene, &reports)
    };
    Ok(Outcome {
        stdout,
        warnings,
        exit: if strict && over { 3 } else { 0 },
    })
}

/// `probe SCENE --at ... --points FILE`: B phasors at points.
pub fn probe_points(
    path: &Path,
    at: &[String],
    points_file: Option<&Path>,
    as_json: bool,
    exact: bool,
) -> Result<Outcome, Error> {
    let mut scene = Scene::load(path)?;
    scene.exact = exact;
    let mut points = Vec::new();
    for a in at {
        points.push(parse_point_arg(a)?);
    }
    if let Some(file) = points_file {
        points.extend(read_points_csv(file)?);
    }
    if points.is_empty() {
        return Err(Error::Usage(
            "probe: give at least one point with --at X,Y,Z or --points FILE.csv".into(),
        ));
    }
    let mut warnings = scene.warnings.clone();
    for p in &points {
        check_not_on_wire(&scene, p)?;
        warnings.extend(scene.far_point_warning(&format!("probe point {p:?}"), p));
    }
    let result = probe(&scene, &points).map_err(Error::Usage)?;
    let stdout = if as_json {
        json::probe(&result)
    } else {
        text::probe(&result)
    };
    Ok(Outcome {
        stdout,
        warnings,
        exit: 0,
    })
}

/// Distinct line frequencies of all sources, ascending, Hz.
pub fn distinct_lines(scene: &Scene) -> Vec<f64> {
    let mut f: Vec<f64> = scene
        .sources
        .iter()
        .flat_map(|s| s.lines.iter().map(|l| l.frequency))
        .collect();
    f.sort_by(f64::total_cmp);
    f.dedup_by(|a, b| same_frequency(*a, *b));
    f
}

fn check_not_on_wire(scene: &Scene, p: &Vec3) -> Result<(), Error> {
    for s in &scene.sources {
        for w in &s.conductors.wires {
            let d = w.distance_to(p);
            if d < w.wire_radius {
                return Err(Error::Usage(format!(
                    "probe: point ({}, {}, {}) m lies inside the wire of source \"{}\" ({d:.3e} m \
                     from its axis, wire radius {:.3e} m); probe outside the conductor",
                    p.x, p.y, p.z, s.id, w.wire_radius
                )));
            }
        }
        for d in &s.conductors.dipoles {
            if (p - d.position).norm() < d.radius {
                return Err(Error::Usage(format!(
                    "probe: point ({}, {}, {}) m is at the centre of dipole source \"{}\"; a point \
                     dipole's field is only meaningful away from it",
                    p.x, p.y, p.z, s.id
                )));
            }
        }
    }
    Ok(())
}

/// Parses `X,Y,Z` in metres or `X,Y,Z unit` (e.g. `"10,0,5 mm"`).
pub fn parse_point_arg(arg: &str) -> Result<Vec3, Error> {
    let bad = |why: &str| Error::Usage(format!("--at \"{arg}\": {why}"));
    let parts: Vec<&str> = arg.split(',').map(str::trim).collect();
    if parts.len() != 3 {
        return Err(bad(
            "expected three coordinates X,Y,Z (metres) or X,Y,Z with a unit, e.g. \"10,0,5 mm\"",
        ));
    }
    // A unit written once after the last number applies to all three.
    let last = parts[2];
    let split = last
        .find(|c: char| c.is_whitespace() || c.is_alphabetic() || c == 'µ' || c == 'μ')
        .filter(|&i| {
            !last[i..].trim().is_empty() && !matches!(last[i..].chars().next(), Some('e' | 'E'))
        });
    let (z_text, unit) = match split {
        Some(i) => (last[..i].trim(), Some(last[i..].trim())),
        None => (last, None),
    };
    let mut v = Vec3::zeros();
    for (k, t) in [parts[0], parts[1], z_text].iter().enumerate() {
        let value = match unit {
            Some(u) => {
                parse_quantity(&format!("{t} {u}"), Dimension::Length).map_err(|e| bad(&e.0))?
            }
            None => t
                .parse::<f64>()
                .map_err(|_| bad(&format!("\"{t}\" is not a number")))?,
        };
        if !value.is_finite() {
            return Err(bad(&format!("\"{t}\" is not a finite number")));
        }
        v[k] = value;
    }
    Ok(v)
}

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
    let mut scene = Scene::load(path)?;
    scene.exact = exact;
    let chosen: Vec<&crate::scene::sweep::SweepSpec> = match only {
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
            "{}: the scene has no [[sweep]]; add one (see README, Sweeps)",
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
    let results: Vec<crate::sweep::SweepResult> = chosen
        .iter()
        .map(|s| crate::sweep::run(&scene, s, &tick))
        .collect::<Result<_, String>>()
        .map_err(Error::Usage)?;
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
        stdout: text::materials(&crate::shield::material::all(), &freqs),
        warnings: Vec::new(),
        exit: 0,
    })
}

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
    use crate::fieldmap::{line_field, map_frequencies, memory_estimate};
    let mut scene = Scene::load(path)?;
    scene.exact = exact;
    let chosen: Vec<&crate::scene::map::MapSpec> = match only {
        Some(id) => scene.maps.iter().filter(|m| m.id == id).collect(),
        None => scene.maps.iter().collect(),
    };
    if chosen.is_empty() {
        return Err(Error::Usage(match only {
            Some(id) => format!("--only {id}: the scene has no map with that id"),
            None => format!(
                "{}: the scene has no [[map]]; add one (see README, Field maps)",
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
    let lines_hz = distinct_lines(&scene);
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
                Some(chunked_shielded(&scene, &points, &freqs, &tick)?),
            )
        } else {
            (chunked_fields(&scene, &points, &tick), None)
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

/// Shielded B phasors `[line][point]` at `points` for `freqs`; `tick(points done)`
/// reports progress (once per source per point).
fn chunked_shielded(
    scene: &Scene,
    points: &[Vec3],
    freqs: &[f64],
    tick: &(dyn Fn(usize) + Sync),
) -> Result<Vec<Vec<[num_complex::Complex64; 3]>>, Error> {
    crate::shield::shielded_lines(scene, points, freqs, tick).map_err(Error::Usage)
}

/// B per ampere of every source at `points`, in chunks so that `tick(points done)` can
/// report progress.
fn chunked_fields(scene: &Scene, points: &[Vec3], tick: &(dyn Fn(usize) + Sync)) -> Vec<Vec<Vec3>> {
    const CHUNK: usize = 1 << 14;
    let mut out: Vec<Vec<Vec3>> = vec![Vec::with_capacity(points.len()); scene.sources.len()];
    // Each source's far-field expansion is built once for the whole map.
    let fast: Vec<crate::field::Accelerated> = scene
        .sources
        .iter()
        .map(|s| crate::fieldmap::fast_source(scene, s, points))
        .collect();
    for chunk in points.chunks(CHUNK) {
        for (o, s) in out.iter_mut().zip(&fast) {
            o.extend(crate::field::b_at_points(s, chunk));
        }
        tick(chunk.len());
    }
    out
}
