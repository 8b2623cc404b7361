//! Warnings on a loaded scene: a victim inside a winding or touching a source, and
//! shields outside their model's range.

use crate::field::Vec3;
use crate::model::contact::touching_sources;
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

/// A victim that touches or crosses a source's conductor (the first such source).
pub(super) fn contact_warning(scene: &Scene, v: &Victim) -> Option<String> {
    let s = &scene.sources[*touching_sources(scene, v).first()?];
    Some(format!(
        "victim \"{}\" touches or crosses source \"{}\": the result is dominated by the \
         contact and depends on the wire radii",
        v.id, s.id
    ))
}
