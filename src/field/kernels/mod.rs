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
//! forms of [`avx512`] instead, whose square roots and quotients are within an
//! ulp of these: results there agree with the other paths to rounding (a few ulp of
//! each sum's gross size), not to the bit.

//!
//! One file per instruction set: [`portable`] (every CPU), `avx2` and `avx512`
//! (x86-64, chosen at run time), over the shared layout [`soa`] and the shared series
//! [`series`]. This module only dispatches.

#[cfg(target_arch = "x86_64")]
mod avx2;
#[cfg(target_arch = "x86_64")]
pub(crate) mod avx512;
mod portable;
mod series;
mod soa;

pub(crate) use soa::Soa;
use soa::distances_into;

use crate::field::Vec3;
use std::cell::RefCell;

thread_local! {
    static DISTANCES: RefCell<Vec<f64>> = const { RefCell::new(Vec::new()) };
}

/// Σ ê·ln((Ri+Rf+L)/(Ri+Rf−L)) over segments and Σ |ln(...)|, for the point `r` (m)
/// and wire radius `radius` (m). `careful(k, r_i, r_f)` gives the log of segment `k`
/// for points near it.
///
/// With 512-bit vectors (AVX-512F, detected at run time) eight segments run at once
/// ([`avx512::log_sum_oct`]); with 256-bit vectors (AVX2) four, with 128-bit
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
        if avx512::available() {
            // SAFETY: the CPU supports AVX-512F, checked just above.
            return unsafe { avx512::log_sum_oct(soa, r, radius, &careful, &mut dist) };
        }
        #[cfg(target_arch = "x86_64")]
        if crate::field::simd() >= crate::field::Simd::Avx2 {
            // SAFETY: the CPU supports AVX2, checked by `simd`.
            return unsafe { avx2::log_sum_avx2(soa, r, radius, &careful, &mut dist) };
        }
        portable::log_sum_body(soa, r, radius, &careful, &mut dist)
    })
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
        portable::segment_fields(soa, r, &dist, a2, careful)
    })
}

/// Σ of the segments' B (without μ0/4π) at four points at once, one per SIMD lane: the
/// segments stream past while the points stay in registers, and each vertex distance
/// is computed once and carried to the next segment, so every segment–point pair costs
/// one square root and one division. `careful(k, lane)` gives segment `k`'s B at point
/// `lane` where the closed form is unsafe (inside the wire, or where Ri+Rf−L loses
/// digits). Each lane's sum runs in segment order, so a point's result does not depend
/// on the other points of its block. (On a CPU with AVX-512 a polyline sends its blocks
/// to the eight-point [`avx512::field_oct`] instead.)
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
    if crate::field::simd() >= crate::field::Simd::Avx2 {
        // SAFETY: the CPU supports AVX2, checked by `simd`.
        return unsafe { avx2::field_quad_avx2(soa, pts, a2, &careful) };
    }
    // Two passes of two lanes: with 128-bit vectors the whole loop state then stays in
    // the sixteen registers (four lanes at once spill to the stack).
    let lo = portable::field_pair(soa, [pts[0], pts[1]], a2, &careful);
    let hi = portable::field_pair(soa, [pts[2], pts[3]], a2, |k, lane| careful(k, lane + 2));
    [lo[0], lo[1], hi[0], hi[1]]
}
