//! Reference formulas for the physics tests, written for the tests alone: none of them
//! calls into the library except for its `Vec3` type, so a library bug cannot hide in
//! the expected values. Each formula names its published source.

#![allow(dead_code)]

use std::f64::consts::PI;
use strayflux::field::Vec3;

/// Vacuum permeability, H/m: CODATA 2018 recommended value (Tiesinga, Mohr, Newell &
/// Taylor, "CODATA recommended values of the fundamental physical constants: 2018",
/// Rev. Mod. Phys. 93, 025010 (2021)). Kept separate from the library's constant on
/// purpose.
pub const MU0: f64 = 1.256_637_062_12e-6;

/// Complete elliptic integral of the first kind. `ellip::ellipk` takes the
/// *parameter* m = k² (checked in the ellip 1.2.3/1.2.4 sources: "m: elliptic
/// parameter ... k² = m").
pub fn ellip_k(m: f64) -> f64 {
    ellip::ellipk(m).expect("K(m) defined for m < 1")
}

/// Complete elliptic integral of the second kind, parameter m = k² (as `ellip_k`).
pub fn ellip_e(m: f64) -> f64 {
    ellip::ellipe(m).expect("E(m) defined for m <= 1")
}

/// B (T per ampere) of a circular filament of radius `a` (m) in the local plane z = 0,
/// centred on the origin, current counter-clockwise about +z, at the local point `p`.
///
/// Simpson, Lane, Immer & Youngquist, "Simple analytic expressions for the magnetic
/// field of a circular current loop", NASA Technical Memorandum (2001), the Cartesian
/// expressions for Bx, By, Bz: with ρ² = x² + y², r² = ρ² + z², α² = a² + r² − 2aρ,
/// β² = a² + r² + 2aρ, k² = 1 − α²/β², C = μ0 I/π,
///   Bρ = C z / (2 α² β ρ) · [(a² + r²) E(k²) − α² K(k²)],
///   Bz = C / (2 α² β)     · [(a² − r²) E(k²) + α² K(k²)].
/// Written from memory; the equation numbers were not checked. The tests confirm this
/// transcription against a direct, independent Biot–Savart quadrature of the exact
/// circle and against the on-axis law.
pub fn loop_b(a: f64, p: &Vec3) -> Vec3 {
    let rho2 = p.x * p.x + p.y * p.y;
    let rho = rho2.sqrt();
    let r2 = rho2 + p.z * p.z;
    let alpha2 = a * a + r2 - 2.0 * a * rho;
    let beta2 = a * a + r2 + 2.0 * a * rho;
    let beta = beta2.sqrt();
    let m = 1.0 - alpha2 / beta2;
    let (kk, ee) = (ellip_k(m), ellip_e(m));
    let c = MU0 / PI;
    let bz = c / (2.0 * alpha2 * beta) * ((a * a - r2) * ee + alpha2 * kk);
    if rho < 1e-12 * a {
        return Vec3::new(0.0, 0.0, bz);
    }
    let brho = c * p.z / (2.0 * alpha2 * beta * rho) * ((a * a + r2) * ee - alpha2 * kk);
    Vec3::new(brho * p.x / rho, brho * p.y / rho, bz)
}

/// A (T·m per ampere) of the same loop as [`loop_b`]: azimuthal,
/// A_φ = μ0 I a / (π √((a+ρ)² + z²)) · [(2 − k²) K(k) − 2 E(k)] / k²,
/// k² = 4aρ / ((a+ρ)² + z²).
/// Jackson, "Classical Electrodynamics", 3rd ed. (1999), eq. 5.37 (written there in
/// spherical coordinates with ρ = r sin θ); from memory.
pub fn loop_a(a: f64, p: &Vec3) -> Vec3 {
    let rho = (p.x * p.x + p.y * p.y).sqrt();
    if rho < 1e-12 * a {
        return Vec3::zeros();
    }
    let s2 = (a + rho) * (a + rho) + p.z * p.z;
    let m = 4.0 * a * rho / s2;
    let aphi = MU0 * a / (PI * s2.sqrt()) * ((2.0 - m) * ellip_k(m) - 2.0 * ellip_e(m)) / m;
    Vec3::new(-p.y / rho, p.x / rho, 0.0) * aphi
}

/// B (T per ampere) of the same loop by direct Biot–Savart quadrature of the exact
/// circle, dB = μ0 I/4π · dl × (r − r') / |r − r'|³ (Biot–Savart law, Jackson 3rd ed.
/// §5.2), with the
/// `n`-point periodic trapezoidal rule, which converges geometrically for smooth
/// periodic integrands (Trefethen & Weideman, "The exponentially convergent trapezoidal
/// rule", SIAM Review 56, 385 (2014)). Used only to confirm the transcription of
/// [`loop_b`].
pub fn loop_b_by_quadrature(a: f64, p: &Vec3, n: usize) -> Vec3 {
    let mut sum = Vec3::zeros();
    let h = 2.0 * PI / n as f64;
    for k in 0..n {
        let th = h * k as f64;
        let (s, c) = th.sin_cos();
        let rp = Vec3::new(a * c, a * s, 0.0);
        let dl = Vec3::new(-a * s, a * c, 0.0) * h;
        let d = p - rp;
        sum += dl.cross(&d) / d.norm().powi(3);
    }
    sum * (MU0 / (4.0 * PI))
}

/// Mutual inductance (H) of two coaxial circular filaments of radii `a`, `b` (m) whose
/// planes are `d` (m) apart: Maxwell's formula,
///   M = μ0 √(ab) [(2/k − k) K(k) − (2/k) E(k)],  k² = 4ab / ((a+b)² + d²),
/// Grover, "Inductance Calculations" (1946), ch. 13 (coaxial circular filaments).
/// From memory.
pub fn maxwell_coaxial(a: f64, b: f64, d: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b) * (a + b) + d * d);
    let k = m.sqrt();
    MU0 * (a * b).sqrt() * ((2.0 / k - k) * ellip_k(m) - 2.0 / k * ellip_e(m))
}

/// Mutual inductance (H) of two equal, parallel, aligned straight filaments of length
/// `l` at distance `d` (m), from Neumann's integral in closed form:
///   M = μ0/(2π) · [l asinh(l/d) − √(l² + d²) + d],
/// Grover, "Inductance Calculations", parallel filaments of equal length (Grover's
/// eq. (1) of the chapter on straight filaments, there in μH with lengths in cm:
/// 0.002 l [ln(l/d + √(1 + l²/d²)) − √(1 + d²/l²) + d/l]). From memory.
pub fn grover_parallel_filaments(l: f64, d: f64) -> f64 {
    MU0 / (2.0 * PI) * (l * (l / d).asinh() - (l * l + d * d).sqrt() + d)
}

/// Point-dipole field (T per ampere of moment scale): B = μ0/4π (3(m·r̂)r̂ − m)/r³,
/// Jackson 3rd ed. eq. 5.56, `d` the vector from the dipole to the field point.
pub fn dipole_b(m: &Vec3, d: &Vec3) -> Vec3 {
    let r = d.norm();
    let u = d / r;
    (u * (3.0 * m.dot(&u)) - m) * (MU0 / (4.0 * PI * r.powi(3)))
}

/// Point-dipole vector potential: A = μ0/4π m × r / r³, Jackson 3rd ed. eq. 5.55.
pub fn dipole_a(m: &Vec3, d: &Vec3) -> Vec3 {
    m.cross(d) * (MU0 / (4.0 * PI * d.norm().powi(3)))
}

/// Nodes and weights of the n-point Gauss–Legendre rule on [−1, 1]: Newton's method on
/// P_n from Bonnet's recurrence (k+1)P_{k+1} = (2k+1)xP_k − kP_{k−1} (Abramowitz &
/// Stegun 22.7.10), derivative from (x² − 1)P_n' = n(xP_n − P_{n−1}) (A&S 22.8.5), and
/// weights w_i = 2 / ((1 − x_i²) P_n'(x_i)²) (A&S 25.4.29).
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut xs = vec![0.0; n];
    let mut ws = vec![0.0; n];
    for i in 0..n {
        let mut x = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 0.0;
        for _ in 0..200 {
            let (mut p0, mut p1) = (1.0, x);
            for k in 1..n {
                let p2 = ((2 * k + 1) as f64 * x * p1 - k as f64 * p0) / (k + 1) as f64;
                p0 = p1;
                p1 = p2;
            }
            dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
            let dx = p1 / dp;
            x -= dx;
            if dx.abs() < 1e-16 {
                break;
            }
        }
        xs[i] = x;
        ws[i] = 2.0 / ((1.0 - x * x) * dp * dp);
    }
    (xs, ws)
}

/// Panics unless the rule integrates every monomial up to degree 2n − 1 on [−1, 1]
/// exactly (the defining property of Gauss–Legendre quadrature).
pub fn assert_gauss_legendre_exact(n: usize) {
    let (x, w) = gauss_legendre(n);
    for deg in 0..2 * n {
        let got: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(deg as i32)).sum();
        let exact = if deg % 2 == 1 {
            0.0
        } else {
            2.0 / (deg as f64 + 1.0)
        };
        assert!((got - exact).abs() < 1e-13, "GL({n}) degree {deg}: {got}");
    }
}

/// Neumann's formula M = μ0/4π ∮∮ dl1 · dl2 / |r1 − r2| (Griffiths, "Introduction to
/// Electrodynamics", §7.2.3, the Neumann formula; Grover ch. 1; from memory) for two closed polygons through `p` and `q` (corners, not repeated),
/// each side split into `panels` equal panels with an `order`-point Gauss–Legendre rule
/// per panel in both variables. Only for polygons that stay well apart.
pub fn neumann_polygons(p: &[Vec3], q: &[Vec3], panels: usize, order: usize) -> f64 {
    let (x, w) = gauss_legendre(order);
    let nodes: Vec<(f64, f64)> = (0..panels)
        .flat_map(|k| {
            x.iter().zip(&w).map(move |(xi, wi)| {
                (
                    (k as f64 + 0.5 * (xi + 1.0)) / panels as f64,
                    wi * 0.5 / panels as f64,
                )
            })
        })
        .collect();
    let mut total = 0.0;
    for i in 0..p.len() {
        let (a, da) = (p[i], p[(i + 1) % p.len()] - p[i]);
        for j in 0..q.len() {
            let (c, dc) = (q[j], q[(j + 1) % q.len()] - q[j]);
            let dot = da.dot(&dc);
            if dot == 0.0 {
                continue;
            }
            let mut s = 0.0;
            for &(t1, w1) in &nodes {
                let r1 = a + da * t1;
                for &(t2, w2) in &nodes {
                    s += w1 * w2 / (r1 - c - dc * t2).norm();
                }
            }
            total += dot * s;
        }
    }
    MU0 / (4.0 * PI) * total
}

/// An exact circle: centre, orthonormal in-plane axes u, v (normal u × v), radius.
#[derive(Clone, Copy, Debug)]
pub struct Circle {
    pub centre: Vec3,
    pub u: Vec3,
    pub v: Vec3,
    pub radius: f64,
}

impl Circle {
    fn point(&self, th: f64) -> Vec3 {
        self.centre + (self.u * th.cos() + self.v * th.sin()) * self.radius
    }
    fn dl(&self, th: f64) -> Vec3 {
        (self.v * th.cos() - self.u * th.sin()) * self.radius
    }
}

/// Neumann's formula for two exact circles, by the n × n periodic trapezoidal rule
/// (geometric convergence for circles that stay apart; Trefethen & Weideman 2014).
pub fn neumann_circles(c1: &Circle, c2: &Circle, n: usize) -> f64 {
    let h = 2.0 * PI / n as f64;
    let pts2: Vec<(Vec3, Vec3)> = (0..n)
        .map(|k| (c2.point(h * k as f64), c2.dl(h * k as f64)))
        .collect();
    let mut total = 0.0;
    for i in 0..n {
        let th = h * i as f64;
        let (r1, dl1) = (c1.point(th), c1.dl(th));
        for (r2, dl2) in &pts2 {
            total += dl1.dot(dl2) / (r1 - r2).norm();
        }
    }
    MU0 / (4.0 * PI) * total * h * h
}

/// Rotation of `v` by `angle` (rad) about the unit vector `k`: Rodrigues' formula.
pub fn rotate(k: &Vec3, angle: f64, v: &Vec3) -> Vec3 {
    let (s, c) = angle.sin_cos();
    v * c + k.cross(v) * s + k * (k.dot(v) * (1.0 - c))
}

/// A right-handed orthonormal basis (x, y, z) with z along `axis` and x along
/// `reference` made orthogonal to it (Gram–Schmidt); the tests' own construction.
pub fn basis(axis: &Vec3, reference: &Vec3) -> (Vec3, Vec3, Vec3) {
    let z = axis.normalize();
    let x = (reference - z * z.dot(reference)).normalize();
    (x, z.cross(&x), z)
}

/// Deterministic 64-bit linear congruential generator (Knuth's MMIX constants), for
/// reproducible sample points.
pub struct Lcg(pub u64);

impl Lcg {
    /// Uniform in [0, 1).
    pub fn next_f64(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }

    /// Uniform in [lo, hi).
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.next_f64()
    }
}

/// |got − want| / |want| for vectors.
pub fn rel_vec(got: &Vec3, want: &Vec3) -> f64 {
    (got - want).norm() / want.norm()
}

/// |got − want| / |want| for scalars.
pub fn rel(got: f64, want: f64) -> f64 {
    (got - want).abs() / want.abs()
}

/// Low-frequency self-inductance (H) of a circle of radius `r` (m) in round wire of
/// radius `a` (m), uniform current (internal inductance μ0/8π per metre included):
///   L = μ0 r (ln(8r/a) − 2 + 1/4),
/// Rosa & Grover, "Formulas and tables for the calculation of mutual and
/// self-inductance", Bull. Bureau of Standards 8 (1912); Grover, "Inductance
/// Calculations" (1946), circular ring of round wire. From memory.
pub fn rosa_grover_circle(r: f64, a: f64) -> f64 {
    MU0 * r * ((8.0 * r / a).ln() - 1.75)
}

/// Low-frequency self-inductance (H) of a rectangle of sides `a`, `b` (m) in round wire
/// of radius `rho` (m), for sides ≫ rho:
///   L = (μ0/π)[a ln(2a/ρ) + b ln(2b/ρ) + 2√(a²+b²) − a asinh(a/b) − b asinh(b/a)
///              − (7/4)(a + b)],
/// Grover, "Inductance Calculations" (1946), the rectangle of round wire (there in μH
/// with lengths in cm). From memory; its structure (two sides' partial
/// self-inductances minus the opposite sides' mutuals) and its square limit are checked
/// in tests/sweeps.rs.
pub fn grover_rectangle(a: f64, b: f64, rho: f64) -> f64 {
    let d = (a * a + b * b).sqrt();
    MU0 / PI
        * (a * (2.0 * a / rho).ln() + b * (2.0 * b / rho).ln() + 2.0 * d
            - a * (a / b).asinh()
            - b * (b / a).asinh()
            - 1.75 * (a + b))
}

/// |B| (T) at the centre of a Helmholtz pair: two coaxial circles of radius `r` (m),
/// `r` apart, each of `turns` turns carrying `current` (A) in the same sense:
///   B = (4/5)^{3/2} μ0 N I / r
/// (e.g. Jackson, "Classical Electrodynamics", 3rd ed., problem 5.7; from memory).
pub fn helmholtz_centre_b(r: f64, turns: f64, current: f64) -> f64 {
    0.8f64.powf(1.5) * MU0 * turns * current / r
}

/// Bessel function of the first kind J_n(x) from Bessel's integral
///   J_n(x) = (1/π) ∫_0^π cos(nτ − x sin τ) dτ
/// (Abramowitz & Stegun, "Handbook of Mathematical Functions", 9.1.21), written as the
/// mean over the full period [0, 2π) (the integrand is even about τ = π) and evaluated
/// with the periodic trapezoid rule. That rule's error is the aliased Fourier tail,
/// terms J_{n±N}(x) with |J_m(x)| ≤ (|x|/2)^m / m! (A&S 9.1.62), negligible once
/// N ≥ 2|x| + n + 40 (Trefethen & Weideman, SIAM Review 56, 385 (2014)).
pub fn bessel_j(n: u32, x: f64) -> f64 {
    let m = 2 * (x.abs().ceil() as usize) + n as usize + 40;
    let h = 2.0 * PI / m as f64;
    let nf = n as f64;
    let sum: f64 = (0..m)
        .map(|j| {
            let t = h * j as f64;
            (nf * t - x * t.sin()).cos()
        })
        .sum();
    sum / m as f64
}

/// J0(x), see [`bessel_j`].
pub fn bessel_j0(x: f64) -> f64 {
    bessel_j(0, x)
}

/// J1(x), see [`bessel_j`].
pub fn bessel_j1(x: f64) -> f64 {
    bessel_j(1, x)
}
