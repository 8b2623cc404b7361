//! When the far-field series stands in for the direct sum: every threshold, for fields
//! at points, for fluxes through victims and for a sweep's decision to build the
//! moments at all, in one place.
//!
//! The series is exact to its proven bound (see the parent module), so these choices
//! only move work between the two paths; none of them may let an error past the
//! tolerance. Two rules decide each use:
//!
//! * **Accuracy.** The truncation bound plus the series' rounding noise must come under
//!   [`TOLERANCE_SHARE`] of the tolerance times the value found. The rest of the
//!   tolerance is left for the direct sums that the series is compared with.
//! * **Cost.** A term of the series costs about half a segment–point pair of the direct
//!   sum. A field point takes the series while its terms cost no more than the direct
//!   sum ([`point_series_pays`]). A flux asks for the series to be four times cheaper
//!   ([`flux_series_pays`]): it evaluates the series twice per node (a first estimate
//!   through the quadrupole, then the chosen degree) and bounds it along every edge,
//!   which the per-term estimate does not count. These two margins are kept as measured;
//!   merging them would move the last digits of far steps of sweeps and maps.

/// Highest multipole degree any expansion keeps (maps of large sources keep this many).
pub const MAX_ORDER: usize = 24;

/// The degree kept by [`FarField::new`](super::FarField::new): enough for sweeps, whose
/// moments must be cheap to build compared with a few hundred flux integrals.
pub const SWEEP_ORDER: usize = 16;

/// Sources with fewer segments than this are always summed directly: their direct sum
/// is as cheap as the series.
pub const MIN_SEGMENTS: usize = 64;

/// Sources with at least this many segments keep [`MAX_ORDER`] degrees for maps and
/// probes (their direct sum is dear enough to pay for the higher moments); smaller ones
/// keep [`SWEEP_ORDER`].
pub const LARGE_SOURCE_SEGMENTS: usize = 4096;

/// The share of the tolerance the truncation bound and rounding noise may use.
pub const TOLERANCE_SHARE: f64 = 0.1;

/// A flux first estimates its value through the quadrupole, then takes the lowest
/// degree whose bound comes under this share of the tolerance times that estimate.
pub const FLUX_GUESS_SHARE: f64 = 0.05;

/// Points nearer the centre than this many bounding radii never take the series
/// (the bound's t = r/R would be too close to 1 for any degree kept).
pub const USABLE_RADII: f64 = 1.5;

/// A victim with any edge nearer the centre than this many bounding radii takes its
/// flux directly (more degrees would be needed than are kept).
pub const FLUX_NEAR_RADII: f64 = 2.0;

/// Building a source's moments (degree 16) costs about as much as this many direct
/// evaluations of its potential at one point, whatever its number of segments (both
/// scale with it). Measured: 11.5 ms of one core for the 2000-segment polygon of the
/// sweep benchmark, against 3.1–4.4 µs per point with the AVX-512 potential kernel
/// (a ratio of 2600–3700).
pub const MOMENT_BUILD_POINTS: usize = 3000;

/// The degree to keep for a map or probe of a source of `segments` segments.
pub fn order_for_points(segments: usize) -> usize {
    if segments >= LARGE_SOURCE_SEGMENTS {
        MAX_ORDER
    } else {
        SWEEP_ORDER
    }
}

/// Whether a point at `distance` (m) from the centre of a source of bounding radius
/// `radius` (m) may try the series. False for NaN.
pub fn usable_at(distance: f64, radius: f64) -> bool {
    distance > radius * USABLE_RADII
}

/// Whether `terms` series terms cost no more than the direct sum over `segments`
/// segments at one point (a term is about half a segment–point pair).
pub fn point_series_pays(terms: usize, segments: usize) -> bool {
    terms <= 2 * segments
}

/// Whether a flux's series of `terms` terms is four times cheaper than the direct sum
/// over `segments` segments (see the module comment for the margin).
pub fn flux_series_pays(terms: usize, segments: usize) -> bool {
    terms * 2 <= segments
}

/// Whether a sweep of `steps` placements of a victim whose edges have `panels`
/// first-pass quadrature panels in all could save more than twice the moments' cost:
/// a far placement saves about one direct evaluation per panel (the series is cheaper
/// per node, not free), and at most every step is far.
pub fn moments_pay(steps: usize, panels: usize) -> bool {
    steps.saturating_mul(panels) >= 2 * MOMENT_BUILD_POINTS
}
