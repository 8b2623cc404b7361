//! Writing results: human tables ([`text`]) and JSON documents ([`json`]) behind one
//! [`Report`] per command, plus CSV, SVG and VTK files.

pub mod csv;
pub mod files;
pub mod json;
pub mod page;
pub mod plot;
pub mod quicklook;
pub mod report;
pub mod text;
pub mod vtk;

pub use report::{CheckReport, CoupleReport, ProbeReport, Report, SweepReport};

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
