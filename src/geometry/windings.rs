//! Windings: helix, toroid, planar spirals, saddle pairs and cable pairs, as filament
//! polylines in the element's local frame placed by a [`Frame`].
//!
//! Curved runs are cut into chords with the per-turn count of [`circle_segments`] and
//! pushed out by the chord factor √(Δθ / sin Δθ), so that each turn encloses the exact
//! curve's area (see [`circle_source`](super::circle_source)).

use super::{Frame, circle_segments};
use crate::field::{Polyline, Vec3};
use std::f64::consts::{PI, TAU};

/// Chord-to-arc radius factor for an angular step `step` (rad): the n-gon with this
/// circumradius has the circle's area.
pub fn chord_factor(step: f64) -> f64 {
    if step == 0.0 {
        1.0
    } else {
        (step / step.sin()).sqrt()
    }
}

/// Number of chords for `angle` radians of curve at `tolerance` (at least 4).
fn chords(angle: f64, tolerance: f64) -> usize {
    ((circle_segments(tolerance) as f64 * angle.abs() / TAU).ceil() as usize).max(4)
}

fn place(frame: &Frame, local: Vec<Vec3>, wire_radius: f64) -> Polyline {
    Polyline::new(local.iter().map(|p| frame.point(p)).collect(), wire_radius)
}

/// A helix of `radius`, `length` (m) and `turns` about local z, centred on the origin,
/// starting at local +x, z = −length/2 and winding counter-clockwise upwards. With
/// `axial_leads` the circuit closes by a radial lead to the axis at the top, a straight
/// return down the axis and a radial lead back out at the bottom.
pub fn helix(
    frame: &Frame,
    radius: f64,
    length: f64,
    turns: f64,
    axial_leads: bool,
    tolerance: f64,
    wire_radius: f64,
) -> Polyline {
    let n = chords(TAU * turns, tolerance);
    let step = TAU * turns / n as f64;
    let rho = radius * chord_factor(step);
    let mut v: Vec<Vec3> = (0..=n)
        .map(|k| {
            let t = k as f64 / n as f64;
            let th = TAU * turns * t;
            Vec3::new(rho * th.cos(), rho * th.sin(), length * (t - 0.5))
        })
        .collect();
    if axial_leads {
        v.push(Vec3::new(0.0, 0.0, length / 2.0));
        v.push(Vec3::new(0.0, 0.0, -length / 2.0));
        v.push(v[0]);
    }
    place(frame, v, wire_radius)
}

/// A toroidal winding of `turns` about local z: major radius `major`, minor (tube)
/// radius `minor` (m). The wire advances 1/turns of the circumference per turn, so the
/// closed path also makes the one turn around the major circumference that every real
/// toroidal winding makes.
pub fn toroid(
    frame: &Frame,
    major: f64,
    minor: f64,
    turns: u64,
    tolerance: f64,
    wire_radius: f64,
) -> Polyline {
    let per_turn = chords(TAU, tolerance);
    let n = per_turn * turns as usize;
    let step = TAU / per_turn as f64;
    let r = minor * chord_factor(step);
    // The chord factor gives each turn its exact cross-section, but the projected area
    // of the path (the one-turn loop's moment) averages ρ_k ρ_(k+1) = R² + r²(1 − Δθ²/3)/2
    // instead of R² + r²/2: move the centre line out by the difference.
    let major = (major * major + minor * minor * step * step / 6.0).sqrt();
    let mut v: Vec<Vec3> = (0..n)
        .map(|k| {
            let t = k as f64 / n as f64;
            let (th, ph) = (TAU * turns as f64 * t, TAU * t);
            let rho = major + r * th.cos();
            Vec3::new(rho * ph.cos(), rho * ph.sin(), r * th.sin())
        })
        .collect();
    v.push(v[0]);
    place(frame, v, wire_radius)
}

/// A round (Archimedean) planar spiral in the local xy plane from `inner` to `outer`
/// radius (m) over `turns`, counter-clockwise outwards from local +x, closed by a
/// straight underpass from the outer end back to the inner start.
pub fn round_spiral(
    frame: &Frame,
    inner: f64,
    outer: f64,
    turns: f64,
    tolerance: f64,
    wire_radius: f64,
) -> Polyline {
    let n = chords(TAU * turns, tolerance);
    let scale = chord_factor(TAU * turns / n as f64);
    let mut v: Vec<Vec3> = (0..=n)
        .map(|k| {
            let t = k as f64 / n as f64;
            let th = TAU * turns * t;
            let rho = (inner + (outer - inner) * t) * scale;
            Vec3::new(rho * th.cos(), rho * th.sin(), 0.0)
        })
        .collect();
    v.push(v[0]);
    place(frame, v, wire_radius)
}

/// Corners (local, m) of a square planar spiral: axis-parallel sides, the first going
/// up local y from (inner, −inner); each side's distance from the centre grows by a
/// quarter of the pitch (outer − inner)/turns, so the path reaches half-width `outer`
/// after 4·turns sides (rounded to whole sides). Not closed.
pub fn square_spiral_corners(inner: f64, outer: f64, turns: f64) -> Vec<Vec3> {
    let sides = (4.0 * turns).round().max(1.0) as usize;
    let quarter = (outer - inner) / sides as f64;
    let h = |j: usize| inner + quarter * j as f64;
    let mut v = vec![Vec3::new(h(0), -h(0), 0.0)];
    for j in 0..sides {
        let p = v[j];
        let next = h(j + 1);
        v.push(match j % 4 {
            0 => Vec3::new(p.x, next, 0.0),
            1 => Vec3::new(-next, p.y, 0.0),
            2 => Vec3::new(p.x, -next, 0.0),
            _ => Vec3::new(next, p.y, 0.0),
        });
    }
    v
}

/// A square planar spiral ([`square_spiral_corners`]) closed by a straight underpass
/// from the outer end back to the inner start.
pub fn square_spiral(
    frame: &Frame,
    inner: f64,
    outer: f64,
    turns: f64,
    wire_radius: f64,
) -> Polyline {
    let mut v = square_spiral_corners(inner, outer, turns);
    v.push(v[0]);
    place(frame, v, wire_radius)
}

/// Radius for the interior vertices of an n-chord arc of `radius` whose end vertices
/// stay on the arc, so that the chord polygon (with the centre) has the sector's area
/// n·R²·step/2: two end triangles ½Rρ sin(step) and n − 2 inner ones ½ρ² sin(step).
fn arc_interior_radius(radius: f64, step: f64, n: usize) -> f64 {
    let (a, b, c) = (
        (n as f64 - 2.0) * step.sin(),
        2.0 * radius * step.sin(),
        -(n as f64) * radius * radius * step,
    );
    if a == 0.0 {
        return -c / b;
    }
    (-b + (b * b - 4.0 * a * c).sqrt()) / (2.0 * a)
}

/// A pair of saddle coils on a cylinder of `radius` about local z, `length` long (m),
/// each spanning `opening` (rad) of the circumference, centred on local +x and −x, wound
/// so that both drive the field at the centre along +x. Each coil is one closed path:
/// two axial runs joined by arcs at z = ±length/2.
pub fn saddle(
    frame: &Frame,
    radius: f64,
    length: f64,
    opening: f64,
    tolerance: f64,
    wire_radius: f64,
) -> [Polyline; 2] {
    let n = chords(opening, tolerance).max(2);
    let rho = arc_interior_radius(radius, opening / n as f64, n);
    let arc = |centre: f64, z: f64, forward: bool| -> Vec<Vec3> {
        (0..=n)
            .map(|k| {
                let t = k as f64 / n as f64;
                let t = if forward { t } else { 1.0 - t };
                let ph = centre - opening / 2.0 + opening * t;
                // The ends stay on the cylinder, where the axial runs are.
                let r = if k == 0 || k == n { radius } else { rho };
                Vec3::new(r * ph.cos(), r * ph.sin(), z)
            })
            .collect()
    };
    let half = length / 2.0;
    let coil = |centre: f64, up_at_high_phi: bool| -> Polyline {
        // Bottom arc toward the run that carries current up, the run, top arc back.
        let mut v = arc(centre, -half, up_at_high_phi);
        v.extend(arc(centre, half, !up_at_high_phi));
        v.push(v[0]);
        place(frame, v, wire_radius)
    };
    // +x coil: up at φ = +opening/2; −x coil: up at φ = π − opening/2.
    [coil(0.0, true), coil(PI, false)]
}

/// A go-and-return cable pair along local z, `length` long, conductors `separation`
/// apart (m), closed at both ends. Without `twist_pitch` the conductors lie at local
/// x = ±separation/2 (the +x one carries current up +z); with it they twist about the
/// z axis one full turn per pitch (m), and the end closures cross the axis.
pub fn pair(
    frame: &Frame,
    length: f64,
    separation: f64,
    twist_pitch: Option<f64>,
    tolerance: f64,
    wire_radius: f64,
) -> Polyline {
    let (half, r) = (length / 2.0, separation / 2.0);
    let Some(pitch) = twist_pitch else {
        let v = vec![
            Vec3::new(r, 0.0, -half),
            Vec3::new(r, 0.0, half),
            Vec3::new(-r, 0.0, half),
            Vec3::new(-r, 0.0, -half),
            Vec3::new(r, 0.0, -half),
        ];
        return place(frame, v, wire_radius);
    };
    let twist = TAU * length / pitch;
    let n = chords(twist, tolerance);
    let rho = r * chord_factor(twist / n as f64);
    let wire = |offset: f64, up: bool| -> Vec<Vec3> {
        (0..=n)
            .map(|k| {
                let t = k as f64 / n as f64;
                let t = if up { t } else { 1.0 - t };
                let th = twist * t + offset;
                Vec3::new(rho * th.cos(), rho * th.sin(), length * (t - 0.5))
            })
            .collect()
    };
    let mut v = wire(0.0, true);
    v.extend(wire(PI, false));
    v.push(v[0]);
    place(frame, v, wire_radius)
}
