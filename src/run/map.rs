//! `map`: B phasors of a spectral line on a regular grid.

use crate::field::{Accelerated, Vec3, b_at_points};
use crate::model::{MapLines, MapSpec, Scene, SolverOptions};
use crate::spectrum::same_frequency;
use num_complex::Complex64;

/// B per ampere (T/A) of every source at every point (m): `[source][point]`, with each
/// source's far-field series where it holds unless `options` ask for exact sums. The
/// points go in chunks; `tick(points done)` is called after each.
pub fn per_amp_fields(
    scene: &Scene,
    options: &SolverOptions,
    points: &[Vec3],
    tick: &(dyn Fn(usize) + Sync),
) -> Vec<Vec<Vec3>> {
    const CHUNK: usize = 1 << 14;
    let mut out: Vec<Vec<Vec3>> = vec![Vec::with_capacity(points.len()); scene.sources.len()];
    // Each source's far-field expansion is built once for all the points.
    let evaluators: Vec<Accelerated> = scene
        .sources
        .iter()
        .map(|s| Accelerated::for_points(&s.conductors, points, options.tolerance, options.exact()))
        .collect();
    for chunk in points.chunks(CHUNK) {
        for (o, e) in out.iter_mut().zip(&evaluators) {
            o.extend(b_at_points(e, chunk));
        }
        tick(chunk.len());
    }
    out
}

/// The B phasor (T peak, per component) at every point for the line at `frequency` (Hz):
/// every source's line at that frequency, summed as phasors.
pub fn line_field(scene: &Scene, per_amp: &[Vec<Vec3>], frequency: f64) -> Vec<[Complex64; 3]> {
    let n = per_amp.first().map_or(0, Vec::len);
    let mut out = vec![[Complex64::new(0.0, 0.0); 3]; n];
    for (s, field) in scene.sources.iter().zip(per_amp) {
        for l in s
            .lines
            .iter()
            .filter(|l| same_frequency(l.frequency, frequency))
        {
            for (o, b) in out.iter_mut().zip(field) {
                for k in 0..3 {
                    o[k] += l.current * b[k];
                }
            }
        }
    }
    out
}

/// The line frequencies (Hz) a map writes, ascending.
pub fn map_frequencies(spec: &MapSpec, lines_hz: &[f64]) -> Vec<f64> {
    match spec.lines {
        MapLines::All => lines_hz.to_vec(),
        MapLines::One(n) => lines_hz.get(n - 1).copied().into_iter().collect(),
    }
}

/// Bytes a map needs at its peak: the grid's points (24 B each) while the fields are
/// summed, the per-ampere fields of every source (24 B per point each), one line's
/// phasors (48 B per point) and its compressed file (at most 56 B per point: the
/// doubles hardly compress), plus 64 MiB for the rest.
pub fn memory_estimate(scene: &Scene, spec: &MapSpec) -> u64 {
    let points = spec.point_count() as u64;
    let per_point = 24 + 24 * scene.sources.len() as u64 + 48 + 56;
    points * per_point + (64 << 20)
}

/// Half the machine's physical memory in bytes (from /proc/meminfo), or 8 GiB when it
/// cannot be read.
pub fn default_memory_limit() -> u64 {
    let total = std::fs::read_to_string("/proc/meminfo").ok().and_then(|t| {
        t.lines()
            .find(|l| l.starts_with("MemTotal:"))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|kb| kb.parse::<u64>().ok())
    });
    total.map_or(8 << 30, |kb| kb * 1024 / 2)
}

/// Parses a memory size such as `"4 GiB"`, `"512M"`, `"2e9"` (bytes) into bytes.
pub fn parse_memory(text: &str) -> Option<u64> {
    let t = text.trim();
    let split = t.find(|c: char| c.is_ascii_alphabetic()).unwrap_or(t.len());
    let (num, unit) = t.split_at(split);
    let x: f64 = num.trim().parse().ok()?;
    let factor = match unit.trim() {
        "" | "B" => 1.0,
        "k" | "K" | "kB" | "KB" => 1e3,
        "KiB" => 1024.0,
        "M" | "MB" => 1e6,
        "MiB" => 1024.0 * 1024.0,
        "G" | "GB" => 1e9,
        "GiB" => 1024.0 * 1024.0 * 1024.0,
        _ => return None,
    };
    (x.is_finite() && x > 0.0).then_some((x * factor) as u64)
}
