//! Sweeps: EMF versus distance, angle or frequency; the safe distance; worst-case
//! orientation at every step.

use crate::Scene;
use crate::coupling::{SourceCoupling, emf_by_frequency, flux_per_amp, total_rms};
use crate::field::Vec3;
use crate::orientation::{Orientation, search, small_loop_matrix};
use crate::scene::Victim;
use crate::scene::sweep::{SweepSpec, Vary};
use crate::spectrum::Line;
use nalgebra::{Rotation3, Unit};
use num_complex::Complex64;
use rayon::prelude::*;

/// One sample of a sweep.
#[derive(Clone, Debug)]
pub struct SweepRow {
    /// Swept value: m, rad or Hz.
    pub value: f64,
    /// EMF phasor (V peak) of each distinct frequency, ascending (Hz, V).
    pub lines: Vec<(f64, Complex64)>,
    /// Total rms EMF, V.
    pub total_rms: f64,
    /// With `orientation = "worst"`: the loop normal that maximises the EMF.
    pub worst_axis: Option<Vec3>,
}

/// A finished sweep.
#[derive(Clone, Debug)]
pub struct SweepResult {
    /// The sweep as specified.
    pub spec: SweepSpec,
    /// One row per step.
    pub rows: Vec<SweepRow>,
    /// Distance sweeps with a limit: the smallest value beyond which the total stays
    /// under the limit to the end of the range (m); `None` when never safe.
    pub safe_value: Option<f64>,
    /// The victim's limit, V rms.
    pub limit: Option<f64>,
    /// The null orientation at the placed position (for the report).
    pub best_at_placed: Option<Orientation>,
    /// Total at the placed position as placed, V rms.
    pub placed_total: f64,
}

/// The victim and source lines at one swept value.
struct Step {
    victim: Victim,
    lines: Vec<Vec<Line>>,
}

fn step_at(scene: &Scene, spec: &SweepSpec, x: f64) -> Step {
    let base = &scene.victims[spec.victim];
    let victim = match spec.vary {
        Vary::Distance(dir) => base.moved(&Rotation3::identity(), &(dir * x)),
        Vary::Angle(axis) => base.moved(
            &Rotation3::from_axis_angle(&Unit::new_normalize(axis), x),
            &Vec3::zeros(),
        ),
        Vary::Frequency => base.clone(),
    };
    let lines = scene
        .sources
        .iter()
        .map(|s| match spec.vary {
            Vary::Frequency => {
                let f1 = s.lines.first().map_or(1.0, |l| l.frequency);
                s.lines
                    .iter()
                    .map(|l| Line {
                        frequency: l.frequency * x / f1,
                        current: l.current,
                    })
                    .collect()
            }
            _ => s.lines.clone(),
        })
        .collect();
    Step { victim, lines }
}

/// Per-frequency EMF phasors and the total rms for `victim` with per-source `lines`.
pub fn victim_emf(
    scene: &Scene,
    victim: &Victim,
    lines: &[Vec<Line>],
) -> (Vec<(f64, Complex64)>, f64) {
    let couplings: Vec<SourceCoupling> = scene
        .sources
        .iter()
        .zip(lines)
        .map(|(s, l)| {
            let phi = flux_per_amp(&s.conductors, &victim.edges, scene.tolerance);
            SourceCoupling::new(&s.id, victim.turns * phi.value, l, phi.converged)
        })
        .collect();
    let by_f = emf_by_frequency(&couplings);
    let total = total_rms(&by_f);
    (by_f, total)
}

fn phasors(lines: &[Vec<Line>]) -> Vec<Vec<(f64, Complex64)>> {
    lines
        .iter()
        .map(|l| l.iter().map(|x| (x.frequency, x.current)).collect())
        .collect()
}

/// Worst orientation of `victim` for `lines`.
fn worst(scene: &Scene, victim: &Victim, lines: &[Vec<Line>]) -> Orientation {
    let q = small_loop_matrix(scene, victim, &phasors(lines));
    search(victim, &q, true, |v| victim_emf(scene, v, lines).1)
}

fn row_at(scene: &Scene, spec: &SweepSpec, x: f64) -> SweepRow {
    let step = step_at(scene, spec, x);
    if spec.worst {
        let o = worst(scene, &step.victim, &step.lines);
        let (lines, total) = victim_emf(scene, &step.victim.facing(&o.normal), &step.lines);
        SweepRow {
            value: x,
            lines,
            total_rms: total,
            worst_axis: Some(o.normal),
        }
    } else {
        let (lines, total) = victim_emf(scene, &step.victim, &step.lines);
        SweepRow {
            value: x,
            lines,
            total_rms: total,
            worst_axis: None,
        }
    }
}

/// Runs one sweep. `progress` is called once per finished step (from any thread).
pub fn run(scene: &Scene, spec: &SweepSpec, progress: &(dyn Fn() + Sync)) -> SweepResult {
    let rows: Vec<SweepRow> = spec
        .values()
        .into_par_iter()
        .map(|x| {
            let row = row_at(scene, spec, x);
            progress();
            row
        })
        .collect();
    let victim = &scene.victims[spec.victim];
    let limit = victim.limit;
    let safe_value = match (spec.vary, limit) {
        (Vary::Distance(_), Some(l)) => safe_distance(&rows, l, scene.tolerance, |x| {
            row_at(scene, spec, x).total_rms
        }),
        _ => None,
    };
    let base_lines: Vec<Vec<Line>> = scene.sources.iter().map(|s| s.lines.clone()).collect();
    let placed_total = victim_emf(scene, victim, &base_lines).1;
    let q = small_loop_matrix(scene, victim, &phasors(&base_lines));
    let best_at_placed = Some(search(victim, &q, false, |v| {
        victim_emf(scene, v, &base_lines).1
    }));
    SweepResult {
        spec: spec.clone(),
        rows,
        safe_value,
        limit,
        best_at_placed,
        placed_total,
    }
}

/// The smallest x beyond which `total(x) ≤ limit` to the end of the sampled range:
/// the last over-limit sample and the next one bracket it, and bisection narrows the
/// bracket to `tolerance` relative. The first value when every sample passes; `None`
/// when the last sample is over the limit.
pub fn safe_distance<F: Fn(f64) -> f64>(
    rows: &[SweepRow],
    limit: f64,
    tolerance: f64,
    total: F,
) -> Option<f64> {
    let last_over = rows.iter().rposition(|r| r.total_rms > limit);
    let Some(j) = last_over else {
        return rows.first().map(|r| r.value);
    };
    let next = rows.get(j + 1)?;
    let (mut over, mut under) = (rows[j].value, next.value);
    for _ in 0..200 {
        if (under - over).abs() <= tolerance * under.abs().max(over.abs()) {
            break;
        }
        let mid = 0.5 * (over + under);
        if total(mid) > limit {
            over = mid;
        } else {
            under = mid;
        }
    }
    Some(under)
}
