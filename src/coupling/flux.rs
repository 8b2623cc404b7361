//! Flux per ampere through a victim's closed edges: Φ = ∮ A · dl by adaptive
//! Gauss–Legendre quadrature, with a one-pass rule for edges far from the conductors.

use crate::field::FieldSource;
use crate::geometry::Edge;
use crate::quadrature::{Integral, integrate_unit};

/// Magnetic flux through the closed chain `edges` per ampere of `source` current, in
/// Wb/A (= H for one turn), with relative accuracy `tolerance` of the integral's scale.
pub fn flux_per_amp<S: FieldSource + ?Sized>(
    source: &S,
    edges: &[Edge],
    tolerance: f64,
) -> Integral {
    flux_per_amp_within(source, source.bounding_sphere(), edges, tolerance)
}

/// As [`flux_per_amp`], with the source's bounding sphere (centre m, radius m) given.
pub fn flux_per_amp_within<S: FieldSource + ?Sized>(
    source: &S,
    sphere: Option<(crate::field::Vec3, f64)>,
    edges: &[Edge],
    tolerance: f64,
) -> Integral {
    // Edges in parallel, summed in edge order: the same result for any thread count.
    use rayon::prelude::*;
    let parts: Vec<Integral> = edges
        .par_iter()
        .map(|edge| {
            let f = |t: f64| {
                let tangent = edge.tangent(t);
                let (a, gross) = source.a_and_gross_per_amp(&edge.point(t));
                (a.dot(&tangent), gross * tangent.norm())
            };
            let panels = edge.initial_panels();
            if let Some(part) = far_edge(&f, edge, panels, sphere, tolerance) {
                return part;
            }
            // A tenth of the tolerance per edge: the halving test is conservative for
            // smooth integrands, and edges add.
            integrate_unit(&f, panels, tolerance * 0.1)
        })
        .collect();
    Integral::sum(parts)
}

/// One Gauss–Legendre panel per first-pass panel, without the halving check, when every
/// conductor is far from the edge compared with a panel's length. The integrand is then
/// analytic in a Bernstein ellipse about each panel that reaches out to the source, and
/// the n-point rule's error falls like (h / 4g)^(2n) for panel length h and gap g
/// (Trefethen, "Approximation Theory and Approximation Practice", ch. 19). The fewest
/// points n (up to the full rule) that bring the estimate under a hundredth of the
/// tolerance, at twice the gap the estimate needs for the full rule, are used.
fn far_edge<F: Fn(f64) -> (f64, f64) + Sync>(
    f: &F,
    edge: &Edge,
    panels: usize,
    sphere: Option<(crate::field::Vec3, f64)>,
    tolerance: f64,
) -> Option<Integral> {
    let points = far_points(edge, panels, sphere, tolerance)?;
    let mut out = Integral {
        value: 0.0,
        magnitude: 0.0,
        converged: true,
    };
    for k in 0..panels {
        let v = crate::quadrature::panel_with(
            f,
            k as f64 / panels as f64,
            (k + 1) as f64 / panels as f64,
            points,
        );
        out.value += v;
        out.magnitude += v.abs();
    }
    Some(out)
}

/// The Gauss–Legendre points per first-pass panel of [`far_edge`]'s rule for `edge`,
/// or `None` when the conductors (inside `sphere`) are too close for it.
pub(super) fn far_points(
    edge: &Edge,
    panels: usize,
    sphere: Option<(crate::field::Vec3, f64)>,
    tolerance: f64,
) -> Option<usize> {
    let (centre, radius) = sphere?;
    let (e_centre, e_radius) = edge.bounding_sphere();
    let gap = (e_centre - centre).norm() - radius - e_radius;
    let h = edge.length() / panels as f64;
    let order = crate::quadrature::ORDER as f64;
    let target = 100.0 / tolerance;
    // Half the gap counts, a margin of 2 on the estimate's distance.
    let ratio = 4.0 * (gap / 2.0) / h;
    if gap.is_nan() || ratio <= target.powf(1.0 / (2.0 * order)) {
        return None;
    }
    Some((target.ln() / (2.0 * ratio.ln())).ceil().max(2.0) as usize)
}
