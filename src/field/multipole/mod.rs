//! Far-field acceleration: the Cartesian multipole expansion of a source's wires about
//! the centre of their bounding sphere, with the truncation order chosen per point from
//! a proven error bound.
//!
//! The vector potential of the wires is A(x) = μ0/4π Σ w ∫ dl/|x − y|. With c the
//! centre, 1/|x − y| = Σ_k a_k(x − c) (y − c)^k over multi-indices k, where
//! a_k = (−1)^|k|/k! ∂^k (1/|x − c|) are the Taylor coefficients of the Coulomb kernel.
//! They follow from the recurrence of Lindsay & Krasny (J. Comput. Phys. 172, 2001,
//! eq. 3.5 with ε = 0):
//!
//! |k| R² a_k − (2|k| − 1) Σ_i x_i a_{k−e_i} + (|k| − 1) Σ_i a_{k−2e_i} = 0, a_0 = 1/R.
//!
//! So A_i = μ0/4π Σ_k a_k M_{i,k} with the moments M_{i,k} = Σ w ∫ (y − c)^k dl_i,
//! integrated exactly by Gauss–Legendre (the integrand is a polynomial along each
//! straight segment). B = ∇ × A uses ∂a_k/∂x_m = −(k_m + 1) a_{k+e_m}, which gives
//! B_j = μ0/4π Σ_β a_β N_{j,β} with N_{j,β} = −Σ ε_jmn β_m M_{n,β−e_m}.
//!
//! Truncating at degree q drops the Legendre terms of degree n > q of the kernel,
//! |y|^n P_n(cos γ)/|x|^{n+1} (the degree-n part of the Taylor series is exactly that
//! term). With |P_n| ≤ 1 and Bernstein's inequality |sin γ P_n'(cos γ)| ≤ n, each
//! term's gradient is at most √2 (n + 1) r^n/R^{n+2}, so for wires of gross length
//! G = Σ |w| L inside radius r of c, at distance R, with t = r/R:
//!
//! |ΔA| ≤ μ0/4π · G/R · t^{q+1}/(1 − t),
//! |ΔB| ≤ μ0/4π · G/R² · √2 t^{q+1} ((q + 2) − (q + 1) t)/(1 − t)².
//!
//! A point is evaluated by the expansion only if, at some degree q up to the order kept,
//! this bound and the series' own rounding noise fall below a tenth of the tolerance
//! times the value found, and only while the series costs less than the direct sum;
//! otherwise it is summed directly. So the expansion's result is within the tolerance
//! of the exact one wherever it is used.

mod accelerated;
mod indices;
mod moments;
pub mod policy;

pub use accelerated::Accelerated;
use indices::{Indices, TERMS, coefficients, lane_coefficients};
use moments::{chunk_moments, moment_nodes};

use super::{Conductors, MU0_OVER_4PI, Vec3};
pub use policy::{MAX_ORDER, MIN_SEGMENTS, SWEEP_ORDER};
use policy::{TOLERANCE_SHARE, point_series_pays, usable_at};
use rayon::prelude::*;

/// The B series' degree (through moments of degree 2) after which a point whose bound
/// cannot come under its allowance within the order kept gives up.
const GUESS_DEGREE: usize = 3;
/// The multipole moments of a source's wires about one centre.
#[derive(Clone)]
pub struct FarField {
    /// Expansion centre, m.
    centre: Vec3,
    /// Radius about `centre` holding every wire (with its conductor radius), m.
    radius: f64,
    /// Gross wire length G = Σ |weight| × length, m (per ampere of source current).
    gross: f64,
    /// Segments summed by the direct path.
    segments: usize,
    /// Highest degree of the moments kept (≤ MAX_ORDER).
    order: usize,
    idx: Indices,
    /// M_{i,k} for |k| ≤ MAX_ORDER, m^{|k|+1}.
    m: Vec<[f64; 3]>,
    /// N_{j,β} for |β| ≤ MAX_ORDER + 1.
    n: Vec<[f64; 3]>,
}

impl std::fmt::Debug for FarField {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("FarField")
            .field("centre", &self.centre)
            .field("radius", &self.radius)
            .field("gross", &self.gross)
            .field("segments", &self.segments)
            .finish_non_exhaustive()
    }
}

/// A point's expansion result: the value and the degree used.
#[derive(Clone, Copy, Debug)]
pub struct Expanded {
    /// B (T/A) or A (T·m/A) per ampere.
    pub value: Vec3,
    /// The degree q at which the bound was met.
    pub order: usize,
}

impl FarField {
    /// The moments of `wires`' conductors through degree [`SWEEP_ORDER`], or `None`
    /// when there are too few segments for the series to pay.
    pub fn new(wires: &Conductors) -> Option<Self> {
        Self::with_order(wires, SWEEP_ORDER)
    }

    /// The moments through degree `order` (at most [`MAX_ORDER`]): a higher degree
    /// reaches closer to the source but costs more to build (segments × order³).
    pub fn with_order(wires: &Conductors, order: usize) -> Option<Self> {
        let order = order.clamp(2, MAX_ORDER);
        let segments = wires.segment_count();
        if segments < MIN_SEGMENTS {
            return None;
        }
        let verts = wires.wires.iter().flat_map(|w| w.vertices.iter());
        let (centre, r) = super::sphere_around(verts)?;
        let pad = wires
            .wires
            .iter()
            .map(|w| w.wire_radius)
            .fold(0.0, f64::max);
        let idx = Indices::new(order + 1);
        let terms = idx.start[order + 1];
        let nodes = moment_nodes(order);
        // Segments in fixed chunks, partial moments summed in chunk order: the result
        // does not depend on the thread count.
        let segs: Vec<(Vec3, Vec3, f64)> = wires
            .wires
            .iter()
            .flat_map(|w| {
                w.vertices
                    .windows(2)
                    .map(move |p| (p[0] - centre, p[1] - p[0], w.weight))
            })
            .collect();
        // Per chunk, the quadrature nodes run four to a lane group: their power tables
        // are made once, then each block of terms is accumulated over all of them with
        // the block's sums held in the first-level cache, and the lanes are added in a
        // fixed order at the end.
        let partial: Vec<Vec<[f64; 3]>> = segs
            .par_chunks(64)
            .map(|chunk| chunk_moments(chunk, &nodes, &idx, order, terms))
            .collect();
        let mut m = vec![[0.0; 3]; terms];
        for p in partial {
            for (a, b) in m.iter_mut().zip(p) {
                for i in 0..3 {
                    a[i] += b[i];
                }
            }
        }
        let all = idx.k.len();
        let mut n = vec![[0.0; 3]; all];
        for (b, nb) in n.iter_mut().enumerate().skip(1) {
            let beta = idx.k[b];
            let mm = |mdir: usize, comp: usize| -> f64 {
                let e = idx.minus1[b][mdir];
                if e == usize::MAX {
                    0.0
                } else {
                    beta[mdir] as f64 * m[e][comp]
                }
            };
            // N_{j,β} = −Σ ε_jmn β_m M_{n,β−e_m}
            nb[0] = -(mm(1, 2) - mm(2, 1));
            nb[1] = -(mm(2, 0) - mm(0, 2));
            nb[2] = -(mm(0, 1) - mm(1, 0));
        }
        let gross = wires
            .wires
            .iter()
            .map(|w| w.length() * w.weight.abs())
            .sum();
        Some(FarField {
            centre,
            radius: r + pad,
            gross,
            segments,
            order,
            idx,
            m,
            n,
        })
    }

    /// Expansion centre (m) and the radius (m) holding every wire.
    pub fn sphere(&self) -> (Vec3, f64) {
        (self.centre, self.radius)
    }

    /// The proven bound on |ΔB| (T/A) after degree `q` at distance `r_dist` (m).
    pub fn b_bound(&self, q: usize, r_dist: f64) -> f64 {
        let t = self.radius / r_dist;
        if t >= 1.0 {
            return f64::INFINITY;
        }
        let q = q as f64;
        MU0_OVER_4PI * self.gross / (r_dist * r_dist)
            * std::f64::consts::SQRT_2
            * t.powi(q as i32 + 1)
            * ((q + 2.0) - (q + 1.0) * t)
            / ((1.0 - t) * (1.0 - t))
    }

    /// The proven bound on |ΔA| (T·m/A) after degree `q` at distance `r_dist` (m).
    pub fn a_bound(&self, q: usize, r_dist: f64) -> f64 {
        let t = self.radius / r_dist;
        if t >= 1.0 {
            return f64::INFINITY;
        }
        MU0_OVER_4PI * self.gross / r_dist * t.powf(q as f64 + 1.0) / (1.0 - t)
    }

    /// Whether, judged by the value found through [`GUESS_DEGREE`] (dipole and
    /// quadrupole), the bound can come under `allowed` (T/A) at distance `r_dist` (m)
    /// within the order kept, with a margin of 4 on the value. Only used to stop early:
    /// acceptance is always decided by the bound against the value actually found.
    fn can_reach(&self, r_dist: f64, allowed: f64) -> bool {
        self.b_bound(self.order, r_dist) <= 4.0 * allowed
    }

    /// [`FarField::b`] at four points at once, one per SIMD lane: each lane does the
    /// same operations in the same order as `b` and stops at its own degree, so the
    /// results are identical to four calls of `b`.
    pub fn b4(&self, xs: &[Vec3; 4], tolerance: f64) -> [Option<Expanded>; 4] {
        use wide::f64x4;
        let mut active = [false; 4];
        let mut dv = [[0.0f64; 4]; 3];
        let mut r2s = [0.0f64; 4];
        let mut rs = [0.0f64; 4];
        for (l, x) in xs.iter().enumerate() {
            let d = x - self.centre;
            let r2 = d.norm_squared();
            let r = r2.sqrt();
            let ok = !r.is_nan() && usable_at(r, self.radius);
            active[l] = ok;
            // Idle lanes compute at a harmless far point.
            let d = if ok {
                d
            } else {
                Vec3::new(4.0 * self.radius.max(1e-9), 0.0, 0.0)
            };
            dv[0][l] = d.x;
            dv[1][l] = d.y;
            dv[2][l] = d.z;
            r2s[l] = d.norm_squared();
            rs[l] = r2s[l].sqrt();
        }
        let mut out = [None; 4];
        if !active.iter().any(|&a| a) {
            return out;
        }
        let idx = &self.idx;
        let r2 = f64x4::from(r2s);
        let d = [f64x4::from(dv[0]), f64x4::from(dv[1]), f64x4::from(dv[2])];
        let mut buf = lane_coefficients();
        let a = buf.get();
        a[TERMS] = f64x4::ZERO;
        a[0] = f64x4::ONE / f64x4::from(rs);
        let mut sum = [f64x4::ZERO; 3];
        let mut abs = f64x4::ZERO;
        let mut pending = active;
        for deg in 1..=self.order + 1 {
            if !point_series_pays(idx.start[deg + 1], self.segments) {
                break;
            }
            let nf = deg as f64;
            let c1 = f64x4::splat(2.0 * nf - 1.0) / (f64x4::splat(nf) * r2);
            let c2 = f64x4::splat(nf - 1.0) / (f64x4::splat(nf) * r2);
            for e in idx.start[deg]..idx.start[deg + 1] {
                let m1 = &idx.minus1z[e];
                let m2 = &idx.minus2z[e];
                let s1 = d[0] * a[m1[0]] + d[1] * a[m1[1]] + d[2] * a[m1[2]];
                let s2 = a[m2[0]] + a[m2[1]] + a[m2[2]];
                let ae = c1 * s1 - c2 * s2;
                a[e] = ae;
                let ne = &self.n[e];
                for j in 0..3 {
                    let term = ae * f64x4::splat(ne[j]);
                    sum[j] += term;
                    abs += term.abs();
                }
            }
            let (sx, sy, sz, ab) = (
                sum[0].to_array(),
                sum[1].to_array(),
                sum[2].to_array(),
                abs.to_array(),
            );
            for l in 0..4 {
                if !pending[l] {
                    continue;
                }
                let value = Vec3::new(sx[l], sy[l], sz[l]) * MU0_OVER_4PI;
                let noise = 256.0 * f64::EPSILON * ab[l] * MU0_OVER_4PI;
                let allowed = TOLERANCE_SHARE * tolerance * value.norm();
                if self.b_bound(deg - 1, rs[l]) + noise <= allowed {
                    out[l] = Some(Expanded {
                        value,
                        order: deg - 1,
                    });
                    pending[l] = false;
                } else if deg == GUESS_DEGREE && !self.can_reach(rs[l], allowed) {
                    pending[l] = false;
                }
            }
            if !pending.iter().any(|&p| p) {
                break;
            }
        }
        out
    }

    /// B (T/A) at `x` (m) from the series, if it meets `tolerance` (relative to the
    /// value) within the order kept and costs less than the direct sum; `None` otherwise.
    pub fn b(&self, x: &Vec3, tolerance: f64) -> Option<Expanded> {
        let d = x - self.centre;
        let r2 = d.norm_squared();
        let r = r2.sqrt();
        if r.is_nan() || !usable_at(r, self.radius) {
            return None;
        }
        let idx = &self.idx;
        let mut buf = coefficients();
        let a = buf.get();
        a[0] = 1.0 / r;
        let dv = [d.x, d.y, d.z];
        let mut sum = [0.0f64; 3];
        let mut abs = 0.0f64;
        for deg in 1..=self.order + 1 {
            if !point_series_pays(idx.start[deg + 1], self.segments) {
                return None;
            }
            idx.recur(a, deg, &dv, r2);
            let range = idx.start[deg]..idx.start[deg + 1];
            for (&ae, ne) in a[range.clone()].iter().zip(&self.n[range]) {
                for j in 0..3 {
                    let term = ae * ne[j];
                    sum[j] += term;
                    abs += term.abs();
                }
            }
            // B through degree `deg` uses the moments through degree q = deg − 1.
            let value = Vec3::new(sum[0], sum[1], sum[2]) * MU0_OVER_4PI;
            let noise = 256.0 * f64::EPSILON * abs * MU0_OVER_4PI;
            let allowed = TOLERANCE_SHARE * tolerance * value.norm();
            if self.b_bound(deg - 1, r) + noise <= allowed {
                return Some(Expanded {
                    value,
                    order: deg - 1,
                });
            }
            if deg == GUESS_DEGREE && !self.can_reach(r, allowed) {
                return None;
            }
        }
        None
    }
}

impl FarField {
    /// Gross wire length G = Σ |weight| × length, m per A.
    pub fn gross(&self) -> f64 {
        self.gross
    }

    /// Highest degree of the moments kept.
    pub fn order(&self) -> usize {
        self.order
    }

    /// Segments the direct sum would visit.
    pub fn segments(&self) -> usize {
        self.segments
    }

    /// A's series at `x` (m) split by degree: `out[n]` is the degree-n part (T·m/A)
    /// for n = 0..=`q` (q ≤ the order kept; `out` holds at least q + 1 entries); returns
    /// Σ |terms| (T·m/A), the scale of the series' rounding noise. `x` must lie outside
    /// the wires' sphere.
    pub fn a_degrees(&self, x: &Vec3, q: usize, out: &mut [Vec3]) -> f64 {
        let q = q.min(self.order);
        let d = x - self.centre;
        let r2 = d.norm_squared();
        let r = r2.sqrt();
        let idx = &self.idx;
        let mut buf = coefficients();
        let a = buf.get();
        a[0] = 1.0 / r;
        let dv = [d.x, d.y, d.z];
        out[0] = Vec3::new(self.m[0][0], self.m[0][1], self.m[0][2]) * (a[0] * MU0_OVER_4PI);
        let mut abs = out[0].abs().sum();
        for (deg, slot) in out.iter_mut().enumerate().take(q + 1).skip(1) {
            idx.recur(a, deg, &dv, r2);
            let mut sum = [0.0f64; 3];
            let range = idx.start[deg]..idx.start[deg + 1];
            for (&ae, me) in a[range.clone()].iter().zip(&self.m[range]) {
                for j in 0..3 {
                    let term = ae * me[j];
                    sum[j] += term;
                    abs += term.abs() * MU0_OVER_4PI;
                }
            }
            *slot = Vec3::new(sum[0], sum[1], sum[2]) * MU0_OVER_4PI;
        }
        abs
    }

    /// Terms of the series through degree `q`.
    pub fn terms(&self, q: usize) -> usize {
        self.idx.start[(q + 1).min(self.order + 2)]
    }
}
