//! Pieces of a victim's path: straight lines and exact circular arcs, each
//! parametrised by t ∈ [0, 1] in the direction of positive EMF.

use crate::field::Vec3;
use nalgebra::Rotation3;

/// One piece of a closed victim path, in scene coordinates (m).
#[derive(Clone, Copy, Debug)]
pub enum Edge {
    /// Straight from `a` to `b`.
    Line {
        /// Start point, m.
        a: Vec3,
        /// End point, m.
        b: Vec3,
    },
    /// Arc `centre + radius (cos θ u + sin θ v)` for θ from `start` to `end` (rad).
    Arc {
        /// Centre, m.
        centre: Vec3,
        /// Unit vector at θ = 0.
        u: Vec3,
        /// Unit vector at θ = π/2 (u × v is the arc's normal).
        v: Vec3,
        /// Radius, m.
        radius: f64,
        /// Start angle, rad.
        start: f64,
        /// End angle, rad.
        end: f64,
    },
}

impl Edge {
    /// Point at parameter `t` ∈ [0, 1], m.
    pub fn point(&self, t: f64) -> Vec3 {
        match *self {
            Edge::Line { a, b } => a + (b - a) * t,
            Edge::Arc {
                centre,
                u,
                v,
                radius,
                start,
                end,
            } => {
                let th = start + (end - start) * t;
                centre + (u * th.cos() + v * th.sin()) * radius
            }
        }
    }

    /// Derivative of the point with respect to `t`, m per unit t.
    pub fn tangent(&self, t: f64) -> Vec3 {
        match *self {
            Edge::Line { a, b } => b - a,
            Edge::Arc {
                u,
                v,
                radius,
                start,
                end,
                ..
            } => {
                let th = start + (end - start) * t;
                (v * th.cos() - u * th.sin()) * (radius * (end - start))
            }
        }
    }

    /// Length of the edge, m.
    pub fn length(&self) -> f64 {
        match *self {
            Edge::Line { a, b } => (b - a).norm(),
            Edge::Arc {
                radius, start, end, ..
            } => radius * (end - start).abs(),
        }
    }

    /// The edge turned by `rotation` about `pivot` and then moved by `offset` (m).
    pub fn moved(&self, rotation: &Rotation3<f64>, pivot: &Vec3, offset: &Vec3) -> Edge {
        let place = |p: &Vec3| rotation * (p - pivot) + pivot + offset;
        match *self {
            Edge::Line { a, b } => Edge::Line {
                a: place(&a),
                b: place(&b),
            },
            Edge::Arc {
                centre,
                u,
                v,
                radius,
                start,
                end,
            } => Edge::Arc {
                centre: place(&centre),
                u: rotation * u,
                v: rotation * v,
                radius,
                start,
                end,
            },
        }
    }

    /// A sphere (centre, radius; m) holding the edge.
    pub fn bounding_sphere(&self) -> (Vec3, f64) {
        match *self {
            Edge::Line { a, b } => ((a + b) / 2.0, (b - a).norm() / 2.0),
            Edge::Arc { centre, radius, .. } => (centre, radius),
        }
    }

    /// Number of first-pass quadrature panels: one per 1/8 of a turn for arcs.
    pub(crate) fn initial_panels(&self) -> usize {
        match *self {
            Edge::Line { .. } => 1,
            Edge::Arc { start, end, .. } => {
                ((end - start).abs() / std::f64::consts::TAU * 8.0).ceil() as usize
            }
        }
        .max(1)
    }

    /// Contribution to the vector area ½∮ r × dl, m² (exact for lines and arcs).
    fn half_r_cross_dl(&self) -> Vec3 {
        match *self {
            Edge::Line { a, b } => a.cross(&b) * 0.5,
            Edge::Arc {
                centre,
                u,
                v,
                radius,
                start,
                end,
            } => {
                // ½∫ (c + R e(θ)) × R e'(θ) dθ with e = u cos θ + v sin θ.
                let (s0, c0, s1, c1) = (start.sin(), start.cos(), end.sin(), end.cos());
                let chord = (u * (c1 - c0) + v * (s1 - s0)) * radius;
                let normal = u.cross(&v);
                (centre.cross(&chord) + normal * (radius * radius * (end - start))) * 0.5
            }
        }
    }
}

/// Vector area ½∮ r × dl of a closed chain of edges, m²; its norm is the area of a
/// planar loop and its direction the right-handed normal.
pub fn vector_area(edges: &[Edge]) -> Vec3 {
    edges.iter().map(|e| e.half_r_cross_dl()).sum()
}
