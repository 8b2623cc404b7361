//! The segment sums over a polyline: the vector potential, four segments per SIMD
//! group, and the field, four points per group.
//!
//! Structure of arrays: vertex coordinates and each segment's unit direction and length
//! sit in separate arrays. For a field point the distance to every vertex is computed
//! once (shared by the two segments meeting there), then each group of four segments
//! takes ln((Ri+Rf+L)/(Ri+Rf−L)) as a short series in t = L/(Ri+Rf), with one vector
//! division and no logarithm. Groups with a segment close enough for cancellation or
//! the wire radius to matter fall back to the library logarithm or the careful scalar
//! form lane by lane. The order of additions is fixed, so results do not depend on the
//! thread count, and the 256-bit (AVX2) and portable paths do the same operations in
//! the same order, so they give the same bits. A CPU with AVX-512 runs the eight-lane
//! forms of [`super::avx512`] instead, whose square roots and quotients are within an
//! ulp of these: results there agree with the other paths to rounding (a few ulp of
//! each sum's gross size), not to the bit.

use super::Vec3;
use std::cell::RefCell;
use wide::{f64x2, f64x4};

/// A polyline's geometry laid out for the vector kernel.
#[derive(Clone, Debug, Default)]
pub(crate) struct Soa {
    x: Vec<f64>,
    y: Vec<f64>,
    z: Vec<f64>,
    ex: Vec<f64>,
    ey: Vec<f64>,
    ez: Vec<f64>,
    len: Vec<f64>,
    /// Segment vectors b − a (m).
    lx: Vec<f64>,
    ly: Vec<f64>,
    lz: Vec<f64>,
    /// L + max(L/100, 2a) per segment (m): the eight-lane field's safe Ri + Rf.
    reach: Vec<f64>,
    /// The wire radius a the reach was made for (m).
    wire_radius: f64,
}

/// The per-segment arrays of the eight-lane field kernel, all in metres.
#[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
pub(crate) struct FieldArrays<'a> {
    /// Segment vectors b − a: x, y and z.
    pub(crate) lx: &'a [f64],
    pub(crate) ly: &'a [f64],
    pub(crate) lz: &'a [f64],
    /// Segment lengths L.
    pub(crate) len: &'a [f64],
    /// L + max(L/100, 2a): beyond this Ri + Rf the closed form is safe.
    pub(crate) reach: &'a [f64],
}

impl Soa {
    /// Lays out `vertices` (m) of a wire of radius `wire_radius` (m).
    pub(crate) fn new(vertices: &[Vec3], wire_radius: f64) -> Self {
        let mut s = Soa {
            wire_radius,
            ..Soa::default()
        };
        for v in vertices {
            s.x.push(v.x);
            s.y.push(v.y);
            s.z.push(v.z);
        }
        for w in vertices.windows(2) {
            let d = w[1] - w[0];
            let l = d.norm();
            let e = if l > 0.0 { d / l } else { Vec3::zeros() };
            s.ex.push(e.x);
            s.ey.push(e.y);
            s.ez.push(e.z);
            s.len.push(l);
            s.lx.push(d.x);
            s.ly.push(d.y);
            s.lz.push(d.z);
            s.reach.push(l + (0.01 * l).max(2.0 * wire_radius));
        }
        s
    }

    /// The wire radius (m) the layout was made for.
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    pub(crate) fn wire_radius(&self) -> f64 {
        self.wire_radius
    }

    /// Each segment's vector b − a, length and reach L + max(L/100, 2a) (m).
    #[cfg_attr(not(target_arch = "x86_64"), allow(dead_code))]
    pub(crate) fn field_arrays(&self) -> FieldArrays<'_> {
        FieldArrays {
            lx: &self.lx,
            ly: &self.ly,
            lz: &self.lz,
            len: &self.len,
            reach: &self.reach,
        }
    }

    /// Number of segments laid out.
    pub(crate) fn segments(&self) -> usize {
        self.len.len()
    }

    /// The vertex coordinates (m): x, y and z, one more than the segments.
    pub(crate) fn vertex_arrays(&self) -> (&[f64], &[f64], &[f64]) {
        (&self.x, &self.y, &self.z)
    }

    /// Each segment's unit direction (x, y, z) and length (m).
    pub(crate) fn segment_arrays(&self) -> (&[f64], &[f64], &[f64], &[f64]) {
        (&self.ex, &self.ey, &self.ez, &self.len)
    }

    /// Unit direction of segment `k`.
    pub(crate) fn direction(&self, k: usize) -> Vec3 {
        Vec3::new(self.ex[k], self.ey[k], self.ez[k])
    }
}

thread_local! {
    static DISTANCES: RefCell<Vec<f64>> = const { RefCell::new(Vec::new()) };
}

fn load(v: &[f64], k: usize) -> f64x4 {
    f64x4::from([v[k], v[k + 1], v[k + 2], v[k + 3]])
}

/// Σ ê·ln((Ri+Rf+L)/(Ri+Rf−L)) over segments and Σ |ln(...)|, for the point `r` (m)
/// and wire radius `radius` (m). `careful(k, r_i, r_f)` gives the log of segment `k`
/// for points near it.
///
/// With 512-bit vectors (AVX-512F, detected at run time) eight segments run at once
/// ([`super::avx512::log_sum_oct`]); with 256-bit vectors (AVX2) four, with 128-bit
/// vectors two at a time. The last two do the same IEEE operations in the same order
/// in every lane (Rust never contracts a·b + c into a fused multiply-add), so they give
/// the same bits.
pub(crate) fn log_sum<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: F,
) -> (Vec3, f64) {
    DISTANCES.with(|buf| {
        let mut dist = buf.borrow_mut();
        #[cfg(target_arch = "x86_64")]
        if super::avx512::available() {
            // SAFETY: the CPU supports AVX-512F, checked just above.
            return unsafe { super::avx512::log_sum_oct(soa, r, radius, &careful, &mut dist) };
        }
        #[cfg(target_arch = "x86_64")]
        if super::simd() >= super::Simd::Avx2 {
            // SAFETY: the CPU supports AVX2, checked by `simd`.
            return unsafe { log_sum_avx2(soa, r, radius, &careful, &mut dist) };
        }
        log_sum_body(soa, r, radius, &careful, &mut dist)
    })
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn log_sum_avx2<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: &F,
    dist: &mut Vec<f64>,
) -> (Vec3, f64) {
    use std::arch::x86_64::*;
    distances_into(soa, r, dist);
    let dist = &dist[..];
    let m = soa.segments();
    let two_a = 2.0 * radius;
    let groups = m / 4;
    let c = |i: usize| _mm256_set1_pd(ATANH[i]);
    let (c0, c1, c2, c3, c4, c5) = (c(0), c(1), c(2), c(3), c(4), c(5));
    let (c6, c7, c8, c9, c10, c11) = (c(6), c(7), c(8), c(9), c(10), c(11));
    let two = _mm256_set1_pd(2.0);
    let two_a_v = _mm256_set1_pd(two_a);
    let hundredth = _mm256_set1_pd(0.01);
    let t_max = _mm256_set1_pd(SERIES_T);
    let t_short = _mm256_set1_pd(SHORT_T);
    let abs_mask = _mm256_castsi256_pd(_mm256_set1_epi64x(0x7fff_ffff_ffff_ffff));
    let (mut ax, mut ay, mut az, mut ag) = (
        _mm256_setzero_pd(),
        _mm256_setzero_pd(),
        _mm256_setzero_pd(),
        _mm256_setzero_pd(),
    );
    assert!(dist.len() > m && soa.ex.len() >= m && soa.ey.len() >= m && soa.ez.len() >= m);
    let (dp, lp) = (dist.as_ptr(), soa.len.as_ptr());
    let (xp, yp, zp) = (soa.ex.as_ptr(), soa.ey.as_ptr(), soa.ez.as_ptr());
    for g in 0..groups {
        let k = 4 * g;
        // SAFETY: k + 4 ≤ m < dist.len() and every other array holds m values (asserted
        // above), so each four-wide load stays inside its slice.
        let (ri, rf, l) = unsafe {
            (
                _mm256_loadu_pd(dp.add(k)),
                _mm256_loadu_pd(dp.add(k + 1)),
                _mm256_loadu_pd(lp.add(k)),
            )
        };
        // The same operations, in the same order, as the portable body,
        // `short_series` and `atanh_series`.
        let s = _mm256_add_pd(ri, rf);
        let u = _mm256_sub_pd(s, l);
        let t = _mm256_div_pd(l, s);
        let x = _mm256_mul_pd(t, t);
        let x2 = _mm256_mul_pd(x, x);
        let x4 = _mm256_mul_pd(x2, x2);
        let a0 = _mm256_add_pd(c0, _mm256_mul_pd(c1, x));
        let a1 = _mm256_add_pd(c2, _mm256_mul_pd(c3, x));
        let a2 = _mm256_add_pd(c4, _mm256_mul_pd(c5, x));
        let p = if _mm256_movemask_pd(_mm256_cmp_pd::<_CMP_LE_OQ>(t, t_short)) == 0b1111 {
            _mm256_add_pd(
                _mm256_add_pd(a0, _mm256_mul_pd(a1, x2)),
                _mm256_mul_pd(a2, x4),
            )
        } else {
            let x8 = _mm256_mul_pd(x4, x4);
            let a3 = _mm256_add_pd(c6, _mm256_mul_pd(c7, x));
            let a4 = _mm256_add_pd(c8, _mm256_mul_pd(c9, x));
            let a5 = _mm256_add_pd(c10, _mm256_mul_pd(c11, x));
            let b0 = _mm256_add_pd(a0, _mm256_mul_pd(a1, x2));
            let b1 = _mm256_add_pd(a2, _mm256_mul_pd(a3, x2));
            let b2 = _mm256_add_pd(a4, _mm256_mul_pd(a5, x2));
            _mm256_add_pd(
                _mm256_add_pd(b0, _mm256_mul_pd(b1, x4)),
                _mm256_mul_pd(b2, x8),
            )
        };
        let mut log = _mm256_mul_pd(_mm256_mul_pd(two, t), p);
        let simple = _mm256_and_pd(
            _mm256_and_pd(
                _mm256_cmp_pd::<_CMP_GE_OQ>(u, two_a_v),
                _mm256_cmp_pd::<_CMP_GT_OQ>(u, _mm256_mul_pd(hundredth, l)),
            ),
            _mm256_cmp_pd::<_CMP_LE_OQ>(t, t_max),
        );
        if _mm256_movemask_pd(simple) != 0b1111 {
            let mut lanes = [0.0f64; 4];
            for (j, v) in lanes.iter_mut().enumerate() {
                *v = lane_log(k + j, dist, soa.len[k + j], two_a, careful);
            }
            // SAFETY: `lanes` holds four values.
            log = unsafe { _mm256_loadu_pd(lanes.as_ptr()) };
        }
        // SAFETY: as for the loads above.
        let (ex, ey, ez) = unsafe {
            (
                _mm256_loadu_pd(xp.add(k)),
                _mm256_loadu_pd(yp.add(k)),
                _mm256_loadu_pd(zp.add(k)),
            )
        };
        ax = _mm256_add_pd(ax, _mm256_mul_pd(ex, log));
        ay = _mm256_add_pd(ay, _mm256_mul_pd(ey, log));
        az = _mm256_add_pd(az, _mm256_mul_pd(ez, log));
        ag = _mm256_add_pd(ag, _mm256_and_pd(log, abs_mask));
    }
    let lanes = [lanes256(ax), lanes256(ay), lanes256(az), lanes256(ag)];
    finish_log_sum(lanes, 4 * groups, soa, dist, two_a, careful)
}

/// The four lanes of `v`.
#[cfg(target_arch = "x86_64")]
#[inline(always)]
fn lanes256(v: std::arch::x86_64::__m256d) -> [f64; 4] {
    // SAFETY: __m256d and [f64; 4] have the same size and any bits are valid f64s.
    unsafe { std::mem::transmute::<std::arch::x86_64::__m256d, [f64; 4]>(v) }
}

/// The end of both [`log_sum`] paths: the lane sums `[Σx, Σy, Σz, Σ|log|]` added in a
/// fixed order, then the segments from `from` on that did not fill a group of four.
#[inline(always)]
pub(super) fn finish_log_sum<F: Fn(usize, f64, f64) -> f64>(
    lanes: [[f64; 4]; 4],
    from: usize,
    soa: &Soa,
    dist: &[f64],
    two_a: f64,
    careful: &F,
) -> (Vec3, f64) {
    let total = |a: [f64; 4]| (a[0] + a[1]) + (a[2] + a[3]);
    let mut sum = Vec3::new(total(lanes[0]), total(lanes[1]), total(lanes[2]));
    let mut gross = total(lanes[3]);
    for k in from..soa.segments() {
        let log = lane_log(k, dist, soa.len[k], two_a, careful);
        sum += soa.direction(k) * log;
        gross += log.abs();
    }
    (sum, gross)
}

/// Distances (m) from `r` to every vertex of `soa`, into `dist`.
#[inline(always)]
fn distances_into(soa: &Soa, r: &Vec3, dist: &mut Vec<f64>) {
    let n = soa.x.len();
    // Every entry is overwritten: only a change of length touches the allocation.
    dist.resize(n, 0.0);
    for (((d, x), y), z) in dist.iter_mut().zip(&soa.x).zip(&soa.y).zip(&soa.z) {
        let (dx, dy, dz) = (r.x - x, r.y - y, r.z - z);
        *d = (dx * dx + dy * dy + dz * dz).sqrt();
    }
}

/// Largest L/(Ri+Rf) for which the log is taken from the atanh series.
pub(super) const SERIES_T: f64 = 0.2;

/// 1/(2j+1), j = 0..=11: ln((1+t)/(1−t)) = 2t Σ t^2j/(2j+1) (Abramowitz & Stegun
/// 4.1.28 with 4.6.22). For t ≤ 0.2 the first omitted term is under 0.04^12/25 < 1e-18
/// of the sum.
pub(super) const ATANH: [f64; 12] = [
    1.0,
    1.0 / 3.0,
    1.0 / 5.0,
    1.0 / 7.0,
    1.0 / 9.0,
    1.0 / 11.0,
    1.0 / 13.0,
    1.0 / 15.0,
    1.0 / 17.0,
    1.0 / 19.0,
    1.0 / 21.0,
    1.0 / 23.0,
];

/// Largest L/(Ri+Rf) for which the first six terms of the series suffice: the first
/// omitted term is under 0.04^12/13 < 2e-18 of the sum.
pub(super) const SHORT_T: f64 = 0.04;

/// ln((1+t)/(1−t)) for 0 ≤ t ≤ [`SHORT_T`] from the first six terms of its series, `t2`
/// = t·t; the first steps are those of [`atanh_series`].
#[inline(always)]
fn short_series(t: f64, t2: f64) -> f64 {
    let c = &ATANH;
    let x = t2;
    let x2 = x * x;
    let x4 = x2 * x2;
    let a0 = c[0] + c[1] * x;
    let a1 = c[2] + c[3] * x;
    let a2 = c[4] + c[5] * x;
    let p = (a0 + a1 * x2) + a2 * x4;
    2.0 * t * p
}

/// ln((1+t)/(1−t)) for 0 ≤ t ≤ [`SERIES_T`] from its series, `t2` = t·t. Estrin's
/// scheme: the twelve terms in five dependent steps rather than Horner's twenty-two,
/// so that the group's lanes do not wait on one long chain.
#[inline(always)]
fn atanh_series(t: f64, t2: f64) -> f64 {
    let c = &ATANH;
    let x = t2;
    let x2 = x * x;
    let x4 = x2 * x2;
    let x8 = x4 * x4;
    let a0 = c[0] + c[1] * x;
    let a1 = c[2] + c[3] * x;
    let a2 = c[4] + c[5] * x;
    let a3 = c[6] + c[7] * x;
    let a4 = c[8] + c[9] * x;
    let a5 = c[10] + c[11] * x;
    let b0 = a0 + a1 * x2;
    let b1 = a2 + a3 * x2;
    let b2 = a4 + a5 * x2;
    let p = (b0 + b1 * x4) + b2 * x8;
    2.0 * t * p
}

/// [`log_sum`] by the portable body, whatever the CPU: the reference of the wider
/// paths' tests.
#[cfg(test)]
pub(super) fn portable_log_sum<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: &F,
) -> (Vec3, f64) {
    log_sum_body(soa, r, radius, careful, &mut Vec::new())
}

/// The portable body of [`log_sum`]: fixed four-lane arrays, which the compiler turns
/// into two-lane vector code.
#[inline(always)]
fn log_sum_body<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: &F,
    dist: &mut Vec<f64>,
) -> (Vec3, f64) {
    distances_into(soa, r, dist);
    let dist = &dist[..];
    let m = soa.segments();
    // Ri + Rf = s, t = L/s: ln((s+L)/(s−L)) = ln((1+t)/(1−t)), a polynomial in t² times t
    // for t ≤ SERIES_T (one division and no logarithm), accurate to a few ulp even where
    // the ratio itself would round near 1.
    let two_a = 2.0 * radius;
    let (mut ax, mut ay, mut az, mut ag) = ([0.0f64; 4], [0.0f64; 4], [0.0f64; 4], [0.0f64; 4]);
    let groups = m / 4;
    let four = |c: &[f64]| -> [f64; 4] { [c[0], c[1], c[2], c[3]] };
    let body = 4 * groups;
    let columns = dist[..body]
        .chunks_exact(4)
        .zip(dist[1..=body].chunks_exact(4))
        .zip(soa.len[..body].chunks_exact(4))
        .zip(soa.ex[..body].chunks_exact(4))
        .zip(soa.ey[..body].chunks_exact(4))
        .zip(soa.ez[..body].chunks_exact(4));
    for (g, (((((ri, rf), l), ex), ey), ez)) in columns.enumerate() {
        let (ri, rf, l) = (four(ri), four(rf), four(l));
        let mut s = [0.0f64; 4];
        let mut u = [0.0f64; 4];
        let mut t = [0.0f64; 4];
        let mut t2 = [0.0f64; 4];
        for j in 0..4 {
            s[j] = ri[j] + rf[j];
            u[j] = s[j] - l[j];
            t[j] = l[j] / s[j];
            t2[j] = t[j] * t[j];
        }
        let mut log = [0.0f64; 4];
        let mut simple = true;
        let short = (t[0] <= SHORT_T) & (t[1] <= SHORT_T) & (t[2] <= SHORT_T) & (t[3] <= SHORT_T);
        for j in 0..4 {
            log[j] = if short {
                short_series(t[j], t2[j])
            } else {
                atanh_series(t[j], t2[j])
            };
            simple &= (u[j] >= two_a) & (u[j] > 0.01 * l[j]) & (t[j] <= SERIES_T);
        }
        if !simple {
            let k = 4 * g;
            for (j, v) in log.iter_mut().enumerate() {
                *v = lane_log(k + j, dist, l[j], two_a, careful);
            }
        }
        let (ex, ey, ez) = (four(ex), four(ey), four(ez));
        for j in 0..4 {
            ax[j] += ex[j] * log[j];
        }
        for j in 0..4 {
            ay[j] += ey[j] * log[j];
        }
        for j in 0..4 {
            az[j] += ez[j] * log[j];
        }
        for j in 0..4 {
            ag[j] += log[j].abs();
        }
    }
    finish_log_sum([ax, ay, az, ag], 4 * groups, soa, dist, two_a, careful)
}

/// The log of segment `k` when the series does not apply: the closed form where it is
/// safe, else `careful`.
#[inline(never)]
pub(super) fn lane_log<F: Fn(usize, f64, f64) -> f64>(
    k: usize,
    dist: &[f64],
    l: f64,
    two_a: f64,
    careful: &F,
) -> f64 {
    let (ri, rf) = (dist[k], dist[k + 1]);
    let s = ri + rf;
    let u = s - l;
    if u >= two_a && u > 0.01 * l {
        let t = l / s;
        if t <= SHORT_T {
            short_series(t, t * t)
        } else if t <= SERIES_T {
            atanh_series(t, t * t)
        } else {
            ((s + l) / u).ln()
        }
    } else {
        careful(k, ri, rf)
    }
}

/// Σ of the segments' B (without μ0/4π) at `r` (m) for squared wire radius `a2` (m²):
/// 2L(Ri+Rf)/(Ri Rf u (Ri+Rf+L)) · ê × (r − a) with u = Ri+Rf−L, four segments at a
/// time. `careful(k, r_i, r_f)` gives segment `k`'s B for points near its line (inside
/// the wire radius, or where u loses digits).
pub(crate) fn field_sum<F: Fn(usize, f64, f64) -> Vec3>(
    soa: &Soa,
    r: &Vec3,
    a2: f64,
    careful: F,
) -> Vec3 {
    DISTANCES.with(|buf| {
        let mut dist = buf.borrow_mut();
        distances_into(soa, r, &mut dist);
        segment_fields(soa, r, &dist, a2, careful)
    })
}

fn segment_fields<F: Fn(usize, f64, f64) -> Vec3>(
    soa: &Soa,
    r: &Vec3,
    dist: &[f64],
    a2: f64,
    careful: F,
) -> Vec3 {
    let m = soa.segments();
    let (rx, ry, rz) = (f64x4::splat(r.x), f64x4::splat(r.y), f64x4::splat(r.z));
    let (mut bx, mut by, mut bz) = (f64x4::ZERO, f64x4::ZERO, f64x4::ZERO);
    let (two, hundredth, wire2) = (f64x4::splat(2.0), f64x4::splat(0.01), f64x4::splat(a2));
    let groups = m / 4;
    let mut extra = Vec3::zeros();
    for g in 0..groups {
        let k = 4 * g;
        let (dx, dy, dz) = (
            rx - load(&soa.x, k),
            ry - load(&soa.y, k),
            rz - load(&soa.z, k),
        );
        let (ex, ey, ez) = (load(&soa.ex, k), load(&soa.ey, k), load(&soa.ez, k));
        // ê × (r − a)
        let cx = ey * dz - ez * dy;
        let cy = ez * dx - ex * dz;
        let cz = ex * dy - ey * dx;
        let rho2 = cx * cx + cy * cy + cz * cz;
        let (ri, rf, l) = (load(dist, k), load(dist, k + 1), load(&soa.len, k));
        let s = ri + rf;
        let u = s - l;
        let safe = rho2.simd_ge(wire2) & u.simd_gt(l * hundredth);
        let mut factor = two * l * s / (ri * rf * u * (s + l));
        if !safe.all() {
            let mut lanes = factor.to_array();
            let ok = safe.to_bitmask();
            for (lane, value) in lanes.iter_mut().enumerate() {
                if ok & (1 << lane) == 0 {
                    *value = 0.0;
                    extra += careful(k + lane, dist[k + lane], dist[k + lane + 1]);
                }
            }
            factor = f64x4::from(lanes);
        }
        bx += cx * factor;
        by += cy * factor;
        bz += cz * factor;
    }
    let mut sum = Vec3::new(bx.reduce_add(), by.reduce_add(), bz.reduce_add()) + extra;
    for k in 4 * groups..m {
        sum += careful(k, dist[k], dist[k + 1]);
    }
    sum
}

/// Σ of the segments' B (without μ0/4π) at four points at once, one per SIMD lane: the
/// segments stream past while the points stay in registers, and each vertex distance
/// is computed once and carried to the next segment, so every segment–point pair costs
/// one square root and one division. `careful(k, lane)` gives segment `k`'s B at point
/// `lane` where the closed form is unsafe (inside the wire, or where Ri+Rf−L loses
/// digits). Each lane's sum runs in segment order, so a point's result does not depend
/// on the other points of its block. (On a CPU with AVX-512 a polyline sends its blocks
/// to the eight-point [`super::avx512::field_oct`] instead.)
pub(crate) fn field_block<F: Fn(usize, usize) -> Vec3>(
    soa: &Soa,
    pts: &[Vec3; 4],
    a2: f64,
    careful: F,
) -> [Vec3; 4] {
    // With 256-bit vectors (AVX2, detected at run time) the four lanes run at once. The
    // operations are the same IEEE operations in the same order as the two-lane path
    // (Rust never contracts a·b + c into a fused multiply-add), so both give the same
    // bits.
    #[cfg(target_arch = "x86_64")]
    if super::simd() >= super::Simd::Avx2 {
        // SAFETY: the CPU supports AVX2, checked by `simd`.
        return unsafe { field_quad_avx2(soa, pts, a2, &careful) };
    }
    // Two passes of two lanes: with 128-bit vectors the whole loop state then stays in
    // the sixteen registers (four lanes at once spill to the stack).
    let lo = field_pair(soa, [pts[0], pts[1]], a2, &careful);
    let hi = field_pair(soa, [pts[2], pts[3]], a2, |k, lane| careful(k, lane + 2));
    [lo[0], lo[1], hi[0], hi[1]]
}

fn field_pair<F: Fn(usize, usize) -> Vec3>(
    soa: &Soa,
    pts: [Vec3; 2],
    a2: f64,
    careful: F,
) -> [Vec3; 2] {
    let m = soa.segments();
    let rx = f64x2::from([pts[0].x, pts[1].x]);
    let ry = f64x2::from([pts[0].y, pts[1].y]);
    let rz = f64x2::from([pts[0].z, pts[1].z]);
    let (mut bx, mut by, mut bz) = (f64x2::ZERO, f64x2::ZERO, f64x2::ZERO);
    let mut extra = [Vec3::zeros(); 2];
    if m == 0 {
        return extra;
    }
    let (two, hundredth, wire2) = (f64x2::splat(2.0), f64x2::splat(0.01), f64x2::splat(a2));
    let mut dx = rx - f64x2::splat(soa.x[0]);
    let mut dy = ry - f64x2::splat(soa.y[0]);
    let mut dz = rz - f64x2::splat(soa.z[0]);
    let mut ri = (dx * dx + dy * dy + dz * dz).sqrt();
    for k in 0..m {
        let nx = rx - f64x2::splat(soa.x[k + 1]);
        let ny = ry - f64x2::splat(soa.y[k + 1]);
        let nz = rz - f64x2::splat(soa.z[k + 1]);
        let rf = (nx * nx + ny * ny + nz * nz).sqrt();
        let (ex, ey, ez) = (
            f64x2::splat(soa.ex[k]),
            f64x2::splat(soa.ey[k]),
            f64x2::splat(soa.ez[k]),
        );
        let l = f64x2::splat(soa.len[k]);
        // ê × (r − a)
        let cx = ey * dz - ez * dy;
        let cy = ez * dx - ex * dz;
        let cz = ex * dy - ey * dx;
        let rho2 = cx * cx + cy * cy + cz * cz;
        let s = ri + rf;
        let u = s - l;
        let safe = rho2.simd_ge(wire2) & u.simd_gt(l * hundredth);
        let mut factor = two * l * s / (ri * rf * u * (s + l));
        let ok = safe.to_bitmask();
        if ok != 0b11 {
            let mut lanes = factor.to_array();
            for (lane, value) in lanes.iter_mut().enumerate() {
                if ok & (1 << lane) == 0 {
                    *value = 0.0;
                    extra[lane] += careful(k, lane);
                }
            }
            factor = f64x2::from(lanes);
        }
        bx += cx * factor;
        by += cy * factor;
        bz += cz * factor;
        (dx, dy, dz, ri) = (nx, ny, nz, rf);
    }
    let (bx, by, bz) = (bx.to_array(), by.to_array(), bz.to_array());
    std::array::from_fn(|lane| Vec3::new(bx[lane], by[lane], bz[lane]) + extra[lane])
}

/// [`field_pair`] for four lanes at once in 256-bit registers: the same IEEE
/// operations in the same order, so the same bits.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn field_quad_avx2<F: Fn(usize, usize) -> Vec3>(
    soa: &Soa,
    pts: &[Vec3; 4],
    a2: f64,
    careful: &F,
) -> [Vec3; 4] {
    use std::arch::x86_64::*;
    let m = soa.segments();
    let mut extra = [Vec3::zeros(); 4];
    if m == 0 {
        return extra;
    }
    let lanes = lanes256;
    let rx = _mm256_setr_pd(pts[0].x, pts[1].x, pts[2].x, pts[3].x);
    let ry = _mm256_setr_pd(pts[0].y, pts[1].y, pts[2].y, pts[3].y);
    let rz = _mm256_setr_pd(pts[0].z, pts[1].z, pts[2].z, pts[3].z);
    let (mut bx, mut by, mut bz) = (
        _mm256_setzero_pd(),
        _mm256_setzero_pd(),
        _mm256_setzero_pd(),
    );
    let two = _mm256_set1_pd(2.0);
    let hundredth = _mm256_set1_pd(0.01);
    let wire2 = _mm256_set1_pd(a2);
    let norm = |x: __m256d, y: __m256d, z: __m256d| {
        _mm256_sqrt_pd(_mm256_add_pd(
            _mm256_add_pd(_mm256_mul_pd(x, x), _mm256_mul_pd(y, y)),
            _mm256_mul_pd(z, z),
        ))
    };
    let mut dx = _mm256_sub_pd(rx, _mm256_set1_pd(soa.x[0]));
    let mut dy = _mm256_sub_pd(ry, _mm256_set1_pd(soa.y[0]));
    let mut dz = _mm256_sub_pd(rz, _mm256_set1_pd(soa.z[0]));
    let mut ri = norm(dx, dy, dz);
    for k in 0..m {
        let nx = _mm256_sub_pd(rx, _mm256_set1_pd(soa.x[k + 1]));
        let ny = _mm256_sub_pd(ry, _mm256_set1_pd(soa.y[k + 1]));
        let nz = _mm256_sub_pd(rz, _mm256_set1_pd(soa.z[k + 1]));
        let rf = norm(nx, ny, nz);
        let ex = _mm256_set1_pd(soa.ex[k]);
        let ey = _mm256_set1_pd(soa.ey[k]);
        let ez = _mm256_set1_pd(soa.ez[k]);
        let l = _mm256_set1_pd(soa.len[k]);
        // ê × (r − a)
        let cx = _mm256_sub_pd(_mm256_mul_pd(ey, dz), _mm256_mul_pd(ez, dy));
        let cy = _mm256_sub_pd(_mm256_mul_pd(ez, dx), _mm256_mul_pd(ex, dz));
        let cz = _mm256_sub_pd(_mm256_mul_pd(ex, dy), _mm256_mul_pd(ey, dx));
        let rho2 = _mm256_add_pd(
            _mm256_add_pd(_mm256_mul_pd(cx, cx), _mm256_mul_pd(cy, cy)),
            _mm256_mul_pd(cz, cz),
        );
        let s = _mm256_add_pd(ri, rf);
        let u = _mm256_sub_pd(s, l);
        let safe = _mm256_and_pd(
            _mm256_cmp_pd::<_CMP_GE_OQ>(rho2, wire2),
            _mm256_cmp_pd::<_CMP_GT_OQ>(u, _mm256_mul_pd(l, hundredth)),
        );
        // 2·l·s / (ri·rf·u·(s + l)), grouped as the two-lane path groups it.
        let mut factor = _mm256_div_pd(
            _mm256_mul_pd(_mm256_mul_pd(two, l), s),
            _mm256_mul_pd(_mm256_mul_pd(_mm256_mul_pd(ri, rf), u), _mm256_add_pd(s, l)),
        );
        let ok = _mm256_movemask_pd(safe);
        if ok != 0b1111 {
            let mut f = lanes(factor);
            for (lane, value) in f.iter_mut().enumerate() {
                if ok & (1 << lane) == 0 {
                    *value = 0.0;
                    extra[lane] += careful(k, lane);
                }
            }
            factor = _mm256_setr_pd(f[0], f[1], f[2], f[3]);
        }
        bx = _mm256_add_pd(bx, _mm256_mul_pd(cx, factor));
        by = _mm256_add_pd(by, _mm256_mul_pd(cy, factor));
        bz = _mm256_add_pd(bz, _mm256_mul_pd(cz, factor));
        (dx, dy, dz, ri) = (nx, ny, nz, rf);
    }
    let (bx, by, bz) = (lanes(bx), lanes(by), lanes(bz));
    std::array::from_fn(|lane| Vec3::new(bx[lane], by[lane], bz[lane]) + extra[lane])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn four_lane_avx2_path_gives_the_same_bits_as_the_two_lane_path() {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // A wandering polyline and points near and far, some inside the wire and
            // on segment extensions (the careful lanes).
            let mut rng = crate::field::TestLcg(12345);
            let v = rng.wandering(300);
            let soa = Soa::new(&v, 1e-3);
            let a2 = 1e-6;
            let careful = |k: usize, lane: usize| Vec3::new(k as f64, lane as f64, 1.0);
            for trial in 0..200 {
                let pts: [Vec3; 4] = std::array::from_fn(|l| rng.near_and_far(&v, trial, l));
                // SAFETY: AVX2 was detected above.
                let fast = unsafe { field_quad_avx2(&soa, &pts, a2, &careful) };
                let lo = field_pair(&soa, [pts[0], pts[1]], a2, careful);
                let hi = field_pair(&soa, [pts[2], pts[3]], a2, |k, l| careful(k, l + 2));
                let slow = [lo[0], lo[1], hi[0], hi[1]];
                for l in 0..4 {
                    for c in 0..3 {
                        assert_eq!(fast[l][c].to_bits(), slow[l][c].to_bits(), "trial {trial}");
                    }
                }
            }
        }
    }

    #[test]
    fn avx2_potential_path_gives_the_same_bits_as_the_portable_path() {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // A wandering polyline of 301 segments (a tail after the four-wide groups)
            // and points near and far: on vertices and segments (careful lanes), close
            // (closed-form lanes, t > SERIES_T) and far (series lanes).
            let mut rng = crate::field::TestLcg(777);
            let v = rng.wandering(301);
            let mut next = || rng.next();
            let soa = Soa::new(&v, 1e-3);
            let radius = 1e-3;
            let careful = |k: usize, ri: f64, rf: f64| (k as f64) + ri * 3.0 - rf;
            let mut dist = Vec::new();
            let mut series_lanes = false;
            for trial in 0..300 {
                let r = match trial % 4 {
                    0 => v[(trial * 7) % v.len()],
                    1 => (v[trial % 301] + v[trial % 301 + 1]) / 2.0 + Vec3::new(0.0, 0.0, 2e-3),
                    _ => Vec3::new(next(), next(), next()) * 0.5,
                };
                // SAFETY: AVX2 was detected above.
                let fast = unsafe { log_sum_avx2(&soa, &r, radius, &careful, &mut dist) };
                series_lanes |= soa
                    .len
                    .iter()
                    .zip(dist.windows(2))
                    .any(|(l, d)| l / (d[0] + d[1]) <= SERIES_T);
                let slow = log_sum_body(&soa, &r, radius, &careful, &mut dist);
                for c in 0..3 {
                    assert_eq!(fast.0[c].to_bits(), slow.0[c].to_bits(), "trial {trial}");
                }
                assert_eq!(fast.1.to_bits(), slow.1.to_bits(), "trial {trial}");
            }
            assert!(series_lanes);
        }
    }

    #[test]
    fn series_log_matches_the_library_log1p_to_a_few_ulp() {
        // ln((1+t)/(1−t)) = ln(1 + 2t/(1−t)) (A&S 4.1.28 with 4.6.22); std's ln_1p is the
        // independent reference, its argument rounded twice (about 2 ulp).
        let mut worst = 0.0f64;
        for k in 1..=20_000 {
            let t = SERIES_T * k as f64 / 20_000.0 * (1.0 + 1e-9 * (k % 7) as f64);
            let t = t.min(SERIES_T);
            let reference = (2.0 * t / (1.0 - t)).ln_1p();
            let err = (atanh_series(t, t * t) - reference).abs() / reference;
            worst = worst.max(err);
        }
        for t in [1e-300f64, 1e-20, 1e-9, 1e-4] {
            let reference = (2.0 * t / (1.0 - t)).ln_1p();
            worst = worst.max((atanh_series(t, t * t) - reference).abs() / reference);
        }
        // The six-term form on its own range.
        for k in 1..=20_000 {
            let t = SHORT_T * k as f64 / 20_000.0;
            let reference = (2.0 * t / (1.0 - t)).ln_1p();
            worst = worst.max((short_series(t, t * t) - reference).abs() / reference);
        }
        assert!(worst < 6.0 * f64::EPSILON, "worst relative error {worst:e}");
    }
}
