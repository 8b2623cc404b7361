//! Gauss–Legendre quadrature with adaptive interval halving.

use rayon::prelude::*;
use std::sync::OnceLock;

/// Points per Gauss–Legendre panel; exact for polynomials of degree 2·ORDER − 1.
pub const ORDER: usize = 6;

/// Deepest halving of one first-pass panel (2^-40 of its length).
const MAX_DEPTH: u32 = 40;

/// Most panels one first-pass panel may be split into: bounds the work when rounding
/// noise, not the integrand, keeps two estimates apart.
const MAX_PANELS: usize = 1 << 14;

/// Rounding-noise floor: two estimates closer than this many units in the last place
/// of the integrand's gross magnitude count as equal.
const NOISE_ULPS: f64 = 1024.0;

/// Nodes and weights of the `n`-point Gauss–Legendre rule on [−1, 1], by Newton's
/// iteration on the Legendre recurrence (Golub & Welsch give the same nodes as
/// eigenvalues; Abramowitz & Stegun 25.4.29 tabulates them).
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        // Tricomi's initial guess for the i-th root.
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (p, d) = legendre(n, z);
            dp = d;
            let dz = p / d;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre(n, z);
        dp = if d != 0.0 { d } else { dp };
        x[i] = -z;
        x[n - 1 - i] = z;
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

/// P_n(z) and its derivative.
fn legendre(n: usize, z: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, z);
    for k in 2..=n {
        let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
        p0 = p1;
        p1 = p2;
    }
    if n == 0 {
        return (1.0, 0.0);
    }
    (p1, n as f64 * (z * p1 - p0) / (z * z - 1.0))
}

fn rule() -> &'static (Vec<f64>, Vec<f64>) {
    static RULE: OnceLock<(Vec<f64>, Vec<f64>)> = OnceLock::new();
    RULE.get_or_init(|| gauss_legendre(ORDER))
}

/// Gauss–Legendre rules of 1 to ORDER points, computed once.
fn rules() -> &'static [(Vec<f64>, Vec<f64>)] {
    static RULES: OnceLock<Vec<(Vec<f64>, Vec<f64>)>> = OnceLock::new();
    RULES.get_or_init(|| (1..=ORDER).map(gauss_legendre).collect())
}

/// The `points`-point Gauss–Legendre rule on [−1, 1] (1 ≤ points ≤ ORDER): nodes and
/// weights.
pub fn rule_of(points: usize) -> &'static (Vec<f64>, Vec<f64>) {
    &rules()[points.clamp(1, ORDER) - 1]
}

/// ∫ f over [t0, t1] with one `points`-point Gauss–Legendre panel (1 ≤ points ≤ ORDER),
/// returning only the value.
pub fn panel_with<F: Fn(f64) -> (f64, f64)>(f: &F, t0: f64, t1: f64, points: usize) -> f64 {
    let (x, w) = &rules()[points.clamp(1, ORDER) - 1];
    let (mid, half) = ((t0 + t1) / 2.0, (t1 - t0) / 2.0);
    x.iter()
        .zip(w)
        .map(|(xi, wi)| wi * f(mid + half * xi).0)
        .sum::<f64>()
        * half
}

/// ∫ f over [t0, t1] with one Gauss–Legendre panel. `f` returns the integrand and its
/// gross magnitude (the sum of the absolute values of whatever it adds up), and so does
/// this: (∫ f, ∫ gross).
pub fn panel<F: Fn(f64) -> (f64, f64)>(f: &F, t0: f64, t1: f64) -> (f64, f64) {
    let (x, w) = rule();
    let (mid, half) = ((t0 + t1) / 2.0, (t1 - t0) / 2.0);
    let (mut v, mut g) = (0.0, 0.0);
    for (xi, wi) in x.iter().zip(w) {
        let (fv, fg) = f(mid + half * xi);
        v += wi * fv;
        g += wi * fg;
    }
    (v * half, g * half.abs())
}

/// Result of an adaptive integral.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Integral {
    /// The integral's value.
    pub value: f64,
    /// Sum of |panel value| over the final panels, a scale for relative error.
    pub magnitude: f64,
    /// Whether every panel met its share of the tolerance within the work limits.
    pub converged: bool,
}

/// ∫₀¹ f(t) dt split into `panels` equal first-pass panels, each halved until the two
/// halves agree with the whole to `rel_tol` of the first-pass magnitude, or to the
/// rounding noise of the integrand's gross magnitude. `f` returns (value, gross); see
/// [`panel`]. Panels run in parallel and are summed in order, so the result is the same
/// for any thread count.
pub fn integrate_unit<F: Fn(f64) -> (f64, f64) + Sync>(
    f: &F,
    panels: usize,
    rel_tol: f64,
) -> Integral {
    let n = panels.max(1);
    let bounds: Vec<(f64, f64)> = (0..n)
        .map(|k| (k as f64 / n as f64, (k + 1) as f64 / n as f64))
        .collect();
    let first: Vec<(f64, f64)> = bounds.par_iter().map(|&(a, b)| panel(f, a, b)).collect();
    let scale: f64 = first.iter().map(|v| v.0.abs()).sum();
    let gross: f64 = first.iter().map(|v| v.1).sum();
    let abs_tol = (rel_tol * scale)
        .max(NOISE_ULPS * f64::EPSILON * gross)
        .max(f64::MIN_POSITIVE);
    let parts: Vec<Integral> = bounds
        .par_iter()
        .zip(first.par_iter())
        .map(|(&(a, b), &(whole, _))| {
            let mut budget = MAX_PANELS;
            refine(f, (a, b), whole, abs_tol * (b - a), MAX_DEPTH, &mut budget)
        })
        .collect();
    let mut out = Integral {
        value: 0.0,
        magnitude: 0.0,
        converged: true,
    };
    for p in parts {
        out.value += p.value;
        out.magnitude += p.magnitude;
        out.converged &= p.converged;
    }
    out
}

fn refine<F: Fn(f64) -> (f64, f64)>(
    f: &F,
    (a, b): (f64, f64),
    whole: f64,
    tol: f64,
    depth: u32,
    budget: &mut usize,
) -> Integral {
    let m = 0.5 * (a + b);
    let left = panel(f, a, m).0;
    let right = panel(f, m, b).0;
    *budget = budget.saturating_sub(2);
    let sum = left + right;
    let done = (sum - whole).abs() <= tol;
    if done || depth == 0 || *budget == 0 {
        return Integral {
            value: sum,
            magnitude: left.abs() + right.abs(),
            converged: done,
        };
    }
    let l = refine(f, (a, m), left, tol / 2.0, depth - 1, budget);
    let r = refine(f, (m, b), right, tol / 2.0, depth - 1, budget);
    Integral {
        value: l.value + r.value,
        magnitude: l.magnitude + r.magnitude,
        converged: l.converged && r.converged,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_is_exact_for_polynomials_up_to_degree_2n_minus_1() {
        // Defining property of Gauss–Legendre quadrature (Abramowitz & Stegun 25.4.29).
        let (x, w) = gauss_legendre(ORDER);
        for deg in 0..(2 * ORDER) {
            let got: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(deg as i32)).sum();
            let exact = if deg % 2 == 1 {
                0.0
            } else {
                2.0 / (deg as f64 + 1.0)
            };
            assert!(
                (got - exact).abs() < 1e-14,
                "degree {deg}: {got} vs {exact}"
            );
        }
    }

    #[test]
    fn adaptive_handles_a_near_log_singularity() {
        // ∫₀¹ ln(|t − ½| + ε) dt in closed form.
        let eps: f64 = 1e-9;
        let f = |t: f64| {
            let v = ((t - 0.5).abs() + eps).ln();
            (v, v.abs())
        };
        let g = |u: f64| (u + eps) * (u + eps).ln() - u;
        let exact = 2.0 * (g(0.5) - g(0.0));
        let got = integrate_unit(&f, 4, 1e-10);
        assert!(got.converged);
        assert!((got.value - exact).abs() < 1e-9, "{} vs {exact}", got.value);
    }
}
