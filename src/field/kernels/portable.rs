//! The portable bodies: plain arrays and `wide`'s two- and four-lane vectors, which
//! every CPU runs. The wider paths are tested bit for bit against these.

use super::series::{SERIES_T, SHORT_T, atanh_series, finish_log_sum, lane_log, short_series};
use super::soa::{Soa, distances_into, load};
use crate::field::Vec3;
use wide::{f64x2, f64x4};

/// [`log_sum`](super::log_sum) by the portable body, whatever the CPU: the reference of the wider
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

/// The portable body of [`log_sum`](super::log_sum): fixed four-lane arrays, which the compiler turns
/// into two-lane vector code.
#[inline(always)]
pub(super) fn log_sum_body<F: Fn(usize, f64, f64) -> f64>(
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

/// The four-segments-at-a-time body of [`field_sum`](super::field_sum) for the
/// distances `dist` (m) from `r` (m) to every vertex.
pub(super) fn segment_fields<F: Fn(usize, f64, f64) -> Vec3>(
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

/// Two points at once: see [`field_block`](super::field_block).
pub(super) fn field_pair<F: Fn(usize, usize) -> Vec3>(
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
