//! `couple`: every source's mutual inductance and EMF per line into one victim, the
//! total and the margin.

use super::Solver;
use crate::coupling::{SourceCoupling, emf_by_frequency, load_voltage, margin_db, total_rms};
use crate::error::SolveError;
use crate::model::{Scene, Victim};
use num_complex::Complex64;

/// Everything `couple` reports for one victim.
#[derive(Clone, Debug)]
pub struct VictimReport {
    /// Victim id.
    pub id: String,
    /// Allowed rms total, V.
    pub limit: Option<f64>,
    /// Total rms EMF over all sources and lines, V.
    pub total_rms: f64,
    /// Per-source coupling.
    pub sources: Vec<SourceCoupling>,
    /// Phasor sums per distinct frequency (Hz, V peak).
    pub by_frequency: Vec<(f64, Complex64)>,
    /// With a `load`: the rms voltage across it, V (see [`load_voltage`]).
    pub load_rms: Option<f64>,
}

impl VictimReport {
    /// 20·log10(limit / total), dB; `None` without a limit.
    pub fn margin_db(&self) -> Option<f64> {
        self.limit.map(|l| margin_db(l, self.total_rms))
    }

    /// Whether the total is within the limit; `None` without a limit.
    pub fn pass(&self) -> Option<bool> {
        self.limit.map(|l| self.total_rms <= l)
    }
}

/// Couples every source of `scene` into `victim`; fails only when a shield cannot be
/// solved for this placement (the reason names the victim).
pub fn couple_victim(
    scene: &Scene,
    solver: &Solver,
    victim: &Victim,
) -> Result<VictimReport, SolveError> {
    let sources: Vec<SourceCoupling> = scene
        .sources
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let model = solver.pair_model(scene, i, victim)?;
            Ok(SourceCoupling::from_model(
                &s.id,
                victim.turns,
                &model,
                &s.lines,
            ))
        })
        .collect::<Result<_, SolveError>>()?;
    let by_frequency = emf_by_frequency(&sources);
    let load_rms = victim.load.map(|r| {
        let v: Vec<(f64, Complex64)> = by_frequency
            .iter()
            .map(|&(f, e)| (f, load_voltage(e, f, r, victim.self_inductance)))
            .collect();
        total_rms(&v)
    });
    Ok(VictimReport {
        id: victim.id.clone(),
        limit: victim.limit,
        total_rms: total_rms(&by_frequency),
        sources,
        by_frequency,
        load_rms,
    })
}
