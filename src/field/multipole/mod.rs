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

pub mod policy;

use super::{Conductors, FieldSource, MU0_OVER_4PI, Vec3};
pub use policy::{MAX_ORDER, MIN_SEGMENTS, SWEEP_ORDER};
use policy::{TOLERANCE_SHARE, order_for_points, point_series_pays, usable_at};
use rayon::prelude::*;

/// The B series' degree (through moments of degree 2) after which a point whose bound
/// cannot come under its allowance within the order kept gives up.
const GUESS_DEGREE: usize = 3;

/// Multi-index tables for degrees 0..=`MAX_ORDER` + 1.
#[derive(Clone)]
struct Indices {
    /// (k1, k2, k3) of each entry, ordered by degree.
    k: Vec<[usize; 3]>,
    /// First entry of each degree; `start[n]..start[n + 1]` is degree n.
    start: Vec<usize>,
    /// Entry of k − e_i, or `usize::MAX`.
    minus1: Vec<[usize; 3]>,
    /// Entry of k − 2e_i, or `usize::MAX`.
    minus2: Vec<[usize; 3]>,
    /// As `minus1`, with a zero slot (index `TERMS`) for missing entries.
    minus1z: Vec<[usize; 3]>,
    /// As `minus2`, with the zero slot for missing entries.
    minus2z: Vec<[usize; 3]>,
}

fn index_of(k: [usize; 3]) -> usize {
    // Entries before degree n: C(n + 2, 3); within degree n, ordered by k1 descending
    // then k2 descending.
    let n = k[0] + k[1] + k[2];
    let before = n * (n + 1) * (n + 2) / 6;
    let r = n - k[0];
    // Entries with larger k1 at this degree: Σ_{j=0}^{r−1} (j + 1) = r(r + 1)/2.
    before + r * (r + 1) / 2 + (r - k[1])
}

impl Indices {
    /// Fills the Taylor coefficients of degree `deg` in `a` from the two degrees
    /// below (the recurrence of the module's doc comment), for the point at `dv` (m)
    /// from the centre, `r2` = |dv|². Missing neighbours count as zero.
    #[inline(always)]
    fn recur(&self, a: &mut [f64], deg: usize, dv: &[f64; 3], r2: f64) {
        let nf = deg as f64;
        let (c1, c2) = ((2.0 * nf - 1.0) / (nf * r2), (nf - 1.0) / (nf * r2));
        for e in self.start[deg]..self.start[deg + 1] {
            let m1 = &self.minus1[e];
            let m2 = &self.minus2[e];
            let mut s1 = 0.0;
            let mut s2 = 0.0;
            for i in 0..3 {
                if m1[i] != usize::MAX {
                    s1 += dv[i] * a[m1[i]];
                }
                if m2[i] != usize::MAX {
                    s2 += a[m2[i]];
                }
            }
            a[e] = c1 * s1 - c2 * s2;
        }
    }

    fn new(max_degree: usize) -> Self {
        let mut k = Vec::new();
        let mut start = Vec::new();
        for n in 0..=max_degree {
            start.push(k.len());
            for k1 in (0..=n).rev() {
                for k2 in (0..=n - k1).rev() {
                    k.push([k1, k2, n - k1 - k2]);
                }
            }
        }
        start.push(k.len());
        let less = |kk: [usize; 3], i: usize, by: usize| {
            if kk[i] < by {
                usize::MAX
            } else {
                let mut m = kk;
                m[i] -= by;
                index_of(m)
            }
        };
        let minus1 = k
            .iter()
            .map(|&kk| std::array::from_fn(|i| less(kk, i, 1)))
            .collect();
        let minus2 = k
            .iter()
            .map(|&kk| std::array::from_fn(|i| less(kk, i, 2)))
            .collect();
        let zero = |v: &Vec<[usize; 3]>| -> Vec<[usize; 3]> {
            v.iter()
                .map(|m| m.map(|i| if i == usize::MAX { TERMS } else { i }))
                .collect()
        };
        let (minus1z, minus2z) = (zero(&minus1), zero(&minus2));
        Indices {
            k,
            start,
            minus1,
            minus2,
            minus1z,
            minus2z,
        }
    }
}

/// Gauss–Legendre nodes and weights on [0, 1] exact for polynomials of degree `order`
/// along a segment: (t, weight).
fn moment_nodes(order: usize) -> Vec<(f64, f64)> {
    let (gx, gw) = crate::quadrature::gauss_legendre(order / 2 + 1);
    gx.iter()
        .zip(&gw)
        .map(|(x, w)| ((x + 1.0) / 2.0, w / 2.0))
        .collect()
}

/// Terms accumulated together by [`chunk_moments`]: their lane sums (3 × 32 bytes each)
/// stay in the first-level cache.
const TERM_BLOCK: usize = 128;

/// Four lanes of f64: plain arrays, which the compiler turns into vector code of the
/// width the calling function is compiled for.
type Quad = [f64; 4];

/// The moments M_{i,k} (|k| ≤ `order`, the first `terms` entries of `idx`) of the
/// segments `chunk` (start relative to the centre m, direction × length m, weight),
/// integrated with `nodes` (t on [0, 1], weight).
///
/// With AVX2 (detected at run time) the same source runs in 256-bit registers: the
/// same IEEE operations in the same order in every lane, so the same bits.
fn chunk_moments(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    #[cfg(target_arch = "x86_64")]
    if super::simd() >= super::Simd::Avx2 {
        // SAFETY: the CPU supports AVX2, checked by `simd`.
        return unsafe { chunk_moments_avx2(chunk, nodes, idx, order, terms) };
    }
    chunk_moments_body(chunk, nodes, idx, order, terms)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn chunk_moments_avx2(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    chunk_moments_body(chunk, nodes, idx, order, terms)
}

#[inline(always)]
fn chunk_moments_body(
    chunk: &[(Vec3, Vec3, f64)],
    nodes: &[(f64, f64)],
    idx: &Indices,
    order: usize,
    terms: usize,
) -> Vec<[f64; 3]> {
    // Every (segment, node) pair, four to a group: its point y and its weight vector
    // f = d · w · wt, padded with zero weights to whole groups.
    let mut ys: Vec<Vec3> = Vec::with_capacity(chunk.len() * nodes.len() + 3);
    let mut fs: Vec<Vec3> = Vec::with_capacity(chunk.len() * nodes.len() + 3);
    for &(a, d, w) in chunk {
        for &(t, wt) in nodes {
            ys.push(a + d * t);
            fs.push(d * (w * wt));
        }
    }
    while !ys.len().is_multiple_of(4) {
        ys.push(Vec3::zeros());
        fs.push(Vec3::zeros());
    }
    let groups = ys.len() / 4;
    let lane = |v: &[Vec3], g: usize, c: usize| -> Quad {
        [
            v[4 * g][c],
            v[4 * g + 1][c],
            v[4 * g + 2][c],
            v[4 * g + 3][c],
        ]
    };
    // Power tables: the rows (g, axis) hold y_axis^e, e = 0..=order, of group g.
    let width = order + 1;
    let mut powers: Vec<Quad> = vec![[1.0; 4]; groups * 3 * width];
    let mut weights: Vec<[Quad; 3]> = Vec::with_capacity(groups);
    for g in 0..groups {
        for axis in 0..3 {
            let y = lane(&ys, g, axis);
            let row = &mut powers[(g * 3 + axis) * width..(g * 3 + axis + 1) * width];
            for e in 1..width {
                let prev = row[e - 1];
                row[e] = std::array::from_fn(|j| prev[j] * y[j]);
            }
        }
        weights.push([lane(&fs, g, 0), lane(&fs, g, 1), lane(&fs, g, 2)]);
    }
    let mut m = vec![[0.0; 3]; terms];
    let mut sums = [[[0.0f64; 4]; 3]; TERM_BLOCK];
    for first in (0..terms).step_by(TERM_BLOCK) {
        let block = &idx.k[first..(first + TERM_BLOCK).min(terms)];
        for s in sums.iter_mut() {
            *s = [[0.0; 4]; 3];
        }
        for (g, f) in weights.iter().enumerate() {
            let base = g * 3 * width;
            let (px, rest) = powers[base..base + 3 * width].split_at(width);
            let (py, pz) = rest.split_at(width);
            for (s, k) in sums.iter_mut().zip(block) {
                let (a, b, c) = (px[k[0]], py[k[1]], pz[k[2]]);
                let mut mono = [0.0f64; 4];
                for j in 0..4 {
                    mono[j] = a[j] * b[j] * c[j];
                }
                for comp in 0..3 {
                    for j in 0..4 {
                        s[comp][j] += f[comp][j] * mono[j];
                    }
                }
            }
        }
        for (out, s) in m[first..].iter_mut().zip(&sums[..block.len()]) {
            for c in 0..3 {
                let v = s[c];
                out[c] = (v[0] + v[1]) + (v[2] + v[3]);
            }
        }
    }
    m
}

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

/// Entries of the multi-index table through degree MAX_ORDER + 1: C(MAX_ORDER + 4, 3).
const TERMS: usize = (MAX_ORDER + 2) * (MAX_ORDER + 3) * (MAX_ORDER + 4) / 6;

/// A per-thread scratch array, taken for one evaluation and put back when dropped
/// (every entry is written before it is read, so it is never cleared).
struct Scratch<T: 'static> {
    home: &'static std::thread::LocalKey<std::cell::Cell<Option<Box<T>>>>,
    made: fn() -> Box<T>,
    array: Option<Box<T>>,
}

impl<T: 'static> Scratch<T> {
    fn take(
        home: &'static std::thread::LocalKey<std::cell::Cell<Option<Box<T>>>>,
        made: fn() -> Box<T>,
    ) -> Self {
        let array = home.with(|c| c.take()).or_else(|| Some(made()));
        Scratch { home, made, array }
    }

    fn get(&mut self) -> &mut T {
        self.array.get_or_insert_with(self.made)
    }
}

impl<T: 'static> Drop for Scratch<T> {
    fn drop(&mut self) {
        if let Some(b) = self.array.take() {
            self.home.with(|c| c.set(Some(b)));
        }
    }
}

thread_local! {
    /// The Taylor coefficients a_k of [`FarField::b`] and [`FarField::a_degrees`].
    static COEFFICIENTS: std::cell::Cell<Option<Box<[f64; TERMS]>>> =
        const { std::cell::Cell::new(None) };
    /// The four-lane coefficients of [`FarField::b4`], with one extra slot held at zero.
    static LANES: std::cell::Cell<Option<Box<[wide::f64x4; TERMS + 1]>>> =
        const { std::cell::Cell::new(None) };
}

/// The scratch array of the one-point series.
fn coefficients() -> Scratch<[f64; TERMS]> {
    Scratch::take(&COEFFICIENTS, || Box::new([0.0; TERMS]))
}

/// The scratch array of the four-lane series.
fn lane_coefficients() -> Scratch<[wide::f64x4; TERMS + 1]> {
    Scratch::take(&LANES, || Box::new([wide::f64x4::ZERO; TERMS + 1]))
}

/// A source whose far field comes from its multipole expansion where that is within
/// the tolerance and cheaper, and from the direct sum elsewhere. Dipoles are always
/// summed directly.
pub struct Accelerated<'a> {
    source: &'a Conductors,
    far: Option<FarField>,
    tolerance: f64,
}

impl<'a> Accelerated<'a> {
    /// `source` with its expansion (none when `exact`, or when it has fewer than
    /// [`MIN_SEGMENTS`] segments); `tolerance` is relative to each point's |B|.
    pub fn new(source: &'a Conductors, tolerance: f64, exact: bool) -> Self {
        let far = if exact {
            None
        } else {
            FarField::with_order(source, MAX_ORDER)
        };
        Accelerated {
            source,
            far,
            tolerance,
        }
    }

    /// Like [`Accelerated::new`], but without an expansion when no point of `points`
    /// (m) lies outside 1.5 times the wires' bounding sphere, where the series may be
    /// used (then no point would use it). Whether a point takes the series depends only
    /// on the source, the point and the tolerance, never on the other points asked for:
    /// a `probe` at a map's grid point gives the map's value to the last digit. The
    /// degree kept depends on the source alone: 24 for 4096 segments or more, where the
    /// direct sum is dear enough to pay for the higher moments, 16 otherwise.
    pub fn for_points(
        source: &'a Conductors,
        points: &[Vec3],
        tolerance: f64,
        exact: bool,
    ) -> Self {
        let segments = source.segment_count();
        let use_far = !exact
            && segments >= MIN_SEGMENTS
            && source
                .bounding_sphere()
                .is_some_and(|(c, r)| points.iter().any(|p| usable_at((p - c).norm(), r)));
        let order = order_for_points(segments);
        let far = if use_far {
            FarField::with_order(source, order)
        } else {
            None
        };
        Accelerated {
            source,
            far,
            tolerance,
        }
    }

    /// The expansion, if one is in use.
    pub fn far(&self) -> Option<&FarField> {
        self.far.as_ref()
    }

    /// The series value at `r` plus the dipoles' fields (always direct), if the series
    /// holds there.
    fn far_b(&self, r: &Vec3) -> Option<Vec3> {
        let b = self.far.as_ref()?.b(r, self.tolerance)?.value;
        Some(self.with_dipoles(b, r))
    }

    /// `b` (the wires' field at `r`, T/A) plus the source's dipoles.
    fn with_dipoles(&self, b: Vec3, r: &Vec3) -> Vec3 {
        self.source
            .dipoles
            .iter()
            .fold(b, |acc, d| acc + d.b_per_amp(r))
    }
}

impl FieldSource for Accelerated<'_> {
    fn b_per_amp(&self, r: &Vec3) -> Vec3 {
        self.far_b(r).unwrap_or_else(|| self.source.b_per_amp(r))
    }

    fn a_per_amp(&self, r: &Vec3) -> Vec3 {
        self.source.a_per_amp(r)
    }

    fn a_and_gross_per_amp(&self, r: &Vec3) -> (Vec3, f64) {
        self.source.a_and_gross_per_amp(r)
    }

    fn b_block(&self, pts: &[Vec3; 4]) -> [Vec3; 4] {
        let b = self.b_many(pts);
        [b[0], b[1], b[2], b[3]]
    }

    fn b_many(&self, pts: &[Vec3]) -> Vec<Vec3> {
        let Some(far) = &self.far else {
            return self.source.b_many(pts);
        };
        // The series where it holds; the points where it does not are gathered and
        // summed directly in full blocks of four.
        let mut out = Vec::with_capacity(pts.len());
        let mut direct = Vec::new();
        for c in pts.chunks(4) {
            let series = far.b4(&super::padded_block(c), self.tolerance);
            for (i, p) in c.iter().enumerate() {
                match series[i] {
                    Some(e) => out.push(self.with_dipoles(e.value, p)),
                    None => {
                        direct.push(out.len());
                        out.push(*p);
                    }
                }
            }
        }
        let gathered: Vec<Vec3> = direct.iter().map(|&k| out[k]).collect();
        for (k, b) in direct.iter().zip(self.source.b_many(&gathered)) {
            out[*k] = b;
        }
        out
    }

    fn bounding_sphere(&self) -> Option<(Vec3, f64)> {
        self.source.bounding_sphere()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn avx2_moment_build_gives_the_same_bits_as_the_portable_build() {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // 37 wandering segments (a partial last group of four nodes) at degree 24.
            let mut rng = crate::field::TestLcg(99);
            let mut next = || rng.next();
            let chunk: Vec<(Vec3, Vec3, f64)> = (0..37)
                .map(|_| {
                    let a = Vec3::new(next(), next(), next()) * 0.02;
                    let d = Vec3::new(next(), next(), next()) * 0.003;
                    (a, d, 1.0 + next())
                })
                .collect();
            let order = MAX_ORDER;
            let idx = Indices::new(order + 1);
            let terms = idx.start[order + 1];
            let nodes = moment_nodes(order);
            // SAFETY: AVX2 was detected above.
            let fast = unsafe { chunk_moments_avx2(&chunk, &nodes, &idx, order, terms) };
            let slow = chunk_moments_body(&chunk, &nodes, &idx, order, terms);
            assert_eq!(fast.len(), terms);
            for (k, (a, b)) in fast.iter().zip(&slow).enumerate() {
                for c in 0..3 {
                    assert_eq!(a[c].to_bits(), b[c].to_bits(), "term {k}");
                }
            }
            // And the moments are the sums they should be: the monopole moment of each
            // component is Σ w·d (the nodes' weights add to one).
            let m0: Vec3 = chunk.iter().map(|(_, d, w)| d * *w).sum();
            for c in 0..3 {
                assert!((slow[0][c] - m0[c]).abs() <= 1e-15 * m0.norm());
            }
        }
    }
}
