//! The SVG plots as a reviewer reads them: their text elements (title with the verdict,
//! axis labels, ticks, legend and notes) recorded with insta, and the drawn marks held to
//! the numbers they stand for. Positions are read back from the SVG: the log axis is
//! reconstructed from its own tick labels, so a stem, the total or the limit drawn at
//! the wrong height fails, whatever the plotting code believes.
//!
//! The runs set `STRAYFLUX_SIMD=portable`, as tests/snapshots.rs does, so that the
//! recorded numbers do not depend on the CPU.

mod cli_support;

use num_complex::Complex64;
use serde_json::Value;
use std::path::{Path, PathBuf};

const ROOT: &str = env!("CARGO_MANIFEST_DIR");

/// A 10 mm loop at the origin driven at 100 kHz, a 5 mm victim loop 20 mm above it.
const BASE: &str = include_str!("fixtures/coil-over-pickup.toml");

/// The material colours the plots use (plotters' `full_palette`): stems, totals, limit,
/// and the fourth design option's curve.
const TEAL_700: &str = "#00796B";
const BLUE_700: &str = "#1976D2";
const RED_700: &str = "#D32F2F";
const CYAN_800: &str = "#00838F";

fn scratch(name: &str) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("plots")
        .join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Runs the binary from the project folder with portable kernels; stdout as JSON.
fn run_json(args: &[&str]) -> Value {
    let out = cli_support::bin()
        .current_dir(ROOT)
        .env("STRAYFLUX_SIMD", "portable")
        .args(args)
        .output()
        .expect("the binary runs");
    cli_support::stdout_json(&out)
}

/// A text element: its anchor and its text.
struct Text {
    x: f64,
    y: f64,
    text: String,
}

/// What the plots' SVG holds: its texts and its polylines (stroke colour, points).
struct Svg {
    texts: Vec<Text>,
    lines: Vec<(String, Vec<(f64, f64)>)>,
}

fn read_svg(path: &Path) -> Svg {
    let text = std::fs::read_to_string(path).unwrap();
    let doc = roxmltree::Document::parse(&text)
        .unwrap_or_else(|e| panic!("{} is not well-formed XML: {e}", path.display()));
    let num = |n: roxmltree::Node, a: &str| n.attribute(a).unwrap().parse::<f64>().unwrap();
    let texts = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| Text {
            x: num(n, "x"),
            y: num(n, "y"),
            text: n
                .descendants()
                .filter(|t| t.is_text())
                .filter_map(|t| t.text())
                .collect::<String>()
                .trim()
                .to_string(),
        })
        .collect();
    let lines = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .map(|n| {
            let pts = n
                .attribute("points")
                .unwrap()
                .split_whitespace()
                .map(|p| {
                    let (x, y) = p.split_once(',').unwrap();
                    (x.parse().unwrap(), y.parse().unwrap())
                })
                .collect();
            (n.attribute("stroke").unwrap_or("").to_string(), pts)
        })
        .collect();
    Svg { texts, lines }
}

impl Svg {
    /// Every text, one per line, for the snapshot.
    fn text_record(&self) -> String {
        self.texts
            .iter()
            .map(|t| t.text.as_str())
            .collect::<Vec<_>>()
            .join("\n")
    }

    /// The log EMF axis rebuilt from its tick labels ("10.0 µV" at its height): the
    /// pixel height of a value in volts. Every tick must sit on the same straight line
    /// in log10(V) (to a pixel: plotters rounds to whole pixels).
    fn volt_axis(&self) -> impl Fn(f64) -> f64 {
        let ticks: Vec<(f64, f64)> = self
            .texts
            .iter()
            .filter(|t| t.x < 100.0)
            .filter_map(|t| volts(&t.text).map(|v| (v.log10(), t.y)))
            .collect();
        assert!(ticks.len() >= 2, "fewer than two EMF ticks");
        let (a, b) = (ticks[0], ticks[ticks.len() - 1]);
        let slope = (b.1 - a.1) / (b.0 - a.0);
        for t in &ticks {
            assert!((a.1 + slope * (t.0 - a.0) - t.1).abs() <= 1.0, "tick {t:?}");
        }
        move |v: f64| a.1 + slope * (v.log10() - a.0)
    }

    /// The polylines of colour `stroke` inside the chart (above the x axis title `below`).
    fn marks(&self, stroke: &str, below: f64) -> Vec<&Vec<(f64, f64)>> {
        self.lines
            .iter()
            .filter(|(s, p)| s == stroke && p.iter().all(|q| q.1 < below && q.0 > 100.0))
            .map(|(_, p)| p)
            .collect()
    }

    fn y_of_text(&self, text: &str) -> f64 {
        self.texts
            .iter()
            .find(|t| t.text == text)
            .unwrap_or_else(|| panic!("no text `{text}`"))
            .y
    }
}

/// "10.0 µV", "500 nV", "1.00 mV" in volts; `None` for any other text.
fn volts(text: &str) -> Option<f64> {
    let (num, unit) = text.split_once(' ')?;
    let scale = match unit {
        "V" => 1.0,
        "mV" => 1e-3,
        "µV" => 1e-6,
        "nV" => 1e-9,
        "pV" => 1e-12,
        _ => return None,
    };
    Some(num.parse::<f64>().ok()? * scale)
}

/// Each frequency's EMF of one victim from `couple --json`, V rms: the phasor sum over
/// sources of emf_v_peak∠emf_phase_deg, divided by √2 (docs/model.md: lines of one
/// frequency add as phasors).
fn lines_rms(victim: &Value) -> Vec<(f64, f64)> {
    let mut sums: Vec<(f64, Complex64)> = Vec::new();
    for s in victim["sources"].as_array().unwrap() {
        for l in s["lines"].as_array().unwrap() {
            let f = l["frequency_hz"].as_f64().unwrap();
            let e = Complex64::from_polar(
                l["emf_v_peak"].as_f64().unwrap(),
                l["emf_phase_deg"].as_f64().unwrap().to_radians(),
            );
            match sums.iter_mut().find(|(g, _)| (g / f - 1.0).abs() < 1e-9) {
                Some((_, sum)) => *sum += e,
                None => sums.push((f, e)),
            }
        }
    }
    sums.iter()
        .map(|(f, e)| (*f, e.norm() / std::f64::consts::SQRT_2))
        .collect()
}

fn settings() -> insta::Settings {
    let mut s = insta::Settings::clone_current();
    s.set_prepend_module_to_snapshot(false);
    s.set_omit_expression(true);
    s
}

#[test]
fn spectrum_stems_total_and_limit_sit_at_their_values_and_the_floor_is_well_below() {
    let dir = scratch("spectrum");
    let doc = run_json(&[
        "couple",
        "scenes/pfc-toroid-adc.toml",
        "--json",
        "--plot",
        dir.to_str().unwrap(),
    ]);
    for v in doc["victims"].as_array().unwrap() {
        let id = v["id"].as_str().unwrap();
        let svg = read_svg(&dir.join(format!("{id}-spectrum.svg")));
        let px = svg.volt_axis();
        let bottom = svg.y_of_text("frequency");
        let mut lines = lines_rms(v);
        lines.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut stems = svg.marks(TEAL_700, bottom);
        stems.sort_by(|a, b| a[0].0.total_cmp(&b[0].0));
        assert_eq!(stems.len(), lines.len(), "{id}: one stem per line");
        let floor_px = stems[0][0].1;
        let mut smallest = f64::INFINITY;
        for (stem, (_, rms)) in stems.iter().zip(&lines) {
            // Each stem rises from the floor to its line's EMF (to a pixel).
            assert_eq!(stem[0].1, floor_px, "{id}: stems start on the floor");
            assert!(
                (stem[1].1 - px(*rms)).abs() <= 1.0,
                "{id}: stem {stem:?} vs {rms}"
            );
            smallest = smallest.min(*rms);
        }
        // The floor is at least a decade under the smallest line (our design: no stem
        // is a stub), so its pixel is at least one decade's height below that line's.
        let decade = px(1e-7) - px(1e-6);
        assert!(
            floor_px - px(smallest) >= decade - 1.0,
            "{id}: floor {floor_px} px, smallest line at {} px, decade {decade} px",
            px(smallest)
        );
        // The total and the dashed limit are level lines at their values.
        let total = v["total_emf_v_rms"].as_f64().unwrap();
        let limit = v["limit_v_rms"].as_f64().unwrap();
        assert_eq!(
            limit, 10e-6,
            "scenes/pfc-toroid-adc.toml: limit = \"10 uV\""
        );
        let level = |stroke: &str, value: f64| {
            let marks = svg.marks(stroke, bottom);
            assert!(!marks.is_empty(), "{id}: no {stroke} line");
            for m in marks {
                for q in m {
                    assert!((q.1 - px(value)).abs() <= 1.0, "{id}: {stroke} at {q:?}");
                }
            }
        };
        level(BLUE_700, total);
        level(RED_700, limit);
        assert!(svg.marks(RED_700, bottom).len() > 10, "{id}: dashed");
        // The title's margin is 20·log10(limit / total) (docs/model.md), and the verdict
        // follows the comparison of the total with the limit.
        let margin = 20.0 * (limit / total).log10();
        let title = &svg.texts[1].text;
        assert!(
            title.contains(&format!("margin {margin:+.1} dB")),
            "{title}"
        );
        let verdict = if total > limit {
            "OVER LIMIT"
        } else {
            "within limit"
        };
        assert!(title.ends_with(verdict), "{title}");
    }
    let settings = settings();
    let _guard = settings.bind_to_scope();
    let svg = read_svg(&dir.join("adc-ref-spectrum.svg"));
    insta::assert_snapshot!("plot__pfc-toroid-adc__adc-ref-spectrum", svg.text_record());
}

/// The fixture with three sheet options between the loops, none fitted (so that the
/// orientation search at the placed position is unshielded and quick), compared over
/// frequency. A loose tolerance keeps the shielded solves quick too.
fn compared_scene(dir: &Path) -> PathBuf {
    let sheet = |id: &str, material: &str, thickness: &str| {
        format!(
            "\n[[shield]]\nid = \"{id}\"\nmaterial = \"{material}\"\nthickness = \"{thickness}\"\n\
             position = [0, 0, \"8 mm\"]\naxis = [0, 0, 1]\nfitted = false\n"
        )
    };
    let text = format!(
        "[solver]\ntolerance = 1e-3\n\n{BASE}{}{}{}\n[[sweep]]\nid = \"options\"\n\
         victim = \"pickup\"\nvary = \"frequency\"\nfrom = \"50 Hz\"\nto = \"1 MHz\"\n\
         steps = 7\nscale = \"log\"\ncompare = [\"none\", \"cu\", \"al\", \"steel\"]\n",
        sheet("al", "aluminium", "1 mm"),
        sheet("cu", "copper", "35 um"),
        sheet("steel", "steel", "1 mm"),
    );
    let p = dir.join("options.toml");
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn a_compared_sweep_cuts_curves_at_the_floor_and_names_them_off_scale() {
    let dir = scratch("compared");
    let scene = compared_scene(&dir);
    let out = dir.join("out");
    let doc = run_json(&[
        "sweep",
        scene.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
    ]);
    let svg = read_svg(&out.join("options.svg"));
    let settings = settings();
    let _guard = settings.bind_to_scope();
    insta::assert_snapshot!("plot__compared-sweep", svg.text_record());

    // Steel (the fourth option) falls under the floor: its legend note names exactly the
    // steps whose total in the JSON is under the floor the note gives.
    let s = &doc["sweeps"][0];
    let steel: Vec<f64> = s["compare"][3]["total_emf_v_rms"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    let values: Vec<f64> = s["rows"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["value"].as_f64().unwrap())
        .collect();
    let note = svg
        .texts
        .iter()
        .find(|t| t.text.starts_with("steel: under"))
        .expect("a legend note for steel off scale");
    let floor = volts(
        note.text["steel: under ".len()..]
            .split(" from")
            .next()
            .unwrap(),
    )
    .expect("the note gives the floor");
    let under: Vec<usize> = (0..steel.len()).filter(|&k| steel[k] < floor).collect();
    assert!(!under.is_empty());
    let hz = |k: usize| values[k];
    assert!(
        note.text
            .contains(&format!("{:.3} kHz", hz(under[0]) / 1e3)),
        "{}: first step under the floor at {} Hz",
        note.text,
        hz(under[0])
    );
    // Drawn steel points are all on or above the floor; only a run's end touches it
    // (the curve leaves through the floor, it is not drawn along it).
    let px = svg.volt_axis();
    let bottom = svg.y_of_text("fundamental frequency");
    let marks = svg.marks(CYAN_800, bottom);
    assert!(!marks.is_empty());
    let on_floor = marks
        .iter()
        .flat_map(|m| m.iter())
        .filter(|q| (q.1 - px(floor)).abs() <= 1.0)
        .count();
    assert_eq!(
        on_floor,
        marks.len(),
        "one floor crossing per run: {marks:?}"
    );
    for q in marks.iter().flat_map(|m| m.iter()) {
        assert!(q.1 <= px(floor) + 1.0, "{q:?} under the floor");
    }
}

#[test]
fn a_distance_sweep_shows_the_separation_and_an_angle_sweep_ticks_every_30_degrees() {
    let dir = scratch("distance");
    let scene = dir.join("moves.toml");
    std::fs::write(
        &scene,
        format!(
            "{BASE}\n[[sweep]]\nid = \"away\"\nvictim = \"pickup\"\nvary = \"distance\"\n\
             along = [0, 0, 1]\nfrom = \"1 mm\"\nto = \"100 mm\"\nsteps = 9\nscale = \"log\"\n\
             \n[[sweep]]\nid = \"turn\"\nvictim = \"pickup\"\nvary = \"angle\"\n\
             about = [1, 0, 0]\nfrom = \"0 deg\"\nto = \"360 deg\"\nsteps = 13\n"
        ),
    )
    .unwrap();
    let out = dir.join("out");
    run_json(&[
        "sweep",
        scene.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
    ]);
    let away = read_svg(&out.join("away.svg"));
    let turn = read_svg(&out.join("turn.svg"));
    let settings = settings();
    let _guard = settings.bind_to_scope();
    insta::assert_snapshot!("plot__distance-sweep", away.text_record());
    insta::assert_snapshot!("plot__angle-sweep", turn.text_record());

    // The pickup sits 20 mm above the coil's centre and moves straight up, so the
    // separation between centres is 20 mm plus the distance moved (geometry of the
    // fixture). Each top tick must stand over that distance on the bottom axis, which
    // is rebuilt from its own labels (a log axis in mm).
    let axis_y = away.y_of_text("distance moved along [0, 0, 1] (mm)");
    let bottom: Vec<(f64, f64)> = away
        .texts
        .iter()
        .filter(|t| t.y < axis_y && t.y > axis_y - 40.0)
        .filter_map(|t| t.text.parse::<f64>().ok().map(|v| (v.log10(), t.x)))
        .collect();
    let (a, b) = (bottom[0], bottom[bottom.len() - 1]);
    let x_of_mm = |mm: f64| a.1 + (b.1 - a.1) * (mm.log10() - a.0) / (b.0 - a.0);
    let title_y = away.y_of_text("separation between the centres of the victim and \"coil\" (mm)");
    let top: Vec<(&Text, f64)> = away
        .texts
        .iter()
        .filter(|t| t.y > title_y && t.y < title_y + 40.0)
        .filter_map(|t| t.text.parse().ok().map(|v| (t, v)))
        .collect();
    assert!(top.len() >= 3, "too few separation ticks");
    for (t, sep) in top {
        assert!(
            (t.x - x_of_mm(sep - 20.0)).abs() <= 1.5,
            "separation {sep} mm at x {} px, moved {} mm at {} px",
            t.x,
            sep - 20.0,
            x_of_mm(sep - 20.0)
        );
    }
    // The angle axis: a tick label every 30° from 0 to 360.
    let ticks: Vec<&str> = turn
        .texts
        .iter()
        .map(|t| t.text.as_str())
        .filter(|t| t.parse::<f64>().is_ok())
        .collect();
    let want: Vec<String> = (0..=12).map(|k| (30 * k).to_string()).collect();
    assert_eq!(ticks, want);
}
