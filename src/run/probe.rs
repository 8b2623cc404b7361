//! B phasors of every spectral line at chosen points.

use super::Solver;
use crate::error::SolveError;
use crate::field::Vec3;
use crate::model::Scene;
use crate::spectrum::same_frequency;
use num_complex::Complex64;

/// The field of one spectral line at one point.
#[derive(Clone, Debug)]
pub struct ProbeLine {
    /// Line frequency, Hz.
    pub frequency: f64,
    /// B phasor, T peak, per component (x, y, z); lines of several sources at this
    /// frequency are summed as phasors.
    pub b: [Complex64; 3],
}

impl ProbeLine {
    /// rms of |B(t)| over a period, T: √((|Bx|² + |By|² + |Bz|²)/2).
    pub fn b_rms(&self) -> f64 {
        (self.b.iter().map(|c| c.norm_sqr()).sum::<f64>() / 2.0).sqrt()
    }
}

/// The field at one point, line by line in ascending frequency.
#[derive(Clone, Debug)]
pub struct ProbePoint {
    /// Position, m.
    pub position: Vec3,
    /// One entry per distinct frequency.
    pub lines: Vec<ProbeLine>,
}

/// B of every line of every source at `points` (m), with the scene's shields in
/// place; fails only for points inside or between shield sheets (or too close to one
/// to solve).
pub fn probe(
    scene: &Scene,
    solver: &Solver,
    points: &[Vec3],
) -> Result<Vec<ProbePoint>, SolveError> {
    if crate::shield::scene_is_shielded(scene) {
        let freqs = scene.line_frequencies();
        let lines = crate::shield::shielded_lines(scene, &solver.options, points, &freqs, &|_| {})?;
        return Ok(points
            .iter()
            .enumerate()
            .map(|(p, &position)| ProbePoint {
                position,
                lines: freqs
                    .iter()
                    .zip(&lines)
                    .map(|(&frequency, per_point)| ProbeLine {
                        frequency,
                        b: per_point[p],
                    })
                    .collect(),
            })
            .collect());
    }
    Ok(free_space(scene, solver, points))
}

fn free_space(scene: &Scene, solver: &Solver, points: &[Vec3]) -> Vec<ProbePoint> {
    let per_source = super::map::per_amp_fields(scene, &solver.options, points, &|_| {});
    let freqs = scene.line_frequencies();
    points
        .iter()
        .enumerate()
        .map(|(p, &position)| {
            let lines = freqs
                .iter()
                .map(|&f| {
                    let mut b = [Complex64::new(0.0, 0.0); 3];
                    for (s, field) in scene.sources.iter().zip(&per_source) {
                        for l in s.lines.iter().filter(|l| same_frequency(l.frequency, f)) {
                            for (k, bk) in b.iter_mut().enumerate() {
                                *bk += l.current * field[p][k];
                            }
                        }
                    }
                    ProbeLine { frequency: f, b }
                })
                .collect();
            ProbePoint { position, lines }
        })
        .collect()
}
