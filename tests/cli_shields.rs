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
    assert!(header.ends_with(
        "total_emf_v_rms_no_shield,total_emf_v_rms_with_al,total_emf_v_rms_with_cu,contact"
    ));
}

#[test]
fn shielding_beyond_100_db_is_warned_about_and_marked() {
    // 1 mm steel at 100 kHz is about 48 skin depths (δ = 21 µm, from 1/√(π f μ0 μr σ)):
    // hundreds of dB in the infinite-sheet model, beyond what real sheets reach
    // (about 100 dB, common practice). 35 µm copper at 100 kHz stays far below.
    let steel = scene(
        "steel.toml",
        &format!(
            "{BASE}{}",
            sheet("plate", "\"steel\"", "1 mm", 8.0, "[0, 0, 1]")
        ),
    );
    let out = run(&["couple", steel.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(0));
    let err = String::from_utf8_lossy(&out.stderr);
    let warnings: Vec<&str> = err
        .lines()
        .filter(|l| l.contains("victim \"pickup\": the shielding of the 100.0 kHz line"))
        .collect();
    assert_eq!(warnings.len(), 1, "{err}");
    assert!(warnings[0].contains("seams"), "{}", warnings[0]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains(" dB *") && text.contains("* over 100 dB"),
        "{text}"
    );
    let thin = scene(
        "thin-cu.toml",
        &format!(
            "{BASE}{}",
            sheet("plate", "\"copper\"", "35 um", 8.0, "[0, 0, 1]")
        ),
    );
    let out = run(&["couple", thin.to_str().unwrap()]);
    assert!(!String::from_utf8_lossy(&out.stderr).contains("the shielding of"));
    assert!(!String::from_utf8_lossy(&out.stdout).contains("over 100 dB"));
}

#[test]
fn compared_options_report_per_line_shielding_that_thickness_adds_to_as_schelkunoff() {
    // Two lines (100 and 300 kHz) through 1 mm or 1.5 mm of aluminium, both with their
    // first face at z = 0; the source 10 mm below, the victim moved from 10 to 11 mm
    // beyond the first face in steps of 0.5 mm. (1) Each option's per-line shielding is
    // 20·log10(|E no shield| / |E option|) of the alternatives' own per-line EMFs (the
    // definition, docs/model.md). (2) The 1.5 mm plate at step k + 1 has the victim at
    // the same distance from its far face as the 1 mm plate at step k, so the extra
    // 0.5 mm only lengthens the metal path: its EMF is 8.686 Δt/δ dB less (Schelkunoff, BSTJ 17,
    // 1938, as used in Ott, "Electromagnetic Compatibility Engineering", 2009, ch. 6;
    // from memory); 0.05 dB as in tests/physics_shields.rs
    // `extra_thickness_adds_schelkunoff_absorption`, whose error budget holds here.
    let text = r#"[solver]
tolerance = 1e-5

[[source]]
id = "coil"
kind = "loop"
radius = "10 mm"
position = [0, 0, "-10 mm"]
current = { lines = [ { frequency = "100 kHz", peak = "1 A" }, { frequency = "300 kHz", peak = "0.3 A" } ] }

[[victim]]
id = "pickup"
kind = "loop"
radius = "10 mm"
position = [0, 0, "11 mm"]

[[shield]]
id = "al-1mm"
material = "aluminium"
thickness = "1 mm"
position = [0, 0, 0]
axis = [0, 0, 1]
fitted = false

[[shield]]
id = "al-15mm"
material = "aluminium"
thickness = "1.5 mm"
position = [0, 0, 0]
axis = [0, 0, 1]
fitted = false

[[sweep]]
id = "away"
victim = "pickup"
vary = "distance"
along = [0, 0, 1]
scale = "linear"
from = "0 mm"
to = "1 mm"
steps = 3
compare = ["none", "al-1mm", "al-15mm"]
"#;
    let path = scene("options.toml", text);
    let dir = std::env::temp_dir().join(format!("strayflux-options-{}", std::process::id()));
    let out = run(&[
        "sweep",
        path.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
        "--json",
    ]);
    let doc = stdout_json(&out);
    let cmp = doc["sweeps"][0]["compare"].as_array().unwrap();
    let num = |v: &serde_json::Value| v.as_f64().unwrap();
    let emf = |alt: usize, row: usize, line: usize| {
        num(&cmp[alt]["rows"][row]["lines"][line]["emf_v_rms"])
    };
    let shielding = |alt: usize, row: usize, line: usize| {
        num(&cmp[alt]["rows"][row]["lines"][line]["shielding_db"])
    };
    for row in 0..3 {
        for line in 0..2 {
            assert_eq!(shielding(0, row, line), 0.0);
            for alt in 1..3 {
                let want = 20.0 * (emf(0, row, line) / emf(alt, row, line)).log10();
                let got = shielding(alt, row, line);
                assert!((got - want).abs() < 1e-9, "{got} vs {want}");
            }
        }
    }
    // Skin depth of aluminium (35 MS/m, μr 1) by 1/√(π f μ0 μr σ) (Ott 2009, ch. 6).
    let mu0 = 4e-7 * std::f64::consts::PI;
    for (line, f) in [(0, 1e5), (1, 3e5)] {
        let delta = 1.0 / (std::f64::consts::PI * f * mu0 * 3.5e7).sqrt();
        let want = 8.686 * 0.5e-3 / delta;
        for row in 0..2 {
            let extra = 20.0 * (emf(1, row, line) / emf(2, row + 1, line)).log10();
            assert!(
                (extra - want).abs() < 0.05,
                "{f} Hz: {extra} dB vs {want} dB"
            );
        }
    }
    // 1.5 mm at 300 kHz passes 100 dB (docs/model.md §5.1, common practice): one
    // warning for the sweep, naming the largest per-line shielding of any option.
    let largest = cmp
        .iter()
        .flat_map(|a| a["rows"].as_array().unwrap())
        .flat_map(|r| r["lines"].as_array().unwrap())
        .map(|l| num(&l["shielding_db"]))
        .fold(f64::NEG_INFINITY, f64::max);
    assert!(largest > 100.0, "{largest}");
    let err = String::from_utf8_lossy(&out.stderr);
    let warned: Vec<&str> = err
        .lines()
        .filter(|l| l.starts_with("warning: sweep \"away\": the shielding"))
        .collect();
    assert_eq!(warned.len(), 1, "{err}");
    assert!(
        warned[0].contains(&format!(
            "with al-15mm at distance = 1.000 mm reaches {largest:.1} dB"
        )),
        "{}",
        warned[0]
    );
    // The placed position: the same figures, and the text table prints them.
    let placed = |alt: usize, line: usize| num(&cmp[alt]["placed"]["lines"][line]["shielding_db"]);
    assert_eq!(placed(1, 0), shielding(1, 0, 0));
    let out = run(&[
        "sweep",
        path.to_str().unwrap(),
        "--out",
        dir.to_str().unwrap(),
    ]);
    let text = String::from_utf8_lossy(&out.stdout);
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("al-1mm"))
        .unwrap_or_else(|| panic!("no al-1mm row in {text}"));
    for line in 0..2 {
        let cell = format!("{:.1} dB", placed(1, line));
        assert!(row.contains(&cell), "{cell} not in {row}");
    }
    // Over 100 dB is marked, and the mark explained.
    let thick = text
        .lines()
        .find(|l| l.trim_start().starts_with("al-15mm"))
        .unwrap();
    assert_eq!(placed(2, 1) > 100.0, thick.ends_with("dB*"), "{thick}");
    assert!(
        !row.contains('*') && text.contains("* over 100 dB"),
        "{text}"
    );
}

#[test]
fn materials_json_gives_the_skin_depth_and_a_bare_number_is_hertz() {
    // δ = 1/√(π f μ0 μr σ) (Ott, "Electromagnetic Compatibility Engineering", 2009,
    // ch. 6; from memory), computed here from each material's own σ and μr.
    let doc = stdout_json(&run(&["materials", "--frequency", "1000", "--json"]));
    assert_eq!(doc["frequency_hz"].as_f64(), Some(1000.0));
    let list = doc["materials"].as_array().unwrap();
    assert!(list.len() >= 6);
    let mu0 = 4e-7 * std::f64::consts::PI;
    for m in list {
        let sigma = m["conductivity_s_per_m"].as_f64().unwrap();
        let mu_r = m["relative_permeability"].as_f64().unwrap();
        let want = 1.0 / (std::f64::consts::PI * 1000.0 * mu0 * mu_r * sigma).sqrt();
        let got = m["skin_depth_m"].as_f64().unwrap();
        assert!(
            (got / want - 1.0).abs() < 1e-9,
            "{}: {got} vs {want}",
            m["name"]
        );
        assert!(m["source"].as_str().is_some_and(|s| !s.is_empty()));
    }
    // Copper at 1 kHz: 2.09 mm (Ott 2009, table of skin depths; from memory).
    let copper = list.iter().find(|m| m["name"] == "copper").unwrap();
    assert!((copper["skin_depth_m"].as_f64().unwrap() - 2.09e-3).abs() < 0.01e-3);
    // Without --frequency the depth is null.
    let doc = stdout_json(&run(&["materials", "--json"]));
    assert!(doc["materials"][0]["skin_depth_m"].is_null());
    // The bare number reads as Hz in the table too: the same as "1 kHz".
    let bare = run(&["materials", "--frequency", "1000"]);
    let unit = run(&["materials", "--frequency", "1 kHz"]);
    assert_eq!(bare.status.code(), Some(0));
    assert_eq!(bare.stdout, unit.stdout);
    assert!(String::from_utf8_lossy(&bare.stdout).contains("δ @ 1.00 kHz"));
}
