//! `file` sources and `calibrate` through the command line: CSV paths relative to the
//! scene and the calibration round trip (their bad-input cases are in
//! tests/bad_input_table.rs). Numbers are checked against published closed forms or the definitions the
//! scene reference (docs/scene-reference.md) gives, never against the tool's earlier output.

mod common;

use common::{loop_b, rel};
use std::path::PathBuf;

use strayflux::field::Vec3;
mod cli_support;
use cli_support::{bin, run, stdout_json};

/// The test's scratch folder.
fn scratch() -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("cli-windings");
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn file_source_path_is_relative_to_the_scene_and_a_closed_square_is_a_rectangle() {
    // Paths are relative to the scene file's folder (docs/scene-reference.md), not the
    // working directory: run from elsewhere. The closed square's length is its
    // perimeter and its moment a² per ampere (½∮ r × dl of a square); the same rectangle
    // source couples the same M into a victim (both are the same four segments).
    let dir = scratch().join("file-relative");
    std::fs::create_dir_all(dir.join("shapes")).unwrap();
    std::fs::write(
        dir.join("shapes/sq.csv"),
        "# a 20 mm square, closed\nx_mm,y_mm,z_mm\n-10,-10,0\n10,-10,0\n10,10,0\n-10,10,0\n-10,-10,0\n",
    )
    .unwrap();
    let text = "[[source]]\nid = \"drawn\"\nkind = \"file\"\npath = \"shapes/sq.csv\"\n\
                current = { peak = 1, frequency = 1000 }\n\
                [[source]]\nid = \"rect\"\nkind = \"rectangle\"\nwidth = \"20 mm\"\nheight = \"20 mm\"\n\
                current = { peak = 1, frequency = 2000 }\n\
                [[victim]]\nid = \"v\"\nkind = \"loop\"\nradius = \"5 mm\"\n\
                position = [\"3 mm\", \"4 mm\", \"6 mm\"]\naxis = [0.2, 0, 1]\n";
    let scene = dir.join("relative.toml");
    std::fs::write(&scene, text).unwrap();
    let check = bin()
        .args(["check", scene.to_str().unwrap(), "--json"])
        .current_dir("/")
        .output()
        .unwrap();
    let doc = stdout_json(&check);
    let src = &doc["sources"][0];
    assert_eq!(src["kind"], "file");
    assert_eq!(src["segments"].as_u64(), Some(4));
    assert!(rel(src["wire_length_m"].as_f64().unwrap(), 0.08) < 1e-12);
    assert!(rel(src["dipole_moment_a_m2_per_a"].as_f64().unwrap(), 4e-4) < 1e-12);
    assert!(
        !String::from_utf8_lossy(&check.stderr).contains("open"),
        "closed path reported open"
    );
    let couple = bin()
        .args(["couple", scene.to_str().unwrap(), "--json"])
        .current_dir("/")
        .output()
        .unwrap();
    let doc = stdout_json(&couple);
    let m: Vec<f64> = doc["victims"][0]["sources"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["mutual_inductance_h"].as_f64().unwrap())
        .collect();
    assert!(m[0] != 0.0 && rel(m[0], m[1]) < 1e-12, "{m:?}");

    // An open path loads with a warning that its return is not modelled.
    std::fs::write(
        dir.join("shapes/open.csv"),
        "x,y,z\n0,0,0\n0.01,0,0\n0.01,0.01,0\n",
    )
    .unwrap();
    let open = dir.join("open.toml");
    std::fs::write(&open, text.replace("sq.csv", "open.csv")).unwrap();
    let out = run(&["check", open.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0));
    assert!(String::from_utf8_lossy(&out.stderr).contains("open"));
}

/// Value in SI of `"<number> <prefix><unit>"` as printed by the text reports.
fn parse_printed(number: &str, unit_with_prefix: &str, unit: &str) -> f64 {
    let prefix = unit_with_prefix.strip_suffix(unit).expect("unit");
    let factor = match prefix {
        "" => 1.0,
        "k" => 1e3,
        "m" => 1e-3,
        "µ" | "u" => 1e-6,
        "n" => 1e-9,
        other => panic!("prefix {other}"),
    };
    number.parse::<f64>().unwrap() * factor
}

#[test]
fn calibrate_scales_each_source_alone_to_the_given_rms_field() {
    // docs/scene-reference.md: `calibrate = { at, field }` sets the current so that the
    // rms of |B| at `at` equals `field` for the whole waveform, listed lines or not. B is
    // proportional to the current, so the 5 listed lines carry the share of the field
    // that their rms is of the triangle's: √(Σ_{n=1,3..9} (8/(π²n²))²/2) against 1/√3
    // (the rms of a ramp of peak 1, from memory; the rms of a sum of distinct-frequency
    // sinusoids is the root-sum-square of their rms values: Parseval). The waveform's
    // shape is kept: the triangle's lines stay in
    // the ratios 1/n² with their signs (8Î/(n²π²), Kreyszig, "Advanced Engineering
    // Mathematics", 10th ed., §11.1–11.2; from memory). It considers the source alone,
    // so the second source's field at the point does not count.
    let dir = scratch().join("calibrate");
    std::fs::create_dir_all(&dir).unwrap();
    let text = r#"
[[source]]
id = "coil"
kind = "helix"
radius = "8 mm"
length = "12 mm"
turns = 30
current = { waveform = "triangle", peak = "5 A", frequency = "10 kHz", harmonics = 5 }
calibrate = { at = ["20 mm", "5 mm", "30 mm"], field = "12 uT" }

[[source]]
id = "ring"
kind = "loop"
radius = "15 mm"
position = ["100 mm", "0 mm", "0 mm"]
current = { waveform = "sine", frequency = "1 kHz" }
calibrate = { at = ["110 mm", "3 mm", "8 mm"], field = "3 uT" }

[[victim]]
id = "pickup"
kind = "loop"
radius = "4 mm"
position = ["40 mm", "0 mm", "0 mm"]
axis = [1, 0, 0]
"#;
    let scene = dir.join("calibrate.toml");
    std::fs::write(&scene, text).unwrap();
    let path = scene.to_str().unwrap();

    // Round trip at the helix's point: its own lines give 12 µT rms; the ring's 1 kHz
    // line is there too but is not part of it.
    let doc = stdout_json(&run(&["probe", path, "--at", "20,5,30 mm", "--json"]));
    let lines = doc["points"][0]["lines"].as_array().unwrap();
    let (mut coil2, mut ring2) = (0.0, 0.0);
    for l in lines {
        let f = l["frequency_hz"].as_f64().unwrap();
        let b = l["b_t_rms"].as_f64().unwrap();
        if (f - 1e3).abs() < 1e-6 {
            ring2 += b * b;
        } else {
            coil2 += b * b;
        }
    }
    assert_eq!(lines.len(), 6, "five triangle lines and the ring's");
    let listed: f64 = [1.0f64, 3.0, 5.0, 7.0, 9.0]
        .iter()
        .map(|n| (8.0 / (std::f64::consts::PI.powi(2) * n * n)).powi(2) / 2.0)
        .sum::<f64>()
        .sqrt();
    let share = listed * 3f64.sqrt();
    let e = rel(coil2.sqrt(), 12e-6 * share);
    eprintln!(
        "calibrate round trip: √Σ b_rms² of the helix lines {:.12e} T vs 12 µT \
         x the listed share {share:.9} (rel {e:.2e}); the ring adds {:.3e} T at 1 kHz there",
        coil2.sqrt(),
        ring2.sqrt()
    );
    assert!(e <= 1e-9, "rel {e:e}");
    assert!(
        ring2.sqrt() > 1e-9,
        "the other source's field should be present"
    );

    // At the ring's own point its line alone gives 3 µT.
    let doc = stdout_json(&run(&["probe", path, "--at", "110,3,8 mm", "--json"]));
    let ring_line = doc["points"][0]["lines"]
        .as_array()
        .unwrap()
        .iter()
        .find(|l| (l["frequency_hz"].as_f64().unwrap() - 1e3).abs() < 1e-6)
        .unwrap()["b_t_rms"]
        .as_f64()
        .unwrap();
    assert!(rel(ring_line, 3e-6) <= 1e-9, "ring: {ring_line}");

    // The implied current of the ring against the loop's closed-form field at the local
    // point (10, 3, 8) mm (Simpson et al., NASA TM 2001, via common::loop_b): a sine of
    // rms I makes rms |B| = I·|b|, so I_rms = 3 µT/|b| (to the loop's 1e-6 tolerance).
    let b_per_amp = loop_b(0.015, &Vec3::new(0.010, 0.003, 0.008)).norm();
    let i_ring = 3e-6 / b_per_amp;
    let doc = stdout_json(&run(&["couple", path, "--json"]));
    let srcs = doc["victims"][0]["sources"].as_array().unwrap();
    let peaks = |k: usize| -> Vec<f64> {
        srcs[k]["lines"]
            .as_array()
            .unwrap()
            .iter()
            .map(|l| l["current_a_peak"].as_f64().unwrap())
            .collect()
    };
    let ring_peak = peaks(1);
    let e_ring = rel(ring_peak[0] / 2f64.sqrt(), i_ring);
    eprintln!(
        "ring implied current {:.9e} A rms vs closed form {i_ring:.9e} A (rel {e_ring:.2e})",
        ring_peak[0] / 2f64.sqrt()
    );
    assert!(e_ring <= 2e-6, "rel {e_ring:e}");
    // Triangle shape kept: |I_n / I_1| = 1/n² for n = 1, 3, 5, 7, 9.
    let coil = peaks(0);
    assert_eq!(coil.len(), 5);
    for (k, p) in coil.iter().enumerate() {
        let n = (2 * k + 1) as f64;
        assert!(rel(p / coil[0], 1.0 / (n * n)) < 1e-12, "line {n}: {p}");
    }

    // `check` prints the implied current (4 significant digits).
    let out = run(&["check", path]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    let printed: Vec<f64> = text
        .lines()
        .filter_map(|l| l.split("current set by calibrate: ").nth(1))
        .map(|rest| {
            let mut w = rest.split_whitespace();
            parse_printed(w.next().unwrap(), w.next().unwrap(), "A")
        })
        .collect();
    assert_eq!(printed.len(), 2, "{text}");
    let coil_rms = (coil.iter().map(|p| p * p).sum::<f64>() / 2.0).sqrt();
    eprintln!(
        "check prints {:?} A rms; expected {coil_rms:.6e} (from couple) and {i_ring:.6e} (closed form)",
        printed
    );
    assert!(rel(printed[0], coil_rms) <= 5e-4, "{text}");
    assert!(rel(printed[1], i_ring) <= 5e-4, "{text}");
    assert!(text.contains("12.00 µT"), "{text}");
}
