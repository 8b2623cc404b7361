//! The logarithm ln((Ri+Rf+L)/(Ri+Rf−L)) of one segment: the atanh series every
//! kernel evaluates, the closed form and the careful fallback lane by lane, and the
//! fixed-order end of the potential sums. Shared by all instruction sets so that they
//! take the same branches.

use super::soa::Soa;
use crate::field::Vec3;

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
pub(super) fn short_series(t: f64, t2: f64) -> f64 {
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
pub(super) fn atanh_series(t: f64, t2: f64) -> f64 {
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

/// The end of every [`log_sum`](super::log_sum) path: the lane sums `[Σx, Σy, Σz, Σ|log|]` added in a
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

#[cfg(test)]
mod tests {
    use super::*;

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
