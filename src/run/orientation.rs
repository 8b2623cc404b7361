//! Worst-case (largest EMF) and best (null) orientation of a victim at its position.
//!
//! Start from the small-loop answer: a loop of area vector A·n picks up
//! E_k = −jω_k (B_k · n) A, so the total rms² is nᵀQn with
//! Q = Σ_k ω_k² (Re B_k Re B_kᵀ + Im B_k Im B_kᵀ) / 2 (B_k the field phasor of line k at the
//! centre). Its largest eigenvector is the major axis of the B-phasor ellipse weighted
//! by frequency; its smallest, the null. Then refine on the real, finite loop by a
//! pattern search over the loop normal, each trial a full flux solve.

use crate::field::{FieldSource, Vec3};
use crate::model::{Scene, Victim};
use nalgebra::{Matrix3, SymmetricEigen};
use num_complex::Complex64;

/// The orientation search's answer.
#[derive(Clone, Copy, Debug)]
pub struct Orientation {
    /// Unit loop normal: the victim tilted by the smallest rotation that takes its axis
    /// onto this vector (n and −n are different placements of a non-circular loop).
    pub normal: Vec3,
    /// Total rms EMF there, V.
    pub total_rms: f64,
}

/// Smallest angular step of the pattern search, rad (≈ 0.3°): near a maximum the EMF
/// changes quadratically, by about 1e-4 dB over this step, far inside the 0.1 dB the
/// search promises.
const MIN_STEP: f64 = 5e-3;

/// The small-loop matrix Q (V² per m⁴ of area) at the victim's centre, for source
/// `lines` given per source as (frequency Hz, current phasor A).
pub fn small_loop_matrix(
    scene: &Scene,
    victim: &Victim,
    lines: &[Vec<(f64, Complex64)>],
) -> Matrix3<f64> {
    let centre = victim.frame.origin;
    let mut by_freq: Vec<(f64, [Complex64; 3])> = Vec::new();
    for (s, src_lines) in scene.sources.iter().zip(lines) {
        let b = s.conductors.b_per_amp(&centre);
        for &(f, i) in src_lines {
            let entry = match by_freq
                .iter_mut()
                .find(|e| crate::spectrum::same_frequency(e.0, f))
            {
                Some(e) => e,
                None => {
                    by_freq.push((f, [Complex64::new(0.0, 0.0); 3]));
                    by_freq.last_mut().expect("pushed")
                }
            };
            for k in 0..3 {
                entry.1[k] += i * b[k];
            }
        }
    }
    let mut q = Matrix3::zeros();
    for (f, b) in by_freq {
        let w2 = (std::f64::consts::TAU * f).powi(2);
        let re = Vec3::new(b[0].re, b[1].re, b[2].re);
        let im = Vec3::new(b[0].im, b[1].im, b[2].im);
        q += (re * re.transpose() + im * im.transpose()) * (w2 / 2.0);
    }
    q
}

/// Searches the loop normal that maximises (`worst`) or minimises the total EMF given
/// by `total(victim)`, starting from the small-loop eigenvectors of `q`.
pub fn search<F: Fn(&Victim) -> f64 + Sync>(
    victim: &Victim,
    q: &Matrix3<f64>,
    worst: bool,
    total: F,
) -> Orientation {
    // Every trial turns the victim about its centre: mark it so that shield solves plan
    // once for all orientations.
    let victim = &victim.turning();
    let eig = SymmetricEigen::new(*q);
    let mut order: Vec<usize> = (0..3).collect();
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    if worst {
        order.reverse();
    }
    let better = |a: f64, b: f64| if worst { a > b } else { a < b };
    // Both signs of every eigenvector: a non-circular loop tilted onto n and onto −n
    // sits differently in its own plane, so the two can differ in a non-uniform field.
    let starts: Vec<Vec3> = order
        .iter()
        .flat_map(|&k| {
            let e = eig.eigenvectors.column(k).into_owned();
            [e, -e]
        })
        .collect();
    // Refine from the small-loop answer (both signs); a large loop in a non-uniform
    // field may prefer another eigenvector, so refine from any that does better as it
    // stands.
    // The two refinements are independent: they run side by side.
    let (mut best, other) = rayon::join(
        || refine(victim, starts[0], worst, &total),
        || refine(victim, starts[1], worst, &total),
    );
    if better(other.total_rms, best.total_rms) {
        best = other;
    }
    // Every small-loop start may be unsolvable (a tilt that cuts a shield sheet): then
    // start from the victim as placed.
    if !best.total_rms.is_finite() || best.total_rms.is_nan() {
        best = refine(victim, victim.frame.z, worst, &total);
    }
    if worst {
        for start in &starts[2..] {
            if better(total(&victim.facing(start)), best.total_rms) {
                let found = refine(victim, *start, worst, &total);
                if better(found.total_rms, best.total_rms) {
                    best = found;
                }
            }
        }
    }
    best
}

fn refine<F: Fn(&Victim) -> f64>(
    victim: &Victim,
    start: Vec3,
    worst: bool,
    total: &F,
) -> Orientation {
    // A placement the model cannot solve (NaN) is never preferred.
    let eval = |n: &Vec3| {
        let v = total(&victim.facing(n));
        match (v.is_nan(), worst) {
            (false, _) => v,
            (true, true) => f64::NEG_INFINITY,
            (true, false) => f64::INFINITY,
        }
    };
    let better = |a: f64, b: f64| if worst { a > b } else { a < b };
    let mut n = start.normalize();
    let mut value = eval(&n);
    let mut step = 0.2;
    while step > MIN_STEP {
        let e1 = crate::field::any_perpendicular(&n);
        let e2 = n.cross(&e1);
        let mut moved = false;
        for d in [e1, -e1, e2, -e2] {
            let trial = (n + d * step.tan()).normalize();
            let v = eval(&trial);
            if better(v, value) {
                n = trial;
                value = v;
                moved = true;
                break;
            }
        }
        if !moved {
            step /= 2.0;
        }
    }
    Orientation {
        normal: n,
        total_rms: value,
    }
}
