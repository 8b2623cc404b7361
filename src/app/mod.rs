//! The commands, as library calls: each takes parsed arguments and returns what to print
//! and the exit status. The binary only parses flags, calls these and writes. One file
//! per command; each loads the scene, makes one [`Solver`](crate::run::Solver) for the
//! run, calls `run` and hands the results to `output`.

mod check;
mod couple;
mod map;
mod probe;
mod report;
mod sweep;

pub use check::{check, materials};
pub use couple::couple;
pub use map::map;
pub use probe::{parse_point_arg, probe_points};
pub use report::report;
pub use sweep::sweep;

pub use crate::output::CAUTIONS;

/// What a command produced.
#[derive(Debug, Default)]
pub struct Outcome {
    /// Text for standard output (a JSON document with `--json`).
    pub stdout: String,
    /// Warnings for standard error, one line each.
    pub warnings: Vec<String>,
    /// Exit status: 0, or 3 with `--strict` when a victim exceeds its limit.
    pub exit: i32,
}
