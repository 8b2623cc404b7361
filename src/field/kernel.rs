//! The vector-potential sum over a polyline's segments, four segments per SIMD group.
//!
//! Structure of arrays: vertex coordinates and each segment's unit direction and length
//! sit in separate arrays. For a field point the distance to every vertex is computed
//! once (shared by the two segments meeting there), then each group of four segments
//! takes ln((Ri+Rf+L)/(Ri+Rf−L)) in one vector operation. Groups with a segment close
//! enough for cancellation or the wire radius to matter fall back to the careful scalar
//! form lane by lane. The order of additions is fixed, so results do not depend on the
//! thread count.

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
}

impl Soa {
    /// Lays out `vertices` (m).
    pub(crate) fn new(vertices: &[Vec3]) -> Self {
        let mut s = Soa::default();
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
        }
        s
    }

    /// Number of segments laid out.
    pub(crate) fn segments(&self) -> usize {
        self.len.len()
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
pub(crate) fn log_sum<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    r: &Vec3,
    radius: f64,
    careful: F,
) -> (Vec3, f64) {
    DISTANCES.with(|buf| {
        let mut dist = buf.borrow_mut();
        vertex_distances(soa, r, &mut dist);
        segment_logs(soa, &dist, radius, careful)
    })
}

fn vertex_distances(soa: &Soa, r: &Vec3, out: &mut Vec<f64>) {
    let n = soa.x.len();
    out.clear();
    out.resize(n, 0.0);
    let (rx, ry, rz) = (f64x4::splat(r.x), f64x4::splat(r.y), f64x4::splat(r.z));
    let groups = n / 4;
    for g in 0..groups {
        let k = 4 * g;
        let dx = rx - load(&soa.x, k);
        let dy = ry - load(&soa.y, k);
        let dz = rz - load(&soa.z, k);
        let d = (dx * dx + dy * dy + dz * dz).sqrt().to_array();
        out[k..k + 4].copy_from_slice(&d);
    }
    for (k, o) in out.iter_mut().enumerate().skip(4 * groups) {
        *o =
            ((r.x - soa.x[k]).powi(2) + (r.y - soa.y[k]).powi(2) + (r.z - soa.z[k]).powi(2)).sqrt();
    }
}

fn segment_logs<F: Fn(usize, f64, f64) -> f64>(
    soa: &Soa,
    dist: &[f64],
    radius: f64,
    careful: F,
) -> (Vec3, f64) {
    let m = soa.segments();
    let (mut ax, mut ay, mut az, mut ag) = (f64x4::ZERO, f64x4::ZERO, f64x4::ZERO, f64x4::ZERO);
    let two_a = f64x4::splat(2.0 * radius);
    let hundredth = f64x4::splat(0.01);
    let groups = m / 4;
    for g in 0..groups {
        let k = 4 * g;
        let ri = load(dist, k);
        let rf = load(dist, k + 1);
        let l = load(&soa.len, k);
        let s = ri + rf;
        let u = s - l;
        let safe = u.simd_ge(two_a) & u.simd_gt(l * hundredth);
        let mut log = ((s + l) / u).ln();
        if !safe.all() {
            let mut lanes = log.to_array();
            let ok = safe.to_bitmask();
            for (lane, value) in lanes.iter_mut().enumerate() {
                if ok & (1 << lane) == 0 {
                    *value = careful(k + lane, dist[k + lane], dist[k + lane + 1]);
                }
            }
            log = f64x4::from(lanes);
        }
        ax += load(&soa.ex, k) * log;
        ay += load(&soa.ey, k) * log;
        az += load(&soa.ez, k) * log;
        ag += log.abs();
    }
    let mut sum = Vec3::new(ax.reduce_add(), ay.reduce_add(), az.reduce_add());
    let mut gross = ag.reduce_add();
    for k in 4 * groups..m {
        let (ri, rf, l) = (dist[k], dist[k + 1], soa.len[k]);
        let s = ri + rf;
        let u = s - l;
        let log = if u >= 2.0 * radius && u > 0.01 * l {
            ((s + l) / u).ln()
        } else {
            careful(k, ri, rf)
        };
        sum += soa.direction(k) * log;
        gross += log.abs();
    }
    (sum, gross)
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
        vertex_distances(soa, r, &mut dist);
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
/// on the other points of its block.
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
    if std::is_x86_feature_detected!("avx2") {
        // SAFETY: the CPU supports AVX2, checked just above.
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
    let lanes = |v: __m256d| -> [f64; 4] {
        // SAFETY: __m256d and [f64; 4] have the same size and any bits are valid f64s.
        unsafe { std::mem::transmute::<__m256d, [f64; 4]>(v) }
    };
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
            let mut seed = 12345u64;
            let mut next = || {
                seed = seed
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                (seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5
            };
            let mut v = vec![Vec3::zeros()];
            for _ in 0..300 {
                let last = *v.last().unwrap();
                v.push(last + Vec3::new(next(), next(), next()) * 0.01);
            }
            let soa = Soa::new(&v);
            let a2 = 1e-6;
            let careful = |k: usize, lane: usize| Vec3::new(k as f64, lane as f64, 1.0);
            for trial in 0..200 {
                let pts: [Vec3; 4] = std::array::from_fn(|l| match (trial + l) % 5 {
                    0 => v[(trial * 7 + l) % v.len()],
                    1 => (v[trial % 300] + v[trial % 300 + 1]) / 2.0,
                    _ => Vec3::new(next(), next(), next()) * 0.1,
                });
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
}
