//! A source–victim pair: the free-space flux and what the scene's shields do to it.

use super::{flux_from_far, flux_per_amp_within};
use crate::error::SolveError;
use crate::field::{FarField, Vec3};
use crate::model::{Scene, Source, Victim};
use crate::shield::FluxEffect;
use num_complex::Complex64;
use std::sync::Arc;

/// How one source reaches one victim: the free-space flux and what the scene's
/// shields do to it.
#[derive(Clone, Debug)]
pub struct PairModel {
    /// Free-space flux through one turn per ampere, Wb/A.
    pub flux: f64,
    /// Whether the free-space flux integral met the tolerance.
    pub converged: bool,
    /// What the scene's shields do to this pair, applied in order (the sheets first,
    /// then each enclosure between the two); empty without shields.
    pub shields: Vec<Arc<dyn FluxEffect>>,
}

/// What a pair model may reuse of its source, passed in by the caller that owns the
/// caches (a run): nothing here changes the result beyond the tolerance.
#[derive(Clone, Copy, Debug)]
pub struct SourceAids<'a> {
    /// The source's far-field series, if the caller built it and allows its use.
    pub far: Option<&'a FarField>,
    /// The source's bounding sphere (centre m, radius m), if it has one.
    pub sphere: Option<(Vec3, f64)>,
}

impl PairModel {
    /// Builds the model of `source` coupling into `victim` in `scene`, to `tolerance`
    /// (relative), with the series and sphere in `aids`.
    pub fn new(
        scene: &Scene,
        source: &Source,
        victim: &Victim,
        aids: SourceAids<'_>,
        tolerance: f64,
    ) -> Result<PairModel, SolveError> {
        let SourceAids { far, sphere } = aids;
        let phi = far
            .and_then(|f| flux_from_far(f, sphere, &victim.edges, victim.flat_face(), tolerance))
            .unwrap_or_else(|| {
                flux_per_amp_within(&source.conductors, sphere, &victim.edges, tolerance)
            });
        let shields = crate::shield::pair_effects(scene, source, victim, tolerance)?;
        Ok(PairModel {
            flux: phi.value,
            converged: phi.converged,
            shields,
        })
    }

    /// Whether any shield acts on this pair.
    pub fn is_shielded(&self) -> bool {
        !self.shields.is_empty()
    }

    /// Flux through one turn per ampere with the shields in place at `frequency` (Hz),
    /// Wb/A (complex: the shields shift its phase).
    pub fn shielded_flux(&self, frequency: f64) -> Complex64 {
        let mut phi = Complex64::new(self.flux, 0.0);
        for s in &self.shields {
            phi = s.apply(self.flux, phi, frequency);
        }
        phi
    }
}
