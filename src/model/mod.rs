//! The validated model the solver trusts: a scene in SI units, with no TOML in sight.
//!
//! [`crate::scene`] builds these types from a scene file; the physics modules
//! ([`crate::coupling`], [`crate::shield`], [`crate::run`]) read them. Every quantity is
//! in SI units (m, A, Hz, V, H, S/m) and every direction is a unit vector.

pub mod contact;
pub mod map;
pub mod material;
pub mod options;
pub mod shield;
pub mod source;
pub mod sweep;
pub mod victim;

pub use map::{MapLines, MapSpec};
pub use material::Material;
pub use options::{Evaluation, SolverOptions};
pub use shield::{Barrier, Enclosure, Layer, Place, Sheet, Side, source_points, victim_points};
pub use source::{Source, SourceKind};
pub use sweep::{SweepSpec, Vary};
pub use victim::{Victim, VictimKind};

use crate::field::Vec3;
use crate::spectrum::near_field_limit;

/// Default relative accuracy of fields, flux and M.
pub const DEFAULT_TOLERANCE: f64 = 1e-6;
/// Default conductor radius, m (0.1 mm).
pub const DEFAULT_WIRE_RADIUS: f64 = 1e-4;

/// A validated scene, all quantities in SI units.
#[derive(Clone, Debug)]
pub struct Scene {
    /// Free-text title.
    pub title: String,
    /// Relative accuracy target for fields, flux and M.
    pub tolerance: f64,
    /// Default conductor radius, m.
    pub wire_radius: f64,
    /// Field sources in file order.
    pub sources: Vec<Source>,
    /// Victim loops in file order.
    pub victims: Vec<Victim>,
    /// Sweeps in file order.
    pub sweeps: Vec<SweepSpec>,
    /// Field maps in file order.
    pub maps: Vec<MapSpec>,
    /// Flat sheets in file order (`[[shield]]`).
    pub shields: Vec<Sheet>,
    /// The sheets combined into one stack, if there are any.
    pub barrier: Option<Barrier>,
    /// Closed boxes around victims (`[[enclosure]]`).
    pub enclosures: Vec<Enclosure>,
    /// Warnings found while loading (results outside the model, unclosed paths).
    pub warnings: Vec<String>,
}

impl Scene {
    /// λ/2π at the highest line of any source, m.
    pub fn near_field_limit(&self) -> f64 {
        near_field_limit(self.highest_frequency())
    }

    /// Distinct line frequencies of all sources, ascending, Hz (lines within the
    /// spectrum module's frequency tolerance count as one).
    pub fn line_frequencies(&self) -> Vec<f64> {
        let mut f: Vec<f64> = self
            .sources
            .iter()
            .flat_map(|s| s.lines.iter().map(|l| l.frequency))
            .collect();
        f.sort_by(f64::total_cmp);
        f.dedup_by(|a, b| crate::spectrum::same_frequency(*a, *b));
        f
    }

    /// Highest line frequency of any source, Hz.
    pub fn highest_frequency(&self) -> f64 {
        self.sources
            .iter()
            .flat_map(|s| s.lines.iter().map(|l| l.frequency))
            .fold(0.0, f64::max)
    }

    /// A warning if `point` (m) is farther than a tenth of λ/2π from every source.
    pub fn far_point_warning(&self, what: &str, point: &Vec3) -> Option<String> {
        let limit = self.near_field_limit();
        let nearest = self
            .sources
            .iter()
            .map(|s| s.conductors.distance_to(point))
            .fold(f64::INFINITY, f64::min);
        (nearest.is_finite() && nearest > 0.1 * limit).then(|| {
            format!(
                "{what} is {} from the nearest source, beyond a tenth of λ/2π ({} at the \
                 highest line): the quasi-static model may not hold there",
                crate::units::format_si(nearest, "m", 4),
                crate::units::format_si(limit, "m", 4)
            )
        })
    }

    /// The scene with only the sheet `id` fitted (`None`: no sheet), enclosures kept;
    /// `None` if `id` names no sheet.
    pub fn with_only_sheet(&self, id: Option<&str>) -> Option<Scene> {
        let barrier = match id {
            None => None,
            Some(id) => {
                let sheet = self.shields.iter().find(|s| s.id == id)?;
                Some(Barrier::new(std::slice::from_ref(sheet)).ok()?)
            }
        };
        Some(Scene {
            barrier,
            ..self.clone()
        })
    }
}
