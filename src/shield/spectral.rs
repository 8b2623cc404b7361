//! The field a planar stack sends back (reflected) or lets through (transmitted), by
//! superposing transverse spatial harmonics.
//!
//! Take local coordinates with the stack's source-side face at z = 0, the source below
//! (z < 0) and the far face at z = D. Over z > z_source the free-space field of the
//! source is a sum of harmonics e^{i k·ρ − kz} whose B_z amplitude on z = 0 is known in
//! closed form: the 2-D Fourier transform of 1/(4πR) at height h is e^{−kh}/(2k) (the
//! Weyl–Sommerfeld identity), so a current element I dl at depth h and lateral
//! position ρ0 contributes
//!
//! ```text
//! b̂(k) = (μ0 I / 2) · i (k × dl)_z / k · e^{−kh − i k·ρ0},
//! ```
//!
//! integrated exactly along every straight segment (the exponent is linear along it),
//! and a dipole m contributes (μ0/2)(m_z k − i k·m_t) e^{−kh − i k·ρ0}. The stack's
//! response per harmonic ([`super::layers`]) gives the transmitted amplitude T·b̂ (a
//! harmonic (ẑ − i k̂) e^{i k·ρ − k(z − D)} beyond the far face) and the reflected
//! amplitude R·b̂ (a harmonic (ẑ + i k̂) e^{i k·ρ + kz} on the source side).
//!
//! The inverse transform ∫d²k/(2π)² is done in polar coordinates: composite
//! Gauss–Legendre panels in k (geometric near k = 0, where T and R vary on a log scale,
//! then no wider than the oscillation and decay of the integrand allow, up to the k at
//! which e^{−kH} is below the tolerance, H the shortest path from source to target via
//! the stack) and the trapezoid rule in the angle θ, which converges geometrically for
//! periodic integrands once it has more points than k times the lateral span (the
//! Bessel-function tail J_N(kρ)). No periodic images and no truncation of the
//! source's field arise, unlike a 2-D FFT of sampled data. Since real fields give
//! b̂(−k) = conj b̂(k), the angle runs over half the circle and the sum is real, so each
//! target reduces to one real number (flux) or one real 3-vector (B) per radial node,
//! independent of frequency: every spectral line then costs one layer response per
//! radial node.
//!
//! A victim's flux is the loop integral of the harmonic's vector potential
//! A = (ẑ × k)/(i k²) e^{i k·ρ ∓ k z}, whose curl is the harmonic's B; it is exact along
//! straight edges and Gauss–Legendre along arcs.

use super::layers::{Layer, response};
use crate::field::{Conductors, MU0, Vec3};
use crate::geometry::Edge;
use crate::quadrature::gauss_legendre;
use num_complex::Complex64;
use rayon::prelude::*;
use std::f64::consts::PI;

/// Which part of the stack's response reaches a target.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Path {
    /// Target on the source's side: the reflected field adds to the free-space one.
    Reflected,
    /// Target beyond the stack: the transmitted field is the whole field.
    Transmitted,
}

/// A right-handed frame for one side of a stack: origin on the face the source looks
/// at, `z` from the source into the stack (all in scene coordinates, m).
#[derive(Clone, Copy, Debug)]
pub struct SideFrame {
    /// A point on the source-side face, m.
    pub origin: Vec3,
    /// Unit vector in the face.
    pub x: Vec3,
    /// Unit vector in the face, z × x.
    pub y: Vec3,
    /// Unit normal from the source side into the stack.
    pub z: Vec3,
    /// Total thickness of the stack, m.
    pub thickness: f64,
}

impl SideFrame {
    /// Local coordinates (m) of scene point `r`.
    pub fn local(&self, r: &Vec3) -> Vec3 {
        let d = r - self.origin;
        Vec3::new(d.dot(&self.x), d.dot(&self.y), d.dot(&self.z))
    }

    /// Local components of scene direction `v`.
    pub fn local_dir(&self, v: &Vec3) -> Vec3 {
        Vec3::new(v.dot(&self.x), v.dot(&self.y), v.dot(&self.z))
    }

    /// Scene components of local vector `v`.
    pub fn scene_dir(&self, v: &Vec3) -> Vec3 {
        self.x * v.x + self.y * v.y + self.z * v.z
    }
}

/// The source as the spectral sum sees it, in local coordinates.
struct LocalSource {
    /// Polylines: vertices (m, z < 0) and ampere-turns per ampere.
    wires: Vec<(Vec<Vec3>, f64)>,
    /// Dipoles: position (m) and moment per ampere (A·m²/A).
    dipoles: Vec<(Vec3, Vec3)>,
}

impl LocalSource {
    fn new(c: &Conductors, f: &SideFrame) -> Self {
        LocalSource {
            wires: c
                .wires
                .iter()
                .map(|w| (w.vertices.iter().map(|v| f.local(v)).collect(), w.weight))
                .collect(),
            dipoles: c
                .dipoles
                .iter()
                .map(|d| (f.local(&d.position), f.local_dir(&d.moment_per_amp)))
                .collect(),
        }
    }

    fn points(&self) -> impl Iterator<Item = &Vec3> {
        self.wires
            .iter()
            .flat_map(|w| w.0.iter())
            .chain(self.dipoles.iter().map(|d| &d.0))
    }

    /// b̂(k, θ) per ampere (T·m²/A) at wavenumber `k` for each of the directions
    /// `dirs` = (cos θ, sin θ); `decay` holds e^{kz} per point in `points()` order.
    fn spectrum(&self, k: f64, dirs: &[(f64, f64)], decay: &[f64], out: &mut [Complex64]) {
        let half_mu0 = 0.5 * MU0;
        for (slot, &(c, s)) in out.iter_mut().zip(dirs) {
            let (kx, ky) = (k * c, k * s);
            let mut sum = Complex64::new(0.0, 0.0);
            let mut at = 0;
            for (verts, weight) in &self.wires {
                let mut wire = Complex64::new(0.0, 0.0);
                let mut prev: Option<(Complex64, Complex64)> = None;
                for (idx, v) in verts.iter().enumerate() {
                    let phase = -(kx * v.x + ky * v.y);
                    let expo = Complex64::new(k * v.z, phase);
                    let (sn, cs) = phase.sin_cos();
                    let value = Complex64::new(cs, sn) * decay[at];
                    at += 1;
                    if let Some((e0, c0)) = prev {
                        let t = v - verts[idx - 1];
                        let cross = kx * t.y - ky * t.x;
                        wire += segment_integral(e0, value, expo - c0) * cross;
                    }
                    prev = Some((value, expo));
                }
                sum += wire * *weight;
            }
            let sum = sum * Complex64::new(0.0, 1.0 / k);
            let mut dip = Complex64::new(0.0, 0.0);
            for (p, m) in &self.dipoles {
                let phase = -(kx * p.x + ky * p.y);
                let (sn, cs) = phase.sin_cos();
                let value = Complex64::new(cs, sn) * decay[at];
                at += 1;
                dip += value * Complex64::new(m.z * k, -(kx * m.x + ky * m.y));
            }
            *slot = (sum + dip) * half_mu0;
        }
    }
}

/// ∫₀¹ e^{c0 + Δ s} ds given e0 = e^{c0} and e1 = e^{c0 + Δ}: (e1 − e0)/Δ, by its
/// series where Δ is small enough for the difference to cancel.
fn segment_integral(e0: Complex64, e1: Complex64, delta: Complex64) -> Complex64 {
    if delta.norm() > 1e-3 {
        (e1 - e0) / delta
    } else {
        e0 * (1.0 + delta * (0.5 + delta * (1.0 / 6.0 + delta * (1.0 / 24.0 + delta / 120.0))))
    }
}

/// One radial node of the plan.
#[derive(Clone, Copy, Debug)]
struct Radial {
    /// Wavenumber, rad/m.
    k: f64,
    /// Gauss–Legendre weight times k/(2π)² (the polar measure), 1/m².
    weight: f64,
    /// Angles over the half circle.
    n_half: usize,
}

/// Quadrature nodes in the wavenumber plane for one source and one set of targets.
#[derive(Clone, Debug)]
pub struct Plan {
    radial: Vec<Radial>,
}

/// Gauss–Legendre points per radial panel.
const RADIAL_ORDER: usize = 10;
/// Gauss–Legendre points per arc panel.
const ARC_ORDER: usize = 8;
/// Largest phase change (rad) along one arc panel.
const ARC_PHASE: f64 = 1.5;

/// Why a spectral solve cannot be planned.
#[derive(Clone, Debug, PartialEq)]
pub enum PlanError {
    /// Source or target touches the stack (zero path length).
    Touching,
    /// The node count would exceed the work budget: (estimated work, budget).
    TooClose(f64, f64),
}

/// Largest number of (node × point) terms one solve may take, about a minute on two
/// cores.
pub const WORK_BUDGET: f64 = 2e10;

impl Plan {
    /// Nodes for a source whose conductors lie at least `path` (m) from its targets
    /// via the stack (source depth + target height, plus the stack for transmitted
    /// targets), with lateral distances up to `span` (m), to relative accuracy
    /// `tolerance`.
    pub fn new(path: f64, span: f64, tolerance: f64) -> Result<Plan, PlanError> {
        if path <= 0.0 || !path.is_finite() {
            return Err(PlanError::Touching);
        }
        // Beyond k_max the integrand (at worst k³e^{−kH} for dipole-like pairs) has
        // fallen below the tolerance by a wide margin.
        let k_max = ((1.0 / tolerance).ln() * 1.2 + 30.0) / path;
        let span = span.max(path * 1e-3);
        // Panels at most this wide: ≤ 3 rad of oscillation from the lateral span and
        // ≤ 3 e-folds of decay.
        let widest = 3.0 / span.max(path);
        let (x, w) = gauss_legendre(RADIAL_ORDER);
        let mut radial = Vec::new();
        let mut lo = 0.0;
        let mut hi = k_max * 1e-10;
        while lo < k_max {
            let half = 0.5 * (hi - lo);
            let mid = 0.5 * (hi + lo);
            for (xi, wi) in x.iter().zip(&w) {
                let k = mid + half * xi;
                let kr = k * span;
                let n_full = kr + 8.0 * kr.cbrt() + 16.0;
                radial.push(Radial {
                    k,
                    weight: wi * half * k / (4.0 * PI * PI),
                    n_half: (n_full / 2.0).ceil() as usize,
                });
            }
            lo = hi;
            hi = (lo + lo.min(widest)).min(k_max);
        }
        Ok(Plan { radial })
    }

    /// Number of radial nodes.
    pub fn radial_count(&self) -> usize {
        self.radial.len()
    }

    /// Number of (k, θ) nodes.
    pub fn node_count(&self) -> usize {
        self.radial.iter().map(|r| r.n_half).sum()
    }

    /// The stack's response factor per radial node for one frequency (rad/s), with each
    /// node's weight folded in: T or R times weight (1/m²).
    pub fn factors(&self, layers: &[Layer], omega: f64, path: Path) -> Vec<Complex64> {
        self.radial
            .iter()
            .map(|r| {
                let resp = response(layers, r.k, omega);
                let x = match path {
                    Path::Reflected => resp.reflected,
                    Path::Transmitted => resp.transmitted,
                };
                x * r.weight
            })
            .collect()
    }
}

fn directions(n_half: usize) -> Vec<(f64, f64)> {
    (0..n_half)
        .map(|j| {
            let th = PI * (j as f64 + 0.5) / n_half as f64;
            let (s, c) = th.sin_cos();
            (c, s)
        })
        .collect()
}

/// The source's harmonic amplitudes at every node of a plan.
pub struct SourceSpectrum {
    plan: Plan,
    /// b̂ per node, radial-major; `offsets[i]` starts radial node i.
    values: Vec<Complex64>,
    offsets: Vec<usize>,
}

impl SourceSpectrum {
    /// b̂ of `conductors` (per ampere) seen from `frame`, at the nodes of `plan`.
    pub fn new(conductors: &Conductors, frame: &SideFrame, plan: Plan) -> Self {
        let src = LocalSource::new(conductors, frame);
        let zs: Vec<f64> = src.points().map(|p| p.z).collect();
        let parts: Vec<Vec<Complex64>> = plan
            .radial
            .par_iter()
            .map(|r| {
                let dirs = directions(r.n_half);
                let decay: Vec<f64> = zs.iter().map(|z| (r.k * z).exp()).collect();
                let mut out = vec![Complex64::new(0.0, 0.0); r.n_half];
                src.spectrum(r.k, &dirs, &decay, &mut out);
                out
            })
            .collect();
        let mut offsets = Vec::with_capacity(parts.len() + 1);
        let mut values = Vec::with_capacity(plan.node_count());
        for p in parts {
            offsets.push(values.len());
            values.extend(p);
        }
        offsets.push(values.len());
        SourceSpectrum {
            plan,
            values,
            offsets,
        }
    }

    /// The plan the spectrum was computed on.
    pub fn plan(&self) -> &Plan {
        &self.plan
    }

    /// Number of source points the spectrum sums over (for work estimates).
    pub fn estimate_work(conductors: &Conductors, plan: &Plan, target_points: usize) -> f64 {
        let n = conductors
            .wires
            .iter()
            .map(|w| w.vertices.len())
            .sum::<usize>()
            + conductors.dipoles.len();
        plan.node_count() as f64 * (n + target_points) as f64
    }

    /// Flux of each radial node's harmonics through the closed chain `edges` (scene
    /// coordinates), per ampere: Wb/A per unit response factor. Multiply by
    /// [`Plan::factors`] and sum to get the scattered flux.
    pub fn flux_terms(&self, edges: &[Edge], frame: &SideFrame, path: Path) -> Vec<f64> {
        let (gx, gw) = gauss_legendre(ARC_ORDER);
        self.plan
            .radial
            .par_iter()
            .enumerate()
            .map(|(i, r)| {
                let k = r.k;
                // Sample points: (local point, local dl weight) for arcs; exact pieces
                // for lines.
                let mut lines: Vec<(Vec3, Vec3)> = Vec::new();
                let mut samples: Vec<(Vec3, Vec3)> = Vec::new();
                for e in edges {
                    match *e {
                        Edge::Line { a, b } => lines.push((frame.local(&a), frame.local(&b))),
                        Edge::Arc {
                            radius, start, end, ..
                        } => {
                            let turn = (end - start).abs();
                            let panels = ((k * radius * turn / ARC_PHASE).ceil() as usize)
                                .max(e.initial_panels());
                            for p in 0..panels {
                                let t0 = p as f64 / panels as f64;
                                let h = 1.0 / panels as f64;
                                for (xi, wi) in gx.iter().zip(&gw) {
                                    let t = t0 + h * 0.5 * (xi + 1.0);
                                    let pt = frame.local(&e.point(t));
                                    let dl = frame.local_dir(&e.tangent(t)) * (wi * 0.5 * h);
                                    samples.push((pt, dl));
                                }
                            }
                        }
                    }
                }
                let height = |z: f64| match path {
                    Path::Reflected => k * z,
                    Path::Transmitted => -k * (z - frame.thickness),
                };
                let line_decay: Vec<(f64, f64)> = lines
                    .iter()
                    .map(|(a, b)| (height(a.z), height(b.z)))
                    .collect();
                let sample_decay: Vec<f64> =
                    samples.iter().map(|(p, _)| height(p.z).exp()).collect();
                let dirs = directions(r.n_half);
                let spec = &self.values[self.offsets[i]..self.offsets[i + 1]];
                let dtheta = PI / r.n_half as f64;
                let mut total = 0.0;
                for (&(c, s), b) in dirs.iter().zip(spec) {
                    let (kx, ky) = (k * c, k * s);
                    let mut w = Complex64::new(0.0, 0.0);
                    for ((a, bb), (ha, hb)) in lines.iter().zip(&line_decay) {
                        let ca = Complex64::new(*ha, kx * a.x + ky * a.y);
                        let cb = Complex64::new(*hb, kx * bb.x + ky * bb.y);
                        let t = bb - a;
                        let cross = kx * t.y - ky * t.x;
                        w += segment_integral(ca.exp(), cb.exp(), cb - ca) * cross;
                    }
                    for ((p, dl), d) in samples.iter().zip(&sample_decay) {
                        let (sn, cs) = (kx * p.x + ky * p.y).sin_cos();
                        let cross = kx * dl.y - ky * dl.x;
                        w += Complex64::new(cs, sn) * (d * cross);
                    }
                    // A = (ẑ × k)/(i k²): divide by i k².
                    let w = w * Complex64::new(0.0, -1.0 / (k * k));
                    total += (b * w).re;
                }
                2.0 * dtheta * total
            })
            .collect()
    }

    /// B of each radial node's harmonics at `point` (scene coordinates), per ampere, as
    /// a scene vector per radial node (T/A per unit response factor).
    pub fn field_terms(&self, point: &Vec3, frame: &SideFrame, path: Path) -> Vec<Vec3> {
        let p = frame.local(point);
        self.plan
            .radial
            .iter()
            .enumerate()
            .map(|(i, r)| {
                let k = r.k;
                let (decay, sign) = match path {
                    Path::Reflected => ((k * p.z).exp(), 1.0),
                    Path::Transmitted => ((-k * (p.z - frame.thickness)).exp(), -1.0),
                };
                let spec = &self.values[self.offsets[i]..self.offsets[i + 1]];
                let dtheta = PI / r.n_half as f64;
                let mut acc = Vec3::zeros();
                for (j, b) in spec.iter().enumerate() {
                    let th = PI * (j as f64 + 0.5) / r.n_half as f64;
                    let (s, c) = th.sin_cos();
                    let (sn, cs) = (k * (c * p.x + s * p.y)).sin_cos();
                    let bz = b * Complex64::new(cs, sn) * decay;
                    // Mode (ẑ ∓ i k̂): transverse part ∓ i k̂ B_z.
                    let bt = bz * Complex64::new(0.0, sign);
                    acc += Vec3::new(bt.re * c, bt.re * s, bz.re);
                }
                frame.scene_dir(&(acc * (2.0 * dtheta)))
            })
            .collect()
    }
}
