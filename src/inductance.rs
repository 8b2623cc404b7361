//! Low-frequency self-inductance of victim loops (uniform current in round wire).
//!
//! Circles: Rosa & Grover, L = μ0 R (ln(8R/a) − 2 + 1/4). Straight-edged loops: the sum
//! of partial inductances (Grover, "Inductance Calculations", ch. 2 and 7): each side's
//! partial self-inductance by the geometric-mean-distance method (GMD of a round wire's
//! section g = a·e^{−1/4}), plus the mutual inductance of every pair of sides under the
//! same kernel 1/√(d² + g²), integrated numerically (see [`polygon`]). N coincident
//! turns multiply the one-turn value by N².

use crate::field::{MU0, MU0_OVER_4PI, Vec3};
use crate::quadrature::{integrate_unit, panel_with};
use rayon::prelude::*;
use std::f64::consts::PI;

/// Self-inductance in H of a circle of `radius` (m) in wire of radius `wire_radius` (m),
/// one turn (Rosa & Grover, low frequency, internal inductance μ0/8π per metre included).
pub fn circle(radius: f64, wire_radius: f64) -> f64 {
    MU0 * radius * ((8.0 * radius / wire_radius).ln() - 2.0 + 0.25)
}

/// Partial self-inductance in H of a straight round wire of length `l` and radius `a` (m):
/// the mutual inductance of two parallel filaments of length l at the GMD g = a·e^{−1/4}
/// (Grover eq. for parallel filaments), (μ0/2π)(l·asinh(l/g) − √(l²+g²) + g).
pub fn straight_wire(l: f64, a: f64) -> f64 {
    let g = a * (-0.25f64).exp();
    MU0 / (2.0 * PI) * (l * (l / g).asinh() - (l * l + g * g).sqrt() + g)
}

/// Self-inductance in H of the closed polygon through `corners` (m, not repeated at the
/// end), one turn of wire radius `wire_radius` (m), to relative accuracy about
/// `tolerance` of the integrals.
///
/// Neumann's double integral ∮∮ dl·dl′ / √(|r − r′|² + κg²) with the round wire's GMD
/// g = a·e^{−1/4}; per pair of sides κ = (ê·û)², ê the direction of one side and û
/// that between their midpoints. Along one straight run (κ = 1) it is exactly the partial self-inductance [`straight_wire`] of
/// the run however the run is cut into sides, so a curve sampled finer than the wire
/// (sides shorter than g) converges to the curve's inductance; over a finely sampled
/// circle it is Maxwell's mutual inductance of two coaxial circles g apart,
/// μ0 R (ln(8R/g) − 2) to order (g/R)², the Rosa–Grover value [`circle`]. Touching
/// filaments at the corners, as a plain partial-inductance sum couples them, would
/// over-count by up to μ0 g/2π per corner. Facing parallel sides (κ = 0) couple as
/// filaments at their centre distance, as Grover's rectangle does.
///
/// Each pair is computed once: the inner integral along one side in closed form, the
/// outer by Gauss–Legendre with as few points as the pair's distance allows, adaptively
/// for neighbouring sides. The rows run in parallel and are summed in order. The cost
/// grows as the square of the number of sides (about 0.1 s for 2000 sides, 10 s for
/// 20 000 on one core).
pub fn polygon(corners: &[Vec3], wire_radius: f64, tolerance: f64) -> f64 {
    let n = corners.len();
    let sides: Vec<Side> = (0..n)
        .map(|i| Side::new(corners[i], corners[(i + 1) % n]))
        .collect();
    let g = wire_radius * (-0.25f64).exp();
    let limits = thresholds(tolerance);
    let rows: Vec<f64> = (0..n)
        .into_par_iter()
        .map(|i| {
            let a = &sides[i];
            let mut row = 0.0;
            for b in &sides[i + 1..] {
                row += 2.0 * side_pair(a, b, g, tolerance, &limits);
            }
            row + straight_wire(a.length, wire_radius)
        })
        .collect();
    rows.iter().sum()
}

/// A straight side: start (m), unit direction, length (m) and midpoint (m).
struct Side {
    start: Vec3,
    dir: Vec3,
    length: f64,
    mid: Vec3,
}

impl Side {
    fn new(a: Vec3, b: Vec3) -> Side {
        let length = (b - a).norm();
        Side {
            start: a,
            dir: (b - a) / length,
            length,
            mid: (a + b) / 2.0,
        }
    }
}

/// Mutual inductance in H of straight sides `a` and `b` of a wire whose GMD is `g` (m):
/// (μ0/4π)(ê_a·ê_b) ∫ ψ_b along a, ψ_b the closed-form integral along b of the kernel
/// 1/√(d² + κg²) ([`reduced_log`]). κ = (ê_b·û)², û the direction between the sides'
/// midpoints: 1 for pieces of one straight run (so that cutting a side in two leaves
/// the sum unchanged), 0 for parallel sides facing each other, whose mutual is the
/// filaments' at their centre distance (the GMD of two round wires is that distance).
fn side_pair(
    a: &Side,
    b: &Side,
    g: f64,
    tolerance: f64,
    limits: &[f64; crate::quadrature::ORDER],
) -> f64 {
    let cos = a.dir.dot(&b.dir);
    if cos.abs() <= 1e-15 {
        return 0.0; // perpendicular sides: dl·dl′ = 0
    }
    let between = a.mid - b.mid;
    let kappa = match between.norm() {
        d if d > 0.0 => (b.dir.dot(&between) / d).powi(2),
        _ => 1.0,
    };
    let g = g * kappa.max(1e-12).sqrt();
    let f = |t: f64| {
        let p = a.start + a.dir * (a.length * t);
        let v = reduced_log(&p, b, g);
        (v, v.abs())
    };
    // Nearest possible approach of the two sides, and the Bernstein-ellipse ratio of
    // the outer integrand's nearest singularity: the n-point rule's error is about
    // ratio^(−2n).
    let half = a.length / 2.0;
    let gap = (between.norm() - half - b.length / 2.0).max(0.0);
    let d2 = (gap * gap + g * g) / (half * half);
    let integral = match limits.iter().position(|&t| d2 >= t) {
        Some(k) => panel_with(&f, 0.0, 1.0, k + 1),
        None => integrate_unit(&f, 4, tolerance * 0.1).value,
    };
    MU0_OVER_4PI * cos * integral * a.length
}

/// The squared distance-to-half-length ratios d² from which the n-point Gauss rule
/// (n = 1, 2, …, ORDER) meets 0.01·`tolerance` on a pair of sides: the rule's error is
/// about ρ^(−2n), ρ = d + √(d² + 1) the Bernstein-ellipse ratio of the nearest
/// singularity, so d = (T − 1/T)/2 with T = (100/tolerance)^(1/2n).
fn thresholds(tolerance: f64) -> [f64; crate::quadrature::ORDER] {
    std::array::from_fn(|k| {
        let t = (100.0 / tolerance).powf(1.0 / (2.0 * (k + 1) as f64));
        ((t - 1.0 / t) / 2.0).powi(2)
    })
}

/// ∫ ds / √(|p − r(s)|² + g²) along side `b` (dimensionless): ln((R₁+R₂+L)/(R₁+R₂−L))
/// with R the distances to its ends taken as √(|·|² + g²). The difference R₁+R₂−L is
/// formed as (R₁ − z₁) + (R₂ + z₂), z the coordinates along the side, each part without
/// cancellation (R − z = (ρ² + g²)/(R + z)).
fn reduced_log(p: &Vec3, b: &Side, g: f64) -> f64 {
    let d = p - b.start;
    let z1 = d.dot(&b.dir);
    let rho2 = (d - b.dir * z1).norm_squared() + g * g;
    let z2 = z1 - b.length;
    let r1 = (z1 * z1 + rho2).sqrt();
    let r2 = (z2 * z2 + rho2).sqrt();
    let head = if z1 > 0.0 { rho2 / (r1 + z1) } else { r1 - z1 };
    let tail = if z2 < 0.0 { rho2 / (r2 - z2) } else { r2 + z2 };
    ((r1 + r2 + b.length) / (head + tail)).ln()
}
