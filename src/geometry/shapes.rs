//! Source shapes turned into conductors, and the corner lists they share with victims.

use super::Frame;
use crate::field::{Conductors, Dipole, Polyline, Vec3};
use std::f64::consts::{PI, TAU};

/// Number of straight segments for a full circle at relative `tolerance`.
///
/// The chords of an n-gon scaled to the circle's area (see [`circle_source`]) depart from
/// the arc by at most the sagitta s ≈ Rπ²/2n², in a pattern that repeats every chord
/// length h = 2πR/n and averages to zero, and the polygon's dipole moment is exact. The
/// field error at distance d from the wire is then of order (s/d)·e^{−2πd/h}: it falls
/// off exponentially once d exceeds a chord. n is the smallest multiple of 8 (at least
/// 32) for which that estimate is below `tolerance` at d = 0.1 R and below 10·tolerance
/// at d = 0.01 R; the tests check the resulting loop field against the elliptic-integral
/// closed form at both distances.
pub fn circle_segments(tolerance: f64) -> usize {
    let estimate =
        |n: f64, d_over_r: f64| (-d_over_r * n).exp() * PI * PI / (2.0 * n * n * d_over_r);
    let mut n = 32usize;
    while n < 1 << 20 {
        let nf = n as f64;
        if estimate(nf, 0.1) <= tolerance && estimate(nf, 0.01) <= 10.0 * tolerance {
            break;
        }
        n += 8;
    }
    n
}

/// A circle of `radius` (m) in the local xy plane, counter-clockwise about local z.
///
/// The n-gon's vertices sit at the radius that gives it the circle's area, so its dipole
/// moment is exact and the chord-versus-arc error averages out along the wire (its
/// leading term falls off exponentially with distance over the segment length).
pub fn circle_source(frame: &Frame, radius: f64, tolerance: f64, wire_radius: f64) -> Polyline {
    let n = circle_segments(tolerance);
    let step = TAU / n as f64;
    let r_eq = radius * (step / step.sin()).sqrt();
    let mut v: Vec<Vec3> = (0..n)
        .map(|k| {
            let th = step * k as f64;
            frame.point(&Vec3::new(r_eq * th.cos(), r_eq * th.sin(), 0.0))
        })
        .collect();
    v.push(v[0]);
    Polyline::new(v, wire_radius)
}

/// Corners of a `width` × `height` rectangle (m) centred on the local origin, counter-
/// clockwise about local z, width along local x.
pub fn rectangle_corners(width: f64, height: f64) -> Vec<Vec3> {
    let (w, h) = (width / 2.0, height / 2.0);
    vec![
        Vec3::new(-w, -h, 0.0),
        Vec3::new(w, -h, 0.0),
        Vec3::new(w, h, 0.0),
        Vec3::new(-w, h, 0.0),
    ]
}

/// A closed path through the local `corners` (m), closed back to the first.
pub fn polygon_source(frame: &Frame, corners: &[Vec3], wire_radius: f64) -> Polyline {
    let mut v: Vec<Vec3> = corners.iter().map(|c| frame.point(c)).collect();
    v.push(v[0]);
    Polyline::new(v, wire_radius)
}

/// An open path through the local `vertices` (m), exactly as given.
pub fn polyline_source(frame: &Frame, vertices: &[Vec3], wire_radius: f64) -> Polyline {
    Polyline::new(
        vertices.iter().map(|c| frame.point(c)).collect(),
        wire_radius,
    )
}

/// A point dipole at the frame origin along local z with `effective_area` (N·A, m²)
/// ampere-square-metres per ampere; `radius` (m) is where its field is held finite.
pub fn dipole_source(frame: &Frame, effective_area: f64, radius: f64) -> Conductors {
    Conductors {
        wires: Vec::new(),
        dipoles: vec![Dipole {
            position: frame.origin,
            moment_per_amp: frame.z * effective_area,
            radius,
        }],
    }
}
