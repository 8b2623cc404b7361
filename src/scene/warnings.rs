//! Warnings on a loaded scene: a victim inside a winding or touching a source, and
//! shields outside their model's range.

use crate::field::Vec3;
use crate::geometry::Edge;
use crate::model::{Scene, Victim};

/// A victim whose centre lies within the local bounding box of a winding's turns.
pub(super) fn inside_winding_warning(scene: &Scene, v: &Victim) -> Option<String> {
    let c = v.frame.origin;
    for s in scene.sources.iter().filter(|s| s.kind.is_winding()) {
        let f = &s.frame;
        let local = |p: &Vec3| {
            let d = p - f.origin;
            Vec3::new(d.dot(&f.x), d.dot(&f.y), d.dot(&f.z))
        };
        let (mut lo, mut hi) = (Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY));
        for p in s.conductors.wires.iter().flat_map(|w| w.vertices.iter()) {
            let q = local(p);
            lo = lo.inf(&q);
            hi = hi.sup(&q);
        }
        let q = local(&c);
        let inside = (0..3).all(|k| q[k] > lo[k] && q[k] < hi[k]);
        if inside {
            return Some(format!(
                "victim \"{}\" sits inside the extent of winding \"{}\": its EMF depends on \
                 exactly where it lies among the turns, which are modelled as thin filaments",
                v.id, s.id
            ));
        }
    }
    None
}

/// Shield results outside the model: a conductivity so low that displacement current
/// matters at the highest line (σ < 100 ωε0), and enclosures far from the sphere the
/// estimate assumes (edge ratio over 3).
pub(super) fn shield_warnings(scene: &Scene) -> Vec<String> {
    const EPS0: f64 = 8.854_187_812_8e-12; // F/m, CODATA 2018
    let omega = std::f64::consts::TAU * scene.highest_frequency();
    let mut out = Vec::new();
    for sh in &scene.shields {
        for (m, _) in &sh.layers {
            if m.conductivity > 0.0 && m.conductivity < 100.0 * omega * EPS0 {
                out.push(format!(
                    "shield \"{}\": at {} the {} layer's conductivity {} is under 100 ωε0, \
                     so its displacement current is not negligible and the quasi-static \
                     sheet model may not hold",
                    sh.id,
                    crate::units::format_si(scene.highest_frequency(), "Hz", 4),
                    m.name,
                    crate::units::format_si(m.conductivity, "S/m", 3)
                ));
            }
        }
    }
    for e in &scene.enclosures {
        let ratio = e.size.max() / e.size.min();
        if ratio > 3.0 {
            out.push(format!(
                "enclosure \"{}\" is {ratio:.1} times longer than it is thin: the \
                 equal-volume sphere overstates what such a box does (it is closer to an open \
                 tube along its length)",
                e.id
            ));
        }
    }
    out
}

/// A victim that touches or crosses a source's conductor.
pub(super) fn contact_warning(scene: &Scene, v: &Victim) -> Option<String> {
    for s in &scene.sources {
        // Gap from a point to the nearest conductor surface, minus the victim's radius.
        let gap = |p: &Vec3| {
            let w = s
                .conductors
                .wires
                .iter()
                .map(|w| w.distance_to(p) - w.wire_radius);
            let d = s
                .conductors
                .dipoles
                .iter()
                .map(|d| (p - d.position).norm() - d.radius);
            w.chain(d).fold(f64::INFINITY, f64::min) - v.wire_radius
        };
        if v.edges.iter().any(|e| edge_touches(e, &gap)) {
            return Some(format!(
                "victim \"{}\" touches or crosses source \"{}\": the result is dominated by \
                 the contact and depends on the wire radii",
                v.id, s.id
            ));
        }
    }
    None
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
