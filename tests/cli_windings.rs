//! The winding kinds, `file` sources and `calibrate` through the command line: located
//! one-line errors for bad geometry (exit 2), CSV paths and rows, and the calibration
//! round trip. Numbers are checked against published closed forms or the contract's own
//! definitions, never against the tool's earlier output.

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

/// Writes `text` to a fresh file named `name` in the scratch folder.
fn write(name: &str, text: &str) -> PathBuf {
    let path = scratch().join(name);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    std::fs::write(&path, text).unwrap();
    path
}

/// One-based line and column (in characters) where `needle` starts in `text`, plus
/// `skip` characters (to step from `key = ` to the value). Panics if absent.
fn locate(text: &str, needle: &str, skip: usize) -> (usize, usize) {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("`{needle}` not in scene"));
    let before = &text[..at];
    let line = before.matches('\n').count() + 1;
    let start = before.rfind('\n').map_or(0, |i| i + 1);
    (line, text[start..at].chars().count() + 1 + skip)
}

/// Where the value of `key = value` starts, for the first `needle` that begins with the
/// key (e.g. `turns = 0`).
fn value_of(text: &str, needle: &str) -> (usize, usize) {
    let eq = needle.find("= ").expect("needle has `= `") + 2;
    locate(text, needle, needle[..eq].chars().count())
}

/// Runs `check` on a bad scene; asserts exit 2, one line on stderr, nothing on stdout,
/// and that the line starts with `FILE:LINE:COL: key` and contains `words` (the pattern
/// of `assert_bad` in tests/cli.rs).
fn assert_bad(name: &str, text: &str, at: (usize, usize), key: &str, words: &str) {
    if let Err(why) = check_bad(name, text, at, key, words) {
        panic!("{why}");
    }
}

/// [`assert_bad`] as a result, for tests that report every failing case at once.
fn check_bad(
    name: &str,
    text: &str,
    (line, col): (usize, usize),
    key: &str,
    words: &str,
) -> Result<(), String> {
    let path = write(name, text);
    let out = run(&["check", path.to_str().unwrap()]);
    let err = String::from_utf8_lossy(&out.stderr);
    let prefix = format!("{}:{line}:{col}: {key}", path.display());
    if out.status.code() != Some(2) {
        return Err(format!(
            "{name}: exit {:?}, stderr `{err}`",
            out.status.code()
        ));
    }
    if !out.stdout.is_empty() || err.trim_end().lines().count() != 1 {
        return Err(format!(
            "{name}: not one line on stderr and none on stdout: `{err}`"
        ));
    }
    if !err.starts_with(&prefix) || !err.contains(words) || err.contains("panicked") {
        return Err(format!(
            "{name}: expected `{prefix}` ... `{words}`, got `{}`",
            err.trim_end()
        ));
    }
    Ok(())
}

const CURRENT: &str = "current = { waveform = \"sine\", peak = \"1 A\", frequency = \"50 Hz\" }\n";

fn helix_scene(body: &str) -> String {
    format!("[[source]]\nid = \"coil\"\nkind = \"helix\"\n{body}{CURRENT}")
}

fn kind_scene(kind: &str, body: &str) -> String {
    format!("[[source]]\nid = \"w\"\nkind = \"{kind}\"\n{body}{CURRENT}")
}

#[test]
fn bad_winding_geometry_gives_exit_two_and_a_located_line() {
    // Non-positive turns.
    let t = helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = 0\n");
    assert_bad(
        "helix-turns0.toml",
        &t,
        value_of(&t, "turns = 0"),
        "source[1].turns",
        "must be between 0 and 1e6 turns",
    );
    let t = helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = -4.5\n");
    assert_bad(
        "helix-turns-neg.toml",
        &t,
        value_of(&t, "turns = -4.5"),
        "source[1].turns",
        "must be between 0 and 1e6 turns",
    );
    let t = kind_scene(
        "toroid",
        "major_radius = \"20 mm\"\nminor_radius = \"5 mm\"\nturns = 0\n",
    );
    assert_bad(
        "toroid-turns0.toml",
        &t,
        value_of(&t, "turns = 0"),
        "source[1].turns",
        "must be at least 1",
    );
    let t = kind_scene(
        "toroid",
        "major_radius = \"20 mm\"\nminor_radius = \"5 mm\"\nturns = 12.5\n",
    );
    assert_bad(
        "toroid-turns-frac.toml",
        &t,
        value_of(&t, "turns = 12.5"),
        "source[1].turns",
        "whole number",
    );
    // Radii in the wrong order.
    let t = kind_scene(
        "spiral",
        "inner_radius = \"6 mm\"\nouter_radius = \"6 mm\"\nturns = 3\n",
    );
    assert_bad(
        "spiral-radii.toml",
        &t,
        value_of(&t, "outer_radius = \"6 mm\""),
        "source[1].outer_radius",
        "must be larger than inner_radius",
    );
    let t = kind_scene(
        "toroid",
        "major_radius = \"20 mm\"\nminor_radius = \"25 mm\"\nturns = 10\n",
    );
    assert_bad(
        "toroid-radii.toml",
        &t,
        value_of(&t, "minor_radius = \"25 mm\""),
        "source[1].minor_radius",
        "must be smaller than major_radius",
    );
    // A twist pitch that is not positive.
    for (name, pitch) in [
        ("pair-pitch0.toml", "\"0 mm\""),
        ("pair-pitchneg.toml", "-0.01"),
    ] {
        let t = kind_scene(
            "pair",
            &format!("length = \"1 m\"\nseparation = \"2 mm\"\ntwist_pitch = {pitch}\n"),
        );
        assert_bad(
            name,
            &t,
            value_of(&t, &format!("twist_pitch = {pitch}")),
            "source[1].twist_pitch",
            "must be greater than zero",
        );
    }
    let t = kind_scene("pair", "length = \"5 mm\"\nseparation = \"5 mm\"\n");
    assert_bad(
        "pair-sep.toml",
        &t,
        value_of(&t, "separation = \"5 mm\""),
        "source[1].separation",
        "smaller than the cable length",
    );
    // Saddle openings of 180° or more make the two coils overlap.
    for (name, opening) in [
        ("saddle-180.toml", "180 deg"),
        ("saddle-200.toml", "200 deg"),
    ] {
        let t = kind_scene(
            "saddle",
            &format!(
                "radius = \"30 mm\"\nlength = \"80 mm\"\nopening = \"{opening}\"\nturns = 10\n"
            ),
        );
        assert_bad(
            name,
            &t,
            value_of(&t, &format!("opening = \"{opening}\"")),
            "source[1].opening",
            "must be between 0 and 180 deg",
        );
    }
    // Unknown shape and leads strings.
    let t = kind_scene(
        "spiral",
        "inner_radius = \"2 mm\"\nouter_radius = \"9 mm\"\nturns = 4\nshape = \"hexagon\"\n",
    );
    assert_bad(
        "spiral-shape.toml",
        &t,
        value_of(&t, "shape = \"hexagon\""),
        "source[1].shape",
        "unknown shape \"hexagon\"",
    );
    let t = helix_scene("radius = \"8 mm\"\nlength = \"12 mm\"\nturns = 10\nleads = \"radial\"\n");
    assert_bad(
        "helix-leads.toml",
        &t,
        value_of(&t, "leads = \"radial\""),
        "source[1].leads",
        "unknown leads \"radial\"",
    );
    // A misspelt key.
    let t = kind_scene(
        "pair",
        "length = \"1 m\"\nseparation = \"2 mm\"\ntwist_pich = \"25 mm\"\n",
    );
    assert_bad(
        "pair-typo.toml",
        &t,
        locate(&t, "twist_pich", 0),
        "source[1].twist_pich",
        "did you mean `twist_pitch`",
    );
}

#[test]
fn misspelt_and_missing_winding_keys_name_the_right_key() {
    // A misspelt key is the one named, not a correctly spelt sibling that looks like the
    // missing key (major_radius is a near-spelling of minor_radius, inner_radius of
    // outer_radius); and a key left out is "missing" at the table (as for `loop` in
    // tests/cli.rs), even when such a sibling is present. Every case is run and the
    // failures are listed together.
    let mut fails = Vec::new();
    for (kind, body, typo, want) in [
        (
            "toroid",
            "major_radius = \"20 mm\"\nminr_radius = \"5 mm\"\nturns = 10\n",
            "minr_radius",
            "minor_radius",
        ),
        (
            "spiral",
            "inner_radius = \"2 mm\"\nouter_radus = \"9 mm\"\nturns = 4\n",
            "outer_radus",
            "outer_radius",
        ),
        (
            "spiral",
            "iner_radius = \"2 mm\"\nouter_radius = \"9 mm\"\nturns = 4\n",
            "iner_radius",
            "inner_radius",
        ),
        (
            "helix",
            "radius = \"8 mm\"\nlenght = \"9 mm\"\nturns = 4\n",
            "lenght",
            "length",
        ),
    ] {
        let t = kind_scene(kind, body);
        fails.extend(
            check_bad(
                &format!("{kind}-typo-{typo}.toml"),
                &t,
                locate(&t, typo, 0),
                &format!("source[1].{typo}"),
                &format!("did you mean `{want}`"),
            )
            .err(),
        );
    }
    for (kind, body, key) in [
        (
            "toroid",
            "major_radius = \"20 mm\"\nturns = 10\n",
            "minor_radius",
        ),
        (
            "toroid",
            "minor_radius = \"5 mm\"\nturns = 10\n",
            "major_radius",
        ),
        (
            "spiral",
            "inner_radius = \"2 mm\"\nturns = 4\n",
            "outer_radius",
        ),
        (
            "spiral",
            "outer_radius = \"9 mm\"\nturns = 4\n",
            "inner_radius",
        ),
        ("helix", "radius = \"8 mm\"\nturns = 4\n", "length"),
        (
            "saddle",
            "radius = \"8 mm\"\nlength = \"20 mm\"\nturns = 4\n",
            "opening",
        ),
        ("pair", "length = \"1 m\"\n", "separation"),
        ("file", "", "path"),
    ] {
        let t = kind_scene(kind, body);
        fails.extend(
            check_bad(
                &format!("{kind}-no-{key}.toml"),
                &t,
                (1, 1),
                &format!("source[1].{key}"),
                &format!("missing key `{key}`"),
            )
            .err(),
        );
    }
    assert!(
        fails.is_empty(),
        "{} failing cases:\n{}",
        fails.len(),
        fails.join("\n")
    );
}

#[test]
fn windings_whose_turns_would_overlap_are_refused() {
    // Pitch smaller than the wire diameter (default wire radius 0.1 mm, so 0.2 mm): 40
    // turns on 5 mm of helix is 0.125 mm per turn.
    let t = helix_scene("radius = \"8 mm\"\nlength = \"5 mm\"\nturns = 40\n");
    assert_bad(
        "helix-overlap.toml",
        &t,
        value_of(&t, "length = \"5 mm\""),
        "source[1].length",
        "overlap",
    );
    // The same turns pass with a thinner wire: 2 × 0.05 mm < 0.125 mm.
    let ok = write(
        "helix-thin.toml",
        &helix_scene(
            "radius = \"8 mm\"\nlength = \"5 mm\"\nturns = 40\nwire_radius = \"0.05 mm\"\n",
        ),
    );
    assert_eq!(run(&["check", ok.to_str().unwrap()]).status.code(), Some(0));
    // A spiral whose radial pitch (3 mm − 1 mm)/20 = 0.1 mm is below the wire diameter.
    let t = kind_scene(
        "spiral",
        "inner_radius = \"1 mm\"\nouter_radius = \"3 mm\"\nturns = 20\n",
    );
    assert_bad(
        "spiral-overlap.toml",
        &t,
        value_of(&t, "outer_radius = \"3 mm\""),
        "source[1].outer_radius",
        "overlap",
    );
    // A toroid whose turns cannot fit on the inside of the core: 400 turns on the inner
    // circumference 2π(10 mm − 4 mm) = 37.7 mm is 0.094 mm per turn, below the 0.2 mm
    // wire diameter (same rule as the helix and spiral; expected at `turns`).
    let t = kind_scene(
        "toroid",
        "major_radius = \"10 mm\"\nminor_radius = \"4 mm\"\nturns = 400\n",
    );
    assert_bad(
        "toroid-overlap.toml",
        &t,
        value_of(&t, "turns = 400"),
        "source[1].turns",
        "overlap",
    );
}

#[test]
fn file_source_rows_and_paths_are_located_in_their_own_files() {
    // A bad row is reported at the CSV's own file, line and column.
    let dir = scratch().join("file-kind");
    std::fs::create_dir_all(dir.join("paths")).unwrap();
    let csv = dir.join("paths/bad.csv");
    std::fs::write(
        &csv,
        "x_mm,y_mm,z_mm\n-10,-10,0\n10,ten,0\n10,10,0\n-10,-10,0\n",
    )
    .unwrap();
    let scene_text = "[[source]]\nid = \"drawn\"\nkind = \"file\"\npath = \"paths/bad.csv\"\n\
                      current = { peak = 1, frequency = 1000 }\n";
    let scene = dir.join("bad-row.toml");
    std::fs::write(&scene, scene_text).unwrap();
    let out = run(&["check", scene.to_str().unwrap()]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(out.stdout.is_empty());
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    let (line, col) = locate(&std::fs::read_to_string(&csv).unwrap(), "ten", 0);
    assert!(
        err.starts_with(&format!("{}:{line}:{col}:", csv.display())),
        "expected {}:{line}:{col}:, got {err}",
        csv.display()
    );
    assert!(err.contains("\"ten\" is not a number"), "{err}");

    // A row with two values, and a repeated point (a zero-length segment).
    for (name, body, bad_line) in [
        ("short.csv", "x,y,z\n0,0,0\n0.01,0\n", 3),
        (
            "repeat.csv",
            "x,y,z\n0,0,0\n0.01,0,0\n0.01,0,0\n0,0.01,0\n",
            4,
        ),
    ] {
        std::fs::write(dir.join("paths").join(name), body).unwrap();
        let scene = dir.join(format!("{name}.toml"));
        std::fs::write(&scene, scene_text.replace("bad.csv", name)).unwrap();
        let out = run(&["check", scene.to_str().unwrap()]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{name}: {err}");
        let csv = dir.join("paths").join(name);
        assert!(
            err.starts_with(&format!("{}:{bad_line}:", csv.display())),
            "{name}: {err}"
        );
    }

    // A missing CSV is reported at the scene's `path` key.
    let missing = scene_text.replace("bad.csv", "nowhere.csv");
    let scene = dir.join("missing.toml");
    std::fs::write(&scene, &missing).unwrap();
    let out = run(&["check", scene.to_str().unwrap()]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    let (line, col) = value_of(&missing, "path = \"paths/nowhere.csv\"");
    assert!(
        err.starts_with(&format!(
            "{}:{line}:{col}: source[1].path:",
            scene.display()
        )),
        "{err}"
    );
    assert!(err.contains("nowhere.csv"), "{err}");
}

#[test]
fn file_source_path_is_relative_to_the_scene_and_a_closed_square_is_a_rectangle() {
    // Paths are relative to the scene file's folder (docs/scene-reference.md), not the working
    // directory: run from elsewhere. The closed square's length is its perimeter and its
    // moment a² per ampere (½∮ r × dl of a square); the same rectangle source couples
    // the same M into a victim (both are the same four segments).
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
    // docs/scene-reference.md: `calibrate = { at, field }` sets the current so that the rms of |B| at
    // `at` equals `field`, i.e. √(Σ_k |B_k|²/2) over the source's lines (the rms of a sum
    // of distinct-frequency sinusoids is the root-sum-square of their rms values:
    // Parseval). The waveform's shape is kept: the triangle's lines stay in the ratios
    // 1/n² with their signs (8Î/(n²π²), the triangle wave's Fourier series; docs/model.md). It considers the source alone, so
    // the second source's field at the point does not count.
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
    let e = rel(coil2.sqrt(), 12e-6);
    eprintln!(
        "calibrate round trip: √Σ b_rms² of the helix lines {:.12e} T vs 12 µT (rel {e:.2e}); \
         the ring adds {:.3e} T at 1 kHz there",
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

#[test]
fn bad_calibrate_tables_are_located() {
    let base = "[[source]]\nid = \"s\"\nkind = \"loop\"\nradius = \"8 mm\"\n\
                current = { waveform = \"sine\", frequency = \"50 Hz\" }\n";
    let on_wire = format!("{base}calibrate = {{ at = [\"8 mm\", 0, 0], field = \"12 uT\" }}\n");
    assert_bad(
        "cal-wire.toml",
        &on_wire,
        value_of(&on_wire, "at = ["),
        "source[1].calibrate.at",
        "lies on the source's conductor",
    );
    let unit = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0], field = \"12 mA\" }}\n");
    assert_bad(
        "cal-unit.toml",
        &unit,
        value_of(&unit, "field = \"12 mA\""),
        "source[1].calibrate.field",
        "current",
    );
    let typo = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0], feild = \"12 uT\" }}\n");
    assert_bad(
        "cal-typo.toml",
        &typo,
        locate(&typo, "feild", 0),
        "source[1].calibrate.feild",
        "did you mean `field`",
    );
    let missing = format!("{base}calibrate = {{ at = [\"20 mm\", 0, 0] }}\n");
    assert_bad(
        "cal-missing.toml",
        &missing,
        value_of(&missing, "calibrate = {"),
        "source[1].calibrate.field",
        "missing key `field`",
    );
    // Without calibrate a waveform needs its amplitude.
    let no_amp = base.to_string();
    assert_bad(
        "cal-noamp.toml",
        &no_amp,
        value_of(&no_amp, "current = {"),
        "source[1].current",
        "peak",
    );
}
