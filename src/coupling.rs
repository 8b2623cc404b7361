//! Flux, mutual inductance and induced EMF.
//!
//! Φ = ∮ A · dl along the victim's edges (Stokes' theorem), each edge integrated by
//! adaptive Gauss–Legendre quadrature; M = N Φ / I; the EMF phasor of line k is
//! E_k = −j ω_k M I_k (peak values; rms = peak/√2), positive in the right-handed sense
//! about the victim's axis.

use crate::Scene;
use crate::field::FieldSource;
use crate::geometry::Edge;
use crate::quadrature::{Integral, integrate_unit};
use crate::scene::{Source, Victim};
use crate::shield::enclosure::Enclosure;
use crate::shield::spectral::Path;
use crate::shield::{SHIELDING_CAP_DB, Scattered};
use crate::spectrum::{Line, same_frequency};
use num_complex::Complex64;
use std::f64::consts::{SQRT_2, TAU};

/// Magnetic flux through the closed chain `edges` per ampere of `source` current, in
/// Wb/A (= H for one turn), with relative accuracy `tolerance` of the integral's scale.
pub fn flux_per_amp<S: FieldSource + ?Sized>(
    source: &S,
    edges: &[Edge],
    tolerance: f64,
) -> Integral {
    let mut total = Integral {
        value: 0.0,
        magnitude: 0.0,
        converged: true,
    };
    let sphere = source.bounding_sphere();
    for edge in edges {
        let f = |t: f64| {
            let tangent = edge.tangent(t);
            let (a, gross) = source.a_and_gross_per_amp(&edge.point(t));
            (a.dot(&tangent), gross * tangent.norm())
        };
        let panels = edge.initial_panels();
        if let Some(part) = far_edge(&f, edge, panels, sphere, tolerance) {
            total.value += part.value;
            total.magnitude += part.magnitude;
            continue;
        }
        // A tenth of the tolerance per edge: the halving test is conservative for smooth
        // integrands, and edges add.
        let part = integrate_unit(&f, panels, tolerance * 0.1);
        total.value += part.value;
        total.magnitude += part.magnitude;
        total.converged &= part.converged;
    }
    total
}

/// One Gauss–Legendre panel per first-pass panel, without the halving check, when every
/// conductor is far from the edge compared with a panel's length. The integrand is then
/// analytic in a Bernstein ellipse about each panel that reaches out to the source, and
/// the n-point rule's error falls like (h / 4g)^(2n) for panel length h and gap g
/// (Trefethen, "Approximation Theory and Approximation Practice", ch. 19). The fewest
/// points n (up to the full rule) that bring the estimate under a hundredth of the
/// tolerance, at twice the gap the estimate needs for the full rule, are used.
fn far_edge<F: Fn(f64) -> (f64, f64) + Sync>(
    f: &F,
    edge: &Edge,
    panels: usize,
    sphere: Option<(crate::field::Vec3, f64)>,
    tolerance: f64,
) -> Option<Integral> {
    let (centre, radius) = sphere?;
    let (e_centre, e_radius) = edge.bounding_sphere();
    let gap = (e_centre - centre).norm() - radius - e_radius;
    let h = edge.length() / panels as f64;
    let order = crate::quadrature::ORDER as f64;
    let target = 100.0 / tolerance;
    // Half the gap counts, a margin of 2 on the estimate's distance.
    let ratio = 4.0 * (gap / 2.0) / h;
    if gap.is_nan() || ratio <= target.powf(1.0 / (2.0 * order)) {
        return None;
    }
    let points = (target.ln() / (2.0 * ratio.ln())).ceil().max(2.0) as usize;
    let mut out = Integral {
        value: 0.0,
        magnitude: 0.0,
        converged: true,
    };
    for k in 0..panels {
        let v = crate::quadrature::panel_with(
            f,
            k as f64 / panels as f64,
            (k + 1) as f64 / panels as f64,
            points,
        );
        out.value += v;
        out.magnitude += v.abs();
    }
    Some(out)
}

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
}

impl SourceCoupling {
    /// Couple a source with lines `lines` through mutual inductance `m` (H).
    pub fn new(id: &str, m: f64, lines: &[Line], converged: bool) -> Self {
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
            lines,
            converged,
        }
    }

    /// Couple a source with lines `lines` through `model`, for a victim of `turns`.
    pub fn from_model(id: &str, turns: f64, model: &PairModel, lines: &[Line]) -> Self {
        let mut out = SourceCoupling::new(id, turns * model.flux, lines, model.converged);
        if model.is_shielded() {
            for l in &mut out.lines {
                let phi = model.shielded_flux(l.frequency);
                let free = l.emf;
                l.emf = -Complex64::i() * (TAU * l.frequency) * turns * phi * l.current;
                l.shielding_db = shielding_db(free.norm(), l.emf.norm());
            }
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

/// How one source reaches one victim: the free-space flux and what the scene's
/// shields do to it.
#[derive(Clone, Debug)]
pub struct PairModel {
    /// Free-space flux through one turn per ampere, Wb/A.
    pub flux: f64,
    /// Whether the free-space flux integral met the tolerance.
    pub converged: bool,
    /// The sheets' reflected or transmitted part, if the scene has sheets.
    pub scattered: Option<Scattered>,
    /// Enclosures between the source and the victim.
    pub enclosures: Vec<Enclosure>,
}

impl PairModel {
    /// Builds the model of `source` coupling into `victim` in `scene`.
    pub fn new(scene: &Scene, source: &Source, victim: &Victim) -> Result<PairModel, String> {
        let phi = flux_per_amp(&source.conductors, &victim.edges, scene.tolerance);
        let src_points = crate::scene::source_points(source);
        let scattered = match &scene.barrier {
            None => None,
            Some(b) => {
                let vpts = crate::scene::victim_points(&victim.edges);
                let s_side =
                    crate::scene::side_of(b, &src_points, &format!("source \"{}\"", source.id))?;
                let v_side = crate::scene::side_of(b, &vpts, &format!("victim \"{}\"", victim.id))?;
                Some(
                    crate::shield::flux_model(
                        b,
                        &source.conductors,
                        s_side,
                        &victim.edges,
                        &vpts,
                        v_side,
                        scene.tolerance,
                    )
                    .map_err(|why| format!("victim \"{}\" {why}", victim.id))?,
                )
            }
        };
        let enclosures =
            crate::shield::enclosures_between(&scene.enclosures, &victim.id, &src_points)
                .into_iter()
                .cloned()
                .collect();
        Ok(PairModel {
            flux: phi.value,
            converged: phi.converged,
            scattered,
            enclosures,
        })
    }

    /// Whether any shield acts on this pair.
    pub fn is_shielded(&self) -> bool {
        self.scattered.is_some() || !self.enclosures.is_empty()
    }

    /// Flux through one turn per ampere with the shields in place at `frequency` (Hz),
    /// Wb/A (complex: the shields shift its phase).
    pub fn shielded_flux(&self, frequency: f64) -> Complex64 {
        let mut phi = match &self.scattered {
            None => Complex64::new(self.flux, 0.0),
            Some(s) => match s.path {
                Path::Reflected => self.flux + s.at(frequency),
                Path::Transmitted => s.at(frequency),
            },
        };
        for e in &self.enclosures {
            phi *= (-e.ln_factor(frequency)).exp();
        }
        phi
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

/// Margin in dB of an rms total against an rms limit: 20·log10(limit / total);
/// positive passes. Infinite when the total is zero.
pub fn margin_db(limit: f64, total: f64) -> f64 {
    if total == 0.0 {
        f64::INFINITY
    } else {
        20.0 * (limit / total).log10()
    }
}

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
pub fn couple_victim(scene: &Scene, victim: &Victim) -> Result<VictimReport, String> {
    let sources: Vec<SourceCoupling> = scene
        .sources
        .iter()
        .map(|s| {
            let model = PairModel::new(scene, s, victim)?;
            Ok(SourceCoupling::from_model(
                &s.id,
                victim.turns,
                &model,
                &s.lines,
            ))
        })
        .collect::<Result<_, String>>()?;
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

/// Voltage across a load `r` (ohm) fed by EMF phasor `e` (V) at `f` (Hz) through the
/// loop's own inductance `l` (H): V = E·R / (R + jωL) (a voltage divider).
pub fn load_voltage(e: Complex64, f: f64, r: f64, l: f64) -> Complex64 {
    e * r / Complex64::new(r, TAU * f * l)
}
