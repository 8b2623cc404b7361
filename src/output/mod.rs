//! Writing results: human tables ([`text`]) and JSON documents ([`json`]).

pub mod csv;
pub mod files;
pub mod json;
pub mod plot;
pub mod quicklook;
pub mod text;
pub mod vtk;
