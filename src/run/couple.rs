//! `couple`: every source's mutual inductance and EMF per line into one victim, the
//! total and the margin.

use super::Solver;
use crate::coupling::{
    OmittedEmf, SourceCoupling, Total, emf_by_frequency, load_voltage, margin_db,
};
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
    /// Total rms EMF over all sources and every line, listed or not, V.
    pub total: Total,
    /// Per-source coupling.
    pub sources: Vec<SourceCoupling>,
    /// Phasor sums per distinct frequency (Hz, V peak).
    pub by_frequency: Vec<(f64, Complex64)>,
    /// With a `load`: the total rms voltage across it, V (see [`load_voltage`]).
    pub load: Option<Total>,
}

impl VictimReport {
    /// The total rms EMF, V; `None` when it does not converge (an ideal edge).
    pub fn total_rms(&self) -> Option<f64> {
        self.total.rms()
    }

    /// 20·log10(limit / total), dB; `None` without a limit or a converged total.
    pub fn margin_db(&self) -> Option<f64> {
        Some(margin_db(self.limit?, self.total_rms()?))
    }

    /// Whether the total is within the limit; `None` without a limit or a converged
    /// total (no verdict).
    pub fn pass(&self) -> Option<bool> {
        Some(self.total_rms()? <= self.limit?)
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
                &s.tail,
            ))
        })
        .collect::<Result<_, SolveError>>()?;
    let by_frequency = emf_by_frequency(&sources);
    let load = victim
        .load
        .map(|r| load_total(&sources, &by_frequency, r, victim.self_inductance));
    Ok(VictimReport {
        id: victim.id.clone(),
        limit: victim.limit,
        total: Total::new(&by_frequency, &sources),
        sources,
        by_frequency,
        load,
    })
}

/// The total voltage across a load `r` (ohm) fed through the loop's self-inductance
/// `l` (H). The divider |R/(R + jωL)| falls with frequency, so the unlisted lines'
/// EMF scaled by its value at each source's highest listed line bounds their share.
fn load_total(
    sources: &[SourceCoupling],
    by_frequency: &[(f64, Complex64)],
    r: f64,
    l: f64,
) -> Total {
    let v: Vec<(f64, Complex64)> = by_frequency
        .iter()
        .map(|&(f, e)| (f, load_voltage(e, f, r, l)))
        .collect();
    let divided = sources.iter().map(|s| {
        let top = s.lines.last().map_or(0.0, |x| x.frequency);
        let k = load_voltage(Complex64::new(1.0, 0.0), top, r, l).norm();
        let omitted = match &s.omitted {
            OmittedEmf::Rms { volts, .. } => OmittedEmf::Rms {
                volts: volts * k,
                exact: *volts == 0.0,
            },
            other => other.clone(),
        };
        (s.id.as_str(), omitted)
    });
    Total::from_parts(&v, divided)
}
