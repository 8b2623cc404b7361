//! The far-field acceleration (src/field/multipole/) against the direct sums it
//! replaces, over random geometries with fixed seeds: wherever the series is used it
//! must be within the tolerance of the direct Biot–Savart sum (which the physics tests
//! check against published closed forms), and within its own proven bound; its leading
//! term must be the textbook dipole field (Jackson, Classical Electrodynamics, 3rd ed.,
//! eq. 5.56). The same holds for sweep fluxes and for the command line with and without
//! `--exact`.

mod cli_support;
mod common;

use common::{MU0, dipole_b};
use std::f64::consts::{PI, TAU};
use strayflux::Scene;
use strayflux::field::{Accelerated, Conductors, FarField, FieldSource, Polyline, Vec3};

/// A small deterministic generator (64-bit LCG, Knuth's MMIX constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn range(&mut self, a: f64, b: f64) -> f64 {
        a + (b - a) * self.next()
    }
    fn unit(&mut self) -> Vec3 {
        let z = self.range(-1.0, 1.0);
        let p = self.range(0.0, TAU);
        let s = (1.0 - z * z).sqrt();
        Vec3::new(s * p.cos(), s * p.sin(), z)
    }
}

/// A random source: one to three wires, each a wavy closed loop, an open wandering
/// path or a helix, with random ampere-turns (some negative), centred near the origin
/// within about 20 mm.
fn random_source(rng: &mut Lcg) -> Conductors {
    let mut wires = Vec::new();
    for _ in 0..1 + (rng.next() * 3.0) as usize {
        let centre = rng.unit() * rng.range(0.0, 0.008);
        let n = 100 + (rng.next() * 900.0) as usize;
        let kind = (rng.next() * 3.0) as usize;
        let (a, b) = (rng.unit(), rng.unit());
        let u = a.normalize();
        let v = (b - u * u.dot(&b)).normalize();
        let w = u.cross(&v);
        let radius = rng.range(0.003, 0.012);
        let verts: Vec<Vec3> = match kind {
            0 => {
                let (k, amp) = ((rng.next() * 6.0) as i32, rng.range(0.0, 0.3));
                let mut p: Vec<Vec3> = (0..n)
                    .map(|i| {
                        let t = TAU * i as f64 / n as f64;
                        let r = radius * (1.0 + amp * (k as f64 * t).cos());
                        centre + u * (r * t.cos()) + v * (r * t.sin())
                    })
                    .collect();
                p.push(p[0]);
                p
            }
            1 => {
                let mut p = vec![centre];
                let mut dir = rng.unit();
                for _ in 0..n {
                    dir = (dir + rng.unit() * 0.3).normalize();
                    let last = *p.last().unwrap();
                    p.push(last + dir * (radius / 20.0));
                }
                p
            }
            _ => {
                let turns = rng.range(2.0, 10.0);
                let length = rng.range(0.005, 0.02);
                (0..=n)
                    .map(|i| {
                        let f = i as f64 / n as f64;
                        let t = TAU * turns * f;
                        centre
                            + u * (radius * t.cos())
                            + v * (radius * t.sin())
                            + w * (length * (f - 0.5))
                    })
                    .collect()
            }
        };
        let mut wire = Polyline::new(verts, 1e-4);
        wire.weight = rng.range(-20.0, 20.0);
        wires.push(wire);
    }
    Conductors {
        wires,
        dipoles: Vec::new(),
    }
}

#[test]
fn series_field_is_within_the_tolerance_of_the_direct_sum_wherever_it_is_used() {
    let mut rng = Lcg(0x5eed_0001);
    let mut used = 0;
    let mut far_points = 0;
    let mut worst_rel: f64 = 0.0;
    let mut worst_vs_bound: f64 = 0.0;
    for case in 0..16 {
        let src = random_source(&mut rng);
        let tolerance = [1e-4, 1e-6, 1e-8][case % 3];
        let far = FarField::new(&src).expect("at least 64 segments");
        let (c, r) = far.sphere();
        for _ in 0..150 {
            let dist = r * (1.5f64).powf(rng.range(0.9, 9.0));
            let x = c + rng.unit() * dist;
            let direct = src.b_per_amp(&x);
            if dist > 6.0 * r {
                far_points += 1;
            }
            let Some(got) = far.b(&x, tolerance) else {
                continue;
            };
            if dist > 6.0 * r {
                used += 1;
            }
            let err = (got.value - direct).norm();
            let rel = err / direct.norm();
            assert!(
                rel <= tolerance,
                "case {case}: {rel:e} > {tolerance:e} at {dist} m (degree {})",
                got.order
            );
            // The proven bound, with room for the direct sum's own rounding.
            let bound = far.b_bound(got.order, (x - c).norm()) + 1e-13 * direct.norm();
            assert!(
                err <= bound,
                "case {case}: error {err:e} over bound {bound:e}"
            );
            worst_rel = worst_rel.max(rel / tolerance);
            worst_vs_bound = worst_vs_bound.max(err / bound);
        }
    }
    println!(
        "worst error {worst_rel:.2e} of the tolerance, {worst_vs_bound:.2e} of the bound; \
         series used at {used} of {far_points} points beyond 6 radii"
    );
    // The acceleration must actually act far away, or this test checks nothing.
    assert!(used * 10 >= far_points * 8, "{used} of {far_points}");
}

#[test]
fn four_lane_series_gives_the_same_bits_as_one_point_at_a_time() {
    // Blocks of four points use FarField::b4; a point's value must not depend on the
    // other points of its block (determinism for any thread count).
    let mut rng = Lcg(0x5eed_0007);
    for _ in 0..6 {
        let src = random_source(&mut rng);
        let far = FarField::with_order(&src, strayflux::field::multipole::MAX_ORDER).unwrap();
        let (c, r) = far.sphere();
        for _ in 0..50 {
            let pts: [Vec3; 4] = std::array::from_fn(|_| c + rng.unit() * r * rng.range(0.5, 40.0));
            let four = far.b4(&pts, 1e-6);
            for (p, got) in pts.iter().zip(four) {
                let one = far.b(p, 1e-6);
                assert_eq!(
                    one.map(|e| (
                        e.value.x.to_bits(),
                        e.value.y.to_bits(),
                        e.value.z.to_bits(),
                        e.order
                    )),
                    got.map(|e| (
                        e.value.x.to_bits(),
                        e.value.y.to_bits(),
                        e.value.z.to_bits(),
                        e.order
                    )),
                );
            }
        }
    }
}

#[test]
fn series_potential_is_within_its_proven_bound_at_every_degree() {
    let mut rng = Lcg(0x5eed_0002);
    for case in 0..8 {
        let src = random_source(&mut rng);
        let far = FarField::new(&src).unwrap();
        let (c, r) = far.sphere();
        for _ in 0..40 {
            let dist = r * rng.range(1.6, 12.0);
            let x = c + rng.unit() * dist;
            let direct = src.a_per_amp(&x);
            let mut parts = [Vec3::zeros(); strayflux::field::multipole::MAX_ORDER + 1];
            let q = far.order();
            far.a_degrees(&x, q, &mut parts);
            let mut sum = Vec3::zeros();
            for (deg, p) in parts.iter().enumerate().take(q + 1) {
                sum += p;
                let err = (sum - direct).norm();
                let bound = far.a_bound(deg, dist) + 1e-14 * far.gross() * MU0 / dist;
                assert!(
                    err <= bound,
                    "case {case} degree {deg}: {err:e} > {bound:e} at t = {}",
                    r / dist
                );
            }
        }
    }
}

#[test]
fn leading_term_is_the_dipole_field_of_jackson_5_56() {
    // A wavy closed loop, its moment m = ½ ∮ r × dl computed here, and B far away: the
    // series must approach the point-dipole field with the next multipole's relative
    // size ~ r/R.
    let n = 3000;
    let verts: Vec<Vec3> = (0..=n)
        .map(|i| {
            let t = TAU * (i % n) as f64 / n as f64;
            let rr = 0.01 * (1.0 + 0.2 * (3.0 * t).sin());
            Vec3::new(rr * t.cos(), rr * t.sin(), 0.002 * (2.0 * t).cos())
        })
        .collect();
    let m: Vec3 = verts
        .windows(2)
        .map(|w| w[0].cross(&(w[1] - w[0])) * 0.5)
        .sum();
    let centre_of = |v: &[Vec3]| {
        let (lo, hi) = v.iter().fold(
            (Vec3::repeat(f64::INFINITY), Vec3::repeat(f64::NEG_INFINITY)),
            |(lo, hi), p| (lo.inf(p), hi.sup(p)),
        );
        (lo + hi) / 2.0
    };
    let c = centre_of(&verts);
    let src = Conductors {
        wires: vec![Polyline::new(verts, 1e-5)],
        dipoles: Vec::new(),
    };
    let fast = Accelerated::new(&src, 1e-9, false);
    let mut rng = Lcg(0x5eed_0003);
    for &dist in &[1.0, 10.0, 100.0] {
        for _ in 0..8 {
            let d = rng.unit() * dist;
            let got = fast.b_per_amp(&(c + d));
            let want = dipole_b(&m, &d);
            let rel = (got - want).norm() / want.norm();
            assert!(
                rel < 40.0 * 0.012 / dist,
                "at {dist} m: {rel:e} from the dipole field"
            );
        }
    }
    assert!(fast.far().is_some());
    // And the multipole constant matches the reference μ0 independently.
    assert!((strayflux::field::MU0 - MU0).abs() < 1e-20 && MU0 / (4.0 * PI) > 0.0);
}

#[test]
fn accelerated_source_matches_direct_in_blocks_and_with_dipoles() {
    // b_block mixes series and direct points; dipoles are always summed directly.
    let mut rng = Lcg(0x5eed_0004);
    let mut src = random_source(&mut rng);
    src.dipoles.push(strayflux::field::Dipole {
        position: Vec3::new(0.001, -0.002, 0.003),
        moment_per_amp: Vec3::new(1e-4, 2e-4, -3e-4),
        radius: 1e-4,
    });
    let tol = 1e-6;
    let fast = Accelerated::new(&src, tol, false);
    let (c, r) = fast.far().unwrap().sphere();
    let pts: Vec<Vec3> = (0..64)
        .map(|k| c + rng.unit() * (r * (0.5 + 0.3 * k as f64)))
        .collect();
    let got = strayflux::field::b_at_points(&fast, &pts);
    let want = strayflux::field::b_at_points(&src, &pts);
    for (k, (g, w)) in got.iter().zip(&want).enumerate() {
        assert!(
            (g - w).norm() <= tol * w.norm(),
            "point {k}: {:e}",
            (g - w).norm() / w.norm()
        );
    }
}

fn polygon_scene(victims: &str) -> Scene {
    let n = 1500;
    let verts: Vec<String> = (0..n)
        .map(|k| {
            let t = TAU * k as f64 / n as f64;
            let r = 0.015 * (1.0 + 0.25 * (4.0 * t).cos());
            format!(
                "[{}, {}, {}]",
                r * t.cos(),
                r * t.sin(),
                0.001 * (3.0 * t).sin()
            )
        })
        .collect();
    let text = format!(
        "[solver]\nwire_radius = \"0.01 mm\"\n[[source]]\nid = \"p\"\nkind = \"polygon\"\nvertices = [{}]\n\
         current = {{ peak = \"1 A\", frequency = \"100 kHz\" }}\n{victims}",
        verts.join(", ")
    );
    Scene::parse("poly.toml", &text).unwrap()
}

#[test]
fn sweep_flux_from_the_series_is_within_the_tolerance_of_the_direct_flux() {
    let scene = polygon_scene(
        "[[victim]]\nid = \"a\"\nkind = \"rectangle\"\nwidth = \"10 mm\"\nheight = \"5 mm\"\n\
         [[victim]]\nid = \"b\"\nkind = \"loop\"\nradius = \"4 mm\"\n\
         [[victim]]\nid = \"c\"\nkind = \"polygon\"\n\
         vertices = [[0, 0, 0], [0.01, 0, 0], [0.012, 0.006, 0], [0.002, 0.009, 0]]\n",
    );
    let source = &scene.sources[0];
    let far = &strayflux::field::FarField::new(&source.conductors).unwrap();
    let sphere = source.conductors.bounding_sphere();
    let mut rng = Lcg(0x5eed_0005);
    let (mut used, mut tried) = (0, 0);
    for tolerance in [1e-5, 1e-6, 1e-7] {
        for victim in &scene.victims {
            for _ in 0..25 {
                let axis = rng.unit();
                let turned = victim.facing(&axis);
                let offset = rng.unit() * rng.range(0.05, 0.6);
                let placed = turned.moved(&nalgebra::Rotation3::identity(), &offset);
                tried += 1;
                let Some(got) = strayflux::coupling::flux_from_far(
                    far,
                    sphere,
                    &placed.edges,
                    placed.flat_face(),
                    tolerance,
                ) else {
                    continue;
                };
                used += 1;
                let want =
                    strayflux::coupling::flux_per_amp(&source.conductors, &placed.edges, 1e-10);
                let rel = (got.value - want.value).abs() / want.value.abs();
                assert!(
                    rel <= tolerance,
                    "victim {} at {offset:?}: {rel:e} > {tolerance:e}",
                    victim.id
                );
            }
        }
    }
    println!("series flux used for {used} of {tried} placements");
    assert!(used * 2 >= tried, "{used} of {tried}");
}

#[test]
fn command_line_probe_and_sweep_agree_with_exact_within_the_tolerance() {
    let dir = std::path::PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("accelerated");
    std::fs::create_dir_all(&dir).unwrap();
    let scene = dir.join("coil.toml");
    std::fs::write(
        &scene,
        "[solver]\ntolerance = 1e-6\n[[source]]\nid = \"coil\"\nkind = \"helix\"\n\
         radius = \"5 mm\"\nlength = \"8 mm\"\nturns = 12\n\
         current = { waveform = \"square\", peak = \"1 A\", frequency = \"50 kHz\", rise = \"200 ns\", harmonics = 3 }\n\
         [[victim]]\nid = \"v\"\nkind = \"loop\"\nradius = \"3 mm\"\n\
         position = [\"30 mm\", \"0 mm\", \"0 mm\"]\n\
         [[sweep]]\nid = \"s\"\nvictim = \"v\"\nvary = \"distance\"\nalong = [1, 0, 0]\n\
         from = \"1 mm\"\nto = \"300 mm\"\nsteps = 1250\n",
    )
    .unwrap();
    let mut rng = Lcg(0x5eed_0006);
    let mut csv = String::from("x_mm,y_mm,z_mm\n");
    for _ in 0..300 {
        let p = rng.unit() * rng.range(2.0, 200.0);
        csv.push_str(&format!("{},{},{}\n", p.x, p.y, p.z));
    }
    let points = dir.join("points.csv");
    std::fs::write(&points, csv).unwrap();
    let (s, p) = (scene.to_str().unwrap(), points.to_str().unwrap());
    let read =
        |args: &[&str]| -> serde_json::Value { cli_support::stdout_json(&cli_support::run(args)) };
    let fast = read(&["probe", s, "--points", p, "--json"]);
    let exact = read(&["probe", s, "--points", p, "--json", "--exact"]);
    let field = |v: &serde_json::Value, k: usize, l: usize| -> [f64; 6] {
        let b = &v["points"][k]["lines"][l]["b_t_peak"];
        std::array::from_fn(|i| b[i / 2][i % 2].as_f64().unwrap())
    };
    let mut differs = 0;
    for k in 0..300 {
        for l in 0..3 {
            let (f, e) = (field(&fast, k, l), field(&exact, k, l));
            let norm = e.iter().map(|x| x * x).sum::<f64>().sqrt();
            let diff = f
                .iter()
                .zip(&e)
                .map(|(a, b)| (a - b).powi(2))
                .sum::<f64>()
                .sqrt();
            assert!(diff <= 1e-6 * norm, "point {k} line {l}: {:e}", diff / norm);
            if diff > 0.0 {
                differs += 1;
            }
        }
    }
    // The far points did come from the series (they differ in the last digits).
    assert!(differs > 300, "only {differs} values differ from exact");
    let sweep = |extra: &[&str]| -> Vec<f64> {
        let out_dir = dir.join(format!("out{}", extra.len()));
        let mut args = vec!["sweep", s, "--json", "--out", out_dir.to_str().unwrap()];
        args.extend_from_slice(extra);
        let v = read(&args);
        v["sweeps"][0]["rows"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r["total_emf_v_rms"].as_f64().unwrap())
            .collect()
    };
    let (a, b) = (sweep(&[]), sweep(&["--exact"]));
    assert_eq!(a.len(), 1250);
    for (x, y) in a.iter().zip(&b) {
        assert!((x - y).abs() <= 1e-6 * y.abs(), "{x} vs {y}");
    }
    // 1250 placements of a one-arc loop (8 panels) are enough far work to build the
    // moments, and
    // the far steps did come from the series.
    let series_steps = a.iter().zip(&b).filter(|(x, y)| x != y).count();
    assert!(
        series_steps > 100,
        "only {series_steps} steps differ from exact"
    );
}

/// The full benchmark case (`benches/maps.rs`, `winding-board`): every point of the
/// 128³ grid, 200 mm wide around a 21 120-segment helix, accelerated against direct.
/// About three minutes on two cores: `cargo test --release --test accelerated -- --ignored`.
#[test]
#[ignore = "about three minutes: the full 128³ grid against direct sums"]
fn full_128_cube_board_map_is_within_the_tolerance_of_direct_at_every_point() {
    // The helix of tests/fixtures/helix-40-turns.toml.
    let text = concat!(
        include_str!("fixtures/helix-40-turns.toml"),
        "[[map]]\nid = \"m\"\nkind = \"box\"\nmin = [-0.1, -0.1, -0.1]\n\
                max = [0.1, 0.1, 0.1]\ncells = [127, 127, 127]\n"
    );
    let scene = Scene::parse("board.toml", text).unwrap();
    let points = scene.maps[0].all_points();
    let src = &scene.sources[0].conductors;
    let fast = Accelerated::for_points(src, &points, scene.tolerance, false);
    let got = strayflux::field::b_at_points(&fast, &points);
    let want = strayflux::field::b_at_points(src, &points);
    let mut worst: f64 = 0.0;
    for (k, (g, w)) in got.iter().zip(&want).enumerate() {
        let rel = (g - w).norm() / w.norm();
        assert!(rel <= scene.tolerance, "point {k}: {rel:e}");
        worst = worst.max(rel);
    }
    println!(
        "worst relative difference over {} points: {worst:.2e}",
        points.len()
    );
}

#[test]
fn a_points_value_does_not_depend_on_the_other_points_asked_for() {
    // A probe at one map grid point must give the map's value to the last digit:
    // the series is used or not by the point alone.
    let mut rng = Lcg(0x5eed_0008);
    let src = random_source(&mut rng);
    let (c, r) = src.bounding_sphere().unwrap();
    let many: Vec<Vec3> = (0..300)
        .map(|_| c + rng.unit() * r * rng.range(0.5, 30.0))
        .collect();
    let all =
        strayflux::field::b_at_points(&Accelerated::for_points(&src, &many, 1e-6, false), &many);
    for (k, p) in many.iter().enumerate().step_by(7) {
        let one = [*p];
        let alone =
            strayflux::field::b_at_points(&Accelerated::for_points(&src, &one, 1e-6, false), &one);
        for i in 0..3 {
            assert_eq!(alone[0][i].to_bits(), all[k][i].to_bits(), "point {k}");
        }
    }
}
