//! Whole-map timings, run once each (a map takes seconds to minutes, too long for
//! criterion's ten samples): `cargo bench --bench maps`. Each case runs `strayflux map`
//! in a child process of this benchmark (so its peak memory is its own), and prints the
//! wall time, the peak resident memory and the map's output arrays.
//!
//! * `winding-board`: a 128³ box map (2.1 million points) 200 mm wide around a
//!   21 120-segment helix (10 mm radius, 40 turns): most points are far from the
//!   winding, where its multipole expansion is used.
//! * `winding-close`: the same grid 50 mm wide, so every point is within 2.5 winding
//!   radii: nearly all direct sums.
//! * `polygon-64`: a 64³ map (275 000 points) of the 2000-segment polygon of
//!   `benches/compare_numpy.py`, with `--exact`.
//! * `winding-board-64`, `winding-board-32`, `winding-close-32`: smaller grids of the
//!   same scenes, for the plot of time against points × segments.
//!
//! For the winding cases the direct field is also computed at every 499th grid point,
//! to give the largest difference between the accelerated and the direct field there
//! and the time a fully direct map would take (extrapolated from the sample).
//! `STRAYFLUX_BENCH_CASES=winding-board,polygon-64` picks cases; the results are also
//! written to `target/bench-maps.csv`, and the log–log plot of time against
//! points × segments (direct and accelerated) to `target/bench-maps.svg`.

use std::time::Instant;
use strayflux::Scene;
use strayflux::field::{Accelerated, b_at_points};

/// The 40-turn helix of tests/fixtures/helix-40-turns.toml with a cube map.
const HELIX: &str = concat!(
    include_str!("../tests/fixtures/helix-40-turns.toml"),
    r#"[[map]]
id = "m"
kind = "box"
min = ["-HALF mm", "-HALF mm", "-HALF mm"]
max = ["HALF mm", "HALF mm", "HALF mm"]
cells = [CELLS, CELLS, CELLS]
"#
);

/// The helix scene with a cube map `half` mm each side of the centre, `cells` cells.
fn helix(half: u32, cells: u32) -> String {
    HELIX
        .replace("HALF", &half.to_string())
        .replace("CELLS", &cells.to_string())
}

fn polygon_scene() -> String {
    let n = 2000;
    let verts: Vec<String> = (0..n)
        .map(|k| {
            let t = std::f64::consts::TAU * k as f64 / n as f64;
            let r = 0.02 * (1.0 + 0.3 * (5.0 * t).cos());
            format!("[{:?}, {:?}, 0.0]", r * t.cos(), r * t.sin())
        })
        .collect();
    format!(
        "[solver]\nwire_radius = \"0.01 mm\"\n[[source]]\nid = \"poly\"\nkind = \"polygon\"\n\
         vertices = [{}]\ncurrent = {{ frequency = \"10 kHz\", peak = \"1 A\" }}\n\
         [[map]]\nid = \"m\"\nkind = \"box\"\nmin = [-0.04, -0.04, 0.002]\n\
         max = [0.04, 0.04, 0.042]\ncells = [64, 64, 64]\n",
        verts.join(", ")
    )
}

/// Peak resident memory of this process so far, bytes (VmHWM in /proc/self/status).
fn peak_rss() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb * 1024)
}

fn child(scene: &str, out: &str, exact: bool) {
    let t = Instant::now();
    let outcome = strayflux::app::map(
        std::path::Path::new(scene),
        None,
        std::path::Path::new(out),
        u64::MAX,
        exact,
        &|_, _| {},
    );
    let secs = t.elapsed().as_secs_f64();
    if let Err(e) = outcome {
        eprintln!("map failed: {e}");
        std::process::exit(1);
    }
    println!("{secs} {}", peak_rss().unwrap_or(0));
}

fn main() {
    if let Ok(spec) = std::env::var("STRAYFLUX_BENCH_CHILD") {
        let mut parts = spec.splitn(3, '|');
        let (scene, out, exact) = (
            parts.next().unwrap().to_string(),
            parts.next().unwrap().to_string(),
            parts.next() == Some("exact"),
        );
        child(&scene, &out, exact);
        return;
    }
    if std::env::args().any(|a| a == "--list" || a == "--test") {
        return;
    }
    // Re-plot an earlier run's CSV without running the maps again.
    if let Ok(csv) = std::env::var("STRAYFLUX_BENCH_REPLOT") {
        let text = std::fs::read_to_string(&csv).unwrap();
        let svg = std::path::Path::new(&csv).with_extension("svg");
        plot(&text, &svg).unwrap();
        println!("wrote {}", svg.display());
        return;
    }
    let dir = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-maps");
    std::fs::create_dir_all(&dir).unwrap();
    let chosen = std::env::var("STRAYFLUX_BENCH_CASES").ok();
    let cases: Vec<(&str, String, bool)> = vec![
        ("winding-board", helix(100, 127), false),
        ("winding-close", helix(25, 127), false),
        ("winding-board-64", helix(100, 63), false),
        ("winding-board-32", helix(100, 31), false),
        ("winding-close-32", helix(25, 31), false),
        ("polygon-64", polygon_scene(), true),
    ];
    let mut csv = String::from(
        "case,points,segments,pairs,seconds,exact_seconds_estimate,peak_bytes,output_bytes,\
         largest_relative_difference\n",
    );
    for (name, text, exact) in cases {
        if chosen
            .as_ref()
            .is_some_and(|c| !c.split(',').any(|x| x == name))
        {
            continue;
        }
        let path = dir.join(format!("{name}.toml"));
        std::fs::write(&path, &text).unwrap();
        let scene = Scene::load(&path).unwrap();
        let spec = &scene.maps[0];
        let points = spec.point_count();
        let segments: usize = scene
            .sources
            .iter()
            .map(|s| s.conductors.segment_count())
            .sum();
        let out = dir.join(format!("{name}-out"));
        let run = std::process::Command::new(std::env::current_exe().unwrap())
            .env(
                "STRAYFLUX_BENCH_CHILD",
                format!(
                    "{}|{}|{}",
                    path.display(),
                    out.display(),
                    if exact { "exact" } else { "fast" }
                ),
            )
            .output()
            .unwrap();
        let text_out = String::from_utf8_lossy(&run.stdout);
        let mut it = text_out.split_whitespace();
        let secs: f64 = it.next().and_then(|s| s.parse().ok()).unwrap_or(f64::NAN);
        let peak: u64 = it.next().and_then(|s| s.parse().ok()).unwrap_or(0);
        // B_re, B_im (three f64 each) and B_rms (one f64) per point.
        let output = points as u64 * 7 * 8;
        // The direct field at a sample of the grid, against the accelerated one.
        let (mut worst, mut exact_estimate) = (0.0f64, f64::NAN);
        if !exact {
            let all = spec.all_points();
            let sample: Vec<_> = all.iter().step_by(499).copied().collect();
            let src = &scene.sources[0].conductors;
            let t = Instant::now();
            let direct = b_at_points(src, &sample);
            exact_estimate = t.elapsed().as_secs_f64() * all.len() as f64 / sample.len() as f64;
            let fast = Accelerated::for_points(src, &all, scene.tolerance, false);
            let got = b_at_points(&fast, &sample);
            for (g, d) in got.iter().zip(&direct) {
                worst = worst.max((g - d).norm() / d.norm());
            }
        }
        println!(
            "map/{name}: {points} points x {segments} segments: {secs:.2} s{}, peak {:.0} MB \
             (output arrays {:.0} MB; target 1.5 x + 100 MB = {:.0} MB){}",
            if exact {
                " (--exact)".to_string()
            } else {
                format!(", fully direct about {exact_estimate:.0} s")
            },
            peak as f64 / 1e6,
            output as f64 / 1e6,
            (1.5 * output as f64 + 100e6) / 1e6,
            if exact {
                String::new()
            } else {
                format!("; largest difference from direct at every 499th point {worst:.1e}")
            }
        );
        csv.push_str(&format!(
            "{name},{points},{segments},{},{secs},{exact_estimate},{peak},{output},{worst}\n",
            points as f64 * segments as f64
        ));
        let _ = std::fs::remove_dir_all(&out);
    }
    let target = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target");
    std::fs::write(target.join("bench-maps.csv"), &csv).unwrap();
    if let Err(e) = plot(&csv, &target.join("bench-maps.svg")) {
        eprintln!("plot not written: {e}");
    }
}

/// Log–log plot of wall time against points × segments: measured direct maps, direct
/// times extrapolated from the sample, and accelerated maps.
fn plot(csv: &str, path: &std::path::Path) -> Result<(), Box<dyn std::error::Error>> {
    use plotters::prelude::*;
    let (mut direct, mut estimated, mut fast, mut close) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for line in csv.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let pairs: f64 = f[3].parse()?;
        let secs: f64 = f[4].parse()?;
        let est: f64 = f[5].parse()?;
        if est.is_nan() {
            direct.push((pairs, secs));
        } else {
            if f[0].contains("close") {
                close.push((pairs, secs));
            } else {
                fast.push((pairs, secs));
            }
            estimated.push((pairs, est));
        }
    }
    let all: Vec<f64> = direct
        .iter()
        .chain(&estimated)
        .chain(&fast)
        .chain(&close)
        .map(|p| p.1)
        .collect();
    let xs: Vec<f64> = direct
        .iter()
        .chain(&fast)
        .chain(&close)
        .map(|p| p.0)
        .collect();
    let (x0, x1) = (
        xs.iter().copied().fold(f64::INFINITY, f64::min) / 2.0,
        xs.iter().copied().fold(0.0, f64::max) * 2.0,
    );
    let (y0, y1) = (
        all.iter().copied().fold(f64::INFINITY, f64::min) / 2.0,
        all.iter().copied().fold(0.0, f64::max) * 2.0,
    );
    let root = SVGBackend::new(path, (760, 520)).into_drawing_area();
    root.fill(&WHITE)?;
    let mut chart = ChartBuilder::on(&root)
        .caption(
            "strayflux map: wall time against points × segments (2 cores)",
            ("sans-serif", 18),
        )
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(64)
        .build_cartesian_2d((x0..x1).log_scale(), (y0..y1).log_scale())?;
    chart
        .configure_mesh()
        .x_desc("grid points × source segments")
        .y_desc("wall time, s")
        .x_label_formatter(&|v| format!("{v:.0e}"))
        .y_label_formatter(&|v| format!("{v}"))
        .draw()?;
    let series = [
        (&direct, BLUE, "direct (--exact), measured"),
        (
            &estimated,
            RGBColor(120, 120, 120),
            "direct, extrapolated from a sample",
        ),
        (
            &fast,
            RED,
            "with the expansion, map ±10 winding radii, measured",
        ),
        (
            &close,
            RGBColor(230, 140, 0),
            "with the expansion, map ±2.5 winding radii, measured",
        ),
    ];
    for (points, colour, label) in series {
        let mut sorted = points.clone();
        sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
        chart
            .draw_series(
                sorted
                    .iter()
                    .map(|&(x, y)| Circle::new((x, y), 5, colour.filled())),
            )?
            .label(label)
            .legend(move |(x, y)| Circle::new((x + 10, y), 5, colour.filled()));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.9))
        .border_style(BLACK)
        .draw()?;
    root.present()?;
    Ok(())
}
