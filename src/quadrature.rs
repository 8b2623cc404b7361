//! Gauss–Legendre quadrature: a Gauss–Kronrod first pass, then adaptive interval
//! halving where the two disagree.

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

/// The Gauss–Kronrod extension of the `n`-point Gauss–Legendre rule on [−1, 1]: the
/// n Gauss nodes plus the n + 1 zeros of the Stieltjes polynomial E_{n+1}, which
/// interlace with them, and the 2n + 1 weights that make the rule exact for
/// polynomials of degree 3n + 1 (Kronrod 1965; Laurie, "Calculation of Gauss–Kronrod
/// quadrature rules", Math. Comp. 66, 1997). Returns (nodes ascending, Kronrod
/// weights, the index in `nodes` of each Gauss node).
///
/// E_{n+1} is of degree n + 1 with ∫ P_n E_{n+1} x^k dx = 0 for k = 0..=n; only terms
/// of the parity of n + 1 appear, so the conditions of the other parity hold by
/// symmetry. Its Legendre coefficients come from that small linear system (integrals
/// by a Gauss rule exact for them), its zeros by bisection between consecutive Gauss
/// nodes, and the weights from Σ w_i P_k(x_i) = ∫ P_k for k = 0..=2n.
pub fn gauss_kronrod(n: usize) -> (Vec<f64>, Vec<f64>, Vec<usize>) {
    use nalgebra::{DMatrix, DVector};
    let (gx, _) = gauss_legendre(n);
    // In the Legendre basis, which keeps E's evaluation near ±1 accurate:
    // E = P_{n+1} + Σ β_j P_j, with ∫ P_n P_k E dx = 0 for the k ≤ n of the right
    // parity (any polynomial of degree ≤ n is a sum of such P_k). The triple products
    // have degree ≤ 3n + 1: exact with 2n + 2 Gauss points.
    let (hx, hw) = gauss_legendre(2 * n + 2);
    let triple = |k: usize, j: usize| -> f64 {
        hx.iter()
            .zip(&hw)
            .map(|(x, w)| w * legendre(n, *x).0 * legendre(k, *x).0 * legendre(j, *x).0)
            .sum()
    };
    let terms: Vec<usize> = (0..=n).filter(|j| (j + n + 1).is_multiple_of(2)).collect();
    let conditions: Vec<usize> = (0..=n).filter(|k| (k + 1) % 2 == 0).collect();
    let size = terms.len();
    debug_assert_eq!(size, conditions.len());
    let a = DMatrix::from_fn(size, size, |r, c| triple(conditions[r], terms[c]));
    let b = DVector::from_fn(size, |r, _| -triple(conditions[r], n + 1));
    let beta = a.lu().solve(&b).unwrap_or_else(|| DVector::zeros(size));
    let stieltjes = |x: f64| -> f64 {
        let mut v = legendre(n + 1, x).0;
        for (c, j) in beta.iter().zip(&terms) {
            v += c * legendre(*j, x).0;
        }
        v
    };
    let mut bounds = vec![-1.0];
    bounds.extend_from_slice(&gx);
    bounds.push(1.0);
    let mut nodes: Vec<f64> = Vec::with_capacity(2 * n + 1);
    let mut gauss_index = Vec::with_capacity(n);
    for (k, w) in bounds.windows(2).enumerate() {
        let (mut lo, mut hi) = (w[0], w[1]);
        let lo_sign = stieltjes(lo) < 0.0;
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid <= lo || mid >= hi {
                break;
            }
            if (stieltjes(mid) < 0.0) == lo_sign {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        nodes.push(0.5 * (lo + hi));
        if k < n {
            gauss_index.push(nodes.len());
            nodes.push(gx[k]);
        }
    }
    // Exact symmetry: mirror the upper half onto the lower.
    let m = nodes.len();
    for i in 0..m / 2 {
        let v = 0.5 * (nodes[m - 1 - i] - nodes[i]);
        nodes[i] = -v;
        nodes[m - 1 - i] = v;
    }
    if m % 2 == 1 {
        nodes[m / 2] = 0.0;
    }
    let p = DMatrix::from_fn(m, m, |k, i| legendre(k, nodes[i]).0);
    let rhs = DVector::from_fn(m, |k, _| if k == 0 { 2.0 } else { 0.0 });
    let w = p.lu().solve(&rhs).unwrap_or_else(|| DVector::zeros(m));
    let mut weights: Vec<f64> = w.iter().copied().collect();
    for i in 0..m / 2 {
        let v = 0.5 * (weights[i] + weights[m - 1 - i]);
        weights[i] = v;
        weights[m - 1 - i] = v;
    }
    (nodes, weights, gauss_index)
}

/// The Gauss–Kronrod extension of the ORDER-point rule, computed once.
fn kronrod() -> &'static (Vec<f64>, Vec<f64>, Vec<usize>) {
    static RULE: OnceLock<(Vec<f64>, Vec<f64>, Vec<usize>)> = OnceLock::new();
    RULE.get_or_init(|| gauss_kronrod(ORDER))
}

/// ∫ f over [t0, t1] with the ORDER-point Gauss rule and its Kronrod extension, from
/// one set of 2·ORDER + 1 evaluations: (Gauss value, Gauss gross magnitude, Kronrod
/// value). See [`panel`] for `f`.
fn panel_pair<F: Fn(f64) -> (f64, f64)>(f: &F, t0: f64, t1: f64) -> (f64, f64, f64) {
    let (x, wk, gauss_index) = kronrod();
    let (_, wg) = rule();
    let (mid, half) = ((t0 + t1) / 2.0, (t1 - t0) / 2.0);
    let mut values = [(0.0, 0.0); 2 * ORDER + 1];
    for (v, xi) in values.iter_mut().zip(x) {
        *v = f(mid + half * xi);
    }
    let k: f64 = values.iter().zip(wk).map(|(v, w)| w * v.0).sum();
    let (mut g, mut gross) = (0.0, 0.0);
    for (i, w) in gauss_index.iter().zip(wg) {
        g += w * values[*i].0;
        gross += w * values[*i].1;
    }
    (g * half, gross * half.abs(), k * half)
}

fn rule() -> &'static (Vec<f64>, Vec<f64>) {
    rule_of(ORDER)
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

impl Integral {
    /// The sum of `parts`, added in their order (so that the result does not depend on
    /// how the parts were computed in parallel): values and magnitudes add, and the sum
    /// converged if every part did.
    pub fn sum(parts: impl IntoIterator<Item = Integral>) -> Integral {
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
}

/// ∫₀¹ f(t) dt split into `panels` equal first-pass panels. A panel whose Gauss and
/// Gauss–Kronrod values agree to its share of `rel_tol` of the first-pass magnitude
/// takes the Kronrod value; the others are halved until the two
/// halves agree with the whole to that share, or to the
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
    let first: Vec<(f64, f64, f64)> = bounds
        .par_iter()
        .map(|&(a, b)| panel_pair(f, a, b))
        .collect();
    let scale: f64 = first.iter().map(|v| v.0.abs()).sum();
    let gross: f64 = first.iter().map(|v| v.1).sum();
    let abs_tol = (rel_tol * scale)
        .max(NOISE_ULPS * f64::EPSILON * gross)
        .max(f64::MIN_POSITIVE);
    // A first-pass panel whose Gauss and Kronrod values agree takes the Kronrod value
    // (the difference estimates the Gauss rule's error, as the halving test below does);
    // the others are halved from the Gauss value.
    let parts: Vec<Integral> = bounds
        .par_iter()
        .zip(first.par_iter())
        .map(|(&(a, b), &(whole, _, kronrod))| {
            if (kronrod - whole).abs() <= abs_tol * (b - a) {
                return Integral {
                    value: kronrod,
                    magnitude: kronrod.abs(),
                    converged: true,
                };
            }
            let mut budget = MAX_PANELS;
            refine(f, (a, b), whole, abs_tol * (b - a), MAX_DEPTH, &mut budget)
        })
        .collect();
    Integral::sum(parts)
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

    /// |Σ w x^deg − ∫₋₁¹ x^deg dx| for the rule (`x`, `w`).
    fn monomial_error(x: &[f64], w: &[f64], deg: usize) -> f64 {
        let got: f64 = x.iter().zip(w).map(|(x, w)| w * x.powi(deg as i32)).sum();
        let exact = if deg % 2 == 1 {
            0.0
        } else {
            2.0 / (deg as f64 + 1.0)
        };
        (got - exact).abs()
    }

    #[test]
    fn rule_is_exact_for_polynomials_up_to_degree_2n_minus_1() {
        // Defining property of Gauss–Legendre quadrature (Abramowitz & Stegun 25.4.29).
        let (x, w) = gauss_legendre(ORDER);
        for deg in 0..(2 * ORDER) {
            let err = monomial_error(&x, &w, deg);
            assert!(err < 1e-14, "degree {deg}: error {err:e}");
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

    #[test]
    fn kronrod_rule_is_exact_to_degree_3n_plus_1_with_positive_interlacing_nodes() {
        // Defining properties of Gauss–Kronrod rules for the Legendre weight (Kronrod
        // 1965; Szegő 1935 for the interlacing and Monegato 1978 for positive weights):
        // only degrees 0..=2n are imposed in the construction, so 2n+1..=3n+1 are a check.
        for n in [3usize, 5, ORDER, 7, 10] {
            let (x, w, gi) = gauss_kronrod(n);
            assert_eq!(x.len(), 2 * n + 1);
            let (gx, _) = gauss_legendre(n);
            for (i, g) in gi.iter().zip(&gx) {
                assert!((x[*i] - g).abs() < 1e-15, "n {n}: Gauss node moved");
            }
            for pair in x.windows(2) {
                assert!(pair[0] < pair[1], "n {n}: nodes not ascending");
            }
            assert!(w.iter().all(|w| *w > 0.0), "n {n}: weights {w:?}");
            for deg in 0..=(3 * n + 1) {
                let err = monomial_error(&x, &w, deg);
                assert!(err < 2e-15, "n {n} degree {deg}: error {err:e}");
            }
            // The first even degree beyond the rule (3n + 2 for even n, 3n + 3 for odd):
            // there it must miss.
            let deg = if n % 2 == 0 { 3 * n + 2 } else { 3 * n + 3 };
            assert!(monomial_error(&x, &w, deg) > 1e-12, "n {n}: exact at {deg}");
        }
    }

    #[test]
    fn fifteen_point_kronrod_rule_matches_the_quadpack_table() {
        // QUADPACK's qk15 nodes and weights (Piessens et al., 1983), quoted from
        // memory to 15 digits: the positive nodes, largest first, and their weights.
        let xgk = [
            0.991455371120813,
            0.949107912342759,
            0.864864423359769,
            0.741531185599394,
            0.586087235467691,
            0.405845151377397,
            0.207784955007898,
            0.0,
        ];
        let wgk = [
            0.022935322010529,
            0.063092092629979,
            0.104790010322250,
            0.140653259715525,
            0.169004726639267,
            0.190350578064785,
            0.204432940075298,
            0.209482141084728,
        ];
        let (x, w, _) = gauss_kronrod(7);
        for k in 0..8 {
            assert!(
                (x[14 - k] - xgk[k]).abs() < 2e-15,
                "node {k}: {}",
                x[14 - k]
            );
            assert!(
                (w[14 - k] - wgk[k]).abs() < 2e-15,
                "weight {k}: {}",
                w[14 - k]
            );
        }
    }
}
