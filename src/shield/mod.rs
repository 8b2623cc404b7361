//! Magnetic shields: materials, flat sheets and stacks (exact quasi-static planar
//! model), and closed enclosures (shell approximation).

pub mod barrier;
pub mod enclosure;
pub mod layers;
pub mod spectral;

use crate::error::SolveError;
use crate::field::{Accelerated, Conductors, Vec3};
use crate::geometry::Edge;
use crate::model::{
    Barrier, Enclosure, Layer, Scene, Side, SolverOptions, Source, Victim, source_points,
    victim_points,
};
use num_complex::Complex64;
use spectral::{Path, Plan, PlanError, SourceSpectrum, WORK_BUDGET};
use std::f64::consts::TAU;
use std::sync::Arc;

/// Largest shielding reported, dB: beyond it the shielded EMF has underflowed double
/// precision (nothing gets through).
pub const SHIELDING_CAP_DB: f64 = 300.0;

/// What one shield does to the flux of one source through one victim: the interface
/// every shield model implements for couple and sweep. A pair's effects are applied in
/// order, each to the flux the previous ones left; a new shield model (a finite plate,
/// say) is a new implementation returned by [`pair_effects`].
pub trait FluxEffect: std::fmt::Debug + Send + Sync {
    /// The flux per ampere through one turn (Wb/A, complex) at `frequency` (Hz), from
    /// the free-space flux `free` (Wb/A) and the flux `upstream` (Wb/A) that the
    /// effects before this one left.
    fn apply(&self, free: f64, upstream: Complex64, frequency: f64) -> Complex64;
}

impl FluxEffect for Scattered {
    /// Reflected: the free-space flux plus the sheets' reflection. Transmitted: only
    /// what comes through. The sheets come first, so `upstream` is the free flux.
    fn apply(&self, free: f64, _upstream: Complex64, frequency: f64) -> Complex64 {
        match self.path {
            Path::Reflected => free + self.at(frequency),
            Path::Transmitted => self.at(frequency),
        }
    }
}

impl FluxEffect for Enclosure {
    /// The flux divided by the enclosure's shielding factor.
    fn apply(&self, _free: f64, upstream: Complex64, frequency: f64) -> Complex64 {
        upstream * (-self.ln_factor(frequency)).exp()
    }
}

/// The effects of `scene`'s shields on `source` coupling into `victim`, in the order
/// [`FluxEffect::apply`] takes them, to `tolerance` (relative); fails when a sheet
/// cuts either or the planar sum cannot be planned for this placement.
pub fn pair_effects(
    scene: &Scene,
    source: &Source,
    victim: &Victim,
    tolerance: f64,
) -> Result<Vec<Arc<dyn FluxEffect>>, SolveError> {
    let mut effects: Vec<Arc<dyn FluxEffect>> = Vec::new();
    // The source's vertices decide the side of a sheet and which enclosures hold it;
    // without shields they are not gathered (a sweep builds a model per step).
    if scene.barrier.is_none() && scene.enclosures.is_empty() {
        return Ok(effects);
    }
    let src_points = source_points(source);
    if let Some(b) = &scene.barrier {
        let vpts = victim_points(&victim.edges);
        let s_side = b
            .side_of(&src_points, &format!("source \"{}\"", source.id))
            .map_err(SolveError::Shield)?;
        let v_side = b
            .side_of(&vpts, &format!("victim \"{}\"", victim.id))
            .map_err(SolveError::Shield)?;
        // While an orientation search turns the victim, plans are rounded up to a
        // coarse grid so that nearby orientations share the source's cached spectrum.
        let scattered = flux_model(
            b,
            &source.conductors,
            s_side,
            &victim.edges,
            &vpts,
            v_side,
            tolerance,
            victim.turning_reach.is_some(),
        )
        .map_err(|why| SolveError::Shield(format!("victim \"{}\" {why}", victim.id)))?;
        effects.push(Arc::new(scattered));
    }
    for e in enclosures_between(&scene.enclosures, &victim.id, &src_points) {
        effects.push(Arc::new(e.clone()));
    }
    Ok(effects)
}

/// The frequency-independent part of what the stack does to one source–target pair:
/// one real term per radial node, to be weighted by the layers' response at each line.
#[derive(Clone, Debug)]
pub struct Scattered {
    plan: Plan,
    terms: Vec<f64>,
    layers: Vec<Layer>,
    /// Reflected (same side) or transmitted (far side).
    pub path: Path,
}

impl Scattered {
    /// The scattered flux per ampere (Wb/A) at `frequency` (Hz).
    pub fn at(&self, frequency: f64) -> Complex64 {
        let f = self.plan.factors(&self.layers, TAU * frequency, self.path);
        f.iter().zip(&self.terms).map(|(x, t)| x * t).sum()
    }
}

fn lateral_disc(frame: &spectral::SideFrame, points: &[Vec3]) -> (f64, f64, f64) {
    let local: Vec<Vec3> = points.iter().map(|p| frame.local(p)).collect();
    let (mut lo, mut hi) = (Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY));
    for p in &local {
        lo = lo.inf(p);
        hi = hi.sup(p);
    }
    let (cx, cy) = (0.5 * (lo.x + hi.x), 0.5 * (lo.y + hi.y));
    let r = local
        .iter()
        .map(|p| ((p.x - cx).powi(2) + (p.y - cy).powi(2)).sqrt())
        .fold(0.0, f64::max);
    (cx, cy, r)
}

/// How many source spectra [`cached_spectrum`] keeps.
const SPECTRUM_CACHE: usize = 8;

/// Recent source spectra with their keys (see [`spectrum_key`]), newest last.
type SpectrumCache = Vec<(u64, Arc<SourceSpectrum>)>;

static SPECTRA: std::sync::Mutex<SpectrumCache> = std::sync::Mutex::new(Vec::new());

/// The source spectrum of `conductors` seen from `frame` on `plan`, from a small cache
/// of recent ones: an orientation search solves the same source on the same plan for
/// every orientation it tries. The key covers every input of the spectrum, so a hit
/// returns exactly what a fresh computation would.
fn cached_spectrum(
    conductors: &Conductors,
    frame: &spectral::SideFrame,
    plan: &Plan,
) -> Arc<SourceSpectrum> {
    let key = spectrum_key(conductors, frame, plan);
    let lock = || SPECTRA.lock().unwrap_or_else(|e| e.into_inner());
    if let Some((_, s)) = lock().iter().find(|(k, _)| *k == key) {
        return Arc::clone(s);
    }
    let fresh = Arc::new(SourceSpectrum::new(conductors, frame, plan.clone()));
    let mut cache = lock();
    if !cache.iter().any(|(k, _)| *k == key) {
        if cache.len() >= SPECTRUM_CACHE {
            cache.remove(0);
        }
        cache.push((key, Arc::clone(&fresh)));
    }
    fresh
}

/// A 64-bit hash of every input of a source spectrum: the conductors' vertices,
/// dipoles, the side frame and the plan's nodes (as exact bit patterns).
fn spectrum_key(conductors: &Conductors, frame: &spectral::SideFrame, plan: &Plan) -> u64 {
    use std::hash::{Hash, Hasher};
    let mut h = std::collections::hash_map::DefaultHasher::new();
    let mut put = |v: &Vec3| {
        for x in v.iter() {
            x.to_bits().hash(&mut h);
        }
    };
    for w in &conductors.wires {
        for v in &w.vertices {
            put(v);
        }
        put(&Vec3::new(w.wire_radius, w.weight, w.vertices.len() as f64));
    }
    for d in &conductors.dipoles {
        put(&d.position);
        put(&d.moment_per_amp);
        put(&Vec3::repeat(d.radius));
    }
    for v in [
        frame.local(&Vec3::zeros()),
        frame.local_dir(&Vec3::x()),
        frame.local_dir(&Vec3::y()),
        frame.local_dir(&Vec3::z()),
    ] {
        put(&v);
    }
    plan.fingerprint(&mut h);
    h.finish()
}

/// Ratio of the grid that [`plan_for`] rounds a plan's height and span to when asked to
/// share plans (10 %: a shared plan has at most about a tenth more nodes than its own).
const SHARED_PLAN_STEP: f64 = 1.1;

/// Plans the spectral sum for a source on `source_side` and targets `targets` (scene
/// points, each with its side), to `tolerance`. With `shared`, the height is rounded
/// down and the span up to a grid of ratio [`SHARED_PLAN_STEP`]: the plan is then at
/// least as fine as the targets need (a nearer, wider target needs more nodes) and
/// is the same for targets that differ a little, so their spectra can be shared.
fn plan_for(
    barrier: &Barrier,
    conductors: &Conductors,
    source_side: Side,
    targets: &[(Vec3, Side)],
    tolerance: f64,
    shared: bool,
) -> Result<Plan, String> {
    let (frame, _) = barrier.seen_from(source_side);
    let src: Vec<Vec3> = conductors
        .wires
        .iter()
        .flat_map(|w| w.vertices.iter().copied())
        .chain(conductors.dipoles.iter().map(|d| d.position))
        .collect();
    let depth = src
        .iter()
        .map(|p| -frame.local(p).z)
        .fold(f64::INFINITY, f64::min);
    let height = targets
        .iter()
        .map(|(p, side)| {
            let z = frame.local(p).z;
            if *side == source_side { -z } else { z }
        })
        .fold(f64::INFINITY, f64::min);
    let (sx, sy, sr) = lateral_disc(&frame, &src);
    let pts: Vec<Vec3> = targets.iter().map(|t| t.0).collect();
    let (tx, ty, tr) = lateral_disc(&frame, &pts);
    let mut span = ((sx - tx).powi(2) + (sy - ty).powi(2)).sqrt() + sr + tr;
    let mut height = height;
    if shared && height > 0.0 && span > 0.0 {
        let ln = SHARED_PLAN_STEP.ln();
        height = SHARED_PLAN_STEP.powf((height.ln() / ln).floor());
        span = SHARED_PLAN_STEP.powf((span.ln() / ln).ceil());
    }
    // 0.98: sampled arcs may dip slightly nearer than their samples.
    let plan = Plan::new(0.98 * (depth + height), span, tolerance).map_err(|e| match e {
        PlanError::Touching => "touches a shield face".to_string(),
        PlanError::TooClose(..) => unreachable!("Plan::new does not budget"),
    })?;
    let work = SourceSpectrum::estimate_work(conductors, &plan, targets.len());
    if work > WORK_BUDGET {
        return Err(format!(
            "is too close to the shield for its size: the planar sum would need {:.1e} \
             terms (limit {:.0e}); move it away from the sheet or raise [solver] tolerance",
            work, WORK_BUDGET
        ));
    }
    Ok(plan)
}

/// The scattered flux model of `conductors` (on `source_side`) through the closed path
/// `edges` (on `victim_side`, sampled as `victim_points`), or why it cannot be built.
/// `shared` rounds the plan up so that nearby placements share it (an orientation
/// search).
#[allow(clippy::too_many_arguments)]
pub fn flux_model(
    barrier: &Barrier,
    conductors: &Conductors,
    source_side: Side,
    edges: &[Edge],
    victim_points: &[Vec3],
    victim_side: Side,
    tolerance: f64,
    shared: bool,
) -> Result<Scattered, String> {
    let targets: Vec<(Vec3, Side)> = victim_points.iter().map(|p| (*p, victim_side)).collect();
    let plan = plan_for(
        barrier,
        conductors,
        source_side,
        &targets,
        tolerance,
        shared,
    )?;
    let (frame, layers) = barrier.seen_from(source_side);
    let path = Barrier::path(source_side, victim_side);
    let spectrum = cached_spectrum(conductors, &frame, &plan);
    let terms = spectrum.flux_terms(edges, &frame, path);
    Ok(Scattered {
        plan,
        terms,
        layers,
        path,
    })
}

/// The scattered B (T per ampere, complex) of `conductors` (on `source_side`) at each
/// point of `points` (each with its side) for each of `frequencies` (Hz):
/// `[point][frequency][component]`. Add the free-space field for points on the
/// source's side. `tick(points done)` reports progress.
pub fn scattered_field(
    barrier: &Barrier,
    conductors: &Conductors,
    source_side: Side,
    points: &[(Vec3, Side)],
    frequencies: &[f64],
    tolerance: f64,
    tick: &(dyn Fn(usize) + Sync),
) -> Result<Vec<Vec<[Complex64; 3]>>, String> {
    use rayon::prelude::*;
    if points.is_empty() {
        return Ok(Vec::new());
    }
    let plan = plan_for(barrier, conductors, source_side, points, tolerance, false)?;
    let (frame, layers) = barrier.seen_from(source_side);
    let spectrum = SourceSpectrum::new(conductors, &frame, plan.clone());
    let factors: Vec<[Vec<Complex64>; 2]> = frequencies
        .iter()
        .map(|f| {
            [
                plan.factors(&layers, TAU * f, Path::Reflected),
                plan.factors(&layers, TAU * f, Path::Transmitted),
            ]
        })
        .collect();
    let mut out = Vec::with_capacity(points.len());
    for chunk in points.chunks(1 << 10) {
        out.par_extend(chunk.par_iter().with_min_len(4).map(|(p, side)| {
            let path = Barrier::path(source_side, *side);
            let terms = spectrum.field_terms(p, &frame, path);
            factors
                .iter()
                .map(|fs| {
                    let f = &fs[usize::from(path == Path::Transmitted)];
                    let mut b = [Complex64::new(0.0, 0.0); 3];
                    for (x, t) in f.iter().zip(&terms) {
                        for (c, bc) in b.iter_mut().enumerate() {
                            *bc += x * t[c];
                        }
                    }
                    b
                })
                .collect::<Vec<_>>()
        }));
        tick(chunk.len());
    }
    Ok(out)
}

/// The enclosures that shield `victim_id` from a source at `source_points`: those
/// listing the victim whose box does not hold the source.
pub fn enclosures_between<'a>(
    enclosures: &'a [Enclosure],
    victim_id: &str,
    source_points: &[Vec3],
) -> Vec<&'a Enclosure> {
    enclosures
        .iter()
        .filter(|e| e.contains.iter().any(|c| c == victim_id))
        .filter(|e| !source_points.iter().any(|p| e.holds(p)))
        .collect()
}

/// Whether the scene has any shield (sheet or enclosure).
pub fn scene_is_shielded(scene: &Scene) -> bool {
    scene.barrier.is_some() || !scene.enclosures.is_empty()
}

/// B phasors (T peak) with the scene's shields in place at `points` (m) for each of
/// `frequencies` (Hz): `[frequency][point]`, every source's lines at that frequency
/// summed. Free-space field on each source's own side plus the sheets' reflected
/// field, the transmitted field beyond them, and inside an enclosure that does not hold
/// the source the field divided by its shielding factor. Fails for points inside or
/// between sheets. `tick(points done)` reports progress, once per source per point.
pub fn shielded_lines(
    scene: &Scene,
    options: &SolverOptions,
    points: &[Vec3],
    frequencies: &[f64],
    tick: &(dyn Fn(usize) + Sync),
) -> Result<Vec<Vec<[Complex64; 3]>>, SolveError> {
    let mut out = vec![vec![[Complex64::new(0.0, 0.0); 3]; points.len()]; frequencies.len()];
    let sides = point_sides(scene, points)?;
    for s in &scene.sources {
        let evaluator =
            Accelerated::for_points(&s.conductors, points, options.tolerance, options.exact());
        let free = crate::field::b_at_points(&evaluator, points);
        let src_points = source_points(s);
        let (s_side, scattered) = match &scene.barrier {
            None => {
                tick(points.len());
                (Side::Below, None)
            }
            Some(b) => {
                let s_side = b
                    .side_of(&src_points, &format!("source \"{}\"", s.id))
                    .map_err(SolveError::Shield)?;
                let targets: Vec<(Vec3, Side)> =
                    points.iter().copied().zip(sides.iter().copied()).collect();
                let f = scattered_field(
                    b,
                    &s.conductors,
                    s_side,
                    &targets,
                    frequencies,
                    options.tolerance,
                    tick,
                )
                .map_err(|why| SolveError::Shield(format!("a field point {why}")))?;
                (s_side, Some(f))
            }
        };
        let parts = SourceParts {
            free: &free,
            // Free space reaches the points on the source's side of the sheets only.
            sees_free: sides
                .iter()
                .map(|&side| scene.barrier.is_none() || side == s_side)
                .collect(),
            scattered: scattered.as_deref(),
            boxes: scene
                .enclosures
                .iter()
                .filter(|e| !src_points.iter().any(|p| e.holds(p)))
                .collect(),
        };
        parts.add_lines(s, points, frequencies, &mut out);
    }
    Ok(out)
}

/// Each point's side of the scene's sheets (`Side::Below` without sheets); fails for a point
/// inside or between them.
fn point_sides(scene: &Scene, points: &[Vec3]) -> Result<Vec<Side>, SolveError> {
    match &scene.barrier {
        None => Ok(vec![Side::Below; points.len()]),
        Some(b) => points
            .iter()
            .map(|p| {
                b.side_of(
                    std::slice::from_ref(p),
                    &format!("the point {}", crate::units::mm_point(p)),
                )
            })
            .collect::<Result<_, String>>()
            .map_err(SolveError::Shield),
    }
}

/// One source's field at the points, in parts: free space, the sheets' scattered
/// field and the enclosures that do not hold the source.
struct SourceParts<'a> {
    /// Free-space B per ampere (T/A) `[point]`.
    free: &'a [Vec3],
    /// Whether the free-space field reaches each point.
    sees_free: Vec<bool>,
    /// The sheets' scattered B per ampere (T/A, complex) `[point][frequency]`.
    scattered: Option<&'a [Vec<[Complex64; 3]>]>,
    /// Enclosures that do not hold the source.
    boxes: Vec<&'a Enclosure>,
}

impl SourceParts<'_> {
    /// Adds the B phasors (T peak) of `source`'s lines at `frequencies` (Hz) to `out`
    /// `[frequency][point]`.
    fn add_lines(
        &self,
        source: &Source,
        points: &[Vec3],
        frequencies: &[f64],
        out: &mut [Vec<[Complex64; 3]>],
    ) {
        use crate::spectrum::same_frequency;
        for (fi, &f) in frequencies.iter().enumerate() {
            let factors: Vec<Complex64> =
                self.boxes.iter().map(|e| (-e.ln_factor(f)).exp()).collect();
            for l in source
                .lines
                .iter()
                .filter(|l| same_frequency(l.frequency, f))
            {
                for (pi, p) in points.iter().enumerate() {
                    let b = self.per_amp(pi, fi, p, &factors);
                    for c in 0..3 {
                        out[fi][pi][c] += l.current * b[c];
                    }
                }
            }
        }
    }

    /// B per ampere (T/A, complex) at point `pi` (`p`, m) for frequency index `fi`,
    /// with the enclosures' `factors` at that frequency.
    fn per_amp(&self, pi: usize, fi: usize, p: &Vec3, factors: &[Complex64]) -> [Complex64; 3] {
        let mut b = [Complex64::new(0.0, 0.0); 3];
        if self.sees_free[pi] {
            for (bc, fc) in b.iter_mut().zip(self.free[pi].iter()) {
                *bc += fc;
            }
        }
        if let Some(sc) = self.scattered {
            for (bc, sc) in b.iter_mut().zip(&sc[pi][fi]) {
                *bc += sc;
            }
        }
        for (e, x) in self.boxes.iter().zip(factors) {
            if e.holds(p) {
                b.iter_mut().for_each(|v| *v *= x);
            }
        }
        b
    }
}
