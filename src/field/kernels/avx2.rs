//! The 256-bit (AVX2) forms of the potential and field sums: the same IEEE operations
//! in the same order as the portable bodies (Rust never contracts a·b + c into a fused
//! multiply-add), so they give the same bits. Long on purpose: splitting the loops
//! into helper functions costs registers and speed.

use super::series::{ATANH, SERIES_T, SHORT_T, finish_log_sum, lane_log};
use super::soa::{Soa, distances_into};
use crate::field::Vec3;

/// [`log_sum`](super::log_sum) with four segments per 256-bit vector.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
pub(super) unsafe fn log_sum_avx2<F: Fn(usize, f64, f64) -> f64>(
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

/// [`field_pair`](super::portable::field_pair) for four lanes at once in 256-bit registers: the same IEEE
/// operations in the same order, so the same bits.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
pub(super) unsafe fn field_quad_avx2<F: Fn(usize, usize) -> Vec3>(
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
    use crate::field::kernels::portable::{field_pair, log_sum_body};

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
}
