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
