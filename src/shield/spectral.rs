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

use super::layers::response;
use crate::field::{Conductors, MU0, Vec3};
use crate::geometry::Edge;
use crate::model::Layer;
use crate::quadrature::gauss_legendre;
use num_complex::Complex64;
use rayon::prelude::*;
use rustfft::FftPlanner;
use std::f64::consts::{PI, TAU};
use wide::f64x4;

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

    /// The same conductors moved laterally by (−cx, −cy).
    fn shifted(&self, cx: f64, cy: f64) -> LocalSource {
        let d = Vec3::new(cx, cy, 0.0);
        LocalSource {
            wires: self
                .wires
                .iter()
                .map(|(v, w)| (v.iter().map(|p| p - d).collect(), *w))
                .collect(),
            dipoles: self.dipoles.iter().map(|(p, m)| (p - d, *m)).collect(),
        }
    }

    /// Lateral centre (x, y) of the conductors' bounding box and the largest lateral
    /// distance from it, m.
    fn lateral_disc(&self) -> (f64, f64, f64) {
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in self.points() {
            lo = [lo[0].min(p.x), lo[1].min(p.y)];
            hi = [hi[0].max(p.x), hi[1].max(p.y)];
        }
        let (cx, cy) = (0.5 * (lo[0] + hi[0]), 0.5 * (lo[1] + hi[1]));
        let r = self
            .points()
            .map(|p| (p.x - cx).hypot(p.y - cy))
            .fold(0.0, f64::max);
        (cx, cy, r)
    }

    fn points(&self) -> impl Iterator<Item = &Vec3> {
        self.wires
            .iter()
            .flat_map(|w| w.0.iter())
            .chain(self.dipoles.iter().map(|d| &d.0))
    }

    /// b̂(k, θ) per ampere (T·m²/A) at wavenumber `k` for the directions `dirs`
    /// (four at a time); `decay` holds e^{kz} per point in `points()` order.
    fn spectrum(&self, k: f64, dirs: &Dirs, decay: &[f64], out: &mut [Complex64]) {
        let lanes = dirs.cos.len();
        let mut acc_re = vec![f64x4::ZERO; lanes];
        let mut acc_im = vec![f64x4::ZERO; lanes];
        let mut prev_phase = vec![f64x4::ZERO; lanes];
        let mut prev_re = vec![f64x4::ZERO; lanes];
        let mut prev_im = vec![f64x4::ZERO; lanes];
        let mut at = 0;
        let kk = f64x4::splat(k);
        for (verts, weight) in &self.wires {
            let w = f64x4::splat(*weight);
            for (idx, v) in verts.iter().enumerate() {
                let d = f64x4::splat(decay[at]);
                at += 1;
                let (x, y) = (f64x4::splat(v.x), f64x4::splat(v.y));
                let step = (idx > 0).then(|| {
                    let t = v - verts[idx - 1];
                    (f64x4::splat(t.x), f64x4::splat(t.y), f64x4::splat(k * t.z))
                });
                for j in 0..lanes {
                    let (c, s) = (dirs.cos[j], dirs.sin[j]);
                    let phase = -kk * (x * c + y * s);
                    let (sn, cs) = phase.sin_cos();
                    let (re, im) = (cs * d, sn * d);
                    if let Some((tx, ty, dz)) = step {
                        let (qr, qi) = segment_lanes(
                            (prev_re[j], prev_im[j]),
                            (re, im),
                            (dz, phase - prev_phase[j]),
                        );
                        let cross = kk * (c * ty - s * tx) * w;
                        acc_re[j] += qr * cross;
                        acc_im[j] += qi * cross;
                    }
                    prev_phase[j] = phase;
                    prev_re[j] = re;
                    prev_im[j] = im;
                }
            }
        }
        // The wires' sum times i/k; the dipoles' terms (m_z k − i k·m_t) e^{...}.
        let inv_k = f64x4::splat(1.0 / k);
        for j in 0..lanes {
            let (mut re, mut im) = (-acc_im[j] * inv_k, acc_re[j] * inv_k);
            for (p, m) in &self.dipoles {
                let d = f64x4::splat(decay[at]);
                let (c, s) = (dirs.cos[j], dirs.sin[j]);
                let phase = -kk * (f64x4::splat(p.x) * c + f64x4::splat(p.y) * s);
                let (sn, cs) = phase.sin_cos();
                let (er, ei) = (cs * d, sn * d);
                let fr = f64x4::splat(m.z * k);
                let fi = -kk * (c * f64x4::splat(m.x) + s * f64x4::splat(m.y));
                re += er * fr - ei * fi;
                im += er * fi + ei * fr;
                at += 1;
            }
            at -= self.dipoles.len();
            let re = re.to_array();
            let im = im.to_array();
            for l in 0..4 {
                out[4 * j + l] = Complex64::new(re[l], im[l]) * (0.5 * MU0) * dirs.mask[4 * j + l];
            }
        }
    }
}

/// Directions, padded to a multiple of four lanes; `mask` is 1 for real directions and
/// 0 for the padding.
struct Dirs {
    cos: Vec<f64x4>,
    sin: Vec<f64x4>,
    mask: Vec<f64>,
}

impl Dirs {
    fn new(angles: &[f64]) -> Dirs {
        let lanes = angles.len().div_ceil(4);
        let mut c = vec![0.0; 4 * lanes];
        let mut s = vec![0.0; 4 * lanes];
        let mut mask = vec![0.0; 4 * lanes];
        for j in 0..4 * lanes {
            let th = angles[j.min(angles.len() - 1)];
            (s[j], c[j]) = th.sin_cos();
            mask[j] = if j < angles.len() { 1.0 } else { 0.0 };
        }
        let pack = |v: &[f64]| -> Vec<f64x4> {
            v.chunks(4)
                .map(|q| f64x4::from([q[0], q[1], q[2], q[3]]))
                .collect()
        };
        Dirs {
            cos: pack(&c),
            sin: pack(&s),
            mask,
        }
    }
}

/// The half circle of the full uniform grid of 2·`n_half` angles: θ_j = πj/n_half.
fn half_angles(n_half: usize) -> Vec<f64> {
    (0..n_half).map(|j| PI * j as f64 / n_half as f64).collect()
}

fn directions(n_half: usize) -> Dirs {
    Dirs::new(&half_angles(n_half))
}

/// Four lanes of ∫₀¹ e^{c0 + Δs} ds from e0 = e^{c0}, e1 = e^{c0+Δ} and Δ (re, im):
/// (e1 − e0)/Δ, or its series where |Δ| < 1e-3 and the difference would cancel.
#[inline]
fn segment_lanes(e0: (f64x4, f64x4), e1: (f64x4, f64x4), delta: (f64x4, f64x4)) -> (f64x4, f64x4) {
    let (dr, di) = delta;
    let n2 = dr * dr + di * di;
    let small = n2.simd_lt(f64x4::splat(1e-6));
    let safe = small.select(f64x4::ONE, n2);
    let (nr, ni) = (e1.0 - e0.0, e1.1 - e0.1);
    let qr = (nr * dr + ni * di) / safe;
    let qi = (ni * dr - nr * di) / safe;
    // 1 + Δ/2 + Δ²/6 + Δ³/24 + Δ⁴/120 by Horner, then times e0.
    let mut pr = f64x4::splat(1.0 / 120.0);
    let mut pi = f64x4::ZERO;
    for c in [1.0 / 24.0, 1.0 / 6.0, 0.5, 1.0] {
        let (r, i) = (pr * dr - pi * di, pr * di + pi * dr);
        pr = r + f64x4::splat(c);
        pi = i;
    }
    let sr = e0.0 * pr - e0.1 * pi;
    let si = e0.0 * pi + e0.1 * pr;
    (small.select(sr, qr), small.select(si, qi))
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

/// Gauss–Legendre points per radial panel of the widest kind.
const RADIAL_ORDER: usize = 16;
/// Gauss–Legendre points per radial panel while panels still double (small k).
const GEOMETRIC_ORDER: usize = 12;
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
        // Panels at most this wide: ≤ 8 rad of oscillation from the lateral span and
        // ≤ 8 e-folds of decay, where the 16-point rule errs by about 4³²/32! ≈ 1e-16.
        let widest = 8.0 / span.max(path);
        let (xg, wg) = gauss_legendre(GEOMETRIC_ORDER);
        let (xu, wu) = gauss_legendre(RADIAL_ORDER);
        let mut radial = Vec::new();
        // Below k_max·1e-6 the integrand is O(k) at most (an open source path), so the
        // first panel's share is ~1e-12 of the whole; then panels double in width (T
        // and R vary on a logarithmic scale of k) until they reach `widest`.
        let mut lo = 0.0;
        let mut hi = k_max * 1e-6;
        while lo < k_max {
            let uniform = hi - lo >= widest * 0.999;
            let (x, w) = if uniform { (&xu, &wu) } else { (&xg, &wg) };
            let half = 0.5 * (hi - lo);
            let mid = 0.5 * (hi + lo);
            for (xi, wi) in x.iter().zip(w) {
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

    /// Feeds every node of the plan (wavenumber, weight, angle count, as exact bits)
    /// into `h`: equal fingerprints mean equal plans.
    pub fn fingerprint(&self, h: &mut impl std::hash::Hasher) {
        use std::hash::Hash;
        for r in &self.radial {
            r.k.to_bits().hash(h);
            r.weight.to_bits().hash(h);
            r.n_half.hash(h);
        }
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
        let (cx, cy, rs) = src.lateral_disc();
        let centred = src.shifted(cx, cy);
        let zs: Vec<f64> = src.points().map(|p| p.z).collect();
        let parts: Vec<Vec<Complex64>> = plan
            .radial
            .par_iter()
            .map(|r| {
                let decay: Vec<f64> = zs.iter().map(|z| (r.k * z).exp()).collect();
                let lanes = r.n_half.div_ceil(4);
                let mut out = vec![Complex64::new(0.0, 0.0); 4 * lanes];
                // About its own lateral centre the source's amplitudes vary with θ only
                // up to order k·r_s (Jacobi–Anger): sample them on that few angles, and
                // interpolate exactly (zero-padded FFT) to the fine grid the targets
                // need.
                let krs = r.k * rs;
                let mut n_s = (krs + 8.0 * krs.cbrt() + 16.0).ceil() as usize;
                n_s |= 1;
                let n_f = 2 * r.n_half;
                if n_s >= n_f {
                    src.spectrum(r.k, &directions(r.n_half), &decay, &mut out);
                    return out;
                }
                let angles: Vec<f64> = (0..n_s).map(|m| TAU * m as f64 / n_s as f64).collect();
                let mut coarse = vec![Complex64::new(0.0, 0.0); 4 * n_s.div_ceil(4)];
                centred.spectrum(r.k, &Dirs::new(&angles), &decay, &mut coarse);
                coarse.truncate(n_s);
                let mut planner = FftPlanner::<f64>::new();
                planner.plan_fft_forward(n_s).process(&mut coarse);
                let mut fine = vec![Complex64::new(0.0, 0.0); n_f];
                let h = (n_s - 1) / 2;
                for (n, c) in coarse.iter().enumerate() {
                    let at = if n <= h { n } else { n_f - (n_s - n) };
                    fine[at] = *c / n_s as f64;
                }
                planner.plan_fft_inverse(n_f).process(&mut fine);
                for (j, (o, th)) in out.iter_mut().zip(half_angles(r.n_half)).enumerate() {
                    let (s, c) = th.sin_cos();
                    let shift = Complex64::from_polar(1.0, -r.k * (cx * c + cy * s));
                    *o = fine[j] * shift;
                }
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
                let kk = f64x4::splat(k);
                let line_data: Vec<_> = lines
                    .iter()
                    .map(|(a, b)| {
                        let t = b - a;
                        (
                            (
                                f64x4::splat(a.x),
                                f64x4::splat(a.y),
                                f64x4::splat(height(a.z).exp()),
                            ),
                            (
                                f64x4::splat(b.x),
                                f64x4::splat(b.y),
                                f64x4::splat(height(b.z).exp()),
                            ),
                            f64x4::splat(height(b.z) - height(a.z)),
                            (f64x4::splat(t.x), f64x4::splat(t.y)),
                        )
                    })
                    .collect();
                let sample_data: Vec<_> = samples
                    .iter()
                    .map(|(p, dl)| {
                        (
                            f64x4::splat(p.x),
                            f64x4::splat(p.y),
                            f64x4::splat(height(p.z).exp()),
                            f64x4::splat(dl.x),
                            f64x4::splat(dl.y),
                        )
                    })
                    .collect();
                let dirs = directions(r.n_half);
                let spec = &self.values[self.offsets[i]..self.offsets[i + 1]];
                let dtheta = PI / r.n_half as f64;
                let mut total = f64x4::ZERO;
                for (j, (&c, &s)) in dirs.cos.iter().zip(&dirs.sin).enumerate() {
                    let (mut wr, mut wi) = (f64x4::ZERO, f64x4::ZERO);
                    for ((ax, ay, ea), (bx, by, eb), dz, (tx, ty)) in &line_data {
                        let pa = kk * (*ax * c + *ay * s);
                        let pb = kk * (*bx * c + *by * s);
                        let (sa, ca) = pa.sin_cos();
                        let (sb, cb) = pb.sin_cos();
                        let (qr, qi) = segment_lanes(
                            (ca * *ea, sa * *ea),
                            (cb * *eb, sb * *eb),
                            (*dz, pb - pa),
                        );
                        let cross = kk * (c * *ty - s * *tx);
                        wr += qr * cross;
                        wi += qi * cross;
                    }
                    for (px, py, d, dx, dy) in &sample_data {
                        let (sn, cs) = (kk * (*px * c + *py * s)).sin_cos();
                        let cross = kk * (c * *dy - s * *dx) * *d;
                        wr += cs * cross;
                        wi += sn * cross;
                    }
                    // A = (ẑ × k)/(i k²): the flux is W/(i k²) = −i W/k².
                    let q = &spec[4 * j..4 * j + 4];
                    let br = f64x4::from([q[0].re, q[1].re, q[2].re, q[3].re]);
                    let bi = f64x4::from([q[0].im, q[1].im, q[2].im, q[3].im]);
                    // −i W = (wi, −wr); Re(b · (wi − i wr)) = br·wi + bi·wr.
                    total += br * wi + bi * wr;
                }
                2.0 * dtheta * total.reduce_add() / (k * k)
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
                let dirs = directions(r.n_half);
                let (kk, px, py, d) = (
                    f64x4::splat(k),
                    f64x4::splat(p.x),
                    f64x4::splat(p.y),
                    f64x4::splat(decay),
                );
                let (mut ax, mut ay, mut az) = (f64x4::ZERO, f64x4::ZERO, f64x4::ZERO);
                for (j, (&c, &s)) in dirs.cos.iter().zip(&dirs.sin).enumerate() {
                    let (sn, cs) = (kk * (c * px + s * py)).sin_cos();
                    let q = &spec[4 * j..4 * j + 4];
                    let br = f64x4::from([q[0].re, q[1].re, q[2].re, q[3].re]);
                    let bi = f64x4::from([q[0].im, q[1].im, q[2].im, q[3].im]);
                    // B_z = b · e^{iφ} · decay.
                    let zr = (br * cs - bi * sn) * d;
                    let zi = (br * sn + bi * cs) * d;
                    // Transverse: ∓ i k̂ B_z, real part ±Im(B_z)·k̂ (sign −1 beyond).
                    let tr = -f64x4::splat(sign) * zi;
                    ax += tr * c;
                    ay += tr * s;
                    az += zr;
                }
                let acc = Vec3::new(ax.reduce_add(), ay.reduce_add(), az.reduce_add());
                frame.scene_dir(&(acc * (2.0 * dtheta)))
            })
            .collect()
    }
}
