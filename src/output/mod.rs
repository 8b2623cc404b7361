//! Writing results: human tables ([`text`]) and JSON documents ([`json`]).

pub mod json;
pub mod text;
