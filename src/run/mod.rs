//! Runs of the solver over a scene: coupling, probes, sweeps, orientation searches and
//! maps. Each takes the scene and a [`Solver`] (the options of this run and its
//! caches) and returns a result struct for [`crate::output`] to format.

pub mod couple;
pub mod map;
pub mod orientation;
pub mod probe;
pub mod sweep;
pub mod warnings;

use crate::coupling::{PairModel, SourceAids};
use crate::error::SolveError;
use crate::field::{FarField, FieldSource, Vec3};
use crate::model::{Scene, SolverOptions, Victim};
use std::sync::OnceLock;

/// The options of one run and what it caches about the scene's sources.
///
/// The caches hold each source's far-field series and bounding sphere, by source
/// index. They belong to the run, not to the scene: a scene that only differs in its
/// shields (a sweep's `compare` alternatives) may share one solver.
#[derive(Debug)]
pub struct Solver {
    /// Tolerance and evaluation mode.
    pub options: SolverOptions,
    far: Vec<OnceLock<Option<FarField>>>,
    sphere: Vec<OnceLock<Option<(Vec3, f64)>>>,
}

impl Solver {
    /// A solver for `scene` with `options`; nothing is built yet.
    pub fn new(scene: &Scene, options: SolverOptions) -> Self {
        let n = scene.sources.len();
        Solver {
            options,
            far: (0..n).map(|_| OnceLock::new()).collect(),
            sphere: (0..n).map(|_| OnceLock::new()).collect(),
        }
    }

    /// A solver for `scene` with its own tolerance and accelerated evaluation.
    pub fn for_scene(scene: &Scene) -> Self {
        Solver::new(scene, SolverOptions::for_scene(scene))
    }

    /// Builds the far-field series of every source now (unless the options ask for
    /// direct sums), so that later pair models use them where they are proven.
    pub fn build_far_fields(&self, scene: &Scene) {
        if self.options.exact() {
            return;
        }
        for (i, s) in scene.sources.iter().enumerate() {
            self.far[i].get_or_init(|| FarField::new(&s.conductors));
        }
    }

    /// Source `i`'s series if it was built and the options allow it.
    pub fn built_far_field(&self, i: usize) -> Option<&FarField> {
        if self.options.exact() {
            return None;
        }
        self.far[i].get().and_then(Option::as_ref)
    }

    /// Source `i`'s bounding sphere (centre m, radius m), computed once.
    pub fn bounding_sphere(&self, scene: &Scene, i: usize) -> Option<(Vec3, f64)> {
        *self.sphere[i].get_or_init(|| scene.sources[i].conductors.bounding_sphere())
    }

    /// The pair model of source `i` coupling into `victim`.
    pub fn pair_model(
        &self,
        scene: &Scene,
        i: usize,
        victim: &Victim,
    ) -> Result<PairModel, SolveError> {
        let aids = SourceAids {
            far: self.built_far_field(i),
            sphere: self.bounding_sphere(scene, i),
        };
        PairModel::new(
            scene,
            &scene.sources[i],
            victim,
            aids,
            self.options.tolerance,
        )
    }

    /// Pair models of every source coupling into `victim`, in source order.
    pub fn pair_models(
        &self,
        scene: &Scene,
        victim: &Victim,
    ) -> Result<Vec<PairModel>, SolveError> {
        (0..scene.sources.len())
            .map(|i| self.pair_model(scene, i, victim))
            .collect()
    }
}
