//! Contact: whether a victim's wire touches or crosses a source's conductor. The EMF of
//! such a placement is dominated by the contact and depends on the wire radii, so
//! `couple` warns about it and sweeps mark and skip it. Cheap enough to run at every
//! sweep step and for every trial of the orientation search: a bounding-sphere test
//! first, then a walk along each edge that only refines where the wires come close.

use super::{Scene, Source, Victim};
use crate::field::{FieldSource, Vec3};
use crate::geometry::Edge;

/// Indices (into `scene.sources`) of the sources whose conductors `victim` touches or
/// crosses: somewhere along its path the victim's wire (radius `victim.wire_radius`,
/// m) comes within the source's wire radius (m) of a source segment, or within a
/// dipole's radius of it. Ascending; empty when there is no contact.
pub fn touching_sources(scene: &Scene, victim: &Victim) -> Vec<usize> {
    scene
        .sources
        .iter()
        .enumerate()
        .filter(|(_, s)| touches(s, victim))
        .map(|(i, _)| i)
        .collect()
}

/// Whether `victim` touches or crosses the conductors of `source`.
pub fn touches(source: &Source, victim: &Victim) -> bool {
    let Some((sc, sr)) = source.conductors.bounding_sphere() else {
        return false;
    };
    // The source's sphere already includes its largest wire radius; a part in 1e9 of
    // slack keeps rounding from clearing an edge that just touches.
    let near = |e: &Edge| {
        let (ec, er) = e.bounding_sphere();
        (ec - sc).norm() <= (sr + er + victim.wire_radius) * (1.0 + 1e-9)
    };
    // Gap from a point to the nearest conductor surface, minus the victim's radius.
    let gap = |p: &Vec3| {
        let w = source
            .conductors
            .wires
            .iter()
            .map(|w| w.distance_to(p) - w.wire_radius);
        let d = source
            .conductors
            .dipoles
            .iter()
            .map(|d| (p - d.position).norm() - d.radius);
        w.chain(d).fold(f64::INFINITY, f64::min) - victim.wire_radius
    };
    victim
        .edges
        .iter()
        .any(|e| near(e) && edge_touches(e, &gap))
}

/// Whether `gap` (m, Lipschitz 1 in the point) falls to zero anywhere along `e`: the
/// gap can fall by at most half an interval's length between its ends, so intervals
/// that stay clear by more are done, and the rest are halved (to a depth of 40).
fn edge_touches(e: &Edge, gap: &dyn Fn(&Vec3) -> f64) -> bool {
    let len = e.length();
    // A short edge far from every wire: the gap at its ends leaves no room to reach zero
    // in between (it is at least (g0 + g1 − len)/2 there), so a finely sampled victim
    // path costs two evaluations per edge.
    let (g0, g1) = (gap(&e.point(0.0)), gap(&e.point(1.0)));
    if g0 + g1 > 2.0 * len {
        return false;
    }
    let mut stack: Vec<(f64, f64, f64, f64, u32)> = Vec::new();
    let n = 64;
    let mut prev = (0.0, gap(&e.point(0.0)));
    for k in 1..=n {
        let t = k as f64 / n as f64;
        let g = gap(&e.point(t));
        stack.push((prev.0, prev.1, t, g, 0));
        prev = (t, g);
    }
    // A budget of gap evaluations keeps absurd geometry (a 1e200 m edge) from taking
    // forever; within it, every crossing of a wire is found.
    let mut budget = 4096;
    while let Some((t0, g0, t1, g1, depth)) = stack.pop() {
        if g0 <= 0.0 || g1 <= 0.0 {
            return true;
        }
        if g0.min(g1) > 0.5 * len * (t1 - t0) || depth >= 40 || budget == 0 {
            continue;
        }
        budget -= 1;
        let tm = 0.5 * (t0 + t1);
        let gm = gap(&e.point(tm));
        stack.push((t0, g0, tm, gm, depth + 1));
        stack.push((tm, gm, t1, g1, depth + 1));
    }
    false
}
