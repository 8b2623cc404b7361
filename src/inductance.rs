//! Low-frequency self-inductance of victim loops (uniform current in round wire).
//!
//! Circles: Rosa & Grover, L = μ0 R (ln(8R/a) − 2 + 1/4). Straight-edged loops: the sum
//! of partial inductances (Grover, "Inductance Calculations", ch. 2 and 7): each side's
//! partial self-inductance by the geometric-mean-distance method (GMD of a round wire's
//! section a·e^{−1/4}), plus the Neumann mutual inductance of every pair of sides,
//! integrated numerically. N coincident turns multiply the one-turn value by N².

use crate::field::{FieldSource, MU0, Polyline, Vec3};
use crate::quadrature::integrate_unit;
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
/// end), one turn of wire radius `wire_radius` (m), by partial inductances.
pub fn polygon(corners: &[Vec3], wire_radius: f64, tolerance: f64) -> f64 {
    let n = corners.len();
    let sides: Vec<(Vec3, Vec3)> = (0..n).map(|i| (corners[i], corners[(i + 1) % n])).collect();
    let mut total = 0.0;
    for (i, (a, b)) in sides.iter().enumerate() {
        total += straight_wire((b - a).norm(), wire_radius);
        for (j, (c, d)) in sides.iter().enumerate() {
            if i == j {
                continue;
            }
            total += side_mutual(a, b, c, d, wire_radius, tolerance);
        }
    }
    total
}

/// Neumann mutual inductance in H between straight filaments a→b and c→d, as the line
/// integral along a→b of the potential of c→d.
fn side_mutual(a: &Vec3, b: &Vec3, c: &Vec3, d: &Vec3, radius: f64, tolerance: f64) -> f64 {
    let ab = b - a;
    let cd = d - c;
    if ab.dot(&cd).abs() <= 1e-15 * ab.norm() * cd.norm() {
        return 0.0; // perpendicular sides: A of one is normal to the other
    }
    let other = Polyline::new(vec![*c, *d], radius);
    let f = |t: f64| {
        let (pot, gross) = other.a_and_gross_per_amp(&(a + ab * t));
        (pot.dot(&ab), gross * ab.norm())
    };
    integrate_unit(&f, 4, tolerance * 0.1).value
}
