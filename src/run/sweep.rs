//! Sweeps: EMF versus distance, angle or frequency; the safe distance; worst-case
//! orientation at every step.

use super::Solver;
use super::orientation::{Orientation, search, small_loop_matrix};
use crate::coupling::{PairModel, SourceCoupling, Total, emf_by_frequency};
use crate::error::SolveError;
use crate::field::Vec3;
use crate::model::contact::touching_sources;
use crate::model::sweep::victim_at;
use crate::model::{Scene, Source, SweepSpec, Vary, Victim};
use crate::spectrum::{Line, Tail};
use num_complex::Complex64;
use rayon::prelude::*;

/// One sample of a sweep.
#[derive(Clone, Debug)]
pub struct SweepRow {
    /// Swept value: m, rad or Hz.
    pub value: f64,
    /// EMF phasor (V peak) of each distinct frequency, ascending (Hz, V).
    pub lines: Vec<(f64, Complex64)>,
    /// Total rms EMF, V.
    pub total_rms: f64,
    /// With `orientation = "worst"`: the loop normal that maximises the EMF.
    pub worst_axis: Option<Vec3>,
    /// With shields: 20·log10(|EMF without| / |EMF with|) of each distinct frequency,
    /// dB, in the order of `lines`; empty without shields.
    pub shielding_db: Vec<f64>,
    /// Indices (into the scene's sources) of the sources the victim touches or crosses
    /// at this step, as placed for the row (turned, with `orientation = "worst"`);
    /// empty when clear. Such a row's EMF is dominated by the contact.
    pub contact: Vec<usize>,
}

/// A victim's EMF for one placement.
#[derive(Clone, Debug)]
pub struct VictimEmf {
    /// EMF phasor of each distinct frequency, ascending (Hz, V peak).
    pub lines: Vec<(f64, Complex64)>,
    /// Total rms EMF, V.
    pub total_rms: f64,
    /// With shields: the shielding of each frequency, dB, in the order of `lines`;
    /// empty without shields.
    pub shielding_db: Vec<f64>,
}

/// A finished sweep.
#[derive(Clone, Debug)]
pub struct SweepResult {
    /// The sweep as specified.
    pub spec: SweepSpec,
    /// One row per step.
    pub rows: Vec<SweepRow>,
    /// Distance sweeps with a limit: the smallest value beyond which the total stays
    /// under the limit to the end of the range (m); `None` when never safe.
    pub safe_value: Option<f64>,
    /// The victim's limit, V rms.
    pub limit: Option<f64>,
    /// The null orientation at the placed position (for the report).
    pub best_at_placed: Option<Orientation>,
    /// Total at the placed position as placed, V rms.
    pub placed_total: f64,
    /// With `compare`: the total at every step with only one sheet fitted, per
    /// alternative.
    pub compare: Vec<Alternative>,
}

/// One shield alternative of a compared sweep.
#[derive(Clone, Debug)]
pub struct Alternative {
    /// The sheet fitted alone, or `None` for no sheet.
    pub shield: Option<String>,
    /// Total rms EMF at every step, V.
    pub totals: Vec<f64>,
    /// Every step with this alternative: per-line EMF (V peak), total (V rms) and
    /// per-line shielding (dB, against nothing fitted; empty for no shield).
    pub rows: Vec<SweepRow>,
    /// At the placed position with the scene's own lines: per-line EMF (V peak), total
    /// (V rms) and per-line shielding (dB, against nothing fitted); `None` when the
    /// option cannot be solved there (the placed victim would cut its sheet).
    pub placed: Option<VictimEmf>,
}

impl Alternative {
    /// A legend label: "no shield" or the sheet's id.
    pub fn label(&self) -> String {
        match &self.shield {
            None => "no shield".to_string(),
            Some(id) => id.clone(),
        }
    }
}

/// The victim and source lines at one swept value.
struct Step {
    victim: Victim,
    lines: Vec<Vec<Line>>,
}

fn step_at(scene: &Scene, spec: &SweepSpec, x: f64) -> Step {
    let victim = victim_at(&scene.victims[spec.victim], spec, x);
    let lines = scene
        .sources
        .iter()
        .map(|s| match spec.vary {
            Vary::Frequency => {
                let f1 = s.lines.first().map_or(1.0, |l| l.frequency);
                s.lines
                    .iter()
                    .map(|l| Line {
                        frequency: l.frequency * x / f1,
                        current: l.current,
                    })
                    .collect()
            }
            _ => s.lines.clone(),
        })
        .collect();
    Step { victim, lines }
}

/// Per-frequency EMF phasors and the total rms for `victim` with per-source `lines`;
/// fails only when a shield cannot be solved for this placement.
pub fn victim_emf(
    scene: &Scene,
    solver: &Solver,
    victim: &Victim,
    lines: &[Vec<Line>],
) -> Result<VictimEmf, SolveError> {
    let models = solver.pair_models(scene, victim)?;
    Ok(emf_from_models(scene, &models, victim, lines))
}

/// As [`victim_emf`] with the pair models already built (they do not depend on the
/// lines, so a frequency sweep builds them once).
fn emf_from_models(
    scene: &Scene,
    models: &[PairModel],
    victim: &Victim,
    lines: &[Vec<Line>],
) -> VictimEmf {
    let couplings: Vec<SourceCoupling> = scene
        .sources
        .iter()
        .zip(models)
        .zip(lines)
        .map(|((s, m), l)| SourceCoupling::from_model(&s.id, victim.turns, m, l, &tail_of(s, l)))
        .collect();
    let by_f = emf_by_frequency(&couplings);
    // `run` refuses sources whose total diverges before any step.
    let total = Total::new(&by_f, &couplings).rms().unwrap_or(f64::INFINITY);
    let shielding = if models.iter().any(PairModel::is_shielded) {
        let free: Vec<SourceCoupling> = scene
            .sources
            .iter()
            .zip(models)
            .zip(lines)
            .map(|((s, m), l)| {
                SourceCoupling::new(&s.id, victim.turns * m.flux, l, &Tail::None, true)
            })
            .collect();
        emf_by_frequency(&free)
            .iter()
            .zip(&by_f)
            .map(|(f, s)| crate::coupling::shielding_db(f.1.norm(), s.1.norm()))
            .collect()
    } else {
        Vec::new()
    };
    VictimEmf {
        lines: by_f,
        total_rms: total,
        shielding_db: shielding,
    }
}

/// The tail of source `s` when its lines are `lines`: a frequency sweep moves every
/// line by the same factor, and di/dt scales with it.
fn tail_of(s: &Source, lines: &[Line]) -> Tail {
    match (s.lines.first(), lines.first()) {
        (Some(a), Some(b)) => s.tail.scaled(1.0, b.frequency / a.frequency),
        _ => s.tail.clone(),
    }
}

/// Fails when a source's waveform has an ideal edge: its EMF has no finite total, so a
/// sweep of totals means nothing.
fn check_converges(scene: &Scene, spec: &SweepSpec) -> Result<(), SolveError> {
    for s in &scene.sources {
        if let Tail::IdealEdge(note) = &s.tail {
            return Err(SolveError::Diverges(format!(
                "{note} (sweep \"{}\" sums the EMF of every line)",
                spec.id
            )));
        }
    }
    Ok(())
}

/// The total for the orientation search: NaN where a shield cannot be solved (a tilted
/// victim that would cut a sheet) or where the victim touches or crosses a source (its
/// EMF would be the contact's), which the search never prefers.
fn search_total(scene: &Scene, solver: &Solver, victim: &Victim, lines: &[Vec<Line>]) -> f64 {
    if !touching_sources(scene, victim).is_empty() {
        return f64::NAN;
    }
    victim_emf(scene, solver, victim, lines).map_or(f64::NAN, |r| r.total_rms)
}

fn phasors(lines: &[Vec<Line>]) -> Vec<Vec<(f64, Complex64)>> {
    lines
        .iter()
        .map(|l| l.iter().map(|x| (x.frequency, x.current)).collect())
        .collect()
}

/// Worst orientation of `victim` for `lines`.
fn worst(scene: &Scene, solver: &Solver, victim: &Victim, lines: &[Vec<Line>]) -> Orientation {
    let q = small_loop_matrix(scene, victim, &phasors(lines));
    search(victim, &q, true, |v| search_total(scene, solver, v, lines))
}

fn row_at(
    scene: &Scene,
    solver: &Solver,
    spec: &SweepSpec,
    x: f64,
    models: Option<&[PairModel]>,
) -> Result<SweepRow, SolveError> {
    let step = step_at(scene, spec, x);
    let (emf, worst_axis, contact) = if spec.worst {
        let o = worst(scene, solver, &step.victim, &step.lines);
        let turned = step.victim.facing(&o.normal);
        (
            victim_emf(scene, solver, &turned, &step.lines)?,
            Some(o.normal),
            touching_sources(scene, &turned),
        )
    } else {
        let emf = match models {
            Some(m) => emf_from_models(scene, m, &step.victim, &step.lines),
            None => victim_emf(scene, solver, &step.victim, &step.lines)?,
        };
        (emf, None, touching_sources(scene, &step.victim))
    };
    Ok(SweepRow {
        value: x,
        lines: emf.lines,
        total_rms: emf.total_rms,
        worst_axis,
        shielding_db: emf.shielding_db,
        contact,
    })
}

/// Runs one sweep. `progress` is called once per finished step (from any thread).
/// Fails only when a shield cannot be solved at some step (the reason says which).
pub fn run(
    scene: &Scene,
    solver: &Solver,
    spec: &SweepSpec,
    progress: &(dyn Fn() + Sync),
) -> Result<SweepResult, SolveError> {
    check_converges(scene, spec)?;
    let victim = &scene.victims[spec.victim];
    // A distance or angle sweep places the victim many times: far steps then take the
    // flux from each source's multipole expansion where that is proven within the
    // tolerance (not with --exact), if the sweep has enough far work to repay building
    // it. A frequency sweep computes its fluxes once.
    if !matches!(spec.vary, Vary::Frequency) && moments_pay(spec, victim) {
        solver.build_far_fields(scene);
    }
    let rows = rows_of(scene, solver, spec, progress)?;
    let mut compare = Vec::new();
    for alt in &spec.compare {
        compare.push(alternative(scene, solver, spec, alt.as_deref(), progress)?);
    }
    let limit = victim.limit;
    let safe_value = match (spec.vary, limit) {
        (Vary::Distance(_), Some(l)) => safe_distance(&rows, l, scene.tolerance, |x| {
            row_at(scene, solver, spec, x, None).map_or(f64::INFINITY, |r| r.total_rms)
        }),
        _ => None,
    };
    let base_lines: Vec<Vec<Line>> = scene.sources.iter().map(|s| s.lines.clone()).collect();
    let placed_total = victim_emf(scene, solver, victim, &base_lines)?.total_rms;
    let q = small_loop_matrix(scene, victim, &phasors(&base_lines));
    // None when no orientation could be solved (every tilt would cut a sheet).
    let best_at_placed = Some(search(victim, &q, false, |v| {
        search_total(scene, solver, v, &base_lines)
    }))
    .filter(|o| o.total_rms.is_finite());
    Ok(SweepResult {
        spec: spec.clone(),
        rows,
        safe_value,
        limit,
        best_at_placed,
        placed_total,
        compare,
    })
}

/// The sweep `spec` repeated with only the sheet `shield` fitted (`None`: no sheet),
/// and that alternative at the placed position with the scene's own lines.
fn alternative(
    scene: &Scene,
    solver: &Solver,
    spec: &SweepSpec,
    shield: Option<&str>,
    progress: &(dyn Fn() + Sync),
) -> Result<Alternative, SolveError> {
    let alone = scene.with_only_sheet(shield).ok_or_else(|| {
        SolveError::Alternative(format!(
            "sweep \"{}\": shield {shield:?} cannot be fitted alone",
            spec.id
        ))
    })?;
    let rows = rows_of(&alone, solver, spec, progress)?;
    let base_lines: Vec<Vec<Line>> = scene.sources.iter().map(|s| s.lines.clone()).collect();
    let placed = victim_emf(&alone, solver, &scene.victims[spec.victim], &base_lines).ok();
    Ok(Alternative {
        shield: shield.map(str::to_string),
        totals: rows.iter().map(|r| r.total_rms).collect(),
        rows,
        placed,
    })
}

/// Whether a sweep of `victim` over `spec` repays building the moments (the far-field
/// policy's rule).
fn moments_pay(spec: &SweepSpec, victim: &Victim) -> bool {
    let panels: usize = victim.edges.iter().map(|e| e.initial_panels()).sum();
    crate::field::multipole::policy::moments_pay(spec.steps, panels)
}

/// Every step of `spec` in `scene`, in parallel.
fn rows_of(
    scene: &Scene,
    solver: &Solver,
    spec: &SweepSpec,
    progress: &(dyn Fn() + Sync),
) -> Result<Vec<SweepRow>, SolveError> {
    let victim = &scene.victims[spec.victim];
    // A frequency sweep keeps the geometry: build the pair models once.
    let models: Option<Vec<PairModel>> = match spec.vary {
        Vary::Frequency => Some(solver.pair_models(scene, victim)?),
        _ => None,
    };
    spec.values()
        .into_par_iter()
        .map(|x| {
            let row = row_at(scene, solver, spec, x, models.as_deref());
            progress();
            row
        })
        .collect()
}

/// The smallest x beyond which `total(x) ≤ limit` to the end of the sampled range:
/// the last over-limit sample and the next one bracket it, and bisection narrows the
/// bracket to `tolerance` relative. The first value when every sample passes; `None`
/// when the last sample is over the limit.
pub fn safe_distance<F: Fn(f64) -> f64>(
    rows: &[SweepRow],
    limit: f64,
    tolerance: f64,
    total: F,
) -> Option<f64> {
    let last_over = rows.iter().rposition(|r| r.total_rms > limit);
    let Some(j) = last_over else {
        return rows.first().map(|r| r.value);
    };
    let next = rows.get(j + 1)?;
    let (mut over, mut under) = (rows[j].value, next.value);
    for _ in 0..200 {
        if (under - over).abs() <= tolerance * under.abs().max(over.abs()) {
            break;
        }
        let mid = 0.5 * (over + under);
        if total(mid) > limit {
            over = mid;
        } else {
            under = mid;
        }
    }
    Some(under)
}
