//! One interface for every command's printed result: a terminal report or one JSON
//! document, chosen by `--json`. Each report here holds what its command found and
//! hands it to [`text`](super::text) or [`json`](super::json).

use crate::Scene;
use crate::run::couple::VictimReport;
use crate::run::probe::ProbePoint;
use crate::run::sweep::SweepResult;

/// A command's result that prints as a terminal report or as one JSON document.
pub trait Report {
    /// The terminal report.
    fn text(&self) -> String;
    /// The JSON document (snake_case keys, the unit in the name).
    fn json(&self) -> String;
    /// [`Report::json`] with `as_json`, else [`Report::text`].
    fn render(&self, as_json: bool) -> String {
        if as_json { self.json() } else { self.text() }
    }
}

/// `check`: the scene and its distinct line frequencies (Hz).
pub struct CheckReport<'a> {
    /// The validated scene.
    pub scene: &'a Scene,
    /// Distinct line frequencies, ascending, Hz.
    pub lines_hz: &'a [f64],
}

impl Report for CheckReport<'_> {
    fn text(&self) -> String {
        super::text::check(self.scene, self.lines_hz)
    }
    fn json(&self) -> String {
        super::json::check(self.scene, self.lines_hz)
    }
}

/// `couple`: one report per victim, in scene order.
pub struct CoupleReport<'a> {
    /// The scene coupled.
    pub scene: &'a Scene,
    /// What every source does to each victim.
    pub victims: &'a [VictimReport],
}

impl Report for CoupleReport<'_> {
    fn text(&self) -> String {
        super::text::couple(self.scene, self.victims)
    }
    fn json(&self) -> String {
        super::json::couple(self.victims)
    }
}

/// `probe`: the B phasors at each point asked for.
pub struct ProbeReport<'a> {
    /// One entry per point, in the order given.
    pub points: &'a [ProbePoint],
}

impl Report for ProbeReport<'_> {
    fn text(&self) -> String {
        super::text::probe(self.points)
    }
    fn json(&self) -> String {
        super::json::probe(self.points)
    }
}

/// `sweep`: every sweep run and the files written.
pub struct SweepReport<'a> {
    /// The scene swept.
    pub scene: &'a Scene,
    /// One result per sweep run.
    pub results: &'a [SweepResult],
    /// Paths of the files written.
    pub written: &'a [String],
}

impl Report for SweepReport<'_> {
    fn text(&self) -> String {
        super::text::sweeps(self.scene, self.results, self.written)
    }
    fn json(&self) -> String {
        super::json::sweeps(self.results)
    }
}
