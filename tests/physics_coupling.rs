//! Flux, mutual inductance and induced EMF against published closed forms and an
//! independent Neumann double integral (docs/model.md §3). Expected values are computed
//! here from named formulas in `common`, never taken from the library's own output.
//!
//! Run with `cargo test --test physics_coupling -- --nocapture` to see the errors.

mod common;

use common::{
    Circle, Lcg, MU0, basis, grover_parallel_filaments, loop_b, maxwell_coaxial, neumann_circles,
    neumann_polygons, rel, rel_vec, rotate,
};
use num_complex::Complex64;
use std::f64::consts::{PI, SQRT_2, TAU};
use strayflux::Scene;
use strayflux::coupling::flux_per_amp;
use strayflux::field::Vec3;
use strayflux::geometry::{Edge, Frame, circle_source, polygon_source, rectangle_corners};
use strayflux::run::Solver;
use strayflux::run::couple::couple_victim;
use strayflux::run::probe::probe;

/// Default scene tolerance and wire radius (the `[solver]` defaults in
/// docs/scene-reference.md).
const TOL: f64 = 1e-6;
const WIRE: f64 = 1e-4;

/// The exact circle of `radius` about `frame.z`, counter-clockwise, as a victim edge.
fn arc(frame: &Frame, radius: f64) -> Edge {
    Edge::Arc {
        centre: frame.origin,
        u: frame.x,
        v: frame.y,
        radius,
        start: 0.0,
        end: TAU,
    }
}

/// Closed chain of straight victim edges through `corners`.
fn lines(corners: &[Vec3]) -> Vec<Edge> {
    (0..corners.len())
        .map(|i| Edge::Line {
            a: corners[i],
            b: corners[(i + 1) % corners.len()],
        })
        .collect()
}

/// M (H) of a `circle_source` loop of radius `a` at the origin into an exact coaxial
/// circle of radius `b` at height `d`, both about `axis`.
fn loop_into_circle(a: f64, b: f64, d: f64, axis: Vec3) -> f64 {
    let f1 = Frame::new(Vec3::new(0.001, 0.002, -0.003), axis, None).unwrap();
    let f2 = f1.translated(&(f1.z * d));
    let src = circle_source(&f1, a, TOL, WIRE);
    let phi = flux_per_amp(&src, &[arc(&f2, b)], TOL);
    assert!(phi.converged, "flux integral did not converge");
    phi.value
}

/// (source radius, victim radius, spacing) in metres.
const COAXIAL_CASES: &[(f64, f64, f64)] = &[
    (0.020, 0.015, 0.010),
    (0.020, 0.020, 0.004),
    (0.020, 0.020, 0.002),
    (0.020, 0.005, 0.0),
    (0.010, 0.030, 0.015),
    (0.020, 0.020, 0.060),
    (0.005, 0.040, 0.002),
    // Close: victim 0.01 a from the source wire (two wire radii), in and out of plane.
    (0.020, 0.0202, 0.0),
    (0.020, 0.020, 0.0002),
];

#[test]
fn maxwell_reference_tends_to_dipole_dipole_coupling_far_apart() {
    // Guards the transcription of Maxwell's formula in `common`: far apart two coaxial
    // loops couple as dipoles, M → μ0 π a² b² / (2 d³) (on-axis dipole field, Jackson
    // 3rd ed. eq. 5.56, times the victim area), with O((a² + b²)/d²) corrections.
    // (Not much farther: the formula itself cancels as k⁴ when k → 0.)
    let (a, b) = (0.02, 0.015);
    let mut last = f64::INFINITY;
    for d in [0.3f64, 1.0, 3.0] {
        let far = MU0 * PI * a * a * b * b / (2.0 * d.powi(3));
        let e = rel(maxwell_coaxial(a, b, d), far);
        let bound = 2.0 * (a * a + b * b) / (d * d);
        eprintln!("Maxwell vs dipole-dipole at d = {d} m: rel {e:.3e} (bound {bound:.1e})");
        assert!(e < bound && e < last, "d = {d}: {e:e}");
        last = e;
    }
}

#[test]
fn coaxial_loops_mutual_inductance_matches_maxwell_formula() {
    // Maxwell's formula for coaxial circles (Grover, "Inductance Calculations", ch. 13):
    // M = μ0 √(ab) [(2/k − k) K(k) − (2/k) E(k)], k² = 4ab/((a+b)² + d²). Source loop
    // discretised by `circle_source` at tolerance 1e-6, victim the exact circle.
    // Target: 1e-6 relative (the scene tolerance).
    let axis = Vec3::new(0.2, -0.5, 1.0);
    let mut worst: f64 = 0.0;
    for &(a, b, d) in COAXIAL_CASES {
        let got = loop_into_circle(a, b, d, axis);
        let want = maxwell_coaxial(a, b, d);
        let e = rel(got, want);
        eprintln!("Maxwell a={a} b={b} d={d}: got {got:.12e}, expected {want:.12e}, rel {e:.2e}");
        worst = worst.max(e);
    }
    eprintln!("Maxwell coaxial: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

#[test]
fn coaxial_mutual_inductance_is_reciprocal() {
    // Reciprocity M12 = M21 (Neumann's formula is symmetric: Griffiths §7.2.3): source
    // and victim roles swapped, radius a ↔ b. Must hold to the tolerance, 1e-6.
    let axis = Vec3::new(-1.0, 0.3, 0.4);
    let mut worst: f64 = 0.0;
    for &(a, b, d) in COAXIAL_CASES {
        let m12 = loop_into_circle(a, b, d, axis);
        let m21 = loop_into_circle(b, a, d, axis);
        worst = worst.max((m12 - m21).abs() / m12.abs());
    }
    eprintln!("coaxial reciprocity: max |M12 − M21|/M {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

#[test]
fn coaxial_rectangles_mutual_matches_grover_parallel_filament_sum() {
    // Two equal coaxial w × h rectangles d apart: perpendicular sides do not couple;
    // parallel sides couple by Grover's closed form for equal parallel filaments
    // (Grover, "Inductance Calculations", parallel filaments of equal length):
    // M = 2 [Mp(w, d) − Mp(w, √(h² + d²)) + Mp(h, d) − Mp(h, √(w² + d²))].
    let axis = Vec3::new(0.4, 1.0, -0.2);
    let reference = Vec3::new(1.0, 0.0, 0.0);
    let mut worst: f64 = 0.0;
    for (w, h, d) in [
        (0.03, 0.016, 0.01),
        (0.02, 0.02, 0.003),
        (0.05, 0.004, 0.02),
    ] {
        let f1 = Frame::new(Vec3::new(0.01, 0.0, 0.02), axis, Some(reference)).unwrap();
        let f2 = f1.translated(&(f1.z * d));
        let src = polygon_source(&f1, &rectangle_corners(w, h), WIRE);
        let victim: Vec<Vec3> = rectangle_corners(w, h)
            .iter()
            .map(|c| f2.point(c))
            .collect();
        let got = flux_per_amp(&src, &lines(&victim), TOL);
        assert!(got.converged);
        let mp = grover_parallel_filaments;
        let want = 2.0
            * (mp(w, d) - mp(w, (h * h + d * d).sqrt()) + mp(h, d) - mp(h, (w * w + d * d).sqrt()));
        let e = rel(got.value, want);
        eprintln!(
            "rectangles {w}×{h} at {d}: got {:.12e}, Grover {want:.12e}, rel {e:.2e}",
            got.value
        );
        worst = worst.max(e);
    }
    eprintln!("coaxial rectangles vs Grover: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

#[test]
fn neumann_reference_integrator_reproduces_grover_closed_form() {
    // The test's own Neumann integrator (Gauss–Legendre per segment pair) must first
    // reproduce a published closed form before it serves as a reference: coaxial
    // rectangles by Grover's parallel-filament sum.
    common::assert_gauss_legendre_exact(20);
    let (w, h, d) = (0.03, 0.016, 0.02);
    let p: Vec<Vec3> = rectangle_corners(w, h);
    let q: Vec<Vec3> = p.iter().map(|c| c + Vec3::new(0.0, 0.0, d)).collect();
    let got = neumann_polygons(&p, &q, 4, 20);
    let mp = grover_parallel_filaments;
    let want =
        2.0 * (mp(w, d) - mp(w, (h * h + d * d).sqrt()) + mp(h, d) - mp(h, (w * w + d * d).sqrt()));
    let e = rel(got, want);
    eprintln!("Neumann integrator vs Grover: rel {e:.3e}");
    assert!(e < 1e-11, "rel {e:e}");
}

#[test]
fn tilted_polygons_mutual_matches_neumann_double_integral() {
    // Neumann's formula M = μ0/4π ∮∮ dl1·dl2/|r1 − r2| (Griffiths §7.2.3), evaluated in
    // the test by fixed high-order Gauss–Legendre on every pair of sides, against
    // flux_per_amp (Stokes, ∮A·dl) for two well-separated, tilted, non-coaxial
    // polygons, one of them non-planar. Also reciprocity between the two orders.
    let f1 = Frame::new(
        Vec3::new(0.0, 0.0, 0.0),
        Vec3::new(0.3, 0.2, 1.0),
        Some(Vec3::new(1.0, 0.0, 0.0)),
    )
    .unwrap();
    let f2 = Frame::new(
        Vec3::new(0.035, -0.01, 0.025),
        Vec3::new(-0.6, 0.3, 0.7),
        Some(Vec3::new(0.0, 1.0, 0.2)),
    )
    .unwrap();
    let pentagon: Vec<Vec3> = (0..5)
        .map(|k| {
            let t = TAU * k as f64 / 5.0 + 0.1;
            Vec3::new(0.012 * t.cos(), 0.009 * t.sin(), 0.0)
        })
        .collect();
    let quad = [
        Vec3::new(-0.008, -0.006, 0.0),
        Vec3::new(0.009, -0.007, 0.002),
        Vec3::new(0.010, 0.008, 0.0),
        Vec3::new(-0.007, 0.006, -0.003),
    ];
    let p1: Vec<Vec3> = pentagon.iter().map(|c| f1.point(c)).collect();
    let p2: Vec<Vec3> = quad.iter().map(|c| f2.point(c)).collect();
    let want = neumann_polygons(&p1, &p2, 6, 24);
    let s1 = polygon_source(&f1, &pentagon, WIRE);
    let s2 = polygon_source(&f2, &quad, WIRE);
    let m12 = flux_per_amp(&s1, &lines(&p2), TOL);
    let m21 = flux_per_amp(&s2, &lines(&p1), TOL);
    assert!(m12.converged && m21.converged);
    let (e12, e21) = (rel(m12.value, want), rel(m21.value, want));
    eprintln!(
        "tilted polygons: Neumann {want:.12e}; pentagon→quad {:.12e} (rel {e12:.2e}), \
         quad→pentagon {:.12e} (rel {e21:.2e})",
        m12.value, m21.value
    );
    assert!(e12 <= 1e-6 && e21 <= 1e-6, "rel {e12:e}, {e21:e}");
}

#[test]
fn tilted_offset_circles_mutual_matches_neumann_double_integral() {
    // Non-coaxial circles have no one-line closed form; Neumann's double integral over
    // the two exact circles (periodic trapezoidal rule, geometrically convergent:
    // Trefethen & Weideman, SIAM Review 56, 385, 2014) is the reference. Source
    // discretised by circle_source, victim the exact circle. Target 1e-6.
    let cases = [
        (
            Frame::new(Vec3::zeros(), Vec3::new(0.0, 0.0, 1.0), None).unwrap(),
            0.020,
            Frame::new(
                Vec3::new(0.015, 0.01, 0.02),
                Vec3::new(0.5, -0.2, 1.0),
                None,
            )
            .unwrap(),
            0.012,
        ),
        (
            Frame::new(Vec3::new(0.0, 0.01, 0.0), Vec3::new(1.0, 1.0, 0.3), None).unwrap(),
            0.010,
            Frame::new(Vec3::new(0.03, 0.0, -0.01), Vec3::new(0.0, 1.0, 0.0), None).unwrap(),
            0.015,
        ),
    ];
    let mut worst: f64 = 0.0;
    for (f1, a, f2, b) in cases {
        let c1 = Circle {
            centre: f1.origin,
            u: f1.x,
            v: f1.y,
            radius: a,
        };
        let c2 = Circle {
            centre: f2.origin,
            u: f2.x,
            v: f2.y,
            radius: b,
        };
        let want = neumann_circles(&c1, &c2, 600);
        let check = neumann_circles(&c1, &c2, 400);
        assert!(rel(check, want) < 1e-13, "reference not converged");
        let src = circle_source(&f1, a, TOL, WIRE);
        let got = flux_per_amp(&src, &[arc(&f2, b)], TOL);
        assert!(got.converged);
        let e = rel(got.value, want);
        eprintln!(
            "offset circles: got {:.12e}, Neumann {want:.12e}, rel {e:.2e}",
            got.value
        );
        worst = worst.max(e);
    }
    eprintln!("tilted offset circles vs Neumann: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

/// A scene with loop sources `(id, radius, z, current)` on the z axis and one victim
/// loop of radius `rv` at `zv` (all SI numbers; `current` is the TOML inline table).
fn coaxial_scene(
    sources: &[(&str, f64, f64, &str)],
    rv: f64,
    zv: f64,
    victim_extra: &str,
) -> Scene {
    let mut t = String::from("[scene]\ntitle = \"physics test\"\n");
    for (id, r, z, current) in sources {
        t += &format!(
            "[[source]]\nid = \"{id}\"\nkind = \"loop\"\nradius = {r:e}\n\
             position = [0, 0, {z:e}]\naxis = [0, 0, 1]\ncurrent = {current}\n"
        );
    }
    t += &format!(
        "[[victim]]\nid = \"pickup\"\nkind = \"loop\"\nradius = {rv:e}\n\
         position = [0, 0, {zv:e}]\n{victim_extra}\n"
    );
    Scene::parse("physics-test.toml", &t).unwrap_or_else(|e| panic!("{e:?}\n{t}"))
}

/// E = −jωMI: Faraday's law ℰ = −dΦ/dt with Φ = M i (Griffiths §7.2, eqs. for the
/// flux rule and mutual inductance), for the phasor i(t) = Re(I e^{jωt}).
fn faraday(m: f64, f: f64, current: Complex64) -> Complex64 {
    -Complex64::i() * (TAU * f * m) * current
}

#[test]
fn induced_emf_equals_minus_j_omega_m_i_for_a_sine_line() {
    // Faraday's law with Maxwell's M (Grover ch. 13): E = −jωMI, peak phasor, positive
    // right-handed about the victim's axis; rms = peak/√2.
    let (a, b, d, f) = (0.020, 0.015, 0.010, 10e3);
    let m = maxwell_coaxial(a, b, d);
    let current = Complex64::from_polar(2.0, 30f64.to_radians());
    let scene = coaxial_scene(
        &[(
            "drive",
            a,
            0.0,
            "{ waveform = \"sine\", peak = \"2 A\", frequency = \"10 kHz\", phase = \"30 deg\" }",
        )],
        b,
        d,
        "axis = [0, 0, 1]",
    );
    let rep = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
    let line = &rep.sources[0].lines[0];
    let want = faraday(m, f, current);
    let e_m = rel(rep.sources[0].mutual_inductance, m);
    let e_emf = (line.emf - want).norm() / want.norm();
    let e_rms = rel(rep.total_rms().unwrap(), want.norm() / SQRT_2);
    eprintln!(
        "EMF sine: M rel {e_m:.2e}, EMF phasor rel {e_emf:.2e} (got {:.6e}, want {want:.6e}), \
         rms rel {e_rms:.2e}",
        line.emf
    );
    assert!(e_m <= 1e-6 && e_emf <= 1e-6 && e_rms <= 1e-6);
    assert!(rel(line.frequency, f) < 1e-15);

    // A victim facing the other way links −Φ: the EMF reverses (Lenz's law, same
    // formula with the victim normal flipped).
    let flipped = coaxial_scene(
        &[(
            "drive",
            a,
            0.0,
            "{ waveform = \"sine\", rms = \"1.4142135623730951 A\", frequency = 10000 }",
        )],
        b,
        d,
        "axis = [0, 0, -1]",
    );
    let rep = couple_victim(&flipped, &Solver::for_scene(&flipped), &flipped.victims[0]).unwrap();
    let want = faraday(-m, f, Complex64::new(2.0, 0.0));
    let e = (rep.sources[0].lines[0].emf - want).norm() / want.norm();
    eprintln!("EMF flipped victim (rms-specified current): rel {e:.2e}");
    assert!(e <= 1e-6, "flipped victim: rel {e:e}");
}

#[test]
fn emf_of_two_sources_at_one_frequency_adds_as_phasors() {
    // Two sources at one frequency: the victim's EMF is the phasor sum E1 + E2 of each
    // Faraday EMF (superposition of fields; Griffiths §7.2), rms |E1 + E2|/√2. With 90°
    // apart that equals the root-sum-square, so a 45° case (where it does not) is also
    // checked, along with 180° (partial cancellation).
    let (zv, rv) = (0.010, 0.015);
    let ma = maxwell_coaxial(0.020, rv, zv);
    let mb = maxwell_coaxial(0.010, rv, 0.030 - zv);
    let mut worst: f64 = 0.0;
    for phase_deg in [90.0, 45.0, 180.0] {
        let cb = format!(
            "{{ waveform = \"sine\", peak = \"0.5 A\", frequency = \"25 kHz\", phase = \"{phase_deg} deg\" }}"
        );
        let scene = coaxial_scene(
            &[
                (
                    "a",
                    0.020,
                    0.0,
                    "{ waveform = \"sine\", peak = \"1 A\", frequency = \"25 kHz\" }",
                ),
                ("b", 0.010, 0.030, &cb),
            ],
            rv,
            zv,
            "",
        );
        let rep = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
        let f = 25e3;
        let ea = faraday(ma, f, Complex64::new(1.0, 0.0));
        let eb = faraday(
            mb,
            f,
            Complex64::from_polar(0.5, f64::to_radians(phase_deg)),
        );
        let want = (ea + eb).norm() / SQRT_2;
        let e = rel(rep.total_rms().unwrap(), want);
        assert_eq!(rep.by_frequency.len(), 1, "one frequency expected");
        let e_line = (rep.by_frequency[0].1 - (ea + eb)).norm() / (ea + eb).norm();
        eprintln!(
            "phasor sum at {phase_deg}°: total rms {:.9e} V vs {want:.9e} (rel {e:.2e}); \
             rss would be {:.9e}",
            rep.total_rms().unwrap(),
            (ea.norm_sqr() + eb.norm_sqr()).sqrt() / SQRT_2
        );
        worst = worst.max(e).max(e_line);
        if phase_deg == 45.0 {
            let rss = (ea.norm_sqr() + eb.norm_sqr()).sqrt() / SQRT_2;
            assert!(rel(rss, want) > 1e-3, "45° case does not discriminate");
        }
    }
    eprintln!("phasor sum: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

#[test]
fn emf_of_lines_at_different_frequencies_adds_root_sum_square() {
    // Distinct frequencies are orthogonal over a common period, so the rms of the sum
    // is the root-sum-square of the rms values (Parseval's theorem for Fourier series).
    // Each line's EMF follows Faraday's law at its own ω.
    let (zv, rv) = (0.010, 0.015);
    let ma = maxwell_coaxial(0.020, rv, zv);
    let mb = maxwell_coaxial(0.010, rv, 0.030 - zv);
    let scene = coaxial_scene(
        &[
            (
                "a",
                0.020,
                0.0,
                "{ waveform = \"sine\", peak = \"1 A\", frequency = \"10 kHz\" }",
            ),
            (
                "b",
                0.010,
                0.030,
                "{ lines = [ { frequency = \"30 kHz\", peak = \"0.3 A\", phase = \"10 deg\" }, \
                 { frequency = \"50 kHz\", peak = \"0.2 A\", phase = \"-40 deg\" } ] }",
            ),
        ],
        rv,
        zv,
        "",
    );
    let rep = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
    let expected = [
        (10e3, faraday(ma, 10e3, Complex64::new(1.0, 0.0))),
        (
            30e3,
            faraday(mb, 30e3, Complex64::from_polar(0.3, 10f64.to_radians())),
        ),
        (
            50e3,
            faraday(mb, 50e3, Complex64::from_polar(0.2, (-40f64).to_radians())),
        ),
    ];
    assert_eq!(rep.by_frequency.len(), 3);
    let mut worst: f64 = 0.0;
    for ((f, e), (fw, ew)) in rep.by_frequency.iter().zip(&expected) {
        assert!(rel(*f, *fw) < 1e-12);
        worst = worst.max((e - ew).norm() / ew.norm());
    }
    let want = (expected.iter().map(|(_, e)| e.norm_sqr()).sum::<f64>()).sqrt() / SQRT_2;
    worst = worst.max(rel(rep.total_rms().unwrap(), want));
    eprintln!("root-sum-square over frequencies: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");
}

#[test]
fn source_and_victim_turns_multiply_mutual_inductance() {
    // M = N1 N2 × the one-turn value for coincident turns (Grover ch. 1; flux linkage
    // N2 Φ of a field made by N1 I), against Maxwell's one-turn formula.
    let (a, b, d) = (0.020, 0.015, 0.010);
    let t = format!(
        "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = {a:e}\nturns = 3\n\
         current = {{ peak = 1, frequency = 1000 }}\n\
         [[victim]]\nid = \"v\"\nkind = \"loop\"\nradius = {b:e}\nturns = 4\n\
         position = [0, 0, {d:e}]\n"
    );
    let scene = Scene::parse("turns.toml", &t).unwrap();
    let rep = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
    let e = rel(
        rep.sources[0].mutual_inductance,
        12.0 * maxwell_coaxial(a, b, d),
    );
    eprintln!("turns 3 × 4: rel {e:.3e}");
    assert!(e <= 1e-6, "rel {e:e}");
}

#[test]
fn field_and_emf_superpose_over_sources_and_scale_linearly_with_current() {
    // Superposition: the probe's B phasor of two loops equals Σ I_k B_k with B_k from
    // the loop's elliptic closed form (Simpson et al., NASA TM 2001); linearity: scaling
    // every current by s scales B and EMF by s (Biot–Savart is linear in I).
    let build = |scale: f64| {
        let ca = format!(
            "{{ peak = {:e}, frequency = 5000, phase = \"20 deg\" }}",
            1.0 * scale
        );
        let cb = format!(
            "{{ peak = {:e}, frequency = 5000, phase = \"-70 deg\" }}",
            0.4 * scale
        );
        coaxial_scene(
            &[("a", 0.020, 0.0, &ca), ("b", 0.012, 0.025, &cb)],
            0.015,
            0.010,
            "",
        )
    };
    let scene = build(1.0);
    let ia = Complex64::from_polar(1.0, 20f64.to_radians());
    let ib = Complex64::from_polar(0.4, (-70f64).to_radians());
    let mut rng = Lcg(0x5eed_0101);
    let pts: Vec<Vec3> = (0..40)
        .map(|_| {
            Vec3::new(
                rng.range(-0.05, 0.05),
                rng.range(-0.05, 0.05),
                rng.range(0.004, 0.02),
            )
        })
        .collect();
    let got = probe(&scene, &Solver::for_scene(&scene), &pts).unwrap();
    let mut worst: f64 = 0.0;
    for (p, pp) in pts.iter().zip(&got) {
        assert_eq!(pp.lines.len(), 1);
        let ba = loop_b(0.020, p);
        let bb = loop_b(0.012, &(p - Vec3::new(0.0, 0.0, 0.025)));
        let want: Vec<Complex64> = (0..3).map(|k| ia * ba[k] + ib * bb[k]).collect();
        let num: f64 = (0..3)
            .map(|k| (pp.lines[0].b[k] - want[k]).norm_sqr())
            .sum();
        let den: f64 = want.iter().map(|c| c.norm_sqr()).sum();
        worst = worst.max((num / den).sqrt());
    }
    eprintln!("probe superposition vs closed forms: max rel {worst:.3e}");
    assert!(worst <= 1e-6, "max rel {worst:e}");

    let s = 7.3;
    let scaled = build(s);
    let got_s = probe(&scaled, &Solver::for_scene(&scaled), &pts).unwrap();
    let mut lin: f64 = 0.0;
    for (g, gs) in got.iter().zip(&got_s) {
        for k in 0..3 {
            let want = g.lines[0].b[k] * s;
            lin = lin.max((gs.lines[0].b[k] - want).norm() / want.norm().max(1e-300));
        }
    }
    let r1 = couple_victim(&scene, &Solver::for_scene(&scene), &scene.victims[0]).unwrap();
    let rs = couple_victim(&scaled, &Solver::for_scene(&scaled), &scaled.victims[0]).unwrap();
    lin = lin.max(rel(rs.total_rms().unwrap(), s * r1.total_rms().unwrap()));
    let want_emf = faraday(maxwell_coaxial(0.020, 0.015, 0.010), 5e3, ia)
        + faraday(maxwell_coaxial(0.012, 0.015, 0.015), 5e3, ib);
    let e_emf = (r1.by_frequency[0].1 - want_emf).norm() / want_emf.norm();
    eprintln!("linearity in current: max rel {lin:.3e}; EMF superposition rel {e_emf:.3e}");
    assert!(lin <= 1e-12, "linearity {lin:e}");
    assert!(e_emf <= 1e-6, "EMF superposition {e_emf:e}");
}

/// TOML array of three SI numbers.
fn arr(v: &Vec3) -> String {
    format!("[{:e}, {:e}, {:e}]", v.x, v.y, v.z)
}

#[test]
fn mutual_inductance_and_field_are_invariant_under_rigid_motion_of_the_scene() {
    // Physics does not depend on where the bench stands: rotating and translating the
    // whole scene (positions, axes and references) leaves every M unchanged and turns
    // B(Qr + t) into Q B(r) (Euclidean invariance of the Biot–Savart law).
    let k = Vec3::new(0.3, -0.8, 0.5).normalize();
    let angle = 1.1;
    let shift = Vec3::new(0.12, -0.05, 0.3);
    let q = |v: &Vec3| rotate(&k, angle, v);
    let place = |v: &Vec3| q(v) + shift;
    let scene_text = |tr: &dyn Fn(&Vec3) -> Vec3, rot: &dyn Fn(&Vec3) -> Vec3| {
        let elems = [
            (
                "source",
                "coil",
                "kind = \"loop\"\nradius = 0.018",
                Vec3::new(0.0, 0.0, 0.0),
                Vec3::new(0.2, 0.1, 1.0),
                Vec3::new(1.0, 0.0, 0.0),
            ),
            (
                "source",
                "frame",
                "kind = \"rectangle\"\nwidth = 0.03\nheight = 0.012",
                Vec3::new(0.04, 0.01, -0.01),
                Vec3::new(1.0, -0.2, 0.3),
                Vec3::new(0.0, 1.0, 0.0),
            ),
            (
                "victim",
                "ring",
                "kind = \"loop\"\nradius = 0.01",
                Vec3::new(0.005, 0.03, 0.02),
                Vec3::new(0.0, -1.0, 1.0),
                Vec3::new(1.0, 0.0, 0.0),
            ),
            (
                "victim",
                "patch",
                "kind = \"polygon\"\nvertices = [[0, 0, 0], [0.02, 0, 0], [0.018, 0.01, 0.002], [0.003, 0.012, 0]]",
                Vec3::new(-0.03, -0.02, 0.01),
                Vec3::new(0.5, 0.5, 1.0),
                Vec3::new(0.0, 0.0, 1.0),
            ),
        ];
        let mut t = String::new();
        for (table, id, body, pos, axis, reference) in elems {
            t += &format!(
                "[[{table}]]\nid = \"{id}\"\n{body}\nposition = {}\naxis = {}\nreference = {}\n",
                arr(&tr(&pos)),
                arr(&rot(&axis)),
                arr(&rot(&reference))
            );
            if table == "source" {
                t += "current = { peak = 1, frequency = 1000 }\n";
            }
        }
        Scene::parse("rigid.toml", &t).unwrap_or_else(|e| panic!("{e:?}\n{t}"))
    };
    let id = |v: &Vec3| *v;
    let s1 = scene_text(&id, &id);
    let s2 = scene_text(&place, &q);
    let mut worst_m: f64 = 0.0;
    for (v1, v2) in s1.victims.iter().zip(&s2.victims) {
        let (r1, r2) = (
            couple_victim(&s1, &Solver::for_scene(&s1), v1).unwrap(),
            couple_victim(&s2, &Solver::for_scene(&s2), v2).unwrap(),
        );
        for (c1, c2) in r1.sources.iter().zip(&r2.sources) {
            let e = rel(c2.mutual_inductance, c1.mutual_inductance);
            eprintln!(
                "rigid motion: {} → {}: M {:.9e} vs {:.9e}",
                c1.id, v1.id, c1.mutual_inductance, c2.mutual_inductance
            );
            worst_m = worst_m.max(e);
        }
    }
    let mut rng = Lcg(0x5eed_0102);
    let pts: Vec<Vec3> = (0..30)
        .map(|_| {
            Vec3::new(
                rng.range(-0.05, 0.08),
                rng.range(-0.05, 0.05),
                rng.range(-0.05, 0.05),
            )
        })
        .filter(|p| {
            s1.sources
                .iter()
                .all(|s| s.conductors.distance_to(p) > 1e-3)
        })
        .collect();
    let moved: Vec<Vec3> = pts.iter().map(place).collect();
    let (b1, b2) = (
        probe(&s1, &Solver::for_scene(&s1), &pts).unwrap(),
        probe(&s2, &Solver::for_scene(&s2), &moved).unwrap(),
    );
    let mut worst_b: f64 = 0.0;
    for (p1, p2) in b1.iter().zip(&b2) {
        let re = |pp: &strayflux::run::probe::ProbePoint| {
            Vec3::new(
                pp.lines[0].b[0].re,
                pp.lines[0].b[1].re,
                pp.lines[0].b[2].re,
            )
        };
        worst_b = worst_b.max(rel_vec(&re(p2), &q(&re(p1))));
    }
    eprintln!("rigid motion: max rel change of M {worst_m:.3e}, of B {worst_b:.3e}");
    assert!(worst_m <= 1e-6, "M changed by {worst_m:e}");
    assert!(worst_b <= 1e-9, "B changed by {worst_b:e}");
}

#[test]
fn neumann_and_stokes_agree_for_a_loop_source_against_a_tilted_square_victim() {
    // The circle_source loop against a straight-edged victim: Neumann's formula with
    // the exact circle (trapezoidal in θ) and the square's sides (Gauss–Legendre) as
    // the reference, for a tilted square well away from the loop.
    let (x, w) = common::gauss_legendre(24);
    let a = 0.02;
    let f1 = Frame::new(Vec3::zeros(), Vec3::new(0.0, 0.0, 1.0), None).unwrap();
    let (ux, uy, _) = basis(&Vec3::new(0.7, 0.0, 0.7), &Vec3::new(0.0, 1.0, 0.0));
    let c = Vec3::new(0.01, 0.005, 0.025);
    let sq: Vec<Vec3> = rectangle_corners(0.016, 0.016)
        .iter()
        .map(|p| c + ux * p.x + uy * p.y)
        .collect();
    let n = 800;
    let h = TAU / n as f64;
    let mut sum = 0.0;
    for i in 0..n {
        let th = h * i as f64;
        let r1 = Vec3::new(a * th.cos(), a * th.sin(), 0.0);
        let dl1 = Vec3::new(-a * th.sin(), a * th.cos(), 0.0) * h;
        for j in 0..4 {
            let (p, dp) = (sq[j], sq[(j + 1) % 4] - sq[j]);
            for panel in 0..4 {
                for (xi, wi) in x.iter().zip(&w) {
                    let t = (panel as f64 + 0.5 * (xi + 1.0)) / 4.0;
                    sum += wi * 0.125 * dl1.dot(&dp) / (r1 - p - dp * t).norm();
                }
            }
        }
    }
    let want = MU0 / (4.0 * PI) * sum;
    let src = circle_source(&f1, a, TOL, WIRE);
    let got = flux_per_amp(&src, &lines(&sq), TOL);
    let e = rel(got.value, want);
    eprintln!(
        "loop → tilted square: got {:.12e}, Neumann {want:.12e}, rel {e:.2e}",
        got.value
    );
    assert!(e <= 1e-6, "rel {e:e}");
}
