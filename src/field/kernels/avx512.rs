//! The segment sums in 512-bit registers (AVX-512F, detected at run time): the field at
//! eight points at once and the vector potential over eight segments at once.
//!
//! These paths leave the divider to the square roots. Square roots are the hardware's
//! (correctly rounded). A quotient n/d is taken from the CPU's 14-bit reciprocal
//! estimate, one Newton step y ← y + y(1 − d·y) (28 bits), then one correction
//! q ← q + y(n − d·q) of q = n·y by its residual, evaluated with fused multiply-adds
//! (Markstein, "IA-64 and Elementary Functions", 2000, ch. 8). The quotient is within
//! 1 ulp of the correctly rounded one (unit test against the hardware division), so
//! the sums agree with the 256-bit and portable paths to rounding, not to the bit. On
//! the development machine the divider takes about 16 cycles per 512-bit division and 24
//! per square root (measured); the estimate and its five fused operations run on the
//! multiply ports instead, beside the square roots. (Taking the square roots by Newton
//! steps as well was measured slower: the multiply ports are then the limit.)
//!
//! Within one path the operations and their order are fixed, so results do not depend
//! on the thread count or on which other points share a block.

use super::series::{ATANH, SERIES_T, SHORT_T, finish_log_sum, lane_log};
use super::soa::{FieldArrays, Soa};
use crate::field::Vec3;
use std::arch::x86_64::*;

/// Whether this run uses the 512-bit paths: the CPU has AVX-512F and `STRAYFLUX_SIMD`
/// does not cap it ([`crate::field::simd`]).
pub(crate) fn available() -> bool {
    crate::field::simd() >= crate::field::Simd::Avx512
}

/// n/d in every lane, within a few ulp, for finite nonzero d.
#[inline]
#[target_feature(enable = "avx512f")]
fn div8(n: __m512d, d: __m512d) -> __m512d {
    {
        let one = _mm512_set1_pd(1.0);
        let y0 = _mm512_rcp14_pd(d);
        let y1 = _mm512_fmadd_pd(y0, _mm512_fnmadd_pd(d, y0, one), y0);
        let q0 = _mm512_mul_pd(n, y1);
        _mm512_fmadd_pd(_mm512_fnmadd_pd(d, q0, n), y1, q0)
    }
}

fn lanes512(v: __m512d) -> [f64; 8] {
    // SAFETY: __m512d and [f64; 8] have the same size and any bits are valid f64s.
    unsafe { std::mem::transmute::<__m512d, [f64; 8]>(v) }
}

fn from_lanes(v: [f64; 8]) -> __m512d {
    // SAFETY: as for `lanes512`.
    unsafe { std::mem::transmute::<[f64; 8], __m512d>(v) }
}

/// Σ of the segments' B (without μ0/4π) at eight points at once, one per lane: the
/// 512-bit form of the four-point field block of [`portable`](super::portable), with the same closed
/// form and the same careful fallback (`careful(k, lane)` gives segment `k`'s B at point
/// `lane`). A lane is careful when Ri + Rf ≤ L + max(L/100, 2a) for the layout's wire
/// radius a ([`Soa::field_arrays`]): near the segment, where Ri + Rf − L loses digits,
/// and on or inside the wire (every point within a of the segment has Ri + Rf ≤ L + 2a).
///
/// # Safety
/// The CPU must support AVX-512F ([`available`]).
#[target_feature(enable = "avx512f")]
pub(crate) unsafe fn field_oct<F: Fn(usize, usize) -> Vec3>(
    soa: &Soa,
    pts: &[Vec3; 8],
    careful: &F,
) -> [Vec3; 8] {
    let m = soa.segments();
    let mut extra = [Vec3::zeros(); 8];
    if m == 0 {
        return extra;
    }
    let (vx, vy, vz) = soa.vertex_arrays();
    let FieldArrays {
        lx,
        ly,
        lz,
        len,
        reach,
    } = soa.field_arrays();
    assert!(vx.len() > m && vy.len() > m && vz.len() > m);
    assert!(lx.len() >= m && ly.len() >= m && lz.len() >= m);
    assert!(len.len() >= m && reach.len() >= m);
    let rx = from_lanes(pts.map(|p| p.x));
    let ry = from_lanes(pts.map(|p| p.y));
    let rz = from_lanes(pts.map(|p| p.z));
    let (mut bx, mut by, mut bz) = (
        _mm512_setzero_pd(),
        _mm512_setzero_pd(),
        _mm512_setzero_pd(),
    );
    let norm = |x: __m512d, y: __m512d, z: __m512d| {
        _mm512_sqrt_pd(_mm512_fmadd_pd(
            z,
            z,
            _mm512_fmadd_pd(y, y, _mm512_mul_pd(x, x)),
        ))
    };
    let at = |v: &[f64], k: usize| {
        // SAFETY: at every call below k < m or k + 1 ≤ m, and the lengths were asserted
        // above.
        let x = unsafe { *v.get_unchecked(k) };
        _mm512_set1_pd(x)
    };
    let mut dx = _mm512_sub_pd(rx, at(vx, 0));
    let mut dy = _mm512_sub_pd(ry, at(vy, 0));
    let mut dz = _mm512_sub_pd(rz, at(vz, 0));
    let mut ri = norm(dx, dy, dz);
    // One segment: its vector L = b − a, so that L × (r − a) = L·ê × (r − a) carries
    // the closed form's factor L.
    macro_rules! segment {
        ($k:expr) => {{
            let k = $k;
            let nx = _mm512_sub_pd(rx, at(vx, k + 1));
            let ny = _mm512_sub_pd(ry, at(vy, k + 1));
            let nz = _mm512_sub_pd(rz, at(vz, k + 1));
            let rf = norm(nx, ny, nz);
            let (ex, ey, ez, l) = (at(lx, k), at(ly, k), at(lz, k), at(len, k));
            // L × (r − a)
            let cx = _mm512_fmsub_pd(ey, dz, _mm512_mul_pd(ez, dy));
            let cy = _mm512_fmsub_pd(ez, dx, _mm512_mul_pd(ex, dz));
            let cz = _mm512_fmsub_pd(ex, dy, _mm512_mul_pd(ey, dx));
            let s = _mm512_add_pd(ri, rf);
            // Safe lanes: Ri + Rf beyond the segment's reach.
            let ok = _mm512_cmp_pd_mask::<_CMP_GT_OQ>(s, at(reach, k));
            // s / (ri·rf·(s − l)·(s + l)); the factor 2 is applied to the sums.
            let den = _mm512_mul_pd(
                _mm512_mul_pd(ri, rf),
                _mm512_mul_pd(_mm512_sub_pd(s, l), _mm512_add_pd(s, l)),
            );
            let factor = div8(s, den);
            if ok != 0xff {
                careful_lanes(ok, k, careful, &mut extra);
            }
            let factor = _mm512_maskz_mov_pd(ok, factor);
            bx = _mm512_fmadd_pd(cx, factor, bx);
            by = _mm512_fmadd_pd(cy, factor, by);
            bz = _mm512_fmadd_pd(cz, factor, bz);
            (dx, dy, dz, ri) = (nx, ny, nz, rf);
        }};
    }
    // Two segments per turn of the loop, which lets the compiler keep the carried
    // values in place instead of copying them.
    let pairs = m / 2 * 2;
    let mut k = 0;
    while k < pairs {
        segment!(k);
        segment!(k + 1);
        k += 2;
    }
    // The odd last segment, if any.
    while k < m {
        segment!(k);
        k += 1;
    }
    let two = _mm512_set1_pd(2.0);
    let (bx, by, bz) = (
        _mm512_mul_pd(two, bx),
        _mm512_mul_pd(two, by),
        _mm512_mul_pd(two, bz),
    );
    let (bx, by, bz) = (lanes512(bx), lanes512(by), lanes512(bz));
    std::array::from_fn(|lane| Vec3::new(bx[lane], by[lane], bz[lane]) + extra[lane])
}

/// Adds `careful(k, lane)` into `extra` for every lane not set in `ok`.
#[cold]
#[inline(never)]
fn careful_lanes<F: Fn(usize, usize) -> Vec3>(
    ok: u8,
    k: usize,
    careful: &F,
    extra: &mut [Vec3; 8],
) {
    for (lane, e) in extra.iter_mut().enumerate() {
        if ok & (1 << lane) == 0 {
            *e += careful(k, lane);
        }
    }
}

/// Σ ê·ln((Ri+Rf+L)/(Ri+Rf−L)) over segments and Σ |ln(...)| for the point `r` (m),
/// eight segments at a time: the 512-bit form of the potential sum of
/// [`portable`](super::portable), with the same series, the same thresholds and the same fallback
/// (`careful(k, r_i, r_f)` for segment `k` near the point). `dist` is scratch space.
///
/// # Safety
/// The CPU must support AVX-512F ([`available`]).
#[target_feature(enable = "avx512f")]
pub(crate) unsafe fn log_sum_oct<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: &F,
    dist: &mut Vec<f64>,
) -> (Vec3, f64) {
    let (vx, vy, vz) = soa.vertex_arrays();
    let (ux, uy, uz, len) = soa.segment_arrays();
    let n = vx.len();
    assert!(vy.len() == n && vz.len() == n);
    let m = soa.segments();
    assert!(n == m + 1 && ux.len() >= m && uy.len() >= m && uz.len() >= m && len.len() >= m);
    // Every vertex distance is written to `dist` (for the careful lanes and the tail):
    // the first here, eight more in each group, the rest after the groups.
    dist.resize(n, 0.0);
    let (rx, ry, rz) = (
        _mm512_set1_pd(r.x),
        _mm512_set1_pd(r.y),
        _mm512_set1_pd(r.z),
    );
    dist[0] = (r - Vec3::new(vx[0], vy[0], vz[0])).norm();
    let mut last = _mm512_set1_pd(dist[0]);
    let two_a = 2.0 * radius;
    let c = |i: usize| _mm512_set1_pd(ATANH[i]);
    let two = _mm512_set1_pd(2.0);
    let two_a_v = _mm512_set1_pd(two_a);
    let t_max = _mm512_set1_pd(SERIES_T);
    let t_short = _mm512_set1_pd(SHORT_T);
    let (mut ax, mut ay, mut az, mut ag) = (
        _mm512_setzero_pd(),
        _mm512_setzero_pd(),
        _mm512_setzero_pd(),
        _mm512_setzero_pd(),
    );
    let groups = m / 8;
    for g in 0..groups {
        let k = 8 * g;
        // SAFETY: k + 8 ≤ m < dist.len() and every segment array holds m values
        // (asserted above), so each eight-wide load stays inside its slice.
        let load = |v: &[f64], at: usize| unsafe { _mm512_loadu_pd(v.as_ptr().add(at)) };
        // The distances of vertices k+1 ..= k+8 (k + 9 ≤ n): the square roots overlap
        // the series of the group, since the divisions do not use the divider.
        let dx = _mm512_sub_pd(rx, load(vx, k + 1));
        let dy = _mm512_sub_pd(ry, load(vy, k + 1));
        let dz = _mm512_sub_pd(rz, load(vz, k + 1));
        let rf = _mm512_sqrt_pd(_mm512_fmadd_pd(
            dz,
            dz,
            _mm512_fmadd_pd(dy, dy, _mm512_mul_pd(dx, dx)),
        ));
        // SAFETY: k + 9 ≤ n = dist.len().
        unsafe { _mm512_storeu_pd(dist.as_mut_ptr().add(k + 1), rf) };
        // Vertices k ..= k+7: the last lane of the previous group, then rf's first seven.
        let ri = _mm512_castsi512_pd(_mm512_alignr_epi64::<7>(
            _mm512_castpd_si512(rf),
            _mm512_castpd_si512(last),
        ));
        last = rf;
        let l = load(len, k);
        let s = _mm512_add_pd(ri, rf);
        let u = _mm512_sub_pd(s, l);
        let t = div8(l, s);
        let x = _mm512_mul_pd(t, t);
        let x2 = _mm512_mul_pd(x, x);
        let x4 = _mm512_mul_pd(x2, x2);
        let a0 = _mm512_fmadd_pd(c(1), x, c(0));
        let a1 = _mm512_fmadd_pd(c(3), x, c(2));
        let a2 = _mm512_fmadd_pd(c(5), x, c(4));
        // Six terms when every lane has t ≤ SHORT_T, else twelve (Estrin's scheme).
        let p = if _mm512_cmp_pd_mask::<_CMP_LE_OQ>(t, t_short) == 0xff {
            _mm512_fmadd_pd(a2, x4, _mm512_fmadd_pd(a1, x2, a0))
        } else {
            let x8 = _mm512_mul_pd(x4, x4);
            let a3 = _mm512_fmadd_pd(c(7), x, c(6));
            let a4 = _mm512_fmadd_pd(c(9), x, c(8));
            let a5 = _mm512_fmadd_pd(c(11), x, c(10));
            let b0 = _mm512_fmadd_pd(a1, x2, a0);
            let b1 = _mm512_fmadd_pd(a3, x2, a2);
            let b2 = _mm512_fmadd_pd(a5, x2, a4);
            _mm512_fmadd_pd(b2, x8, _mm512_fmadd_pd(b1, x4, b0))
        };
        let mut log = _mm512_mul_pd(_mm512_mul_pd(two, t), p);
        // The series holds for t ≤ SERIES_T (which also keeps u ≥ 4L, far from
        // cancellation) outside twice the wire radius.
        let simple = _mm512_cmp_pd_mask::<_CMP_GE_OQ>(u, two_a_v)
            & _mm512_cmp_pd_mask::<_CMP_LE_OQ>(t, t_max);
        if simple != 0xff {
            log = from_lanes(std::array::from_fn(|j| {
                lane_log(k + j, dist, len[k + j], two_a, careful)
            }));
        }
        let (ex, ey, ez) = (load(ux, k), load(uy, k), load(uz, k));
        ax = _mm512_fmadd_pd(ex, log, ax);
        ay = _mm512_fmadd_pd(ey, log, ay);
        az = _mm512_fmadd_pd(ez, log, az);
        ag = _mm512_add_pd(ag, _mm512_abs_pd(log));
    }
    for k in 8 * groups + 1..n {
        dist[k] = (r - Vec3::new(vx[k], vy[k], vz[k])).norm();
    }
    let dist = &dist[..];
    // Eight lanes folded to four (low + high half), then the shared ending.
    let fold = |v: __m512d| {
        let a = lanes512(v);
        [a[0] + a[4], a[1] + a[5], a[2] + a[6], a[3] + a[7]]
    };
    let lanes = [fold(ax), fold(ay), fold(az), fold(ag)];
    finish_log_sum(lanes, 8 * groups, soa, dist, two_a, careful)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::TestLcg;

    /// Distance in units in the last place between two finite doubles of one sign.
    fn ulps(a: f64, b: f64) -> u64 {
        (a.to_bits() as i64 - b.to_bits() as i64).unsigned_abs()
    }

    #[test]
    fn newton_quotient_is_within_one_ulp_of_the_correctly_rounded_one() {
        if !available() {
            return;
        }
        // IEEE 754 division is correctly rounded, so the hardware quotient is the
        // reference; numerators and denominators over 2^±60.
        let mut rng = TestLcg(2025);
        let mut worst = 0;
        for _ in 0..20_000 {
            let mut draw = || (rng.next() + 1.0) * 2f64.powi((rng.next() * 120.0) as i32);
            let n: [f64; 8] = std::array::from_fn(|_| draw());
            let d: [f64; 8] = std::array::from_fn(|_| draw());
            // SAFETY: AVX-512F was detected above.
            let q = lanes512(unsafe { div8(from_lanes(n), from_lanes(d)) });
            for j in 0..8 {
                worst = worst.max(ulps(q[j], n[j] / d[j]));
            }
        }
        assert!(worst <= 1, "worst {worst} ulp");
    }

    /// A wandering 301-segment polyline (a tail after the groups of eight) and points
    /// near and far, some on vertices and segment midpoints (the careful lanes); the wire
    /// radius is 1 mm.
    fn wire_and_points() -> (Vec<Vec3>, Soa, Vec<[Vec3; 8]>) {
        let mut rng = TestLcg(4242);
        let v = rng.wandering(301);
        let soa = Soa::new(&v, 1e-3);
        let blocks = (0..150)
            .map(|trial| std::array::from_fn(|l| rng.near_and_far(&v, trial, l)))
            .collect();
        (v, soa, blocks)
    }

    #[test]
    fn eight_lane_field_matches_the_closed_form_summed_in_scalar_code() {
        if !available() {
            return;
        }
        // Reference: Hanson & Hirshman (2002) eq. (2), 2L(Ri+Rf)/(Ri Rf ((Ri+Rf)² − L²))
        // ê × (r − a), summed segment by segment with correctly rounded sqrt and
        // division; the same careful stand-in for unsafe pairs.
        // A pair is careful when Ri + Rf ≤ L + max(L/100, 2a): every point inside the
        // wire (within a of the segment) is among them.
        let (v, soa, blocks) = wire_and_points();
        let a = 1e-3;
        let careful = |k: usize, lane: usize| Vec3::new(k as f64, lane as f64, 1.0);
        let mut careful_pairs = 0;
        for pts in &blocks {
            // SAFETY: AVX-512F was detected above.
            let fast = unsafe { field_oct(&soa, pts, &careful) };
            for (lane, p) in pts.iter().enumerate() {
                let (mut sum, mut gross) = (Vec3::zeros(), 0.0);
                for k in 0..soa.segments() {
                    let (d_i, d_f) = (p - v[k], p - v[k + 1]);
                    let (ri, rf) = (d_i.norm(), d_f.norm());
                    let l = (v[k + 1] - v[k]).norm();
                    let c = ((v[k + 1] - v[k]) / l).cross(&d_i);
                    let (s, u) = (ri + rf, ri + rf - l);
                    let term = if s > l + (0.01 * l).max(2.0 * a) {
                        c * (2.0 * l * s / (ri * rf * u * (s + l)))
                    } else {
                        careful_pairs += 1;
                        careful(k, lane)
                    };
                    sum += term;
                    gross += term.abs().sum();
                }
                let diff = (fast[lane] - sum).abs().max();
                assert!(
                    diff <= 32.0 * f64::EPSILON * gross,
                    "lane {lane}: {diff:e} against gross {gross:e}"
                );
            }
        }
        assert!(careful_pairs > 100, "the careful lanes were exercised");
    }

    #[test]
    fn eight_lane_potential_matches_the_closed_form_and_the_portable_path_to_rounding() {
        if !available() {
            return;
        }
        // Two references: the portable path (correctly rounded division, the same
        // series and thresholds), and Hanson & Hirshman (2002) eq. (4),
        // ê·ln((Ri+Rf+L)/(Ri+Rf−L)) = ê·ln_1p(2L/(Ri+Rf−L)) with the standard library's
        // ln_1p, summed segment by segment in scalar code (the same careful stand-in
        // where the wire radius or cancellation matters). The sums agree to a few ulp of
        // their gross size.
        let (v, soa, blocks) = wire_and_points();
        let radius = 1e-3;
        let careful = |k: usize, ri: f64, rf: f64| (k as f64) + ri * 3.0 - rf;
        let mut dist = Vec::new();
        let mut worst: f64 = 0.0;
        for p in blocks.iter().flatten() {
            // SAFETY: AVX-512F was detected above.
            let fast = unsafe { log_sum_oct(&soa, p, radius, &careful, &mut dist) };
            let slow = super::super::portable::portable_log_sum(&soa, p, radius, &careful);
            let scale = 64.0 * f64::EPSILON * slow.1;
            let diff = (fast.0 - slow.0).abs().max().max((fast.1 - slow.1).abs());
            worst = worst.max(diff / slow.1);
            assert!(diff <= scale, "{diff:e} against gross {:e}", slow.1);
            let (mut sum, mut gross) = (Vec3::zeros(), 0.0);
            for k in 0..soa.segments() {
                let (ri, rf) = ((p - v[k]).norm(), (p - v[k + 1]).norm());
                let l = (v[k + 1] - v[k]).norm();
                let u = ri + rf - l;
                let log = if u >= 2.0 * radius && u > 0.01 * l {
                    (2.0 * l / u).ln_1p()
                } else {
                    careful(k, ri, rf)
                };
                sum += (v[k + 1] - v[k]) / l * log;
                gross += log.abs();
            }
            let diff = (fast.0 - sum).abs().max();
            assert!(
                diff <= 64.0 * f64::EPSILON * gross,
                "closed form: {diff:e} against gross {gross:e}"
            );
        }
        // The series lanes differ from the portable ones in rounding only.
        assert!(
            worst > 0.0 && worst < 64.0 * f64::EPSILON,
            "worst {worst:e}"
        );
    }
}
