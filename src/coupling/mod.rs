//! Flux, mutual inductance and induced EMF.
//!
//! Φ = ∮ A · dl along the victim's edges (Stokes' theorem), each edge integrated by
//! adaptive Gauss–Legendre quadrature; M = N Φ / I; the EMF phasor of line k is
//! E_k = −j ω_k M I_k (peak values; rms = peak/√2), positive in the right-handed sense
//! about the victim's axis.

mod far;
mod flux;
mod pair;

pub use far::flux_from_far;
pub use flux::{flux_per_amp, flux_per_amp_within};
pub use pair::{PairModel, SourceAids};

use crate::shield::SHIELDING_CAP_DB;
use crate::spectrum::{Line, Tail, same_frequency};
use num_complex::Complex64;
use std::f64::consts::{SQRT_2, TAU};
/// EMF phasor (V, peak) induced by `line` through mutual inductance `m` (H):
/// E = −j ω M I.
pub fn emf(m: f64, line: &Line) -> Complex64 {
    -Complex64::i() * (TAU * line.frequency * m) * line.current
}

/// EMF of one spectral line of one source.
#[derive(Clone, Debug)]
pub struct LineEmf {
    /// Line frequency, Hz.
    pub frequency: f64,
    /// Source current phasor of the line, A peak.
    pub current: Complex64,
    /// Open-circuit EMF phasor, V peak.
    pub emf: Complex64,
    /// 20·log10(|E unshielded| / |E shielded|), dB (0 without shields).
    pub shielding_db: f64,
}

/// What one source does to one victim.
#[derive(Clone, Debug)]
pub struct SourceCoupling {
    /// Source id.
    pub id: String,
    /// Mutual inductance including the victim's turns, H.
    pub mutual_inductance: f64,
    /// EMF of every line of the source.
    pub lines: Vec<LineEmf>,
    /// Whether the flux integral met the tolerance.
    pub converged: bool,
    /// The EMF of the source's lines above the listed ones.
    pub omitted: OmittedEmf,
}

/// The EMF that a source's unlisted lines add to a victim.
#[derive(Clone, Debug, PartialEq)]
pub enum OmittedEmf {
    /// Their rms together, V. `exact` is false when it is an estimate: behind a shield
    /// the coupling depends on frequency, and the estimate holds the highest listed
    /// line's coupling for every line above it.
    Rms {
        /// rms of every unlisted line together, V.
        volts: f64,
        /// Whether the value is exact (closed form) rather than an estimate.
        exact: bool,
    },
    /// The waveform has an ideal edge and the sum does not converge (the scene's
    /// warning says how to give the edge its duration).
    Diverges,
}

impl OmittedEmf {
    /// The omitted EMF of a source with current `tail` beyond `lines`, coupled through
    /// `m` (H, turns included) for every unlisted line; `exact` when `m` is the same at
    /// every frequency. By Parseval's theorem the unlisted lines' EMF rms is |m| times
    /// the rms of the unlisted part of di/dt.
    pub fn new(tail: &Tail, lines: &[Line], m: f64, exact: bool) -> OmittedEmf {
        match tail.slope_rms(lines) {
            Some(slope) => OmittedEmf::Rms {
                volts: m.abs() * slope,
                exact: exact || slope == 0.0,
            },
            None if m == 0.0 => OmittedEmf::Rms {
                volts: 0.0,
                exact: true,
            },
            None => OmittedEmf::Diverges,
        }
    }
}

impl SourceCoupling {
    /// Couple a source with lines `lines` through mutual inductance `m` (H); `tail` is
    /// what the lines leave out of the source's waveform.
    pub fn new(id: &str, m: f64, lines: &[Line], tail: &Tail, converged: bool) -> Self {
        let omitted = OmittedEmf::new(tail, lines, m, true);
        let lines = lines
            .iter()
            .map(|l| LineEmf {
                frequency: l.frequency,
                current: l.current,
                emf: emf(m, l),
                shielding_db: 0.0,
            })
            .collect();
        SourceCoupling {
            id: id.to_string(),
            mutual_inductance: m,
            omitted,
            lines,
            converged,
        }
    }

    /// Couple a source with lines `lines` (and what they leave out, `tail`) through
    /// `model`, for a victim of `turns`.
    pub fn from_model(
        id: &str,
        turns: f64,
        model: &PairModel,
        lines: &[Line],
        tail: &Tail,
    ) -> Self {
        let mut out = SourceCoupling::new(id, turns * model.flux, lines, tail, model.converged);
        if model.is_shielded() {
            let mut m_top = 0.0;
            for l in &mut out.lines {
                let phi = model.shielded_flux(l.frequency);
                let free = l.emf;
                l.emf = -Complex64::i() * (TAU * l.frequency) * turns * phi * l.current;
                l.shielding_db = shielding_db(free.norm(), l.emf.norm());
                m_top = turns * phi.norm();
            }
            // Above the listed lines the shielded coupling is taken as that of the
            // highest one (an estimate; for conducting sheets it only falls further).
            out.omitted = OmittedEmf::new(tail, lines, m_top, false);
        }
        out
    }
}

/// 20·log10(free / shielded), dB, within ±[`SHIELDING_CAP_DB`]; 0 when both are zero.
pub fn shielding_db(free: f64, shielded: f64) -> f64 {
    if free == 0.0 && shielded == 0.0 {
        return 0.0;
    }
    let db = 20.0 * (free / shielded).log10();
    if db.is_nan() {
        0.0
    } else {
        db.clamp(-SHIELDING_CAP_DB, SHIELDING_CAP_DB)
    }
}

/// The phasor sum over sources of each distinct frequency, ascending: (Hz, V peak).
pub fn emf_by_frequency(sources: &[SourceCoupling]) -> Vec<(f64, Complex64)> {
    let mut all: Vec<(f64, Complex64)> = sources
        .iter()
        .flat_map(|s| s.lines.iter().map(|l| (l.frequency, l.emf)))
        .collect();
    all.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, Complex64)> = Vec::new();
    for (f, e) in all {
        match out.last_mut() {
            Some(last) if same_frequency(last.0, f) => last.1 += e,
            _ => out.push((f, e)),
        }
    }
    out
}

/// Total rms EMF (V): lines at one frequency add as phasors, distinct frequencies add
/// as the root-sum-square of their rms values.
pub fn total_rms(by_frequency: &[(f64, Complex64)]) -> f64 {
    by_frequency
        .iter()
        .map(|(_, e)| e.norm_sqr())
        .sum::<f64>()
        .sqrt()
        / SQRT_2
}

/// A victim's total rms EMF over every line of every source, listed or not.
#[derive(Clone, Debug, PartialEq)]
pub enum Total {
    /// The sum converges.
    Converged {
        /// The total, V rms: √(listed² + omitted²).
        rms: f64,
        /// The listed lines' root-sum-square, V rms.
        listed: f64,
        /// Every unlisted line together, V rms.
        omitted: f64,
        /// Whether `omitted` is exact. It is not behind a shield (the highest listed
        /// line's coupling is held above it) or when several sources leave lines out
        /// (their omitted parts are then added as magnitudes, an upper bound).
        omitted_exact: bool,
    },
    /// A source's waveform has an ideal edge and its EMF has no finite total: the id of
    /// the first such source.
    Diverges(String),
}

impl Total {
    /// The victim's total from its listed phasor sums `by_frequency` (Hz, V peak) and
    /// its sources' omitted lines. Omitted lines are taken at frequencies apart from
    /// every listed one.
    pub fn new(by_frequency: &[(f64, Complex64)], sources: &[SourceCoupling]) -> Total {
        Total::from_parts(
            by_frequency,
            sources.iter().map(|s| (s.id.as_str(), s.omitted.clone())),
        )
    }

    /// As [`Total::new`] from each source's id and omitted EMF (V rms), for totals of
    /// something other than the open-circuit EMF (the voltage across a load).
    pub fn from_parts<'a>(
        by_frequency: &[(f64, Complex64)],
        omitted_by_source: impl IntoIterator<Item = (&'a str, OmittedEmf)>,
    ) -> Total {
        let listed = total_rms(by_frequency);
        let mut omitted = 0.0;
        let mut exact = true;
        let mut parts = 0;
        for (id, part) in omitted_by_source {
            match part {
                OmittedEmf::Diverges => return Total::Diverges(id.to_string()),
                OmittedEmf::Rms { volts, exact: e } if volts > 0.0 => {
                    omitted += volts;
                    exact &= e;
                    parts += 1;
                }
                OmittedEmf::Rms { .. } => {}
            }
        }
        Total::Converged {
            rms: listed.hypot(omitted),
            listed,
            omitted,
            omitted_exact: exact && parts <= 1,
        }
    }

    /// The total, V rms; `None` when it does not converge.
    pub fn rms(&self) -> Option<f64> {
        match self {
            Total::Converged { rms, .. } => Some(*rms),
            Total::Diverges(_) => None,
        }
    }

    /// How much the unlisted lines add to the listed ones, dB (20·log10(total /
    /// listed)); `None` when the total does not converge.
    pub fn omitted_share_db(&self) -> Option<f64> {
        match self {
            Total::Converged { rms, listed, .. } if *listed > 0.0 => {
                Some(20.0 * (rms / listed).log10())
            }
            Total::Converged { rms, .. } if *rms == 0.0 => Some(0.0),
            Total::Converged { .. } => Some(f64::INFINITY),
            Total::Diverges(_) => None,
        }
    }
}

/// Margin in dB of an rms total against an rms limit: 20·log10(limit / total);
/// positive passes. Infinite when the total is zero.
pub fn margin_db(limit: f64, total: f64) -> f64 {
    if total == 0.0 {
        f64::INFINITY
    } else {
        20.0 * (limit / total).log10()
    }
}

/// Voltage across a load `r` (ohm) fed by EMF phasor `e` (V) at `f` (Hz) through the
/// loop's own inductance `l` (H): V = E·R / (R + jωL) (a voltage divider).
pub fn load_voltage(e: Complex64, f: f64, r: f64, l: f64) -> Complex64 {
    e * r / Complex64::new(r, TAU * f * l)
}
