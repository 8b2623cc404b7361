//! Flux, mutual inductance and induced EMF.
//!
//! Φ = ∮ A · dl along the victim's edges (Stokes' theorem), each edge integrated by
//! adaptive Gauss–Legendre quadrature; M = N Φ / I; the EMF phasor of line k is
//! E_k = −j ω_k M I_k (peak values; rms = peak/√2), positive in the right-handed sense
//! about the victim's axis.

use crate::error::SolveError;
use crate::field::{FarField, FieldSource, Vec3};
use crate::geometry::Edge;
use crate::model::{Scene, Source, Victim};
use crate::quadrature::{Integral, integrate_unit};
use crate::shield::{FluxEffect, SHIELDING_CAP_DB};
use crate::spectrum::{Line, same_frequency};
use num_complex::Complex64;
use std::f64::consts::{SQRT_2, TAU};
use std::sync::Arc;

/// Magnetic flux through the closed chain `edges` per ampere of `source` current, in
/// Wb/A (= H for one turn), with relative accuracy `tolerance` of the integral's scale.
pub fn flux_per_amp<S: FieldSource + ?Sized>(
    source: &S,
    edges: &[Edge],
    tolerance: f64,
) -> Integral {
    flux_per_amp_within(source, source.bounding_sphere(), edges, tolerance)
}

/// As [`flux_per_amp`], with the source's bounding sphere (centre m, radius m) given.
pub fn flux_per_amp_within<S: FieldSource + ?Sized>(
    source: &S,
    sphere: Option<(crate::field::Vec3, f64)>,
    edges: &[Edge],
    tolerance: f64,
) -> Integral {
    // Edges in parallel, summed in edge order: the same result for any thread count.
    use rayon::prelude::*;
    let parts: Vec<Integral> = edges
        .par_iter()
        .map(|edge| {
            let f = |t: f64| {
                let tangent = edge.tangent(t);
                let (a, gross) = source.a_and_gross_per_amp(&edge.point(t));
                (a.dot(&tangent), gross * tangent.norm())
            };
            let panels = edge.initial_panels();
            if let Some(part) = far_edge(&f, edge, panels, sphere, tolerance) {
                return part;
            }
            // A tenth of the tolerance per edge: the halving test is conservative for
            // smooth integrands, and edges add.
            integrate_unit(&f, panels, tolerance * 0.1)
        })
        .collect();
    let mut total = Integral {
        value: 0.0,
        magnitude: 0.0,
        converged: true,
    };
    for part in parts {
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
    let points = far_points(edge, panels, sphere, tolerance)?;
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

/// The Gauss–Legendre points per first-pass panel of [`far_edge`]'s rule for `edge`,
/// or `None` when the conductors (inside `sphere`) are too close for it.
fn far_points(
    edge: &Edge,
    panels: usize,
    sphere: Option<(crate::field::Vec3, f64)>,
    tolerance: f64,
) -> Option<usize> {
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
    Some((target.ln() / (2.0 * ratio.ln())).ceil().max(2.0) as usize)
}

/// Flux per ampere (Wb/A) through the closed chain `edges` from a source's multipole
/// expansion `far`, or `None` when the victim is not far enough for it to be proven
/// within `tolerance` and cheaper than the direct sum. Every edge must be far enough
/// from the conductors (inside `sphere`) for the one-pass far-edge rule of
/// [`flux_per_amp`]. The error of the series at degree q is bounded at each node by
/// [`crate::field::FarField::a_bound`]; summed over the rule's |weight × tangent|, that
/// bounds the flux error, which must come under a tenth of the tolerance times the flux
/// found (with the series' rounding noise). The degree is chosen from a first estimate
/// through degree 2 (dipole and quadrupole).
///
/// A flat victim (`face`: the centre (m) and radius (m) of a disc holding it, and its
/// area, m²) also has the bound area × [`crate::field::FarField::b_bound`] at the
/// disc's nearest point, the flux of the series' error field through the face; the
/// smaller bound is used.
pub fn flux_from_far(
    far: &crate::field::FarField,
    sphere: Option<(crate::field::Vec3, f64)>,
    edges: &[Edge],
    face: Option<(crate::field::Vec3, f64, f64)>,
    tolerance: f64,
) -> Option<Integral> {
    use crate::field::Vec3;
    use crate::field::multipole::MAX_ORDER;
    use crate::field::multipole::policy::{
        FLUX_GUESS_SHARE, FLUX_NEAR_RADII, TOLERANCE_SHARE, flux_series_pays, usable_at,
    };
    let (centre, r_far) = far.sphere();
    // A victim whose nearest part is within twice the conductors' radius would need
    // more degrees than are kept.
    let near = edges.iter().any(|e| {
        let (c, r) = e.bounding_sphere();
        (c - centre).norm() - r < FLUX_NEAR_RADII * r_far
    });
    if near {
        return None;
    }
    // Nodes: (point, tangent × weight).
    let mut nodes: Vec<(Vec3, Vec3)> = Vec::new();
    for edge in edges {
        let panels = edge.initial_panels();
        let points = far_points(edge, panels, sphere, tolerance)?;
        let (x, w) = crate::quadrature::rule_of(points);
        for k in 0..panels {
            let (t0, t1) = (k as f64 / panels as f64, (k + 1) as f64 / panels as f64);
            let (mid, half) = ((t0 + t1) / 2.0, (t1 - t0) / 2.0);
            for (xi, wi) in x.iter().zip(w) {
                let t = mid + half * xi;
                let p = edge.point(t);
                if !usable_at((p - centre).norm(), r_far) {
                    return None;
                }
                nodes.push((p, edge.tangent(t) * (wi * half)));
            }
        }
    }
    // The bound at the nearest node, times the rule's Σ |weight × tangent|.
    let nearest_node = nodes
        .iter()
        .map(|(p, _)| (p - centre).norm())
        .fold(f64::INFINITY, f64::min);
    let length: f64 = nodes.iter().map(|(_, tw)| tw.norm()).sum();
    let bound = |q: usize| -> f64 {
        let along = length * far.a_bound(q, nearest_node);
        let through = face.map_or(f64::INFINITY, |(c, r, area)| {
            let nearest = (c - centre).norm() - r;
            if nearest > r_far {
                area * far.b_bound(q, nearest)
            } else {
                f64::INFINITY
            }
        });
        along.min(through)
    };
    let flux_through = |q: usize| -> (Vec<f64>, f64) {
        let mut by_degree = vec![0.0; q + 1];
        let mut parts = [Vec3::zeros(); MAX_ORDER + 1];
        let mut noise = 0.0;
        for (p, tw) in &nodes {
            let abs = far.a_degrees(p, q, &mut parts);
            for (b, part) in by_degree.iter_mut().zip(&parts) {
                *b += part.dot(tw);
            }
            noise += abs * tw.norm();
        }
        (by_degree, 256.0 * f64::EPSILON * noise)
    };
    let (first, _) = flux_through(2);
    let guess: f64 = first.iter().sum::<f64>().abs();
    let q = (2..=far.order()).find(|&q| bound(q) <= FLUX_GUESS_SHARE * tolerance * guess)?;
    if !flux_series_pays(far.terms(q), far.segments()) {
        return None;
    }
    let (by_degree, noise) = flux_through(q);
    let value: f64 = by_degree.iter().sum();
    if bound(q) + noise > TOLERANCE_SHARE * tolerance * value.abs() {
        return None;
    }
    Some(Integral {
        value,
        magnitude: value.abs(),
        converged: true,
    })
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
    /// What the scene's shields do to this pair, applied in order (the sheets first,
    /// then each enclosure between the two); empty without shields.
    pub shields: Vec<Arc<dyn FluxEffect>>,
}

/// What a pair model may reuse of its source, passed in by the caller that owns the
/// caches (a run): nothing here changes the result beyond the tolerance.
#[derive(Clone, Copy, Debug)]
pub struct SourceAids<'a> {
    /// The source's far-field series, if the caller built it and allows its use.
    pub far: Option<&'a FarField>,
    /// The source's bounding sphere (centre m, radius m), if it has one.
    pub sphere: Option<(Vec3, f64)>,
}

impl PairModel {
    /// Builds the model of `source` coupling into `victim` in `scene`, to `tolerance`
    /// (relative), with the series and sphere in `aids`.
    pub fn new(
        scene: &Scene,
        source: &Source,
        victim: &Victim,
        aids: SourceAids<'_>,
        tolerance: f64,
    ) -> Result<PairModel, SolveError> {
        let SourceAids { far, sphere } = aids;
        let phi = far
            .and_then(|f| flux_from_far(f, sphere, &victim.edges, victim.flat_face(), tolerance))
            .unwrap_or_else(|| {
                flux_per_amp_within(&source.conductors, sphere, &victim.edges, tolerance)
            });
        let shields = crate::shield::pair_effects(scene, source, victim, tolerance)?;
        Ok(PairModel {
            flux: phi.value,
            converged: phi.converged,
            shields,
        })
    }

    /// Whether any shield acts on this pair.
    pub fn is_shielded(&self) -> bool {
        !self.shields.is_empty()
    }

    /// Flux through one turn per ampere with the shields in place at `frequency` (Hz),
    /// Wb/A (complex: the shields shift its phase).
    pub fn shielded_flux(&self, frequency: f64) -> Complex64 {
        let mut phi = Complex64::new(self.flux, 0.0);
        for s in &self.shields {
            phi = s.apply(self.flux, phi, frequency);
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

/// Voltage across a load `r` (ohm) fed by EMF phasor `e` (V) at `f` (Hz) through the
/// loop's own inductance `l` (H): V = E·R / (R + jωL) (a voltage divider).
pub fn load_voltage(e: Complex64, f: f64, r: f64, l: f64) -> Complex64 {
    e * r / Complex64::new(r, TAU * f * l)
}
