//! The command line with shields: the outputs carry the shielding (docs/model.md:
//! `shielding_db` per line; shields as quads in `scene.vtp`). The bad shield input
//! cases are tabled in tests/bad_input_table.rs.

mod cli_support;

use cli_support::{run, stdout_json};
use std::path::PathBuf;

fn scene(name: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("strayflux-cli-shields-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// A 10 mm loop at the origin driven at 100 kHz, a victim loop 20 mm above it.
const BASE: &str = include_str!("fixtures/coil-over-pickup.toml");

fn sheet(id: &str, material: &str, thickness: &str, z_mm: f64, axis: &str) -> String {
    format!(
        "\n[[shield]]\nid = \"{id}\"\nmaterial = {material}\nthickness = \"{thickness}\"\n\
         position = [0, 0, \"{z_mm} mm\"]\naxis = {axis}\n"
    )
}

// The bad shield input cases are in tests/bad_input_table.rs.

#[test]
fn couple_reports_shielding_per_line_and_the_free_space_m() {
    // 1 mm copper at 100 kHz (δ = 0.21 mm): the plate must cut the EMF by tens of dB;
    // M stays the free-space value, and |EMF| = ωM|I| / 10^(dB/20) (docs/model.md).
    let shielded = scene(
        "cu.toml",
        &format!(
            "{BASE}{}",
            sheet("plate", "\"copper\"", "1 mm", 8.0, "[0, 0, 1]")
        ),
    );
    let free = scene("free.toml", BASE);
    let s = stdout_json(&run(&["couple", shielded.to_str().unwrap(), "--json"]));
    let f = stdout_json(&run(&["couple", free.to_str().unwrap(), "--json"]));
    let src = &s["victims"][0]["sources"][0];
    let line = &src["lines"][0];
    let db = line["shielding_db"].as_f64().unwrap();
    let m_s = src["mutual_inductance_h"].as_f64().unwrap();
    let m_f = f["victims"][0]["sources"][0]["mutual_inductance_h"]
        .as_f64()
        .unwrap();
    assert_eq!(m_s, m_f);
    assert!(db > 20.0, "copper 1 mm at 100 kHz gave only {db} dB");
    let emf = line["emf_v_peak"].as_f64().unwrap();
    let want = std::f64::consts::TAU * 1e5 * m_f / 10f64.powf(db / 20.0);
    assert!((emf / want - 1.0).abs() < 1e-9, "{emf} vs {want}");
    assert_eq!(
        f["victims"][0]["sources"][0]["lines"][0]["shielding_db"].as_f64(),
        Some(0.0)
    );
}

#[test]
fn materials_prints_the_skin_depth_of_copper() {
    // δ = 1/√(π f μ0 σ) for copper (58 MS/m) at 60 Hz is 8.53 mm (skin depth δ = √(2/(ωμσ)), Jackson, "Classical Electrodynamics", 3rd ed., §5.18; from memory).
    let out = run(&["materials", "--frequency", "60 Hz"]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    let copper = text.lines().find(|l| l.starts_with("copper")).unwrap();
    assert!(copper.contains("8.532 mm"), "{copper}");
    assert!(
        text.contains("caution"),
        "the permeability caution is missing"
    );
    let bad = run(&["materials", "--frequency", "-1 Hz"]);
    assert_eq!(bad.status.code(), Some(2));
}

#[test]
fn scene_vtp_draws_sheets_and_enclosures_as_quads() {
    let text = format!(
        "{BASE}{}\n[[enclosure]]\nid = \"can\"\nsize = [\"14 mm\", \"14 mm\", \"6 mm\"]\n\
         position = [0, 0, \"20 mm\"]\nmaterial = \"steel\"\nthickness = \"0.3 mm\"\n\
         contains = [\"pickup\"]\n\n[[map]]\nid = \"m\"\nkind = \"plane\"\n\
         min = [\"-5 mm\", 0, \"12 mm\"]\nmax = [\"5 mm\", 0, \"16 mm\"]\nstep = \"1 mm\"\n",
        sheet("plate", "\"aluminium\"", "1 mm", 8.0, "[0, 0, 1]")
    );
    let path = scene("vtp.toml", &text);
    let dir = std::env::temp_dir().join(format!("strayflux-vtp-{}", std::process::id()));
    let out = run(&[
        "map",
        path.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
    ]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let xml = std::fs::read_to_string(dir.join("scene.vtp")).unwrap();
    let doc = roxmltree::Document::parse(&xml).unwrap();
    let piece = doc.descendants().find(|n| n.has_tag_name("Piece")).unwrap();
    // Two faces for the sheet, six for the box.
    assert_eq!(piece.attribute("NumberOfPolys"), Some("8"));
    assert!(xml.contains("shield:plate") && xml.contains("enclosure:can"));
}

#[test]
fn a_compared_sweep_writes_one_column_per_alternative() {
    let text = format!(
        "{BASE}{}{}\n[[sweep]]\nid = \"cmp\"\nvictim = \"pickup\"\nvary = \"frequency\"\n\
         from = \"100 Hz\"\nto = \"1 MHz\"\nsteps = 5\ncompare = [\"none\", \"al\", \"cu\"]\n",
        sheet("al", "\"aluminium\"", "1 mm", 8.0, "[0, 0, 1]"),
        sheet("cu", "\"copper\"", "35 um", 8.0, "[0, 0, 1]")
            .replace("axis", "fitted = false\naxis")
    );
    let path = scene("cmp-ok.toml", &text);
    let dir = std::env::temp_dir().join(format!("strayflux-cmp-{}", std::process::id()));
    let out = run(&[
        "sweep",
        path.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
        "--json",
    ]);
    let doc = stdout_json(&out);
    let cmp = doc["sweeps"][0]["compare"].as_array().unwrap();
    assert_eq!(cmp.len(), 3);
    assert!(cmp[0]["shield"].is_null());
    // The fitted sheet is "al": the main totals equal its alternative's.
    let rows = doc["sweeps"][0]["rows"].as_array().unwrap();
    for (k, r) in rows.iter().enumerate() {
        assert_eq!(r["total_emf_v_rms"], cmp[1]["total_emf_v_rms"][k]);
        // No sheet at all couples at least as much as either sheet at every step (a
        // passive conducting sheet only removes flux here; common practice).
        let none = cmp[0]["total_emf_v_rms"][k].as_f64().unwrap();
        // One line: its shielding is the ratio of the totals without and with the sheet
        // (the definition of shielding_db in docs/model.md).
        let fitted = cmp[1]["total_emf_v_rms"][k].as_f64().unwrap();
        let db = r["shielding_db"][0].as_f64().unwrap();
        assert!((db - 20.0 * (none / fitted).log10()).abs() < 1e-9, "{db}");
        for alt in &cmp[1..] {
            assert!(alt["total_emf_v_rms"][k].as_f64().unwrap() <= none * (1.0 + 1e-9));
        }
    }
    let csv = std::fs::read_to_string(dir.join("cmp.csv")).unwrap();
    let header = csv.lines().next().unwrap();
    assert!(
        header
            .ends_with("total_emf_v_rms_no_shield,total_emf_v_rms_with_al,total_emf_v_rms_with_cu")
    );
}
