//! The command-line surface: JSON keys and exit codes (the located one-line errors for
//! bad scenes are tabled in tests/bad_input_table.rs). Numbers are checked against
//! published closed forms where the CLI is the thing being checked end to end.

use serde_json::Value;
use std::path::PathBuf;
mod cli_support;
use cli_support::{bin, run, stdout_json};

const MU0: f64 = 1.256_637_062_12e-6; // CODATA 2018

/// Writes `text` to a fresh file named `name` in the test's scratch folder.
fn scene(name: &str, text: &str) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("cli");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

/// Complete elliptic integrals K(m), E(m) of parameter m = k² from the `ellip` crate
/// (Carlson's algorithms as in DLMF ch. 19), independent of strayflux.
fn k_e(m: f64) -> (f64, f64) {
    (ellip::ellipk(m).unwrap(), ellip::ellipe(m).unwrap())
}

/// Maxwell's formula for two coaxial circles of radii a, b at axial distance d:
/// M = μ0 √(ab) [(2/k − k) K − (2/k) E], k² = 4ab/((a+b)² + d²)
/// (Grover, "Inductance Calculations", ch. 13; Smythe, "Static and Dynamic
/// Electricity", 3rd ed., §7.24).
fn maxwell_m(a: f64, b: f64, d: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b).powi(2) + d * d);
    let k = m.sqrt();
    let (kk, ee) = k_e(m);
    MU0 * (a * b).sqrt() * ((2.0 / k - k) * kk - 2.0 / k * ee)
}

fn coaxial_scene(spacing_mm: f64, limit: &str) -> String {
    format!(
        r#"
[scene]
title = "two coaxial loops"
[[source]]
id = "drive"
kind = "loop"
radius = "20 mm"
current = {{ waveform = "sine", rms = "2 A", frequency = "10 kHz" }}
[[victim]]
id = "pickup"
kind = "loop"
radius = "15 mm"
position = ["0 mm", "0 mm", "{spacing_mm} mm"]
limit = "{limit}"
"#
    )
}

#[test]
fn couple_json_reproduces_maxwell_mutual_inductance_and_emf() {
    for (k, d_mm) in [2.0, 10.0, 40.0].iter().enumerate() {
        let path = scene(&format!("coax{k}.toml"), &coaxial_scene(*d_mm, "1 V"));
        let doc = stdout_json(&run(&["couple", path.to_str().unwrap(), "--json"]));
        let v = &doc["victims"][0];
        let m = v["sources"][0]["mutual_inductance_h"].as_f64().unwrap();
        let expect = maxwell_m(0.020, 0.015, d_mm * 1e-3);
        assert!(
            ((m - expect) / expect).abs() < 1e-6,
            "d = {d_mm} mm: M {m} vs Maxwell {expect}"
        );
        // E = ω M I for a sine line (Faraday's law with Φ = M I); rms current 2 A.
        let line = &v["sources"][0]["lines"][0];
        let emf_rms = line["emf_v_rms"].as_f64().unwrap();
        let expect_emf = std::f64::consts::TAU * 1e4 * expect * 2.0;
        assert!(((emf_rms - expect_emf) / expect_emf).abs() < 1e-6);
        assert!((line["current_a_peak"].as_f64().unwrap() - 2.0 * 2f64.sqrt()).abs() < 1e-12);
        // −j: the EMF lags the current by 90° (E = −jωMI).
        assert!((line["emf_phase_deg"].as_f64().unwrap() + 90.0).abs() < 1e-9);
        assert_eq!(line["shielding_db"].as_f64().unwrap(), 0.0);
        let total = v["total_emf_v_rms"].as_f64().unwrap();
        assert!(((total - emf_rms) / emf_rms).abs() < 1e-12);
        let margin = v["margin_db"].as_f64().unwrap();
        assert!((margin - 20.0 * (1.0 / total).log10()).abs() < 1e-9);
        assert_eq!(v["pass"], Value::Bool(total <= 1.0));
        assert_eq!(v["limit_v_rms"].as_f64().unwrap(), 1.0);
    }
}

#[test]
fn couple_without_limit_gives_nulls_and_strict_exits_three_over_limit() {
    let text = coaxial_scene(10.0, "1 V").replace("limit = \"1 V\"", "");
    let path = scene("nolimit.toml", &text);
    let doc = stdout_json(&run(&["couple", path.to_str().unwrap(), "--json"]));
    let v = &doc["victims"][0];
    assert!(v["limit_v_rms"].is_null() && v["margin_db"].is_null() && v["pass"].is_null());

    let path = scene("over.toml", &coaxial_scene(10.0, "1 uV"));
    let out = run(&["couple", path.to_str().unwrap(), "--json", "--strict"]);
    assert_eq!(out.status.code(), Some(3));
    let doc: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["victims"][0]["pass"], Value::Bool(false));
    assert!(doc["victims"][0]["margin_db"].as_f64().unwrap() < 0.0);
    // Without --strict the same scene exits 0.
    let out = run(&["couple", path.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&out.stdout).contains("OVER LIMIT"));
}

#[test]
fn probe_json_reproduces_loop_closed_form_field() {
    // Simpson, Lane, Immer & Youngquist, "Simple analytic expressions for the magnetic
    // field of a circular current loop", NASA/TM-2013-217919 (2001 preprint), eqs. for
    // B_ρ and B_z with α² = R²+r²−2Rρ, β² = R²+r²+2Rρ, m = 1 − α²/β².
    let path = scene("probe.toml", &coaxial_scene(10.0, "1 V"));
    let pts = [
        (0.0, 0.0, 0.01),
        (0.01, 0.0, 0.005),
        (0.0, 0.025, -0.004),
        (0.03, 0.02, 0.01),
        (0.002, 0.0, 0.0),
        (-0.05, 0.01, 0.03),
    ];
    let mut args = vec![
        "probe".to_string(),
        path.to_str().unwrap().to_string(),
        "--json".into(),
    ];
    for (x, y, z) in pts {
        args.push("--at".into());
        args.push(format!("{x},{y},{z}"));
    }
    let out = bin().args(&args).output().unwrap();
    let doc = stdout_json(&out);
    let peak = 2.0 * 2f64.sqrt();
    let r_loop: f64 = 0.020;
    for (k, (x, y, z)) in pts.iter().enumerate() {
        let p = &doc["points"][k];
        assert_eq!(p["position_m"][0].as_f64().unwrap(), *x);
        let line = &p["lines"][0];
        assert_eq!(line["frequency_hz"].as_f64().unwrap(), 1e4);
        let b: Vec<f64> = (0..3)
            .map(|c| line["b_t_peak"][c][0].as_f64().unwrap())
            .collect();
        let rho = (x * x + y * y).sqrt();
        let r2 = rho * rho + z * z;
        let alpha2 = r_loop * r_loop + r2 - 2.0 * r_loop * rho;
        let beta2 = r_loop * r_loop + r2 + 2.0 * r_loop * rho;
        let m = 1.0 - alpha2 / beta2;
        let (kk, ee) = k_e(m);
        let c = MU0 * peak / std::f64::consts::PI;
        let beta = beta2.sqrt();
        let bz = c / (2.0 * alpha2 * beta) * ((r_loop * r_loop - r2) * ee + alpha2 * kk);
        let brho = if rho > 0.0 {
            c * z / (2.0 * alpha2 * beta * rho) * ((r_loop * r_loop + r2) * ee - alpha2 * kk)
        } else {
            0.0
        };
        let (bx, by) = if rho > 0.0 {
            (brho * x / rho, brho * y / rho)
        } else {
            (0.0, 0.0)
        };
        let err = ((b[0] - bx).powi(2) + (b[1] - by).powi(2) + (b[2] - bz).powi(2)).sqrt()
            / (bx * bx + by * by + bz * bz).sqrt();
        assert!(err < 1e-6, "point {k}: relative error {err:e}");
        let rms = line["b_t_rms"].as_f64().unwrap();
        let expect_rms = (bx * bx + by * by + bz * bz).sqrt() / 2f64.sqrt();
        assert!(((rms - expect_rms) / expect_rms).abs() < 1e-6);
    }
}

#[test]
fn probe_reads_points_with_units_and_csv_files() {
    let path = scene("probe-units.toml", &coaxial_scene(10.0, "1 V"));
    let csv = scene("pts.csv", "x_mm,y_mm,z_mm\n0,0,10\n10,0,5\n");
    let doc = stdout_json(&run(&[
        "probe",
        path.to_str().unwrap(),
        "--at",
        "0,0,10 mm",
        "--points",
        csv.to_str().unwrap(),
        "--json",
    ]));
    let pts = doc["points"].as_array().unwrap();
    assert_eq!(pts.len(), 3);
    assert_eq!(pts[0]["position_m"][2].as_f64().unwrap(), 0.01);
    assert_eq!(pts[1]["lines"][0], pts[0]["lines"][0]);
    assert_eq!(pts[2]["position_m"][0].as_f64().unwrap(), 0.01);
}

#[test]
fn check_json_has_the_documented_keys_and_values() {
    let path = scene("check.toml", &coaxial_scene(10.0, "1 V"));
    let doc = stdout_json(&run(&["check", path.to_str().unwrap(), "--json"]));
    let s = &doc["sources"][0];
    assert_eq!(s["id"], "drive");
    assert_eq!(s["kind"], "loop");
    assert!(s["segments"].as_u64().unwrap() >= 32);
    // Circumference 2πR and moment πR² per ampere of a circle. The wire length is that
    // of the equal-area n-gon, whose perimeter exceeds the circle's by about π²/(6n²)
    // (series expansion of 2n·r·sin(π/n) with r² = R²(2π/n)/sin(2π/n)).
    let len = s["wire_length_m"].as_f64().unwrap();
    let n = s["segments"].as_f64().unwrap();
    let excess = std::f64::consts::PI.powi(2) / (6.0 * n * n);
    assert!((len / (std::f64::consts::TAU * 0.02) - 1.0 - excess).abs() < 1e-9);
    let m = s["dipole_moment_a_m2_per_a"].as_f64().unwrap();
    assert!((m / (std::f64::consts::PI * 4e-4) - 1.0).abs() < 1e-12);
    let v = &doc["victims"][0];
    assert!(
        (v["area_m2"].as_f64().unwrap() / (std::f64::consts::PI * 2.25e-4) - 1.0).abs() < 1e-12
    );
    // Rosa & Grover: L = μ0 R (ln(8R/a) − 2 + 1/4) for a round-wire circle.
    let l = MU0 * 0.015 * ((8.0 * 0.015 / 1e-4f64).ln() - 1.75);
    assert!((v["self_inductance_h"].as_f64().unwrap() / l - 1.0).abs() < 1e-12);
    assert_eq!(doc["lines_hz"][0].as_f64().unwrap(), 1e4);
    // λ/2π = c / (2π f), c exact by the SI.
    let nf = 299_792_458.0 / (std::f64::consts::TAU * 1e4);
    assert!((doc["near_field_limit_m"].as_f64().unwrap() / nf - 1.0).abs() < 1e-12);
}

// The bad-scene, unreadable-file and bad-argument cases that were here are in
// tests/bad_input_table.rs.

#[test]
fn every_kernel_path_reproduces_maxwell_and_a_bad_simd_cap_is_refused() {
    // Maxwell's formula for coaxial circles (Grover ch. 13) on each instruction-set
    // path STRAYFLUX_SIMD can select (a CPU without the wider ones runs the widest it
    // has). The 256-bit and portable paths give the same bits.
    let path = scene("coax-simd.toml", &coaxial_scene(10.0, "1 V"));
    let expect = maxwell_m(0.020, 0.015, 0.010);
    let mut by_level = Vec::new();
    for level in ["portable", "avx2", "avx512"] {
        let out = bin()
            .args(["couple", path.to_str().unwrap(), "--json"])
            .env("STRAYFLUX_SIMD", level)
            .output()
            .expect("the binary runs");
        let doc = stdout_json(&out);
        let m = doc["victims"][0]["sources"][0]["mutual_inductance_h"]
            .as_f64()
            .unwrap();
        assert!(
            ((m - expect) / expect).abs() < 1e-6,
            "{level}: M {m} vs Maxwell {expect}"
        );
        by_level.push(m);
    }
    assert_eq!(by_level[0].to_bits(), by_level[1].to_bits());
    let out = bin()
        .args(["couple", path.to_str().unwrap()])
        .env("STRAYFLUX_SIMD", "avx3")
        .output()
        .expect("the binary runs");
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("STRAYFLUX_SIMD=\"avx3\"") && err.contains("portable, avx2, avx512"));
}
