//! Planar shields and enclosures against independent results: the closed-form response
//! of one conducting, permeable slab, its published limits (thin sheet, image planes),
//! Hankel-transform integrals of the coaxial-loop and dipole fields written here from
//! named formulas, Schelkunoff's absorption law, reciprocity, and the spherical-shell
//! shielding factors. Nothing expected is taken from the library's own output.
//!
//! Run with `cargo test --release --test physics_shields -- --nocapture` to see the
//! measured errors.

mod common;

use common::{MU0, bessel_j0, bessel_j1, dipole_b, gauss_legendre, maxwell_coaxial, rel};
use num_complex::Complex64;
use std::f64::consts::{PI, TAU};
use strayflux::Scene;
use strayflux::coupling::PairModel;
use strayflux::field::Vec3;
use strayflux::model::Layer;
use strayflux::model::material::{Material, built_in};
use strayflux::run::Solver;
use strayflux::run::couple::couple_victim;
use strayflux::run::probe::probe;
use strayflux::shield::enclosure::ln_shell_factor;
use strayflux::shield::layers::{response, thin_sheet_transmission};

// ---------------------------------------------------------------------------------
// Independent reference: one slab in closed form.
// ---------------------------------------------------------------------------------

/// e^z − 1 without cancellation for small |z|: Re = expm1(x) cos y − 2 sin²(y/2),
/// Im = e^x sin y (elementary identities).
fn cexpm1(z: Complex64) -> Complex64 {
    let (x, y) = (z.re, z.im);
    let h = (0.5 * y).sin();
    Complex64::new(x.exp_m1() * y.cos() - 2.0 * h * h, x.exp() * y.sin())
}

/// One homogeneous slab: conductivity (S/m), relative permeability, thickness (m).
#[derive(Clone, Copy, Debug)]
struct Slab {
    sigma: f64,
    mu_r: f64,
    d: f64,
}

impl Slab {
    fn layer(&self) -> Layer {
        Layer {
            conductivity: self.sigma,
            relative_permeability: self.mu_r,
            thickness: self.d,
        }
    }
}

/// (R, T) of one slab for the harmonic of wavenumber `k` at `omega`, the closed form
/// derived for this test (not looked up) from the standard boundary-value problem:
/// B_z = e^{−kz} + R e^{kz} below, A cosh γz + B sinh γz inside, T e^{−k(z−d)} above,
/// with B_z and H_t ∝ (1/μ)∂B_z/∂z continuous at z = 0 and z = d (H_t along k̂ from
/// ∇·B = 0). Adding the two conditions at z = d gives R, subtracting gives T, using
/// q² − r² = 1: with γ = √(k² + jωμ0μrσ), p = γ/(μr k), q = (p + 1/p)/2,
/// r = (1/p − p)/2,
///   D = cosh γd + q sinh γd,   T = 1/D,   R = r sinh γd / D.
/// Evaluated stably with cosh and sinh factored as e^{γd}(1 ± e^{−2γd})/2 and
/// 1 − e^{−2γd} by `cexpm1`, so neither thick slabs (overflow) nor thin ones
/// (cancellation) lose digits.
fn slab(s: &Slab, k: f64, omega: f64) -> (Complex64, Complex64) {
    let gamma = Complex64::new(k * k, omega * MU0 * s.mu_r * s.sigma).sqrt();
    let p = gamma / (s.mu_r * k);
    let g = gamma * s.d;
    let minus = -cexpm1(-2.0 * g); // 1 − e^{−2γd}
    let plus = 2.0 - minus; // 1 + e^{−2γd}
    let q = 0.5 * (p + 1.0 / p);
    let r = 0.5 * (1.0 / p - p);
    let den = plus + q * minus; // 2 e^{−γd} D
    (r * minus / den, 2.0 * (-g).exp() / den)
}

/// |x − y| / |y| for complex numbers.
fn crel(x: Complex64, y: Complex64) -> f64 {
    (x - y).norm() / y.norm()
}

/// 20·log10(|x| / |y|), dB.
fn db(x: f64, y: f64) -> f64 {
    20.0 * (x / y).log10()
}

// ---------------------------------------------------------------------------------
// Independent reference: Hankel-transform integrals.
// ---------------------------------------------------------------------------------

/// Composite 16-point Gauss–Legendre nodes (k, weight) on [0, 60/h]: a first panel
/// [0, 1e-7/h], then panels doubling in width (the slab response varies on a log scale
/// in k), capped at 2/max(h, `lateral`) so no panel spans more than two e-folds of
/// e^{−kh} or two radians of the Bessel oscillation (16-point Gauss–Legendre is then
/// exact to rounding for these entire integrands). The tail beyond 60/h is below
/// e^{−60} ≈ 1e-26 of the integrand's scale.
fn k_rule(h: f64, lateral: f64) -> Vec<(f64, f64)> {
    let (x, w) = gauss_legendre(16);
    let k_max = 60.0 / h;
    let widest = 2.0 / h.max(lateral);
    let mut out = Vec::new();
    let (mut lo, mut hi) = (0.0, 1e-7 / h);
    while lo < k_max {
        let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
        for (xi, wi) in x.iter().zip(&w) {
            out.push((mid + half * xi, wi * half));
        }
        lo = hi;
        hi = (lo + lo.min(widest)).min(k_max);
    }
    out
}

/// Nodes of M(T) = μ0 π a b ∫_0^∞ T(k) J1(ka) J1(kb) J0(kρ) e^{−kh} dk for parallel
/// circles of radii `a`, `b` with axes `rho` apart whose air paths add to `h`: (k,
/// weight including everything but T). With T = 1 and ρ = 0 this is the Hankel form of
/// the coaxial-circle mutual inductance, from A_φ = (μ0 I a/2) ∫ J1(ka) J1(kρ) e^{−k|z|}
/// dk (Smythe, "Static and Dynamic Electricity", ch. 7; Jackson 3rd ed. §5.5; from
/// memory) and Φ = 2πb A_φ(b); the J0(kρ) factor for laterally offset parallel circles
/// follows from Graf's addition theorem (Watson, "Theory of Bessel Functions", §11.3;
/// the offset-loop form as in Conway, IEEE Trans. Magn. 43 (2007); from memory) and is
/// checked here against the library's direct Biot–Savart flux.
fn loop_nodes(a: f64, b: f64, rho: f64, h: f64) -> Vec<(f64, f64)> {
    k_rule(h, a + b + rho)
        .into_iter()
        .map(|(k, w)| {
            let mut jj = bessel_j1(k * a) * bessel_j1(k * b);
            if rho > 0.0 {
                jj *= bessel_j0(k * rho);
            }
            (k, MU0 * PI * a * b * w * jj * (-k * h).exp())
        })
        .collect()
}

/// Σ weight · f(k) over `nodes`.
fn integrate(nodes: &[(f64, f64)], f: impl Fn(f64) -> Complex64) -> Complex64 {
    nodes.iter().map(|&(k, w)| f(k) * w).sum()
}

/// Nodes (k, weight_z, weight_ρ) of the field of an axial point dipole m (per A·m²)
/// reaching lateral distance `rho` through air paths adding to `h`:
///   B_z = (μ0 m/4π) ∫ T k² e^{−kh} J0(kρ) dk,  B_ρ = (μ0 m/4π) ∫ T k² e^{−kh} J1(kρ) dk,
/// from the dipole's magnetic scalar potential, B = −μ0∇ψ with ψ = −(m/4π) ∂_z(1/r)
/// (the potential of Jackson 3rd ed. eq. 5.56's dipole; from memory) and 1/r = ∫ e^{−k|z|} J0(kρ) dk (the Lipschitz integral, Watson,
/// "Theory of Bessel Functions", §13.2; from memory), using J0' = −J1 (A&S 9.1.28).
/// With T = 1 it must reproduce the free dipole field (checked).
fn dipole_nodes(rho: f64, h: f64) -> Vec<(f64, f64, f64)> {
    k_rule(h, rho)
        .into_iter()
        .map(|(k, w)| {
            let c = MU0 / (4.0 * PI) * w * k * k * (-k * h).exp();
            (k, c * bessel_j0(k * rho), c * bessel_j1(k * rho))
        })
        .collect()
}

// ---------------------------------------------------------------------------------
// Scenes.
// ---------------------------------------------------------------------------------

fn v3(p: [f64; 3]) -> String {
    format!("[{:e}, {:e}, {:e}]", p[0], p[1], p[2])
}

/// A circular loop: radius (m), centre (m), axis.
#[derive(Clone, Copy, Debug)]
struct Ring {
    r: f64,
    at: [f64; 3],
    axis: [f64; 3],
}

fn source_toml(ring: &Ring, current: &str) -> String {
    format!(
        "[[source]]\nid = \"src\"\nkind = \"loop\"\nradius = {:e}\nposition = {}\naxis = {}\n\
         current = {current}\n",
        ring.r,
        v3(ring.at),
        v3(ring.axis)
    )
}

fn victim_toml(ring: &Ring) -> String {
    format!(
        "[[victim]]\nid = \"vic\"\nkind = \"loop\"\nradius = {:e}\nposition = {}\naxis = {}\n",
        ring.r,
        v3(ring.at),
        v3(ring.axis)
    )
}

/// A sheet of `material` (TOML value) and `thickness` (m) whose first face is the plane
/// z = `z0` (m), filling z0 .. z0 + thickness.
fn sheet_toml(material: &str, thickness: f64, z0: f64) -> String {
    format!(
        "[[shield]]\nid = \"plate\"\nmaterial = {material}\nthickness = {thickness:e}\n\
         position = [0, 0, {z0:e}]\naxis = [0, 0, 1]\n"
    )
}

fn custom(sigma: f64, mu_r: f64) -> String {
    format!("{{ conductivity = {sigma:e}, relative_permeability = {mu_r:e} }}")
}

/// A current of 1 A peak at each of `freqs` (Hz), zero phase.
fn lines(freqs: &[f64]) -> String {
    let items: Vec<String> = freqs
        .iter()
        .map(|f| format!("{{ frequency = {f:e}, peak = 1 }}"))
        .collect();
    format!("{{ lines = [ {} ] }}", items.join(", "))
}

fn parse(text: &str) -> Scene {
    Scene::parse("physics-shields.toml", text).unwrap_or_else(|e| panic!("{e:?}\n{text}"))
}

/// The pair model of the scene's only source and victim.
fn pair(scene: &Scene) -> PairModel {
    Solver::for_scene(scene)
        .pair_model(scene, 0, &scene.victims[0])
        .expect("pair model")
}

/// (σ, μr) of a built-in material.
fn props(name: &str) -> (f64, f64) {
    let m = built_in(name).expect("built-in material");
    (m.conductivity, m.relative_permeability)
}

const Z: [f64; 3] = [0.0, 0.0, 1.0];

// ---------------------------------------------------------------------------------
// 0. The references themselves.
// ---------------------------------------------------------------------------------

#[test]
fn bessel_reference_matches_abramowitz_stegun_table() {
    // A&S table 9.1 (10 decimals; from memory): J0(1), J1(1), J0(2.5), J1(2.5), J0(10),
    // J1(10). The trapezoid rule is exact to rounding here, so 1e-10 absolute is the
    // table's own last digit.
    let table = [
        (0, 1.0, 0.765_197_686_6),
        (1, 1.0, 0.440_050_585_7),
        (0, 2.5, -0.048_383_776_4),
        (1, 2.5, 0.497_094_102_5),
        (0, 10.0, -0.245_935_764_5),
        (1, 10.0, 0.043_472_746_2),
    ];
    for (n, x, want) in table {
        let got = common::bessel_j(n, x);
        println!("J{n}({x}) = {got:.12} (A&S {want})");
        assert!((got - want).abs() < 1e-10, "J{n}({x}) = {got} vs {want}");
    }
    // Large argument: the asymptotic form J0(x) ≈ √(2/πx) cos(x − π/4) (A&S 9.2.1) holds
    // to O(1/x) of the amplitude, ~1e-3 at x = 200.
    let x = 200.0;
    let asym = (2.0 / (PI * x)).sqrt() * (x - PI / 4.0).cos();
    assert!((bessel_j0(x) - asym).abs() < 1e-3 * (2.0 / (PI * x)).sqrt());
}

#[test]
fn hankel_oracle_reduces_to_maxwell_formula_without_a_shield() {
    // μ0 π a b ∫ J1(ka) J1(kb) e^{−kd} dk must equal Maxwell's elliptic-integral formula
    // (Grover ch. 13) for coaxial circles; and through an air "slab" (closed form with
    // σ = 0, μr = 1, which must give T = e^{−kd}) the same with d added. Both are
    // quadratures of smooth, exponentially decaying integrands: 1e-10 relative.
    let mut worst: f64 = 0.0;
    for &(a, b, d) in &[
        (0.01, 0.008, 0.01),
        (0.01, 0.01, 0.002),
        (0.02, 0.005, 0.03),
        (0.005, 0.03, 0.004),
    ] {
        let want = maxwell_coaxial(a, b, d);
        let free = integrate(&loop_nodes(a, b, 0.0, d), |_| Complex64::new(1.0, 0.0));
        let gap = 0.4 * d;
        let air = Slab {
            sigma: 0.0,
            mu_r: 1.0,
            d: gap,
        };
        let through = integrate(&loop_nodes(a, b, 0.0, d - gap), |k| slab(&air, k, 1e5).1);
        let e = crel(free, Complex64::new(want, 0.0)).max(crel(through, want.into()));
        worst = worst.max(e);
    }
    println!("Hankel oracle vs Maxwell: worst rel {worst:.2e}");
    assert!(worst < 1e-10, "{worst:e}");
}

#[test]
fn dipole_oracle_reduces_to_free_dipole_field() {
    // With T = 1 the Hankel integrals must give Jackson's dipole field (eq. 5.56, in
    // `common::dipole_b`), on and off axis. Quadrature of smooth integrands: 1e-10.
    let m = Vec3::new(0.0, 0.0, 1.0);
    let mut worst: f64 = 0.0;
    for &(rho, h) in &[(0.0, 0.01), (0.006, 0.012), (0.02, 0.01), (0.05, 0.005)] {
        let (mut bz, mut br) = (0.0, 0.0);
        for (_, wz, wr) in dipole_nodes(rho, h) {
            bz += wz;
            br += wr;
        }
        let want = dipole_b(&m, &Vec3::new(rho, 0.0, h));
        let e = (Vec3::new(br, 0.0, bz) - want).norm() / want.norm();
        worst = worst.max(e);
    }
    println!("dipole Hankel oracle vs Jackson 5.56: worst rel {worst:.2e}");
    assert!(worst < 1e-10, "{worst:e}");
}

// ---------------------------------------------------------------------------------
// 1. Skin depth.
// ---------------------------------------------------------------------------------

#[test]
fn copper_skin_depth_matches_handbook_values() {
    // δ = 1/√(π f μ σ); copper 8.5 mm at 60 Hz and 0.066 mm at 1 MHz (Ott,
    // "Electromagnetic Compatibility Engineering" (2009), ch. 6 skin-depth table, given
    // there in inches as 0.335 in and 0.0026 in; from memory). The table rounds to 2
    // figures: 1 %.
    let cu = built_in("copper").unwrap();
    for (f, want) in [(60.0, 8.5e-3), (1e6, 66e-6)] {
        let got = cu.skin_depth(f);
        println!("copper δ({f} Hz) = {got:.4e} m (handbook {want:e})");
        assert!(rel(got, want) < 0.01, "δ({f}) = {got}");
    }
}

// ---------------------------------------------------------------------------------
// 2. One-layer response against the closed form and its limits.
// ---------------------------------------------------------------------------------

#[test]
fn single_layer_response_matches_closed_form_over_a_grid() {
    // Closed form above, 432 cases including slabs tens of thousands of skin depths
    // thick (naive cosh overflows). 1e-10 relative; R gets an absolute floor of 1e-14
    // because the transfer-matrix route obtains it as a difference of O(1) matrix
    // entries (rounding ~1e-16 each), far below anything that matters for the field.
    // T below 1e-280 must underflow on both sides (both "nothing gets through").
    let mut worst_t: f64 = 0.0;
    let mut worst_r: f64 = 0.0;
    let mut n = 0;
    for &k in &[1.0, 30.0, 1e3, 3e4] {
        for &f in &[0.0, 50.0, 1e4, 1e6] {
            for &mu_r in &[1.0, 100.0, 2e4] {
                for &sigma in &[0.0, 1e6, 5.8e7] {
                    for &d in &[1e-5, 1e-3, 0.05] {
                        let s = Slab { sigma, mu_r, d };
                        let w = TAU * f;
                        let (r_ref, t_ref) = slab(&s, k, w);
                        let got = response(&[s.layer()], k, w);
                        let er = (got.reflected - r_ref).norm();
                        assert!(
                            er <= 1e-10 * r_ref.norm() + 1e-14,
                            "R {s:?} k {k} f {f}: {} vs {r_ref}",
                            got.reflected
                        );
                        if r_ref.norm() > 1e-4 {
                            worst_r = worst_r.max(er / r_ref.norm());
                        }
                        if t_ref.norm() < 1e-280 {
                            assert!(got.transmitted.norm() < 1e-270, "{s:?} k {k} f {f}");
                        } else {
                            let et = crel(got.transmitted, t_ref);
                            assert!(et <= 1e-10, "T {s:?} k {k} f {f}: rel {et:e}");
                            worst_t = worst_t.max(et);
                        }
                        n += 1;
                    }
                }
            }
        }
    }
    println!(
        "layer response vs closed form, {n} cases: worst rel T {worst_t:.2e}, R {worst_r:.2e}"
    );
}

#[test]
fn split_layer_equals_one_layer_of_the_summed_thickness() {
    // Two touching layers of the same material are one layer (the field equation and
    // both continuity conditions are satisfied trivially at an interior "face"): the
    // stack of 0.3 + 0.7 mm must equal the closed form for 1 mm. 1e-10.
    let mut worst: f64 = 0.0;
    for (sigma, mu_r) in [(5.8e7, 1.0), (5.8e6, 1000.0), (1.7e6, 2e4)] {
        for &k in &[10.0, 1e3] {
            for &f in &[50.0, 1e5] {
                let a = Slab {
                    sigma,
                    mu_r,
                    d: 3e-4,
                };
                let b = Slab {
                    sigma,
                    mu_r,
                    d: 7e-4,
                };
                let whole = Slab {
                    sigma,
                    mu_r,
                    d: 1e-3,
                };
                let got = response(&[a.layer(), b.layer()], k, TAU * f);
                let (r, t) = slab(&whole, k, TAU * f);
                worst = worst
                    .max(crel(got.transmitted, t))
                    .max((got.reflected - r).norm() / r.norm().max(1e-4));
            }
        }
    }
    println!("split layer vs whole: worst rel {worst:.2e}");
    assert!(worst < 1e-10, "{worst:e}");
}

#[test]
fn thin_sheet_limit_matches_the_thin_sheet_formula() {
    // Thin non-magnetic sheet: T ≈ e^{−kd}/(1 + jωμ0σd/(2k)) (standard thin-sheet
    // result; Hoburg / Moreau eddy-current sheet analyses; from memory). Expanding the
    // closed form in γd, the first neglected term is −X²/(12kd) in the denominator with
    // X = ωμ0σd² = 2(d/δ)², i.e. a relative error below (d/δ)²/3, plus O((kd)⁴).
    // Tolerance: 1.5 × that bound + (kd)⁴. Also the library's own thin-sheet helper
    // must be this formula (to rounding).
    let (sigma, d): (f64, f64) = (5.8e7, 10e-6);
    let mut worst: f64 = 0.0;
    for &f in &[1e3, 1e4, 1e5] {
        let w = TAU * f;
        let delta = 1.0 / (PI * f * MU0 * sigma).sqrt();
        for &k in &[10.0, 300.0, 1e4] {
            let thin = (-k * d).exp() / Complex64::new(1.0, w * MU0 * sigma * d / (2.0 * k));
            let layer = Layer {
                conductivity: sigma,
                relative_permeability: 1.0,
                thickness: d,
            };
            let got = response(&[layer], k, w).transmitted;
            let e = crel(got, thin);
            let bound = 1.5 * (d / delta).powi(2) / 3.0 + (k * d).powi(4) + 1e-13;
            assert!(e <= bound, "f {f} k {k}: rel {e:e} > {bound:e}");
            worst = worst.max(e / bound);
            let helper = thin_sheet_transmission(sigma, d, k, w) * (-k * d).exp();
            assert!(crel(helper, thin) < 1e-14);
        }
    }
    println!("thin sheet: worst error / bound {worst:.3}");
}

#[test]
fn perfect_conductor_limit_is_the_opposite_image() {
    // σ → ∞: B_z = 0 on the face, the field of an image of opposite current, R = −1
    // (image method, e.g. Jackson 3rd ed. §5.13 / Smythe ch. 11; from memory). For a
    // slab many skin depths thick, R = (1 − p)/(1 + p) with p = γ/(μr k) (the closed
    // form's thick limit), so |R + 1| = 2/|1 + p| ≤ 2k/|γ| since Re p > 0; e^{−2d/δ}
    // terms are < e^{−1000} here. T must vanish (≤ 4|p|e^{−d/δ} ≪ 1e-100).
    let layer = Layer {
        conductivity: 1e12,
        relative_permeability: 1.0,
        thickness: 1e-3,
    };
    let w = TAU * 1e5;
    for &k in &[1.0, 100.0, 1e4] {
        let r = response(&[layer], k, w);
        let gamma = Complex64::new(k * k, w * MU0 * 1e12).sqrt().norm();
        let bound = 2.0 * k / gamma;
        println!(
            "σ=1e12: k {k}: |R+1| = {:.3e} (bound {bound:.3e})",
            (r.reflected + 1.0).norm()
        );
        assert!((r.reflected + 1.0).norm() <= bound * (1.0 + 1e-9));
        assert!(r.transmitted.norm() < 1e-100);
    }
}

#[test]
fn thick_permeable_plate_at_dc_is_the_magnetostatic_image() {
    // ω = 0 (or σ = 0), half-space of permeability μr: R = (μr − 1)/(μr + 1), the image
    // of Jackson 3rd ed. §5.13 (from memory) / Smythe. For a slab of finite thickness at
    // ω = 0 the closed form gives R = r t/(1 + q t), t = tanh kd, so
    // |R − R∞| = r(1 − t)/((1 + q)(1 + q t)) ≤ 2 e^{−2kd}.
    let mu_r = 1000.0;
    let image = (mu_r - 1.0) / (mu_r + 1.0);
    for (sigma, f) in [(0.0, 1e4), (5.8e6, 0.0)] {
        for &k in &[100.0, 1e3, 1e4] {
            let layer = Layer {
                conductivity: sigma,
                relative_permeability: mu_r,
                thickness: 0.05,
            };
            let r = response(&[layer], k, TAU * f).reflected;
            let bound = 2.0 * (-2.0 * k * 0.05f64).exp() + 1e-15;
            println!(
                "μr=1000 DC: k {k}: |R − image| = {:.3e} (bound {bound:.1e})",
                (r - image).norm()
            );
            assert!((r - image).norm() <= bound, "k {k}: {r} vs {image}");
        }
    }
}

// ---------------------------------------------------------------------------------
// 3. A transparent sheet.
// ---------------------------------------------------------------------------------

#[test]
fn transparent_sheet_leaves_coaxial_coupling_at_maxwell_value() {
    // σ = 0, μr = 1: the spectral (transmitted) path must give Maxwell's formula for the
    // full separation (Grover ch. 13). 1e-6 relative, the scene tolerance.
    let transparent = custom(0.0, 1.0);
    let mut worst: f64 = 0.0;
    for &(a, b, h1, t, h2) in &[
        (0.01, 0.01, 0.005, 0.001, 0.005),
        (0.02, 0.008, 0.003, 0.002, 0.01),
        (0.005, 0.015, 0.01, 0.0005, 0.002),
    ] {
        let text = format!(
            "{}{}{}",
            source_toml(
                &Ring {
                    r: a,
                    at: [0.0, 0.0, -h1],
                    axis: Z
                },
                &lines(&[1e4])
            ),
            victim_toml(&Ring {
                r: b,
                at: [0.0, 0.0, t + h2],
                axis: Z
            }),
            sheet_toml(&transparent, t, 0.0)
        );
        let scene = parse(&text);
        let m = pair(&scene).shielded_flux(1e4);
        let want = maxwell_coaxial(a, b, h1 + t + h2);
        let e = crel(m, want.into());
        println!(
            "transparent sheet a={a} b={b} sep={}: rel {e:.2e}",
            h1 + t + h2
        );
        worst = worst.max(e);
    }
    println!("transparent sheet vs Maxwell: worst rel {worst:.2e}");
    assert!(worst <= 1e-6, "{worst:e}");
}

#[test]
fn transparent_sheet_matches_direct_biot_savart_off_axis_and_same_side() {
    // Consistency check of the spectral path against the library's direct Biot–Savart
    // flux (the same scene without [[shield]]): laterally offset, tilted victims beyond
    // the sheet (transmitted path) and on the source side (reflected path, R = 0 so M
    // must not change). 1e-6 relative, the scene tolerance.
    let transparent = custom(0.0, 1.0);
    let src = Ring {
        r: 0.01,
        at: [0.0, 0.0, -0.006],
        axis: Z,
    };
    let victims = [
        Ring {
            r: 0.008,
            at: [0.007, 0.0, 0.006],
            axis: Z,
        },
        Ring {
            r: 0.006,
            at: [-0.004, 0.012, 0.009],
            axis: [0.3, -0.2, 1.0],
        },
        Ring {
            r: 0.005,
            at: [0.015, 0.0, -0.004],
            axis: [0.0, 0.5, 1.0],
        },
    ];
    let mut worst: f64 = 0.0;
    for v in &victims {
        let body = format!("{}{}", source_toml(&src, &lines(&[1e4])), victim_toml(v));
        let free = pair(&parse(&body)).flux;
        let shielded = parse(&format!("{body}{}", sheet_toml(&transparent, 0.001, 0.0)));
        let m = pair(&shielded).shielded_flux(1e4);
        let e = crel(m, free.into());
        println!(
            "transparent sheet, victim at {:?}: rel {e:.2e} (M = {free:.6e} H)",
            v.at
        );
        worst = worst.max(e);
    }
    println!("transparent sheet vs direct Biot–Savart: worst rel {worst:.2e}");
    assert!(worst <= 1e-6, "{worst:e}");
}

// ---------------------------------------------------------------------------------
// 4. Coaxial loops through and beside real sheets: the Hankel oracle.
// ---------------------------------------------------------------------------------

const FREQS: [f64; 5] = [50.0, 1e3, 1e4, 1e5, 1e6];

/// (name, material TOML, thickness)
fn sheets() -> Vec<(&'static str, f64)> {
    vec![("copper", 35e-6), ("aluminium", 1e-3), ("steel", 1e-3)]
}

#[test]
fn loops_through_a_sheet_match_the_hankel_integral() {
    // M_shielded = μ0 π a b ∫ T(k) J1(ka) J1(kb) e^{−k(h1+h2)} dk (Hankel form of the
    // coaxial-loop coupling, Smythe ch. 7, with the slab's T from the closed form).
    // Acceptance: 0.1 dB in shielding (the project's bar); asserted on the complex M as
    // |ΔM|/|M| ≤ 0.0116 (= 10^{0.1/20} − 1), which also bounds the phase error, and on
    // the reported shielding_db where it is below the 300 dB cap. Also at the scene
    // tolerance, 1e-6 relative on the complex M: the solver's stated accuracy, which a
    // 0.1 dB bar alone would not hold it to.
    let (a, b, h1, h2) = (0.010, 0.008, 0.006, 0.004);
    let nodes = loop_nodes(a, b, 0.0, h1 + h2);
    let mut worst_db: f64 = 0.0;
    let mut worst_rel: f64 = 0.0;
    for (name, t) in sheets() {
        let (sigma, mu_r) = props(name);
        let s = Slab { sigma, mu_r, d: t };
        let text = format!(
            "{}{}{}",
            source_toml(
                &Ring {
                    r: a,
                    at: [0.0, 0.0, -h1],
                    axis: Z
                },
                &lines(&FREQS)
            ),
            victim_toml(&Ring {
                r: b,
                at: [0.0, 0.0, t + h2],
                axis: Z
            }),
            sheet_toml(&format!("\"{name}\""), t, 0.0)
        );
        let scene = parse(&text);
        let model = pair(&scene);
        let report = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
        let free = maxwell_coaxial(a, b, h1 + t + h2);
        for (i, &f) in FREQS.iter().enumerate() {
            let want = integrate(&nodes, |k| slab(&s, k, TAU * f).1);
            let got = model.shielded_flux(f);
            let se_want = db(free, want.norm());
            let se_got = db(free, got.norm());
            let e = crel(got, want);
            let line = &report.sources[0].lines[i];
            assert!(rel(line.frequency, f) < 1e-12);
            println!(
                "{name} {t:e} m @ {f:e} Hz: SE oracle {se_want:9.3} dB, strayflux {se_got:9.3} dB \
                 (reported {:9.3}), ΔdB {:.2e}, |ΔM|/|M| {e:.2e}",
                line.shielding_db,
                se_got - se_want
            );
            worst_db = worst_db.max((se_got - se_want).abs());
            worst_rel = worst_rel.max(e);
            if se_want < 290.0 {
                assert!(
                    (line.shielding_db - se_want).abs() <= 0.1,
                    "{name} {f}: reported {} vs {se_want}",
                    line.shielding_db
                );
            } else {
                assert!(line.shielding_db >= 290.0);
            }
        }
    }
    println!("transmitted: worst ΔSE {worst_db:.3e} dB, worst |ΔM|/|M| {worst_rel:.3e}");
    assert!(
        worst_db <= 0.1 && worst_rel <= 0.0116,
        "{worst_db} dB, {worst_rel:e}"
    );
    assert!(worst_rel <= 1e-6, "scene tolerance: {worst_rel:e}");
}

#[test]
fn loops_beside_a_sheet_match_the_hankel_integral_of_the_reflection() {
    // Victim on the source side: M = M_free + μ0 π a b ∫ R(k) J1 J1 e^{−k(h1+h2)} dk,
    // h2 the victim's distance to the near face (reflected harmonic e^{+kz}). M_free by
    // Maxwell's formula. Same acceptance as the transmitted case: |ΔM|/|M| ≤ 0.0116
    // (0.1 dB) and 1e-6 (scene tolerance); the scattered part alone is reported too.
    // The reported shielding_db must be 20 log10(|M_free|/|M|), negative where the sheet
    // raises the coupling (steel at low frequency), within 0.1 dB.
    let (a, b, h1, h2) = (0.010, 0.008, 0.006, 0.002);
    let nodes = loop_nodes(a, b, 0.0, h1 + h2);
    let free = maxwell_coaxial(a, b, h1 - h2);
    let mut worst_db: f64 = 0.0;
    let mut worst_rel: f64 = 0.0;
    let mut worst_scat: f64 = 0.0;
    for (name, t) in sheets() {
        let (sigma, mu_r) = props(name);
        let s = Slab { sigma, mu_r, d: t };
        let text = format!(
            "{}{}{}",
            source_toml(
                &Ring {
                    r: a,
                    at: [0.0, 0.0, -h1],
                    axis: Z
                },
                &lines(&FREQS)
            ),
            victim_toml(&Ring {
                r: b,
                at: [0.0, 0.0, -h2],
                axis: Z
            }),
            sheet_toml(&format!("\"{name}\""), t, 0.0)
        );
        let scene = parse(&text);
        let model = pair(&scene);
        let report = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
        for (i, &f) in FREQS.iter().enumerate() {
            let scat = integrate(&nodes, |k| slab(&s, k, TAU * f).0);
            let want = scat + free;
            let got = model.shielded_flux(f);
            let e = crel(got, want);
            let es = crel(got - model.flux, scat);
            let ddb = db(got.norm(), want.norm());
            let reported = report.sources[0].lines[i].shielding_db;
            assert!(
                (reported - db(free, want.norm())).abs() <= 0.1,
                "{name} {f}: reported {reported} dB"
            );
            println!(
                "{name} {t:e} m @ {f:e} Hz: M/M_free oracle {:.6}, strayflux {:.6}, ΔdB {ddb:.2e}, \
                 |ΔM|/|M| {e:.2e}, scattered part rel {es:.2e}",
                want.norm() / free,
                got.norm() / free
            );
            worst_db = worst_db.max(ddb.abs());
            worst_rel = worst_rel.max(e);
            worst_scat = worst_scat.max(es);
        }
    }
    println!(
        "reflected: worst ΔdB {worst_db:.3e}, worst |ΔM|/|M| {worst_rel:.3e}, scattered part {worst_scat:.3e}"
    );
    assert!(
        worst_db <= 0.1 && worst_rel <= 0.0116,
        "{worst_db} dB, {worst_rel:e}"
    );
    assert!(worst_rel <= 1e-6, "scene tolerance: {worst_rel:e}");
}

#[test]
fn offset_loops_through_a_sheet_match_the_hankel_integral() {
    // Parallel loops with axes 12 mm apart (they overlap in projection), beyond and
    // beside 35 µm copper and 1 mm aluminium: the same Hankel oracle with the extra
    // J0(kρ). Its free-space form (T = 1) is first checked against the library's direct
    // Biot–Savart flux of the same loops (1e-6, the scene tolerance), then the shielded
    // M against the oracle at 1e-6 (which implies the 0.1 dB bar).
    let (a, b, rho, h1, h2) = (0.010, 0.008, 0.012, 0.006, 0.004);
    let freqs = [1e3, 1e5];
    let mut worst: f64 = 0.0;
    for (name, t) in [("copper", 35e-6), ("aluminium", 1e-3)] {
        let (sigma, mu_r) = props(name);
        let s = Slab { sigma, mu_r, d: t };
        for beyond in [true, false] {
            let (vz, h) = if beyond {
                (t + h2, h1 + h2)
            } else {
                (-h2 / 2.0, h1 + h2 / 2.0)
            };
            let body = format!(
                "{}{}",
                source_toml(
                    &Ring {
                        r: a,
                        at: [0.0, 0.0, -h1],
                        axis: Z
                    },
                    &lines(&freqs)
                ),
                victim_toml(&Ring {
                    r: b,
                    at: [rho, 0.0, vz],
                    axis: Z
                })
            );
            let free_lib = pair(&parse(&body)).flux;
            let free_ref = integrate(&loop_nodes(a, b, rho, h1 + vz), |_| {
                Complex64::new(1.0, 0.0)
            })
            .re;
            let e_free = rel(free_lib, free_ref);
            println!(
                "offset loops, free space: Hankel {free_ref:.9e} vs Biot–Savart {free_lib:.9e} H, \
                 rel {e_free:.2e}"
            );
            assert!(e_free <= 1e-6, "{e_free:e}");
            let sheet = sheet_toml(&format!("\"{name}\""), t, 0.0);
            let model = pair(&parse(&format!("{body}{sheet}")));
            let nodes = loop_nodes(a, b, rho, h);
            for &f in &freqs {
                let want = if beyond {
                    integrate(&nodes, |k| slab(&s, k, TAU * f).1)
                } else {
                    free_ref + integrate(&nodes, |k| slab(&s, k, TAU * f).0)
                };
                let got = model.shielded_flux(f);
                let e = crel(got, want);
                println!(
                    "offset loops, {name} {} @ {f:e} Hz: |M| {:.6e} H ({:.3} dB vs free), \
                     |ΔM|/|M| {e:.2e}",
                    if beyond { "beyond" } else { "beside" },
                    want.norm(),
                    db(free_ref.abs(), want.norm())
                );
                worst = worst.max(e);
            }
        }
    }
    println!("offset loops: worst |ΔM|/|M| {worst:.2e}");
    assert!(worst <= 1e-6, "{worst:e}");
}

#[test]
fn rectangle_victim_beyond_and_beside_a_sheet_matches_the_hankel_potential() {
    // A straight-edged victim (16 × 12 mm rectangle, off the source axis) exercises the
    // library's exact straight-edge flux terms, which the circular victims above do
    // not. Oracle: Φ = ∮ A·dl with the loop's azimuthal potential through the sheet,
    //   A_φ(ρ) = (μ0 a/2) ∫ X(k) J1(ka) J1(kρ) e^{−kH} dk,  X = T (beyond) or R (beside)
    // (Smythe ch. 7 / Jackson §5.5 Hankel form of the loop potential; from memory; its
    // curl gives the B_z the coaxial tests use), integrated along the edges by composite
    // Gauss–Legendre (2 × 12 points per edge, ρ ≥ 3 mm on the edges; the nearest singularity of
    // A_φ, the source wire, is ≥ 4 mm from any edge panel of ≤ 8 mm: ~1e-9). Its free-space
    // form is first checked against the library's direct Biot–Savart flux (1e-6), then
    // the shielded flux at the scene tolerance 1e-6.
    let (a, h1, h2) = (0.010, 0.006, 0.004);
    let (w, hgt, cx, cy) = (0.016, 0.012, 0.005, -0.003);
    let freqs = [1e3, 1e5];
    let corners = [
        (cx - w / 2.0, cy - hgt / 2.0),
        (cx + w / 2.0, cy - hgt / 2.0),
        (cx + w / 2.0, cy + hgt / 2.0),
        (cx - w / 2.0, cy + hgt / 2.0),
    ];
    let (gx, gw) = gauss_legendre(12);
    // (ρ, weight · φ̂·dl) along the counter-clockwise edges.
    let mut edge_pts: Vec<(f64, f64)> = Vec::new();
    for i in 0..4 {
        let (p, q) = (corners[i], corners[(i + 1) % 4]);
        let (tx, ty) = (q.0 - p.0, q.1 - p.1);
        for panel in 0..2 {
            for (xi, wi) in gx.iter().zip(&gw) {
                let s = (panel as f64 + 0.5 * (xi + 1.0)) / 2.0;
                let (x, y) = (p.0 + s * tx, p.1 + s * ty);
                let rho = (x * x + y * y).sqrt();
                edge_pts.push((rho, wi * 0.25 * (-y * tx + x * ty) / rho));
            }
        }
    }
    // Nodes (k, weight) of Φ = ∫ X(k) · weight.
    let potential_nodes = |h: f64| -> Vec<(f64, f64)> {
        k_rule(h, a + 0.017)
            .into_iter()
            .map(|(k, wk)| {
                let around: f64 = edge_pts
                    .iter()
                    .map(|&(rho, wl)| wl * bessel_j1(k * rho))
                    .sum();
                (
                    k,
                    MU0 * a / 2.0 * wk * bessel_j1(k * a) * (-k * h).exp() * around,
                )
            })
            .collect()
    };
    // Both sheets are 1 mm thick, so the four node sets serve both.
    let t = 1e-3;
    let free_nodes = [potential_nodes(h1 + t + h2), potential_nodes(h1 - h2 / 2.0)];
    let scattered_nodes = [potential_nodes(h1 + h2), potential_nodes(h1 + h2 / 2.0)];
    let mut worst: f64 = 0.0;
    for name in ["aluminium", "steel"] {
        let (sigma, mu_r) = props(name);
        let s = Slab { sigma, mu_r, d: t };
        for (side, beyond) in [true, false].into_iter().enumerate() {
            let zv = if beyond { t + h2 } else { -h2 / 2.0 };
            let body = format!(
                "{}[[victim]]\nid = \"vic\"\nkind = \"rectangle\"\nwidth = {w:e}\nheight = {hgt:e}\n\
                 position = [{cx:e}, {cy:e}, {zv:e}]\naxis = [0, 0, 1]\n",
                source_toml(
                    &Ring {
                        r: a,
                        at: [0.0, 0.0, -h1],
                        axis: Z
                    },
                    &lines(&freqs)
                )
            );
            let free_lib = pair(&parse(&body)).flux;
            let free_ref = integrate(&free_nodes[side], |_| 1.0.into()).re;
            let e_free = rel(free_lib, free_ref);
            println!(
                "rectangle victim, free space: Hankel {free_ref:.9e} vs Biot–Savart {free_lib:.9e}, \
                 rel {e_free:.2e}"
            );
            assert!(e_free <= 1e-6, "{e_free:e}");
            let sheet = sheet_toml(&format!("\"{name}\""), t, 0.0);
            let model = pair(&parse(&format!("{body}{sheet}")));
            let nodes = &scattered_nodes[side];
            for &f in &freqs {
                let want = if beyond {
                    integrate(nodes, |k| slab(&s, k, TAU * f).1)
                } else {
                    free_ref + integrate(nodes, |k| slab(&s, k, TAU * f).0)
                };
                let got = model.shielded_flux(f);
                let e = crel(got, want);
                println!(
                    "rectangle victim, {name} {} @ {f:e} Hz: {:.3} dB vs free, |ΔΦ|/|Φ| {e:.2e}",
                    if beyond { "beyond" } else { "beside" },
                    db(free_ref.abs(), want.norm())
                );
                worst = worst.max(e);
            }
        }
    }
    println!("rectangle victim: worst |ΔΦ|/|Φ| {worst:.2e}");
    assert!(worst <= 1e-6, "{worst:e}");
}

// ---------------------------------------------------------------------------------
// Stacks of several layers: the multiple-reflection series.
// ---------------------------------------------------------------------------------

/// (R, T) of slab `s1`, an air gap `g` (m), then slab `s2`, from single-slab closed
/// forms and the multiple-reflection series between them:
///   T = T1 T2 e^{−kg} / (1 − R1 R2 e^{−2kg}),
///   R = R1 + T1² R2 e^{−2kg} / (1 − R1 R2 e^{−2kg}),
/// a scattering formulation independent of the transfer-matrix product (the same
/// geometric series as for a Fabry–Pérot pair, e.g. Born & Wolf, "Principles of
/// Optics", §7.6; from memory). A single uniform slab reflects and transmits alike from
/// both faces (mirror symmetry z → −z leaves B_z unchanged). Valid also for g = 0
/// (touching layers: a zero-width air layer is the identity).
fn two_slabs(s1: &Slab, g: f64, s2: &Slab, k: f64, omega: f64) -> (Complex64, Complex64) {
    let (r1, t1) = slab(s1, k, omega);
    let (r2, t2) = slab(s2, k, omega);
    let e = (-k * g).exp();
    let den = 1.0 - r1 * r2 * e * e;
    (r1 + t1 * t1 * r2 * e * e / den, t1 * t2 * e / den)
}

#[test]
fn two_layer_stack_response_matches_multiple_reflection_series() {
    // Copper 35 µm and steel 1 mm, touching and 2 mm apart, in both orders, over k and
    // f. 1e-9 relative: |R1 R2| < 1, so 1 − R1R2e^{−2kg} does not cancel badly, and the
    // closed forms are good to ~1e-13 (grid test).
    let cu = Slab {
        sigma: 5.8e7,
        mu_r: 1.0,
        d: 35e-6,
    };
    let fe = Slab {
        sigma: 5.8e6,
        mu_r: 1000.0,
        d: 1e-3,
    };
    let mut worst: f64 = 0.0;
    for &g in &[0.0, 2e-3] {
        for (s1, s2) in [(cu, fe), (fe, cu)] {
            for &k in &[3.0, 100.0, 3e3] {
                for &f in &[50.0, 1e4, 1e6] {
                    let w = TAU * f;
                    let (r, t) = two_slabs(&s1, g, &s2, k, w);
                    let mut stack = vec![s1.layer()];
                    if g > 0.0 {
                        stack.push(Layer::air(g));
                    }
                    stack.push(s2.layer());
                    let got = response(&stack, k, w);
                    let e = crel(got.transmitted, t).max(crel(got.reflected, r));
                    assert!(e <= 1e-9, "g {g} k {k} f {f} {s1:?}: {e:e}");
                    worst = worst.max(e);
                }
            }
        }
    }
    println!("two-layer stack vs multiple-reflection series: worst rel {worst:.2e}");
}

#[test]
fn asymmetric_stack_in_a_scene_is_seen_in_the_right_order_from_each_side() {
    // A copper sheet and a steel sheet 2 mm apart written as two [[shield]] tables (the
    // steel one with its axis reversed), and a touching copper-on-steel `layers` sheet
    // with axis −z; coaxial loops with the source above or below, victim beyond or
    // beside. Reflection off steel-first and off copper-first differ grossly at 1 kHz
    // (asserted below), so a stack read in the wrong order from one side cannot pass.
    // Oracle: the Hankel integral with the multiple-reflection series; 1e-6 (scene
    // tolerance).
    let (a, b, h1, h2) = (0.010, 0.008, 0.006, 0.004);
    let cu = Slab {
        sigma: 5.8e7,
        mu_r: 1.0,
        d: 35e-6,
    };
    let fe = Slab {
        sigma: 5.8e6,
        mu_r: 1000.0,
        d: 1e-3,
    };
    let freqs = [1e3, 1e5];
    let g = 2e-3;
    let d_sep = cu.d + g + fe.d;
    let separate = format!(
        "[[shield]]\nid = \"cu\"\nmaterial = \"copper\"\nthickness = {:e}\nposition = [0, 0, 0]\n\
         axis = [0, 0, 1]\n[[shield]]\nid = \"fe\"\nmaterial = \"steel\"\nthickness = {:e}\n\
         position = [0, 0, {d_sep:e}]\naxis = [0, 0, -1]\n",
        cu.d, fe.d
    );
    let d_lay = cu.d + fe.d;
    let layered = format!(
        "[[shield]]\nid = \"cu-fe\"\nposition = [0, 0, {d_lay:e}]\naxis = [0, 0, -1]\n\
         layers = [ {{ material = \"copper\", thickness = {:e} }}, \
         {{ material = \"steel\", thickness = {:e} }} ]\n",
        cu.d, fe.d
    );
    // (stack text, total thickness, gap, slab at the z = 0 face, slab at the top face)
    let stacks = [(separate, d_sep, g, cu, fe), (layered, d_lay, 0.0, fe, cu)];
    let mut worst: f64 = 0.0;
    for (text, d, gap, bottom, top) in &stacks {
        for source_above in [false, true] {
            for beyond in [true, false] {
                let (zs, first, second) = if source_above {
                    (d + h1, top, bottom)
                } else {
                    (-h1, bottom, top)
                };
                let zv = match (source_above, beyond) {
                    (false, true) => d + h2,
                    (false, false) => -h2 / 2.0,
                    (true, true) => -h2,
                    (true, false) => d + h2 / 2.0,
                };
                let scene = parse(&format!(
                    "{}{}{text}",
                    source_toml(
                        &Ring {
                            r: a,
                            at: [0.0, 0.0, zs],
                            axis: Z
                        },
                        &lines(&freqs)
                    ),
                    victim_toml(&Ring {
                        r: b,
                        at: [0.0, 0.0, zv],
                        axis: Z
                    })
                ));
                let model = pair(&scene);
                let h = if beyond { h1 + h2 } else { h1 + h2 / 2.0 };
                let nodes = loop_nodes(a, b, 0.0, h);
                let free = maxwell_coaxial(a, b, (zs - zv).abs());
                for &f in &freqs {
                    let w = TAU * f;
                    let want = if beyond {
                        integrate(&nodes, |k| two_slabs(first, *gap, second, k, w).1)
                    } else {
                        free + integrate(&nodes, |k| two_slabs(first, *gap, second, k, w).0)
                    };
                    let got = model.shielded_flux(f);
                    let e = crel(got, want);
                    println!(
                        "stack (gap {gap:e}) source {} victim {} @ {f:e} Hz: {:.3} dB vs free, \
                         |ΔM|/|M| {e:.2e}",
                        if source_above { "above" } else { "below" },
                        if beyond { "beyond" } else { "beside" },
                        db(free, want.norm())
                    );
                    worst = worst.max(e);
                }
            }
        }
    }
    // The order matters: reflection off steel-first vs copper-first at 1 kHz.
    let (r_fe, _) = two_slabs(&fe, 0.0, &cu, 300.0, TAU * 1e3);
    let (r_cu, _) = two_slabs(&cu, 0.0, &fe, 300.0, TAU * 1e3);
    println!("R at k = 300/m, 1 kHz: steel first {r_fe:.4}, copper first {r_cu:.4}");
    assert!((r_fe - r_cu).norm() > 0.1, "test would not discriminate");
    println!("asymmetric stacks: worst |ΔM|/|M| {worst:.2e}");
    assert!(worst <= 1e-6, "{worst:e}");
}

// ---------------------------------------------------------------------------------
// 5. A point dipole over a sheet, through `probe`.
// ---------------------------------------------------------------------------------

#[test]
fn dipole_field_beyond_a_sheet_matches_the_hankel_integral() {
    // Axial dipole (kind "dipole", moment = effective_area × current) h1 below the sheet;
    // B beyond it at height h2 and lateral distances ρ: B_z, B_ρ from the Hankel
    // integrals above with the slab's T. First a transparent sheet against Jackson's
    // dipole field (5.56, `common::dipole_b`) at the scene tolerance 1e-6; then copper,
    // aluminium and steel against the oracle with the 0.1 dB bar (|ΔB|/|B| ≤ 0.0116 on
    // the complex vector) and the scene tolerance (1e-6).
    let (h1, h2, area) = (0.008, 0.006, 1e-4);
    let freqs = [1e3, 1e5];
    let rhos = [0.0, 0.006, 0.015];
    let src = format!(
        "[[source]]\nid = \"src\"\nkind = \"dipole\"\neffective_area = {area:e}\n\
         position = [0, 0, {:e}]\naxis = [0, 0, 1]\ncurrent = {}\n",
        -h1,
        lines(&freqs)
    );
    let mut cases: Vec<(&str, String, f64)> = vec![("transparent", custom(0.0, 1.0), 1e-3)];
    for (name, t) in sheets() {
        cases.push((name, format!("\"{name}\""), t));
    }
    let mut worst_free: f64 = 0.0;
    let mut worst: f64 = 0.0;
    let mut worst_db: f64 = 0.0;
    for (name, material, t) in &cases {
        let scene = parse(&format!("{src}{}", sheet_toml(material, *t, 0.0)));
        let points: Vec<Vec3> = rhos.iter().map(|&r| Vec3::new(r, 0.0, t + h2)).collect();
        let got = probe(&scene, &Solver::for_scene(&scene), &points).expect("probe");
        let s = match *name {
            "transparent" => Slab {
                sigma: 0.0,
                mu_r: 1.0,
                d: *t,
            },
            n => {
                let (sigma, mu_r) = props(n);
                Slab { sigma, mu_r, d: *t }
            }
        };
        for (pi, &rho) in rhos.iter().enumerate() {
            let nodes = dipole_nodes(rho, h1 + h2);
            for (fi, &f) in freqs.iter().enumerate() {
                let line = &got[pi].lines[fi];
                assert!(rel(line.frequency, f) < 1e-12);
                let b = line.b;
                let (mut bz, mut br) = (Complex64::new(0.0, 0.0), Complex64::new(0.0, 0.0));
                for &(k, wz, wr) in &nodes {
                    let tk = slab(&s, k, TAU * f).1;
                    bz += tk * wz * area;
                    br += tk * wr * area;
                }
                let want = [br, Complex64::new(0.0, 0.0), bz];
                let norm = |v: &[Complex64; 3]| v.iter().map(|c| c.norm_sqr()).sum::<f64>().sqrt();
                let diff = [b[0] - want[0], b[1] - want[1], b[2] - want[2]];
                let e = norm(&diff) / norm(&want);
                let ddb = db(norm(&b), norm(&want));
                if *name == "transparent" {
                    let free = dipole_b(
                        &Vec3::new(0.0, 0.0, area),
                        &Vec3::new(rho, 0.0, h1 + t + h2),
                    );
                    let fv: [Complex64; 3] = [free.x.into(), free.y.into(), free.z.into()];
                    let df = [b[0] - fv[0], b[1] - fv[1], b[2] - fv[2]];
                    let ef = norm(&df) / free.norm();
                    worst_free = worst_free.max(ef);
                }
                println!(
                    "dipole, {name} @ {f:e} Hz, ρ = {rho} m: |B| oracle {:.4e} T, ΔdB {ddb:.2e}, |ΔB|/|B| {e:.2e}",
                    norm(&want)
                );
                worst = worst.max(e);
                worst_db = worst_db.max(ddb.abs());
            }
        }
    }
    println!(
        "dipole beyond sheet: transparent vs Jackson worst {worst_free:.2e}; vs oracle worst |ΔB|/|B| \
         {worst:.2e}, ΔdB {worst_db:.2e}"
    );
    assert!(worst_free <= 1e-6, "{worst_free:e}");
    assert!(worst <= 0.0116 && worst_db <= 0.1, "{worst:e} {worst_db}");
    assert!(worst <= 1e-6, "scene tolerance: {worst:e}");
}

#[test]
fn tilted_dipole_beside_image_planes_matches_the_image_dipoles() {
    // A tilted dipole (transverse and normal moment) h below a plane; field points on
    // its side. Images (e.g. Jackson 3rd ed. §5.13 and problem 5.17 / Smythe; from
    // memory): a thick permeable half-space at DC adds κ·(−m_x, −m_y, m_z) at the mirror
    // point, κ = (μr − 1)/(μr + 1); a perfect conductor (B_n = 0) adds (m_x, m_y, −m_z).
    // Each B = Jackson's dipole field (eq. 5.56, `common::dipole_b`). This exercises the
    // transverse-moment spectrum and the reflected mode (ẑ + i k̂) that the axial tests
    // cannot. Tolerance: with |b̂| ≤ (μ0/2)|m| k e^{−kh} and |ẑ + i k̂| = √2, any error
    // ΔR(k) in the reflection gives |ΔB| ≤ (√2/2π)(μ0|m|/2) ∫ k² e^{−kH} |ΔR| dk, H the
    // image path; |ΔR| ≤ 2e^{−2kd}/(1 + q tanh kd) (permeable, as above) or 2k/|γ|
    // (conductor). That bound, computed here, plus 1e-6 of |B| (scene tolerance).
    let (h, area) = (0.008, 1e-4);
    let axis: [f64; 3] = [0.6, -0.3, 0.74];
    let n = (axis[0] * axis[0] + axis[1] * axis[1] + axis[2] * axis[2]).sqrt();
    let m = Vec3::new(axis[0], axis[1], axis[2]) * (area / n);
    let src = format!(
        "[[source]]\nid = \"src\"\nkind = \"dipole\"\neffective_area = {area:e}\n\
         position = [0, 0, {:e}]\naxis = {}\ncurrent = {}\n",
        -h,
        v3(axis),
        lines(&[1e5])
    );
    let points = [
        Vec3::new(0.0, 0.0, -0.003),
        Vec3::new(0.006, 0.004, -0.002),
        Vec3::new(-0.01, 0.005, -0.012),
        Vec3::new(0.02, -0.01, -0.006),
    ];
    let (mu_r, d) = (1000.0, 0.1);
    let q = 0.5 * (mu_r + 1.0 / mu_r);
    let sigma: f64 = 1e12;
    let gamma = (TAU * 1e5 * MU0 * sigma).sqrt();
    let cases: [(&str, String, f64, f64, Vec3); 2] = [
        (
            "μr 1000 half-space",
            custom(0.0, mu_r),
            d,
            (mu_r - 1.0) / (mu_r + 1.0),
            Vec3::new(-m.x, -m.y, m.z),
        ),
        (
            "perfect conductor",
            custom(sigma, 1.0),
            1e-3,
            1.0,
            Vec3::new(m.x, m.y, -m.z),
        ),
    ];
    let mut worst: f64 = 0.0;
    for (name, material, t, kappa, image) in &cases {
        let scene = parse(&format!("{src}{}", sheet_toml(material, *t, 0.0)));
        let got = probe(&scene, &Solver::for_scene(&scene), &points).expect("probe");
        for (p, g) in points.iter().zip(&got) {
            let want = dipole_b(&m, &(p - Vec3::new(0.0, 0.0, -h)))
                + dipole_b(image, &(p - Vec3::new(0.0, 0.0, h))) * *kappa;
            let b = g.lines[0].b;
            let err = ((b[0] - want.x).norm_sqr()
                + (b[1] - want.y).norm_sqr()
                + (b[2] - want.z).norm_sqr())
            .sqrt();
            let path = h - p.z;
            let bound: f64 = k_rule(path, 0.0)
                .iter()
                .map(|&(k, w)| {
                    let dr = if *name == "perfect conductor" {
                        2.0 * k / gamma
                    } else {
                        2.0 * (-2.0 * k * d).exp() / (1.0 + q * (k * d).tanh())
                    };
                    w * k * k * (-k * path).exp() * dr
                })
                .sum::<f64>()
                * (2f64.sqrt() / TAU)
                * (MU0 * area / 2.0)
                + 1e-6 * want.norm();
            println!(
                "tilted dipole, {name}, point {:?} mm: |ΔB|/|B| {:.2e} (bound {:.2e})",
                [p.x * 1e3, p.y * 1e3, p.z * 1e3],
                err / want.norm(),
                bound / want.norm()
            );
            assert!(err <= bound, "{name} at {p:?}: {err:e} > {bound:e}");
            worst = worst.max(err / want.norm());
        }
    }
    println!("tilted dipole images: worst |ΔB|/|B| {worst:.2e}");
}

// ---------------------------------------------------------------------------------
// 6, 7. Image planes through whole scenes.
// ---------------------------------------------------------------------------------

/// Source 10 mm below the face, victim 3 mm below it: direct distance 7 mm, image
/// distance 13 mm.
const IMG: (f64, f64, f64, f64) = (0.010, 0.008, 0.010, 0.003);

fn same_side_scene(material: &str, t: f64, f: f64) -> Scene {
    let (a, b, h1, h2) = IMG;
    parse(&format!(
        "{}{}{}",
        source_toml(
            &Ring {
                r: a,
                at: [0.0, 0.0, -h1],
                axis: Z
            },
            &lines(&[f])
        ),
        victim_toml(&Ring {
            r: b,
            at: [0.0, 0.0, -h2],
            axis: Z
        }),
        sheet_toml(material, t, 0.0)
    ))
}

#[test]
fn perfect_conductor_plate_acts_as_opposite_image() {
    // σ = 1e12 S/m at 100 kHz (δ ≈ 1.6 µm, plate 1 mm): M = M(d) − M(d_image) (image of
    // opposite current; Maxwell's formula for both, Grover ch. 13). Tolerance from the
    // bound |R + 1| ≤ 2k/|γ| (see the layer test): |ΔM| ≤ μ0πab ∫ (2k/|γ|)|J1J1| e^{−kH} dk,
    // computed here (~1e-5 of M), plus the scene tolerance 1e-6 on both terms.
    let (a, b, h1, h2) = IMG;
    let (sigma, f) = (1e12, 1e5);
    let scene = same_side_scene(&custom(sigma, 1.0), 1e-3, f);
    let got = pair(&scene).shielded_flux(f);
    let direct = maxwell_coaxial(a, b, h1 - h2);
    let image = maxwell_coaxial(a, b, h1 + h2);
    let want = direct - image;
    let gamma = (TAU * f * MU0 * sigma).sqrt();
    let correction: f64 = loop_nodes(a, b, 0.0, h1 + h2)
        .iter()
        .map(|&(k, w)| 2.0 * k / gamma * w.abs())
        .sum();
    let bound = correction + 1e-6 * (direct + image);
    let err = (got - want).norm();
    println!(
        "perfect conductor image: M {:.6e} vs {want:.6e} H, |ΔM| {err:.2e} (bound {bound:.2e}), rel {:.2e}",
        got.re,
        err / want
    );
    assert!(err <= bound, "{err:e} > {bound:e}");

    // Sharper: with the first-order surface-impedance correction R ≈ −1 + 2k/γ_k
    // (γ_k = √(k² + jωμ0σ)), the remainder is R + 1 − 2/p = −2/(p(1 + p)), at most
    // 2k²/|γ_k|², i.e. ~1e-8 of M here.
    let nodes = loop_nodes(a, b, 0.0, h1 + h2);
    let gk = |k: f64| Complex64::new(k * k, TAU * f * MU0 * sigma).sqrt();
    let first_order = want + integrate(&nodes, |k| 2.0 * k / gk(k));
    let bound2: f64 = nodes
        .iter()
        .map(|&(k, w)| 2.0 * k * k / gk(k).norm_sqr() * w.abs())
        .sum::<f64>()
        + 1e-6 * (direct + image);
    let err2 = (got - first_order).norm();
    println!(
        "perfect conductor with 2k/γ correction: |ΔM| {err2:.2e} (bound {bound2:.2e}), rel {:.2e}",
        err2 / want
    );
    assert!(err2 <= bound2, "{err2:e} > {bound2:e}");
}

#[test]
fn thick_permeable_plate_at_dc_acts_as_weighted_image() {
    // σ = 0, μr = 1000, 50 mm: M = M(d) + (μr − 1)/(μr + 1) M(d_image) (magnetostatic
    // image, Jackson 3rd ed. §5.13 / Smythe; from memory). Finite thickness: |R − R∞| ≤
    // 2e^{−2kd}/(1 + q tanh kd) with q = (μr + 1/μr)/2 (closed form at ω = 0); the bound
    // on |ΔM| is that weight integrated against |J1J1|e^{−kH}, computed here, plus the
    // scene tolerance 1e-6 on both terms.
    let (a, b, h1, h2) = IMG;
    let (mu_r, d) = (1000.0, 0.05);
    let scene = same_side_scene(&custom(0.0, mu_r), d, 1e3);
    let got = pair(&scene).shielded_flux(1e3);
    let direct = maxwell_coaxial(a, b, h1 - h2);
    let image = maxwell_coaxial(a, b, h1 + h2);
    let want = direct + (mu_r - 1.0) / (mu_r + 1.0) * image;
    let q = 0.5 * (mu_r + 1.0 / mu_r);
    let correction: f64 = loop_nodes(a, b, 0.0, h1 + h2)
        .iter()
        .map(|&(k, w)| 2.0 * (-2.0 * k * d).exp() / (1.0 + q * (k * d).tanh()) * w.abs())
        .sum();
    let bound = correction + 1e-6 * (direct + image);
    let err = (got - want).norm();
    println!(
        "μr = 1000 image: M {:.6e} vs {want:.6e} H, |ΔM| {err:.2e} (bound {bound:.2e}), rel {:.2e}",
        got.re,
        err / want
    );
    assert!(err <= bound, "{err:e} > {bound:e}");
}

// ---------------------------------------------------------------------------------
// 8. Schelkunoff absorption and Ott's near-field estimate.
// ---------------------------------------------------------------------------------

fn through_scene(material: &str, t: f64, h1: f64, h2: f64, f: f64) -> Scene {
    parse(&format!(
        "{}{}{}",
        source_toml(
            &Ring {
                r: 0.01,
                at: [0.0, 0.0, -h1],
                axis: Z
            },
            &lines(&[f])
        ),
        victim_toml(&Ring {
            r: 0.01,
            at: [0.0, 0.0, t + h2],
            axis: Z
        }),
        sheet_toml(material, t, 0.0)
    ))
}

#[test]
fn extra_thickness_adds_schelkunoff_absorption() {
    // Schelkunoff's absorption loss A = 8.686 t/δ dB (Schelkunoff, "The impedance
    // concept and its application to problems of reflection, refraction, shielding and
    // power absorption", BSTJ 17 (1938); as used in Ott 2009 ch. 6; from memory). With
    // the source's and victim's distances to their faces fixed, thickening a sheet that
    // is already many skin depths thick (aluminium at 100 kHz: δ = 0.27 mm; 1 → 1.5 mm)
    // only lengthens the metal path: the shielded EMF must fall by 8.686 Δt/δ dB
    // (16.1 dB). Neglected: Re γ·δ − 1 ≈ (kδ)²/4 ≤ 1.6e-3 for the k ≲ 300/m that carry
    // the coupling (0.026 dB of 16 dB), and the multiple-reflection term ≤ e^{−2t/δ} ≈
    // 6e-4 (0.005 dB): tolerance 0.05 dB (a 1 % error in δ would show as 0.16 dB).
    let f = 1e5;
    let delta = built_in("aluminium").unwrap().skin_depth(f);
    let (h1, h2) = (0.01, 0.01);
    let emf = |t: f64| {
        let s = through_scene("\"aluminium\"", t, h1, h2, f);
        let r = couple_victim(&s, &Solver::for_scene(&s), &s.victims[0]).unwrap();
        (
            r.sources[0].lines[0].emf.norm(),
            r.sources[0].lines[0].shielding_db,
        )
    };
    let (e1, se1) = emf(1e-3);
    let (e2, _) = emf(1.5e-3);
    let drop = db(e1, e2);
    let want = 8.686 * 0.5e-3 / delta;
    println!(
        "Schelkunoff: δ = {delta:.4e} m, extra 0.5 mm: drop {drop:.3} dB vs 8.686Δt/δ = {want:.3} dB"
    );
    assert!((drop - want).abs() <= 0.05, "{drop} vs {want}");

    // Ott's magnetic near-field estimate: SE = A + R_H, R_H = 14.6 + 10 log10(f r² σr/μr)
    // dB with r the source–shield distance in m and σr relative to copper (Ott 2009
    // ch. 6; from memory). It is the planar result evaluated at the single wavenumber
    // k = 1/r (wave impedance ωμ0r); a loop pair's coupling spreads over k of roughly
    // 0.3/r .. 3/r, i.e. ±10 dB in R_H, so only a ±10 dB band is asserted: it catches
    // a wrong regime (e.g. plane-wave reflection, ~100 dB here), not the formula's
    // known approximation.
    let sigma_r = props("aluminium").0 / 5.8e7;
    let ott = 8.686 * 1e-3 / delta + 14.6 + 10.0 * (f * h1 * h1 * sigma_r).log10();
    println!(
        "Ott near-field estimate for 1 mm aluminium, r = 10 mm, 100 kHz: {ott:.2} dB; strayflux {se1:.2} dB"
    );
    assert!((se1 - ott).abs() <= 10.0, "{se1} vs Ott {ott}");
}

// ---------------------------------------------------------------------------------
// 9. Reciprocity.
// ---------------------------------------------------------------------------------

#[test]
fn shielded_mutual_inductance_is_reciprocal() {
    // Lorentz reciprocity for linear isotropic media: M12 = M21 with the sheet in place
    // (e.g. Harrington, "Time-Harmonic Electromagnetic Fields", §3-8; from memory). Tilted, offset
    // loops of different radii on opposite sides of 1 mm aluminium at 10 kHz, and also
    // on the same side. Solver tolerance 1e-8 (so the source polygon and the flux
    // quadratures are good to ~1e-8 each) against an assertion of 1e-6.
    let one = Ring {
        r: 0.012,
        at: [0.003, -0.002, -0.009],
        axis: [0.3, 0.2, 1.0],
    };
    let beyond = Ring {
        r: 0.007,
        at: [0.008, 0.005, 0.009],
        axis: [-0.2, 0.4, 1.0],
    };
    let beside = Ring {
        r: 0.006,
        at: [-0.012, 0.006, -0.006],
        axis: [0.4, 0.0, 1.0],
    };
    let m = |s: &Ring, v: &Ring| {
        let text = format!(
            "[solver]\ntolerance = 1e-8\n{}{}{}",
            source_toml(s, &lines(&[1e4])),
            victim_toml(v),
            sheet_toml("\"aluminium\"", 1e-3, 0.0)
        );
        pair(&parse(&text)).shielded_flux(1e4)
    };
    let mut worst: f64 = 0.0;
    for other in [&beyond, &beside] {
        let (m12, m21) = (m(&one, other), m(other, &one));
        let e = crel(m12, m21);
        println!("reciprocity: M12 {m12:.8e}, M21 {m21:.8e}, rel {e:.2e}");
        worst = worst.max(e);
    }
    assert!(worst <= 1e-6, "{worst:e}");
}

// ---------------------------------------------------------------------------------
// 10. Common practice.
// ---------------------------------------------------------------------------------

#[test]
fn common_practice_sheet_shielding_levels() {
    // Common practice (rules of thumb, not published values): a 35 µm copper pour does
    // almost nothing against low-frequency magnetic fields (< 1 dB at 100 Hz) but
    // tens of dB at 100 kHz for loops ~10 mm apart; at 50 Hz 1 mm of steel beats 1 mm
    // of copper (permeability, not conductivity, shields at low frequency).
    let se = |material: &str, t: f64, f: f64| {
        let s = through_scene(material, t, 0.005, 0.005, f);
        couple_victim(&s, &Solver::for_scene(&s), &s.victims[0])
            .unwrap()
            .sources[0]
            .lines[0]
            .shielding_db
    };
    let cu_low = se("\"copper\"", 35e-6, 100.0);
    let cu_high = se("\"copper\"", 35e-6, 1e5);
    let steel = se("\"steel\"", 1e-3, 50.0);
    let copper = se("\"copper\"", 1e-3, 50.0);
    println!(
        "common practice: 35 µm Cu {cu_low:.3} dB @ 100 Hz, {cu_high:.2} dB @ 100 kHz; \
         1 mm steel {steel:.2} dB vs 1 mm Cu {copper:.2} dB @ 50 Hz"
    );
    assert!(cu_low < 1.0 && cu_low > 0.0, "{cu_low}");
    assert!(cu_high > 10.0, "{cu_high}");
    assert!(steel > copper, "{steel} vs {copper}");
}

// ---------------------------------------------------------------------------------
// 11. Enclosures.
// ---------------------------------------------------------------------------------

/// Victim loop of 5 mm radius at the origin, source 60 mm away along x, optionally
/// inside a cube of edge `edge` with walls of `material` and `t`.
fn boxed_scene(enclosure: Option<(&str, f64, f64)>, f: f64) -> Scene {
    let mut text = format!(
        "{}{}",
        source_toml(
            &Ring {
                r: 0.01,
                at: [0.06, 0.0, 0.0],
                axis: [1.0, 0.0, 0.0]
            },
            &lines(&[f])
        ),
        victim_toml(&Ring {
            r: 0.005,
            at: [0.0, 0.0, 0.0],
            axis: [1.0, 0.0, 0.0]
        })
    );
    if let Some((material, t, edge)) = enclosure {
        text += &format!(
            "[[enclosure]]\nid = \"can\"\nsize = [{edge:e}, {edge:e}, {edge:e}]\nposition = [0, 0, 0]\n\
             material = {material}\nthickness = {t:e}\ncontains = [\"vic\"]\n"
        );
    }
    parse(&text)
}

/// S = E_free / E_shielded for the boxed victim, and the equal-volume sphere radius.
fn shell_factor(material: &str, t: f64, edge: f64, f: f64) -> (Complex64, f64) {
    let free = boxed_scene(None, f);
    let boxed = boxed_scene(Some((material, t, edge)), f);
    let e0 = couple_victim(&free, &Solver::for_scene(&free), &free.victims[0]).unwrap();
    let e1 = couple_victim(&boxed, &Solver::for_scene(&boxed), &boxed.victims[0]).unwrap();
    // The reported mutual inductance stays the free-space one.
    assert!(
        rel(
            e1.sources[0].mutual_inductance,
            e0.sources[0].mutual_inductance
        ) < 1e-12
    );
    let radius = (3.0 * edge.powi(3) / (4.0 * PI)).cbrt();
    (
        e0.sources[0].lines[0].emf / e1.sources[0].lines[0].emf,
        radius,
    )
}

#[test]
fn enclosure_magnetostatic_limit() {
    // σ = 0, μr = 1000, 0.5 mm walls, 40 mm cube: S = 1 + (2/3) μr t/R on the sphere of
    // equal volume (thin spherical shell; Kaden, "Wirbelströme und Schirmung in der
    // Nachrichtentechnik", 1959, from memory). Kaden's
    // formula reduces to this exactly at γ = 0, and E_free/E_shielded shares the free
    // flux, so 1e-9 (rounding).
    // Also against the exact static spherical shell (inner radius R − t, outer R):
    // B_in/B_0 = 9μr/[(2μr + 1)(μr + 2) − 2(1 − t/R)³(μr − 1)²] (Jackson 3rd ed. §5.12,
    // eq. 5.121; from memory), which differs from the thin-shell form in (S − 1) by
    // ≈ 2/μr + t/R at leading order: asserted within 1.5 × that.
    let (mu_r, t, edge) = (1000.0, 5e-4, 0.04);
    let (s, radius) = shell_factor(&custom(0.0, mu_r), t, edge, 1e3);
    let thin = 1.0 + 2.0 / 3.0 * mu_r * t / radius;
    let e = crel(s, thin.into());
    let x = (1.0 - t / radius).powi(3);
    let exact = ((2.0 * mu_r + 1.0) * (mu_r + 2.0) - 2.0 * x * (mu_r - 1.0).powi(2)) / (9.0 * mu_r);
    let ej = rel(s.re, exact);
    let bound = 1.5 * (2.0 / mu_r + t / radius) * (thin - 1.0) / thin;
    println!(
        "enclosure DC: S {s:.6}, thin shell {thin:.6} (rel {e:.2e}), Jackson exact {exact:.4} \
         (rel {ej:.2e}, bound {bound:.2e})"
    );
    assert!(e <= 1e-9, "{e:e}");
    assert!(ej <= bound, "{ej} > {bound}");
    // The library's ln_shell_factor directly, at DC.
    let ln = ln_shell_factor(&Material::custom(5.8e6, mu_r), t, radius, 0.0);
    assert!(crel(ln.exp(), thin.into()) < 1e-12);
}

#[test]
fn enclosure_eddy_current_limit() {
    // Non-magnetic thin wall, t ≪ δ: S = 1 + jωμ0σtR/3 (thin conducting spherical shell;
    // Kaden 1959, from memory). Copper 10 µm at 10 kHz (δ = 0.66 mm), 100 mm
    // cube (R = 62 mm): neglected terms are cosh γt − 1 ≈ j(t/δ)² ≈ 2.3e-4, the
    // (γt)²/6 correction to sinh ≈ 4e-5 of the eddy term, and 2t/(3R) ≈ 1.1e-4, so
    // |ΔS|/|S| < 4e-4: tolerance 1e-3.
    let (sigma, t, edge, f) = (5.8e7, 1e-5, 0.1, 1e4);
    let (s, radius) = shell_factor("\"copper\"", t, edge, f);
    let want = Complex64::new(1.0, TAU * f * MU0 * sigma * t * radius / 3.0);
    let e = crel(s, want);
    println!("enclosure eddy limit: S {s:.6} vs {want:.6}, rel {e:.2e}");
    assert!(e <= 1e-3, "{e:e}");
    assert!(
        s.im > 0.5,
        "the limit must be tested where the eddy term matters"
    );
}
