//! A source evaluated through its far-field series where the policy allows, and by
//! the direct sum elsewhere.

use super::policy::{order_for_points, usable_at};
use super::{FarField, MAX_ORDER, MIN_SEGMENTS};
use crate::field::{Conductors, FieldSource, Vec3};

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
            let series = far.b4(&crate::field::padded_block(c), self.tolerance);
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
