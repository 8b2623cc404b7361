//! Flux from a source's far-field series, where its bound proves it within the
//! tolerance and the far-field policy says it is cheaper than the direct sum.

use super::flux::far_points;
use crate::field::Vec3;
use crate::geometry::Edge;
use crate::quadrature::Integral;

/// Flux per ampere (Wb/A) through the closed chain `edges` from a source's multipole
/// expansion `far`, or `None` when the victim is not far enough for it to be proven
/// within `tolerance` and cheaper than the direct sum. Every edge must be far enough
/// from the conductors (inside `sphere`) for the one-pass far-edge rule of
/// [`flux_per_amp`](super::flux_per_amp). The error of the series at degree q is bounded at each node by
/// [`crate::field::FarField::a_bound`]; summed over the rule's |weight × tangent|, that
/// bounds the flux error, which must come under a tenth of the tolerance times the flux
/// found (with the series' rounding noise). The degree is chosen from a first estimate
/// through degree 2 (dipole and quadrupole).
///
/// A flat victim (`face`: the centre (m) and radius (m) of a disc holding it, and its
/// area, m²) also has the bound area × [`crate::field::FarField::b_bound`] at the
/// disc's nearest point, the flux of the series' error field through the face; the
/// smaller bound is used.
pub fn flux_from_far(
    far: &crate::field::FarField,
    sphere: Option<(crate::field::Vec3, f64)>,
    edges: &[Edge],
    face: Option<(crate::field::Vec3, f64, f64)>,
    tolerance: f64,
) -> Option<Integral> {
    use crate::field::multipole::MAX_ORDER;
    use crate::field::multipole::policy::{
        FLUX_GUESS_SHARE, FLUX_NEAR_RADII, TOLERANCE_SHARE, flux_series_pays,
    };
    let (centre, r_far) = far.sphere();
    // A victim whose nearest part is within twice the conductors' radius would need
    // more degrees than are kept.
    let near = edges.iter().any(|e| {
        let (c, r) = e.bounding_sphere();
        (c - centre).norm() - r < FLUX_NEAR_RADII * r_far
    });
    if near {
        return None;
    }
    let nodes = far_nodes(edges, sphere, (centre, r_far), tolerance)?;
    // The bound at the nearest node, times the rule's Σ |weight × tangent|.
    let nearest_node = nodes
        .iter()
        .map(|(p, _)| (p - centre).norm())
        .fold(f64::INFINITY, f64::min);
    let length: f64 = nodes.iter().map(|(_, tw)| tw.norm()).sum();
    let bound = |q: usize| -> f64 {
        let along = length * far.a_bound(q, nearest_node);
        let through = face.map_or(f64::INFINITY, |(c, r, area)| {
            let nearest = (c - centre).norm() - r;
            if nearest > r_far {
                area * far.b_bound(q, nearest)
            } else {
                f64::INFINITY
            }
        });
        along.min(through)
    };
    let flux_through = |q: usize| -> (Vec<f64>, f64) {
        let mut by_degree = vec![0.0; q + 1];
        let mut parts = [Vec3::zeros(); MAX_ORDER + 1];
        let mut noise = 0.0;
        for (p, tw) in &nodes {
            let abs = far.a_degrees(p, q, &mut parts);
            for (b, part) in by_degree.iter_mut().zip(&parts) {
                *b += part.dot(tw);
            }
            noise += abs * tw.norm();
        }
        (by_degree, 256.0 * f64::EPSILON * noise)
    };
    let (first, _) = flux_through(2);
    let guess: f64 = first.iter().sum::<f64>().abs();
    let q = (2..=far.order()).find(|&q| bound(q) <= FLUX_GUESS_SHARE * tolerance * guess)?;
    if !flux_series_pays(far.terms(q), far.segments()) {
        return None;
    }
    let (by_degree, noise) = flux_through(q);
    let value: f64 = by_degree.iter().sum();
    if bound(q) + noise > TOLERANCE_SHARE * tolerance * value.abs() {
        return None;
    }
    Some(Integral {
        value,
        magnitude: value.abs(),
        converged: true,
    })
}

/// The one-pass rule's nodes along every edge as (point m, tangent × weight m), or
/// `None` when an edge is too near the conductors (inside `sphere`) for the rule or a
/// node too near the series' centre (`far_sphere`: centre m, radius m) for the series.
fn far_nodes(
    edges: &[Edge],
    sphere: Option<(Vec3, f64)>,
    far_sphere: (Vec3, f64),
    tolerance: f64,
) -> Option<Vec<(Vec3, Vec3)>> {
    use crate::field::multipole::policy::usable_at;
    let (centre, r_far) = far_sphere;
    let mut nodes: Vec<(Vec3, Vec3)> = Vec::new();
    for edge in edges {
        let panels = edge.initial_panels();
        let points = far_points(edge, panels, sphere, tolerance)?;
        let (x, w) = crate::quadrature::rule_of(points);
        for k in 0..panels {
            let (t0, t1) = (k as f64 / panels as f64, (k + 1) as f64 / panels as f64);
            let (mid, half) = ((t0 + t1) / 2.0, (t1 - t0) / 2.0);
            for (xi, wi) in x.iter().zip(w) {
                let t = mid + half * xi;
                let p = edge.point(t);
                if !usable_at((p - centre).norm(), r_far) {
                    return None;
                }
                nodes.push((p, edge.tangent(t) * (wi * half)));
            }
        }
    }
    Some(nodes)
}
