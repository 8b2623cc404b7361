//! Field maps: regular grids of points and the lines they hold.

use crate::field::Vec3;

/// Which spectral lines a map holds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum MapLines {
    /// One line, by its one-based number in ascending frequency (1 = fundamental).
    One(usize),
    /// Every line: one file each, plus a `.pvd` collection.
    All,
}

/// A validated map: a regular grid of points.
#[derive(Clone, Debug)]
pub struct MapSpec {
    /// Unique id (names the output files).
    pub id: String,
    /// Grid origin, m (the `min` corner, rounded as a VTK reader will read it back).
    pub origin: Vec3,
    /// Point spacing per axis, m (rounded the same way; 0 on a plane's flat axis).
    pub spacing: Vec3,
    /// Points per axis (1 on a plane's flat axis).
    pub points: [usize; 3],
    /// Whether one axis is flat (a plane map).
    pub plane: bool,
    /// The lines to write.
    pub lines: MapLines,
}

impl MapSpec {
    /// Total number of grid points.
    pub fn point_count(&self) -> usize {
        self.points.iter().product()
    }

    /// Position of point (i, j, k), m: origin + index × spacing, x fastest in storage.
    pub fn point(&self, i: usize, j: usize, k: usize) -> Vec3 {
        self.origin
            + Vec3::new(
                i as f64 * self.spacing.x,
                j as f64 * self.spacing.y,
                k as f64 * self.spacing.z,
            )
    }

    /// Every grid point, x fastest, then y, then z (VTK order).
    pub fn all_points(&self) -> Vec<Vec3> {
        let [nx, ny, nz] = self.points;
        let mut out = Vec::with_capacity(self.point_count());
        for k in 0..nz {
            for j in 0..ny {
                for i in 0..nx {
                    out.push(self.point(i, j, k));
                }
            }
        }
        out
    }
}
