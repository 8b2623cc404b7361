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

/// The cautions that end every command's `--help` and every report: what the results
/// are (estimates for design, to be confirmed by measurement), the model's limits in
/// short, and the care that mains and large currents need. Plain text with line breaks.
pub const CAUTIONS: &str = "\
Cautions: results are estimates for design, not compliance evidence; confirm them by
measurement. The model is magnetic quasi-static (valid well inside λ/2π of the source),
treats conductors as thin filaments (no skin or proximity effect in the windings) and
does not model ferromagnetic cores: use a dipole or measured data for cored parts.
Shield sheets are infinite, continuous and linear: a small, slotted or perforated sheet
does less, and the permeability of steel and mu-metal varies with field level,
frequency and treatment. Enclosures are an equal-volume-sphere estimate; seams, lids
and holes make a real box worse.
Sources of interest often run from mains or carry large currents: follow local codes
and licensed practice when you measure them.";

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
