//! Magnetic field B and vector potential A of the modelled conductors, per ampere of
//! source current.
//!
//! Every source is a [`FieldSource`]: filament polylines ([`Polyline`], closed forms of
//! Hanson & Hirshman 2002) and point dipoles ([`Dipole`]). Fields are magnetostatic;
//! the caller scales them by each spectral line's current phasor.

mod dipole;
mod kernels;
pub mod multipole;
mod segment;

pub use dipole::Dipole;
pub use multipole::{Accelerated, FarField};
pub use segment::Polyline;
pub(crate) use segment::any_perpendicular;

use rayon::prelude::*;

/// A 3-vector in scene coordinates; metres for positions, tesla for B, T·m for A.
pub type Vec3 = nalgebra::Vector3<f64>;

/// Vacuum permeability μ0 in H/m (CODATA 2018 recommended value, 1.25663706212e-6).
pub const MU0: f64 = 1.256_637_062_12e-6;

/// μ0 / 4π in H/m, the prefactor of every Biot–Savart expression.
pub const MU0_OVER_4PI: f64 = MU0 / (4.0 * std::f64::consts::PI);

/// Anything that makes a magnetic field proportional to one source current.
///
/// Both methods return values per ampere of the source's current: B in T/A and A in
/// T·m/A at a point `r` in metres. They never return NaN or infinity for finite input:
/// inside a conductor's radius the field of a round conductor is used.
pub trait FieldSource: Send + Sync {
    /// Flux density B at `r` (m), in T per ampere.
    fn b_per_amp(&self, r: &Vec3) -> Vec3;
    /// Vector potential A at `r` (m), in T·m per ampere (Coulomb gauge, zero at infinity).
    fn a_per_amp(&self, r: &Vec3) -> Vec3;

    /// A at `r` (T·m/A) and its gross magnitude: the sum of the magnitudes of the parts
    /// that add up to it (T·m/A). Their ratio tells how much rounding noise the sum
    /// carries where the parts cancel (a twisted pair, a null).
    fn a_and_gross_per_amp(&self, r: &Vec3) -> (Vec3, f64) {
        let a = self.a_per_amp(r);
        (a, a.norm())
    }

    /// B per ampere (T/A) at four points (m) at once; the same values as
    /// [`FieldSource::b_per_amp`] up to rounding, and each point's value does not depend on
    /// the other three.
    fn b_block(&self, pts: &[Vec3; 4]) -> [Vec3; 4] {
        pts.map(|p| self.b_per_amp(&p))
    }

    /// B per ampere (T/A) at every point of `pts` (m), in order: by default in blocks of
    /// four ([`FieldSource::b_block`], a short last block padded with copies of its last
    /// point). Each point's value does not depend on the other points.
    fn b_many(&self, pts: &[Vec3]) -> Vec<Vec3> {
        in_blocks::<4>(pts, |b| self.b_block(b))
    }

    /// A sphere (centre m, radius m) holding every conductor, if the source knows one:
    /// outside it the fields are analytic, which lets quadrature skip error checks far
    /// away.
    fn bounding_sphere(&self) -> Option<(Vec3, f64)> {
        None
    }
}

/// Up to `N` points (m) as a block of `N`, a short block padded with copies of its last
/// point.
pub(crate) fn padded_block<const N: usize>(c: &[Vec3]) -> [Vec3; N] {
    std::array::from_fn(|i| c[i.min(c.len() - 1)])
}

/// `block` (values at `N` points at once) applied to `pts` in order, `N` at a time, the
/// last block padded ([`padded_block`]): one value per point.
pub(crate) fn in_blocks<const N: usize>(
    pts: &[Vec3],
    block: impl Fn(&[Vec3; N]) -> [Vec3; N],
) -> Vec<Vec3> {
    let mut out = Vec::with_capacity(pts.len());
    for c in pts.chunks(N) {
        out.extend(block(&padded_block(c)).into_iter().take(c.len()));
    }
    out
}

/// The smallest-ish sphere (centre, radius; m) around `points`: centred on their
/// bounding box.
pub fn sphere_around<'a, I: Iterator<Item = &'a Vec3> + Clone>(points: I) -> Option<(Vec3, f64)> {
    let mut lo = Vec3::repeat(f64::INFINITY);
    let mut hi = Vec3::repeat(f64::NEG_INFINITY);
    let mut any = false;
    for p in points.clone() {
        lo = lo.inf(p);
        hi = hi.sup(p);
        any = true;
    }
    if !any {
        return None;
    }
    let c = (lo + hi) / 2.0;
    let r = points.map(|p| (p - c).norm()).fold(0.0, f64::max);
    Some((c, r))
}

/// The conductors of one source: filament polylines and point dipoles, all carrying the
/// source's current (each polyline scaled by its own ampere-turns per ampere).
#[derive(Clone, Debug, Default)]
pub struct Conductors {
    /// Filament paths.
    pub wires: Vec<Polyline>,
    /// Point dipoles.
    pub dipoles: Vec<Dipole>,
}

impl Conductors {
    /// Number of straight segments over all wires.
    pub fn segment_count(&self) -> usize {
        self.wires.iter().map(|w| w.segment_count()).sum()
    }

    /// Total wire length in metres: each path's length times its number of coincident
    /// turns (|weight|).
    pub fn wire_length(&self) -> f64 {
        self.wires.iter().map(|w| w.length() * w.weight.abs()).sum()
    }

    /// Magnetic dipole moment per ampere, A·m² per A: ½∮ r × dl of every wire times its
    /// weight, plus the dipoles' moments. Exact for closed paths; for open paths it
    /// depends on the origin and is reported as computed about the scene origin.
    pub fn dipole_moment_per_amp(&self) -> Vec3 {
        let wires: Vec3 = self.wires.iter().map(|w| w.dipole_moment()).sum();
        wires + self.dipoles.iter().map(|d| d.moment_per_amp).sum::<Vec3>()
    }

    /// The smallest distance from `r` (m) to any conductor, in metres (to a dipole's
    /// centre for dipoles).
    pub fn distance_to(&self, r: &Vec3) -> f64 {
        let w = self.wires.iter().map(|w| w.distance_to(r));
        let d = self.dipoles.iter().map(|d| (r - d.position).norm());
        w.chain(d).fold(f64::INFINITY, f64::min)
    }
}

impl FieldSource for Conductors {
    fn bounding_sphere(&self) -> Option<(Vec3, f64)> {
        let verts = self.wires.iter().flat_map(|w| w.vertices.iter());
        let centres = self.dipoles.iter().map(|d| &d.position);
        let (c, r) = sphere_around(verts.chain(centres))?;
        let pad = self
            .wires
            .iter()
            .map(|w| w.wire_radius)
            .chain(self.dipoles.iter().map(|d| d.radius))
            .fold(0.0, f64::max);
        Some((c, r + pad))
    }

    fn b_per_amp(&self, r: &Vec3) -> Vec3 {
        let mut b = Vec3::zeros();
        for w in &self.wires {
            b += w.b_per_amp(r);
        }
        for d in &self.dipoles {
            b += d.b_per_amp(r);
        }
        b
    }

    fn b_block(&self, pts: &[Vec3; 4]) -> [Vec3; 4] {
        let mut out = [Vec3::zeros(); 4];
        for w in &self.wires {
            let b = w.b_block(pts);
            for (o, v) in out.iter_mut().zip(b) {
                *o += v;
            }
        }
        for d in &self.dipoles {
            for (o, p) in out.iter_mut().zip(pts) {
                *o += d.b_per_amp(p);
            }
        }
        out
    }

    fn b_many(&self, pts: &[Vec3]) -> Vec<Vec3> {
        // Each wire in its own block size (eight points with AVX-512), added in wire
        // order, then the dipoles: the same sums as `b_block`.
        let mut out = vec![Vec3::zeros(); pts.len()];
        for w in &self.wires {
            for (o, v) in out.iter_mut().zip(w.b_many(pts)) {
                *o += v;
            }
        }
        for d in &self.dipoles {
            for (o, p) in out.iter_mut().zip(pts) {
                *o += d.b_per_amp(p);
            }
        }
        out
    }

    fn a_per_amp(&self, r: &Vec3) -> Vec3 {
        self.a_and_gross_per_amp(r).0
    }

    fn a_and_gross_per_amp(&self, r: &Vec3) -> (Vec3, f64) {
        let mut a = Vec3::zeros();
        let mut gross = 0.0;
        for w in &self.wires {
            let (v, g) = w.a_and_gross_per_amp(r);
            a += v;
            gross += g;
        }
        for d in &self.dipoles {
            let v = d.a_per_amp(r);
            a += v;
            gross += v.norm();
        }
        (a, gross)
    }
}

/// The vector instruction sets the kernels may use in this run.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Simd {
    /// Plain code that the compiler vectorises for the build target (128-bit on x86-64).
    Portable,
    /// 256-bit AVX2 intrinsics: the same bits as `Portable`.
    Avx2,
    /// 512-bit AVX-512F intrinsics: agrees with the others to rounding.
    Avx512,
}

impl Simd {
    /// The names `STRAYFLUX_SIMD` accepts, narrowest first.
    pub const NAMES: [&'static str; 3] = ["portable", "avx2", "avx512"];

    /// The cap named by `name` (one of [`Simd::NAMES`], in any case, spaces around it
    /// ignored), if any.
    pub fn from_name(name: &str) -> Option<Simd> {
        match name.trim().to_ascii_lowercase().as_str() {
            "portable" => Some(Simd::Portable),
            "avx2" => Some(Simd::Avx2),
            "avx512" => Some(Simd::Avx512),
            _ => None,
        }
    }
}

/// The widest instruction set this CPU has, capped by the environment variable
/// `STRAYFLUX_SIMD` (`portable`, `avx2` or `avx512`; for comparing and testing the
/// narrower paths; the binary refuses other values), decided once per process.
pub fn simd() -> Simd {
    use std::sync::OnceLock;
    static LEVEL: OnceLock<Simd> = OnceLock::new();
    *LEVEL.get_or_init(|| {
        let cap = std::env::var("STRAYFLUX_SIMD")
            .ok()
            .and_then(|v| Simd::from_name(&v))
            .unwrap_or(Simd::Avx512);
        cpu_simd().min(cap)
    })
}

fn cpu_simd() -> Simd {
    #[cfg(target_arch = "x86_64")]
    {
        if std::is_x86_feature_detected!("avx512f") {
            return Simd::Avx512;
        }
        if std::is_x86_feature_detected!("avx2") {
            return Simd::Avx2;
        }
    }
    Simd::Portable
}

/// B per ampere (T/A) of `source` at every point (m), in parallel over points. Each
/// point's sum runs in a fixed order, so results do not depend on the thread count.
pub fn b_at_points<S: FieldSource + ?Sized>(source: &S, points: &[Vec3]) -> Vec<Vec3> {
    // Fixed chunks of points (the same for any thread count), each evaluated by the
    // source in blocks of four that share one pass over the segments.
    let chunks: Vec<Vec<Vec3>> = points.par_chunks(64).map(|c| source.b_many(c)).collect();
    chunks.into_iter().flatten().collect()
}

/// A fixed-seed linear congruential generator for the unit tests of the field kernels
/// (Knuth's MMIX constants), uniform on [−½, ½).
#[cfg(test)]
pub(crate) struct TestLcg(pub(crate) u64);

#[cfg(test)]
impl TestLcg {
    /// The next value, uniform on [−½, ½).
    pub(crate) fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    }

    /// A random walk of `steps` steps of up to 5 mm per axis from the origin.
    pub(crate) fn wandering(&mut self, steps: usize) -> Vec<Vec3> {
        let mut v = vec![Vec3::zeros()];
        for _ in 0..steps {
            let last = *v.last().expect("starts with the origin");
            v.push(last + Vec3::new(self.next(), self.next(), self.next()) * 0.01);
        }
        v
    }

    /// A point for the block kernels' tests, near or far from the path `v`: by
    /// (trial + lane) mod 5, a vertex, a segment's midpoint (both careful lanes), or a
    /// random point within 0.05 m of the origin on each axis.
    pub(crate) fn near_and_far(&mut self, v: &[Vec3], trial: usize, lane: usize) -> Vec3 {
        let segments = v.len() - 1;
        match (trial + lane) % 5 {
            0 => v[(trial * 7 + lane) % v.len()],
            1 => (v[trial % segments] + v[trial % segments + 1]) / 2.0,
            _ => Vec3::new(self.next(), self.next(), self.next()) * 0.1,
        }
    }
}
