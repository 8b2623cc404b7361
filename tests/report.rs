//! `report`: the HTML page read back as a browser reads it (scraper) and held to things
//! outside the page's code: `couple --json` of the same scene, bit for bit; the scene
//! file's SHA-256 computed here; the scene's own sweep ids; the title as written in the
//! scene (escaped, so it stays text); and bad input, which must leave no report.

mod cli_support;

use cli_support::{bin, stdout_json};
use scraper::{ElementRef, Html, Selector};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Output;

/// 2026-01-01T00:00:00Z as seconds since 1970: 56 years of 365 days and 14 leap days.
const EPOCH: &str = "1767225600";

/// A fresh, empty scratch folder for one test.
fn scratch(test: &str) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("report")
        .join(test);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenes")
        .join(name)
}

/// `report SCENE --out OUT` with a fixed date.
fn run_report(scene: &Path, out: &Path) -> Output {
    bin()
        .args(["report", scene.to_str().unwrap(), "--out"])
        .arg(out)
        .env("SOURCE_DATE_EPOCH", EPOCH)
        .output()
        .expect("the binary runs")
}

/// The page `report` wrote for `scene`, as text and parsed.
fn report_page(scene: &Path, out: &Path) -> (String, Html) {
    let o = run_report(scene, out);
    assert!(
        o.status.success(),
        "{}: exit {:?}, stderr: {}",
        scene.display(),
        o.status.code(),
        String::from_utf8_lossy(&o.stderr)
    );
    let text = std::fs::read_to_string(out.join("report.html")).expect("report.html written");
    let page = Html::parse_document(&text);
    (text, page)
}

fn sel(css: &str) -> Selector {
    Selector::parse(css).unwrap()
}

fn all<'a>(root: ElementRef<'a>, css: &str) -> Vec<ElementRef<'a>> {
    root.select(&sel(css)).collect()
}

fn one<'a>(root: ElementRef<'a>, css: &str) -> ElementRef<'a> {
    let found = all(root, css);
    assert_eq!(found.len(), 1, "expected one {css}");
    found[0]
}

fn text_of(e: ElementRef<'_>) -> String {
    e.text().collect()
}

/// The exact value an element carries: `data-value` parsed as f64.
fn value(e: ElementRef<'_>) -> Option<f64> {
    e.value()
        .attr("data-value")
        .map(|v| v.parse().unwrap_or_else(|_| panic!("data-value {v:?}")))
}

/// A JSON number (or null) as f64.
fn json_f64(v: &Value) -> Option<f64> {
    v.as_f64()
}

/// Asserts two optional f64 have the same bits (both absent, or both present).
fn same_bits(page: Option<f64>, json: Option<f64>, what: &str) {
    assert_eq!(
        page.map(f64::to_bits),
        json.map(f64::to_bits),
        "{what}: page {page:?}, couple --json {json:?}"
    );
}

fn couple_json(scene: &Path) -> Value {
    stdout_json(
        &bin()
            .args(["couple", scene.to_str().unwrap(), "--json"])
            .output()
            .expect("the binary runs"),
    )
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// The summary table and each victim's line tables against `couple --json`.
fn check_numbers(root: ElementRef<'_>, couple: &Value, scene: &str) {
    let victims = couple["victims"].as_array().unwrap();
    let rows = all(root, "#summary-table tbody tr");
    assert_eq!(
        rows.len(),
        victims.len(),
        "{scene}: one summary row per victim"
    );
    for (row, v) in rows.iter().zip(victims) {
        let id = v["id"].as_str().unwrap();
        assert_eq!(row.value().attr("data-victim"), Some(id), "{scene}");
        let cell = |c: &str| value(one(*row, c));
        same_bits(cell("td.total"), json_f64(&v["total_emf_v_rms"]), id);
        same_bits(cell("td.limit"), json_f64(&v["limit_v_rms"]), id);
        same_bits(cell("td.margin"), json_f64(&v["margin_db"]), id);
        let verdict = text_of(one(*row, "td.verdict"));
        match v["pass"].as_bool() {
            Some(true) => assert!(verdict.contains("within limit"), "{scene} {id}"),
            Some(false) => {
                // Over the limit stands out without colour: bold words and a marker.
                let strong = text_of(one(*row, "td.verdict strong"));
                assert!(
                    strong.contains("OVER LIMIT") && strong.contains('✗'),
                    "{strong}"
                );
            }
            None => assert!(!verdict.contains("OVER LIMIT"), "{scene} {id}: {verdict}"),
        }
        let section = one(root, &format!("section.victim[data-victim=\"{id}\"]"));
        let tables = all(section, "table.lines");
        let sources = v["sources"].as_array().unwrap();
        assert_eq!(
            tables.len(),
            sources.len(),
            "{scene} {id}: a table per source"
        );
        for (table, s) in tables.iter().zip(sources) {
            assert_eq!(table.value().attr("data-source"), s["id"].as_str());
            same_bits(
                value(one(*table, "caption .mutual")),
                json_f64(&s["mutual_inductance_h"]),
                "M",
            );
            let lines = s["lines"].as_array().unwrap();
            let trs = all(*table, "tbody tr");
            assert_eq!(trs.len(), lines.len(), "{scene} {id}: a row per line");
            for (tr, l) in trs.iter().zip(lines) {
                let c = |css: &str| value(one(*tr, css));
                same_bits(c(".frequency"), json_f64(&l["frequency_hz"]), "f");
                same_bits(c(".current"), json_f64(&l["current_a_peak"]), "I");
                same_bits(c(".emf"), json_f64(&l["emf_v_rms"]), "EMF");
                if let Some(shielding) = all(*tr, ".shielding").first() {
                    same_bits(value(*shielding), json_f64(&l["shielding_db"]), "dB");
                }
            }
        }
    }
}

/// What every page must be: self-contained, scriptless, dated and hashed as asked.
fn check_page(text: &str, root: ElementRef<'_>, scene: &Path) {
    let name = scene.display();
    assert!(
        !text.contains("http://") && !text.contains("https://"),
        "{name}: the page names a URL"
    );
    assert!(all(root, "script, link, iframe, img, object, embed").is_empty());
    assert!(!text.contains("url("), "{name}: a stylesheet resource");
    let bytes = std::fs::read(scene).unwrap();
    assert_eq!(text_of(one(root, "#scene-sha256")), sha256_hex(&bytes));
    let date = one(root, "#report-date");
    assert_eq!(date.value().attr("datetime"), Some("2026-01-01T00:00:00Z"));
    assert_eq!(text_of(one(root, "#version")), env!("CARGO_PKG_VERSION"));
    assert_eq!(
        all(root, "#scene-drawn figure > svg").len(),
        1,
        "{name}: the scene drawn"
    );
    // Every header cell of every data table says what it heads.
    for th in all(root, "th") {
        assert!(
            th.value().attr("scope").is_some(),
            "{name}: th without scope"
        );
    }
    let cautions = text_of(one(root, "p.cautions"));
    assert!(cautions.starts_with("Results are estimates for design, not compliance"));
    assert!(cautions.contains("licensed practice"));
    assert!(text_of(one(root, "#limits")).contains("docs/model.md in the strayflux sources"));
}

/// The ids of the scene's `[[sweep]]`s, read from the file itself.
fn sweep_ids(scene: &Path) -> Vec<String> {
    let doc: toml::Table = std::fs::read_to_string(scene).unwrap().parse().unwrap();
    doc.get("sweep")
        .and_then(|s| s.as_array())
        .map(|a| {
            a.iter()
                .map(|s| s["id"].as_str().unwrap().to_string())
                .collect()
        })
        .unwrap_or_default()
}

#[test]
fn demo_reports_carry_couple_json_numbers_exactly() {
    // The demo scenes without sweeps cost one `couple` each; the choke's three sweeps
    // cover the sweep sections (the shield demo's options have their own test).
    let mut scenes: Vec<PathBuf> = std::fs::read_dir(demo(""))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "toml"))
        .filter(|p| sweep_ids(p).is_empty())
        .collect();
    scenes.sort();
    assert!(scenes.len() >= 5, "demo scenes without sweeps: {scenes:?}");
    scenes.push(demo("choke-thermocouple.toml"));
    let out = scratch("demos");
    for scene in &scenes {
        let dir = out.join(scene.file_stem().unwrap());
        let (text, page) = report_page(scene, &dir);
        let root = page.root_element();
        check_page(&text, root, scene);
        check_numbers(root, &couple_json(scene), &scene.display().to_string());
        let ids = sweep_ids(scene);
        let sections = all(root, "section.sweep");
        assert_eq!(sections.len(), ids.len(), "{}", scene.display());
        for (s, id) in sections.iter().zip(&ids) {
            assert_eq!(s.value().attr("data-sweep"), Some(id.as_str()));
            assert_eq!(all(*s, "figure svg").len(), 1, "sweep {id}: its plot");
        }
        if ids.is_empty() {
            one(root, "#no-sweeps");
        }
    }
}

#[test]
fn the_choke_report_gives_safe_distances_and_nulls_as_sweep_json() {
    let scene = demo("choke-thermocouple.toml");
    let out = scratch("choke-sweeps");
    let (_, page) = report_page(&scene, &out.join("report"));
    let sweeps = stdout_json(
        &bin()
            .args(["sweep", scene.to_str().unwrap(), "--json", "--out"])
            .arg(out.join("sweep"))
            .output()
            .unwrap(),
    );
    let root = page.root_element();
    // The over-limit victim's over-limit verdict is in its summary row, marked.
    let over = all(root, "#summary-table tr.verdict-over");
    assert_eq!(over.len(), 1);
    for s in sweeps["sweeps"].as_array().unwrap() {
        let id = s["id"].as_str().unwrap();
        let section = one(root, &format!("section.sweep[data-sweep=\"{id}\"]"));
        let fact = |label: &str| {
            all(section, "tr")
                .into_iter()
                .find(|tr| text_of(one(*tr, "th")).starts_with(label))
        };
        let safe = fact("safe distance").map(|tr| value(one(tr, "td")));
        match s["vary"].as_str() {
            Some("distance") => same_bits(safe.flatten(), json_f64(&s["safe_value"]), id),
            _ => assert!(
                safe.is_none(),
                "{id}: a safe distance on a non-distance sweep"
            ),
        }
        let rows = s["rows"].as_array().unwrap();
        let totals: Vec<f64> = rows
            .iter()
            .map(|r| r["total_emf_v_rms"].as_f64().unwrap())
            .collect();
        let lowest = totals.iter().copied().fold(f64::INFINITY, f64::min);
        let highest = totals.iter().copied().fold(0.0, f64::max);
        same_bits(value(one(fact("lowest").unwrap(), "td")), Some(lowest), id);
        same_bits(
            value(one(fact("highest").unwrap(), "td")),
            Some(highest),
            id,
        );
        assert!(
            fact("null orientation").is_some(),
            "{id}: the null as placed"
        );
    }
}

#[test]
fn scene_text_is_escaped_and_a_scene_without_sweeps_renders() {
    let title = r#"<script>alert(1)</script> & "quotes""#;
    let dir = scratch("escaping");
    let scene = dir.join("hostile.toml");
    let text = format!(
        "{}\n[scene]\ntitle = {}\n",
        include_str!("fixtures/coil-over-pickup.toml"),
        toml::Value::String(title.into())
    );
    std::fs::write(&scene, text).unwrap();
    let (html, page) = report_page(&scene, &dir.join("out"));
    let root = page.root_element();
    assert!(all(root, "script").is_empty(), "the title became a script");
    assert!(!html.contains("<script"));
    assert_eq!(text_of(one(root, "h1")), title, "the title, intact as text");
    assert!(text_of(one(root, "title")).starts_with(title));
    check_page(&html, root, &scene);
    check_numbers(root, &couple_json(&scene), "hostile.toml");
    one(root, "#no-sweeps");
}

#[test]
fn a_scene_without_victims_still_gives_a_page() {
    let dir = scratch("no-victims");
    let scene = dir.join("source-only.toml");
    std::fs::write(&scene, include_str!("fixtures/loop-source.toml")).unwrap();
    let (html, page) = report_page(&scene, &dir.join("out"));
    let root = page.root_element();
    check_page(&html, root, &scene);
    one(root, "#no-victims");
    one(root, "#no-sweeps");
    assert!(all(root, "section.victim, #summary-table").is_empty());
}

#[test]
fn an_ideal_edge_gives_no_verdict_and_names_why() {
    // A square wave without `rise`: every odd line to infinity, so no total (see
    // docs/scene-reference.md, "Ideal edges have no total").
    let dir = scratch("ideal-edge");
    let scene = dir.join("edge.toml");
    let text = include_str!("fixtures/coil-over-pickup.toml").replace(
        r#"current = { frequency = "100 kHz", peak = "1 A" }"#,
        r#"current = { waveform = "square", frequency = "100 kHz", peak = "1 A" }"#,
    );
    assert!(text.contains("square"));
    let sweep = "\n[[sweep]]\nid = \"away\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
                 along = [0, 0, 1]\nfrom = \"1 mm\"\nto = \"10 mm\"\nsteps = 3\n";
    std::fs::write(&scene, text + sweep).unwrap();
    let (html, page) = report_page(&scene, &dir.join("out"));
    let root = page.root_element();
    check_page(&html, root, &scene);
    check_numbers(root, &couple_json(&scene), "edge.toml");
    let row = one(root, "#summary-table tbody tr");
    let verdict = text_of(one(row, "td.verdict"));
    assert!(
        verdict.contains("no verdict") && verdict.contains("ideal edge"),
        "{verdict}"
    );
    // `sweep` refuses such a scene; the page names the sweep and why.
    let note = text_of(one(root, "p.not-run[data-sweep=\"away\"]"));
    assert!(note.contains("not run"), "{note}");
}

#[test]
fn bad_input_exits_2_and_writes_no_report() {
    let dir = scratch("bad-input");
    let out = dir.join("out");
    let missing = dir.join("no-such-scene.toml");
    let o = run_report(&missing, &out);
    assert_eq!(o.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(stderr.trim_end().lines().count(), 1, "{stderr}");
    assert!(stderr.contains("no-such-scene.toml"), "{stderr}");
    assert!(o.stdout.is_empty());
    assert!(!out.join("report.html").exists());
    // A date that is not whole seconds is refused too, before any work.
    let scene = dir.join("ok.toml");
    std::fs::write(&scene, include_str!("fixtures/loop-source.toml")).unwrap();
    let o = bin()
        .args(["report", scene.to_str().unwrap(), "--out"])
        .arg(&out)
        .env("SOURCE_DATE_EPOCH", "yesterday")
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("SOURCE_DATE_EPOCH"), "{stderr}");
    assert!(!out.join("report.html").exists());
}

#[test]
fn shield_options_carry_sweep_json_values() {
    // The coil and pickup 20 mm apart, a fitted copper sheet between them and an
    // aluminium one as a design option; a short frequency sweep compares them.
    let dir = scratch("options");
    let scene = dir.join("options.toml");
    let extra = r#"
[[shield]]
id = "cu"
material = "copper"
thickness = "35 um"
position = [0, 0, "10 mm"]
axis = [0, 0, 1]

[[shield]]
id = "alu"
material = "aluminium"
thickness = "1 mm"
position = [0, 0, "10 mm"]
axis = [0, 0, 1]
fitted = false

[[sweep]]
id = "options"
victim = "pickup"
vary = "frequency"
from = "10 kHz"
to = "1 MHz"
steps = 3
scale = "log"
compare = ["none", "alu"]
"#;
    let text = format!("{}{extra}", include_str!("fixtures/coil-over-pickup.toml"));
    std::fs::write(&scene, text).unwrap();
    let (html, page) = report_page(&scene, &dir.join("report"));
    let root = page.root_element();
    check_page(&html, root, &scene);
    check_numbers(root, &couple_json(&scene), "options.toml");
    let sweeps = stdout_json(
        &bin()
            .args(["sweep", scene.to_str().unwrap(), "--json", "--out"])
            .arg(dir.join("sweep"))
            .output()
            .unwrap(),
    );
    let compare = sweeps["sweeps"][0]["compare"].as_array().unwrap();
    let section = one(
        root,
        "#shield-options section.options[data-sweep=\"options\"]",
    );
    let rows = all(section, "table.option-totals tbody tr");
    assert_eq!(rows.len(), compare.len());
    for (k, (row, alt)) in rows.iter().zip(compare).enumerate() {
        let label = alt["shield"].as_str().unwrap_or("no shield");
        assert_eq!(text_of(one(*row, "th")), label);
        let placed = &alt["placed"];
        same_bits(
            value(one(*row, "td.total")),
            json_f64(&placed["total_emf_v_rms"]),
            label,
        );
        let lines = placed["lines"].as_array().unwrap();
        let trs = all(section, "table.option-lines tbody tr");
        assert_eq!(trs.len(), lines.len());
        for (tr, l) in trs.iter().zip(lines) {
            same_bits(
                value(one(*tr, ".frequency")),
                json_f64(&l["frequency_hz"]),
                "f",
            );
            let cell = all(*tr, "td.shielding")[k];
            same_bits(value(cell), json_f64(&l["shielding_db"]), label);
        }
    }
}
