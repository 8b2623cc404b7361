//! Straight filament segments joined into a polyline.
//!
//! Closed forms of Hanson & Hirshman, "Compact expressions for the Biot–Savart fields
//! of a filamentary segment", Phys. Plasmas 9, 4410 (2002), eqs. (2) and (4):
//!
//! ```text
//! B = μ0 I/4π · 2L(Ri+Rf) / (Ri Rf ((Ri+Rf)² − L²)) · ê × (r − a)
//! A = μ0 I/4π · ê · ln((Ri+Rf+L) / (Ri+Rf−L))
//! ```
//!
//! The distance to each vertex is computed once and shared by the two segments that
//! meet there. Within the wire radius the field of a round conductor carrying uniform
//! current is used instead, so no point gives NaN or infinity.

use super::kernels::{Soa, field_block, field_sum, log_sum};
use super::{FieldSource, MU0_OVER_4PI, Vec3};

/// A filament path carrying `weight` amperes per ampere of source current.
///
/// Invariants (checked where scenes are built): at least two vertices, no zero-length
/// segment, `wire_radius > 0`. A closed path repeats its first vertex at the end.
/// Build it with [`Polyline::new`]; it keeps each segment's direction and length, so
/// change `vertices` only by building a new one.
#[derive(Clone, Debug)]
pub struct Polyline {
    /// Vertices in metres, in the direction of positive current.
    pub vertices: Vec<Vec3>,
    /// The same geometry laid out for the vector kernel, computed once.
    soa: Soa,
    /// Ampere-turns carried per ampere of source current (1 for a single wire; negative
    /// reverses the current).
    pub weight: f64,
    /// Conductor radius in metres; inside it the field is that of a round wire.
    pub wire_radius: f64,
}

impl Polyline {
    /// A path through `vertices` (m) with one ampere per ampere and the given radius (m).
    pub fn new(vertices: Vec<Vec3>, wire_radius: f64) -> Self {
        let soa = Soa::new(&vertices, wire_radius);
        Polyline {
            vertices,
            soa,
            weight: 1.0,
            wire_radius,
        }
    }

    /// Number of straight segments.
    pub fn segment_count(&self) -> usize {
        self.vertices.len().saturating_sub(1)
    }

    /// Whether the last vertex equals the first.
    pub fn is_closed(&self) -> bool {
        self.vertices.len() > 2 && self.vertices.first() == self.vertices.last()
    }

    /// Length of the path in metres.
    pub fn length(&self) -> f64 {
        self.vertices.windows(2).map(|w| (w[1] - w[0]).norm()).sum()
    }

    /// ½ Σ r × dl times the weight, in A·m² per A (the loop's moment for closed paths).
    pub fn dipole_moment(&self) -> Vec3 {
        let m: Vec3 = self
            .vertices
            .windows(2)
            .map(|w| w[0].cross(&w[1]))
            .sum::<Vec3>();
        m * (0.5 * self.weight)
    }

    /// Shortest distance from `r` to the path, in metres.
    pub fn distance_to(&self, r: &Vec3) -> f64 {
        self.vertices
            .windows(2)
            .map(|w| distance_to_segment(r, &w[0], &w[1]))
            .fold(f64::INFINITY, f64::min)
    }
}

/// Distance in metres from `r` to the closed segment from `a` to `b`.
pub(crate) fn distance_to_segment(r: &Vec3, a: &Vec3, b: &Vec3) -> f64 {
    let ab = b - a;
    let l2 = ab.norm_squared();
    let t = if l2 > 0.0 {
        ((r - a).dot(&ab) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (r - (a + ab * t)).norm()
}

impl Polyline {
    /// The careful form for a block kernel: segment `seg`'s B (without μ0/4π) at
    /// `pts[lane]` (m), for squared wire radius `a2` (m²).
    fn careful_b<'a>(&'a self, pts: &'a [Vec3], a2: f64) -> impl Fn(usize, usize) -> Vec3 + 'a {
        move |seg, lane| {
            let (d_i, d_f) = (
                pts[lane] - self.vertices[seg],
                pts[lane] - self.vertices[seg + 1],
            );
            segment_b(&d_i, d_i.norm(), &d_f, d_f.norm(), a2)
        }
    }

    /// Whether the 512-bit field kernel may run: the CPU has AVX-512F and the layout
    /// matches `vertices` and `wire_radius` (its careful reach depends on the radius).
    #[cfg(target_arch = "x86_64")]
    fn oct_ready(&self) -> bool {
        super::kernels::avx512::available()
            && self.soa.segments() == self.segment_count()
            && self.soa.wire_radius() == self.wire_radius
    }

    /// B per ampere (T/A) at eight points (m) by the 512-bit kernel. Call only when
    /// [`Polyline::oct_ready`].
    #[cfg(target_arch = "x86_64")]
    fn b_oct(&self, pts: &[Vec3; 8]) -> [Vec3; 8] {
        let a2 = self.wire_radius * self.wire_radius;
        let careful = self.careful_b(pts, a2);
        // SAFETY: the callers checked that the CPU has AVX-512F.
        let b = unsafe { super::kernels::avx512::field_oct(&self.soa, pts, &careful) };
        b.map(|b| b * (MU0_OVER_4PI * self.weight))
    }
}

impl FieldSource for Polyline {
    fn b_per_amp(&self, r: &Vec3) -> Vec3 {
        let a2 = self.wire_radius * self.wire_radius;
        if self.soa.segments() == self.segment_count() {
            let careful = |seg: usize, r_i: f64, r_f: f64| {
                let d_i = r - self.vertices[seg];
                let d_f = r - self.vertices[seg + 1];
                segment_b(&d_i, r_i, &d_f, r_f, a2)
            };
            return field_sum(&self.soa, r, a2, careful) * (MU0_OVER_4PI * self.weight);
        }
        let mut sum = Vec3::zeros();
        let mut iter = self.vertices.iter();
        let Some(first) = iter.next() else {
            return sum;
        };
        let mut d_i = r - first;
        let mut r_i = d_i.norm();
        for v in iter {
            let d_f = r - v;
            let r_f = d_f.norm();
            sum += segment_b(&d_i, r_i, &d_f, r_f, a2);
            d_i = d_f;
            r_i = r_f;
        }
        sum * (MU0_OVER_4PI * self.weight)
    }

    fn b_block(&self, pts: &[Vec3; 4]) -> [Vec3; 4] {
        if self.soa.segments() != self.segment_count() {
            return pts.map(|p| self.b_per_amp(&p));
        }
        #[cfg(target_arch = "x86_64")]
        if self.oct_ready() {
            // The eight-lane path, so that a point's value is the same whichever
            // block size reached it.
            let b = self.b_oct(&super::padded_block(pts));
            return [b[0], b[1], b[2], b[3]];
        }
        let a2 = self.wire_radius * self.wire_radius;
        field_block(&self.soa, pts, a2, self.careful_b(pts, a2))
            .map(|b| b * (MU0_OVER_4PI * self.weight))
    }

    fn b_many(&self, pts: &[Vec3]) -> Vec<Vec3> {
        #[cfg(target_arch = "x86_64")]
        if self.oct_ready() {
            return super::in_blocks::<8>(pts, |b| self.b_oct(b));
        }
        super::in_blocks::<4>(pts, |b| self.b_block(b))
    }

    fn a_per_amp(&self, r: &Vec3) -> Vec3 {
        self.a_and_gross_per_amp(r).0
    }

    fn a_and_gross_per_amp(&self, r: &Vec3) -> (Vec3, f64) {
        let radius = self.wire_radius;
        let k = MU0_OVER_4PI * self.weight;
        if self.soa.segments() == self.segment_count() {
            let careful = |seg: usize, r_i: f64, r_f: f64| {
                let d_i = r - self.vertices[seg];
                let d_f = r - self.vertices[seg + 1];
                segment_a(&d_i, r_i, &d_f, r_f, radius).1
            };
            let (sum, gross) = log_sum(&self.soa, r, radius, careful);
            return (sum * k, gross * k.abs());
        }
        // `vertices` changed after construction: the plain scalar loop.
        let mut sum = Vec3::zeros();
        let mut gross = 0.0;
        for w in self.vertices.windows(2) {
            let (d_i, d_f) = (r - w[0], r - w[1]);
            let (e, log) = segment_a(&d_i, d_i.norm(), &d_f, d_f.norm(), radius);
            sum += e * log;
            gross += log.abs();
        }
        (sum * k, gross * k.abs())
    }
}

/// Ri + Rf − L without cancellation. For a long segment and a point close to it the
/// plain difference loses most digits (a 20 km wire seen from 1 cm keeps four);
/// R − z = ρ²/(R + z) restores them (ρ the distance to the line, z along it).
#[inline]
fn gap(r_i: f64, r_f: f64, l: f64, z_i: f64, rho2: f64) -> f64 {
    let plain = r_i + r_f - l;
    if plain > 0.01 * l {
        return plain;
    }
    let z_f = z_i - l;
    let head = if z_i > 0.0 {
        rho2 / (r_i + z_i)
    } else {
        r_i - z_i
    };
    let tail = if z_f < 0.0 {
        rho2 / (r_f - z_f)
    } else {
        r_f + z_f
    };
    head + tail
}

/// B of one segment without the μ0/4π factor. `d_i = r − a`, `d_f = r − b`, their norms,
/// and the squared wire radius.
#[inline]
fn segment_b(d_i: &Vec3, r_i: f64, d_f: &Vec3, r_f: f64, a2: f64) -> Vec3 {
    let seg = d_i - d_f; // b − a
    let l = seg.norm();
    if l == 0.0 {
        return Vec3::zeros();
    }
    let e = seg / l;
    let c = e.cross(d_i); // ê × (r − a); its norm is the distance ρ to the line
    let rho2 = c.norm_squared();
    let z_i = e.dot(d_i);
    if rho2 < a2 {
        // Near the line: inside the wire (distance d to the segment under a) use the
        // cos θ form with ρ² replaced by D = a² − e², e the axial distance beyond the
        // nearer end. D = a² along the wire, where the field falls linearly to zero on
        // the axis like a round conductor's, and D = ρ² on the sphere d = a round each
        // end, so the field is continuous and exact everywhere outside the wire.
        let beyond = (-z_i).max(z_i - l).max(0.0);
        if rho2 + beyond * beyond < a2 {
            let cos_i = if r_i > 0.0 { z_i / r_i } else { 0.0 };
            let cos_f = if r_f > 0.0 { e.dot(d_f) / r_f } else { 0.0 };
            return c * ((cos_i - cos_f) / (a2 - beyond * beyond));
        }
    }
    let s = r_i + r_f;
    let u = gap(r_i, r_f, l, z_i, rho2);
    // (Ri+Rf)² − L² = u (Ri+Rf+L)
    c * (2.0 * l * s / (r_i * r_f * u * (s + l)))
}

/// A of one segment without the μ0/4π factor, for wire radius `radius` (m), as the
/// unit direction ê and the scalar log factor.
#[inline]
fn segment_a(d_i: &Vec3, r_i: f64, d_f: &Vec3, r_f: f64, radius: f64) -> (Vec3, f64) {
    let seg = d_i - d_f;
    let l = seg.norm();
    if l == 0.0 {
        return (Vec3::zeros(), 0.0);
    }
    let e = seg / l;
    let s = r_i + r_f;
    let z_i = e.dot(d_i);
    let u = gap(r_i, r_f, l, z_i, e.cross(d_i).norm_squared());
    // u ≤ 2·(distance to the segment), so u ≥ 2a means the point is outside the wire
    // and the closed form is safe.
    if u >= 2.0 * radius {
        return (e, ((s + l) / u).ln());
    }
    (e, regularised_log(d_i, e, l, radius))
}

/// ln((Ri+Rf+L)/(Ri+Rf−L)) for a point close to the segment: outside the wire the exact
/// value; inside (distance d < a), the value at the wire surface plus the interior rise
/// of a round conductor with uniform current, (1 − d²/a²) in units of μ0 I/4π.
#[cold]
fn regularised_log(d_i: &Vec3, e: Vec3, l: f64, radius: f64) -> f64 {
    let t = e.dot(d_i).clamp(0.0, l);
    let off = d_i - e * t; // from the nearest point of the segment to r
    let d = off.norm();
    let (q, interior) = if d >= radius {
        (*d_i, 0.0)
    } else {
        let dir = if d > 0.0 {
            off / d
        } else {
            any_perpendicular(&e)
        };
        // The surface point, relative to the segment start.
        (e * t + dir * radius, 1.0 - d * d / (radius * radius))
    };
    let (r_i, r_f) = (q.norm(), (q - e * l).norm());
    let z_i = e.dot(&q);
    let u = gap(r_i, r_f, l, z_i, e.cross(&q).norm_squared());
    ((r_i + r_f + l) / u).ln() + interior
}

/// A unit vector perpendicular to the unit vector `e`.
pub(crate) fn any_perpendicular(e: &Vec3) -> Vec3 {
    let trial = if e.x.abs() < 0.9 {
        Vec3::x()
    } else {
        Vec3::y()
    };
    (trial - e * e.dot(&trial)).normalize()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::MU0;
    use std::f64::consts::PI;

    #[test]
    fn long_straight_wire_approaches_infinite_wire_law() {
        // Ampère's law for an infinite straight wire: B = μ0 I / (2π r).
        let w = Polyline::new(vec![Vec3::new(0., 0., -1e4), Vec3::new(0., 0., 1e4)], 1e-4);
        let r = 0.01;
        let b = w.b_per_amp(&Vec3::new(r, 0., 0.));
        let expect = MU0 / (2.0 * PI * r);
        assert!(
            (b.y - expect).abs() / expect < 1e-9,
            "{} vs {}",
            b.y,
            expect
        );
        assert!(b.x.abs() < 1e-20 && b.z.abs() < 1e-20);
        // Inside a round conductor: B = μ0 I ρ / (2π a²).
        let bi = w.b_per_amp(&Vec3::new(0.5e-4, 0., 0.));
        let expect_in = MU0 * 0.5e-4 / (2.0 * PI * 1e-8);
        assert!((bi.y - expect_in).abs() / expect_in < 1e-9);
    }

    #[test]
    fn points_on_the_wire_vertices_and_extension_are_finite() {
        let w = Polyline::new(
            vec![Vec3::zeros(), Vec3::new(1., 0., 0.), Vec3::new(1., 1., 0.)],
            1e-4,
        );
        for p in [
            Vec3::zeros(),
            Vec3::new(0.5, 0., 0.),
            Vec3::new(1., 0., 0.),
            Vec3::new(2., 0., 0.),
            Vec3::new(1., 0.5, 0.),
            Vec3::new(1., 2., 0.),
        ] {
            let b = w.b_per_amp(&p);
            let a = w.a_per_amp(&p);
            assert!(b.iter().chain(a.iter()).all(|x| x.is_finite()), "{p:?}");
        }
    }
}
