//! How the solver evaluates a scene: the accuracy target and whether far-field series
//! may stand in for direct sums. Passed explicitly to every solve; never read from a
//! global or stored in the scene.

/// Whether fields and fluxes may come from a source's far-field series.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Evaluation {
    /// Use a source's multipole series wherever its proven truncation bound meets the
    /// tolerance and it is cheaper than the direct sum (the default).
    #[default]
    Accelerated,
    /// Sum every segment directly (the command line's `--exact`).
    Exact,
}

/// Settings of one solve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SolverOptions {
    /// Relative accuracy target of fields, flux and M (dimensionless).
    pub tolerance: f64,
    /// Direct sums only, or far-field series where proven.
    pub evaluation: Evaluation,
}

impl SolverOptions {
    /// The scene's own tolerance (from its `[solver]` table) with accelerated
    /// evaluation.
    pub fn for_scene(scene: &super::Scene) -> Self {
        SolverOptions {
            tolerance: scene.tolerance,
            evaluation: Evaluation::Accelerated,
        }
    }

    /// The same options with `--exact` applied when `exact` is true.
    pub fn exact_if(self, exact: bool) -> Self {
        SolverOptions {
            evaluation: if exact {
                Evaluation::Exact
            } else {
                self.evaluation
            },
            ..self
        }
    }

    /// Whether every sum must be direct.
    pub fn exact(&self) -> bool {
        self.evaluation == Evaluation::Exact
    }
}
