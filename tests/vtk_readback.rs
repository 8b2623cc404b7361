//! Field maps read back by readers that share no code with strayflux: Python's `vtk`
//! package (tests/vtk/check_maps.py, VTK's own XML readers) and ParaView's pvpython
//! (tests/vtk/check_paraview.py). The scenes are written here, the
//! binary writes the maps, and the scripts compare the files with `strayflux probe`,
//! with the closed-form field of a circular loop, and with the geometry below.
//!
//! Neither reader test passes without its reader: the vtk readback test fails when
//! `python3 -c "import vtk"` fails (`python3 -m pip install vtk`; .ci/run installs it),
//! and the ParaView test is ignored by default (ParaView is a large Debian package,
//! `paraview`) and fails when pvpython is missing; run it with
//! `cargo test --test vtk_readback -- --ignored`. The last test needs no reader: bad `[[map]]` input exits 2 with one located line and writes
//! nothing.

use serde_json::{Value, json};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const MM: f64 = 1e-3;

/// A fresh, empty scratch folder for one test.
fn scratch(name: &str) -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR"))
        .join("vtk_readback")
        .join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("scratch folder");
    dir
}

fn strayflux(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_strayflux"))
        .args(args)
        .output()
        .expect("strayflux runs")
}

fn succeed(args: &[&str]) -> Output {
    let out = strayflux(args);
    assert!(
        out.status.success(),
        "strayflux {args:?} exited {:?}: {}",
        out.status.code(),
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

fn script(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/vtk")
        .join(name)
        .display()
        .to_string()
}

/// Which lines a map holds.
#[derive(Clone, Copy)]
enum Line {
    One(usize),
    All,
}

/// How a map's grid is given.
#[derive(Clone, Copy)]
enum Grid {
    Step(f64),
    Cells([usize; 3]),
}

/// A `[[map]]` of a test scene, corners in mm.
struct MapDef {
    id: &'static str,
    kind: &'static str,
    min_mm: [f64; 3],
    max_mm: [f64; 3],
    grid: Grid,
    line: Line,
}

impl MapDef {
    fn toml(&self) -> String {
        let v = |p: [f64; 3]| format!("[\"{} mm\", \"{} mm\", \"{} mm\"]", p[0], p[1], p[2]);
        let grid = match self.grid {
            Grid::Step(s) => format!("step = \"{s} mm\""),
            Grid::Cells(c) => format!("cells = [{}, {}, {}]", c[0], c[1], c[2]),
        };
        let line = match self.line {
            Line::One(n) => format!("line = {n}"),
            Line::All => "line = \"all\"".into(),
        };
        format!(
            "\n[[map]]\nid = \"{}\"\nkind = \"{}\"\nmin = {}\nmax = {}\n{grid}\n{line}\n",
            self.id,
            self.kind,
            v(self.min_mm),
            v(self.max_mm)
        )
    }

    /// Cells per axis as docs/scene-reference.md's `[[map]]` defines them: `cells` as given, or each extent
    /// split into the whole number of cells nearest to extent / step (0 on a flat axis).
    fn cells(&self) -> [usize; 3] {
        match self.grid {
            Grid::Cells(c) => c,
            Grid::Step(s) => std::array::from_fn(|a| {
                let extent = self.max_mm[a] - self.min_mm[a];
                if extent == 0.0 {
                    0
                } else {
                    ((extent / s).round() as usize).max(1)
                }
            }),
        }
    }

    /// What the file should hold: origin = min, spacing = extent / cells, extent 0..cells.
    fn expectation(&self) -> Value {
        let cells = self.cells();
        let spacing: Vec<f64> = (0..3)
            .map(|a| {
                if cells[a] == 0 {
                    0.0
                } else {
                    (self.max_mm[a] - self.min_mm[a]) * MM / cells[a] as f64
                }
            })
            .collect();
        let origin: Vec<f64> = self.min_mm.iter().map(|x| x * MM).collect();
        let extent: Vec<usize> = cells.iter().flat_map(|&c| [0, c]).collect();
        let line = match self.line {
            Line::One(n) => json!(n),
            Line::All => json!("all"),
        };
        json!({"id": self.id, "line": line, "origin_m": origin, "spacing_m": spacing, "extent": extent})
    }
}

/// A spectral line of a source current: (frequency Hz, peak A, phase deg).
type SpecLine = (f64, f64, f64);

fn lines_toml(lines: &[SpecLine]) -> String {
    let items: Vec<String> = lines
        .iter()
        .map(|(f, a, p)| {
            format!("{{ frequency = \"{f} Hz\", peak = \"{a} A\", phase = \"{p} deg\" }}")
        })
        .collect();
    format!("{{ lines = [ {} ] }}", items.join(", "))
}

fn mm3(p: [f64; 3]) -> Vec<f64> {
    p.iter().map(|x| x * MM).collect()
}

/// A test scene on disk, with what the scripts should find in its maps.
struct Case {
    scene: PathBuf,
    out: PathBuf,
    lines_hz: Vec<f64>,
    maps: Vec<Value>,
    loop_source: Value,
    elements: Vec<Value>,
}

impl Case {
    /// Writes the maps with the binary and the expectations file; returns its path.
    fn write_maps(&self) -> PathBuf {
        let scene = self.scene.display().to_string();
        let out = self.out.display().to_string();
        succeed(&["map", &scene, "--out", &out]);
        let exp = json!({
            "binary": env!("CARGO_BIN_EXE_strayflux"),
            "scene": scene,
            "out_dir": out,
            "lines_hz": self.lines_hz,
            "maps": self.maps,
            "loop": self.loop_source,
            "elements": self.elements,
            "shields": 0,
            // B at a grid point is the probe's B at that point: the same double-precision
            // arithmetic, so agreement to rounding.
            "probe_rel_tol": 1e-12,
            // `[solver]` (docs/scene-reference.md): the default tolerance, 1e-6, is the relative accuracy target
            // for fields.
            "closed_form_rel_tol": 1e-6,
        });
        let path = self.out.with_extension("json");
        std::fs::write(&path, serde_json::to_string_pretty(&exp).unwrap()).unwrap();
        path
    }
}

/// Segments of every source, from `check --json`.
fn segments(scene: &Path) -> Vec<u64> {
    let out = succeed(&["check", &scene.display().to_string(), "--json"]);
    let v: Value = serde_json::from_slice(&out.stdout).expect("check --json");
    v["sources"]
        .as_array()
        .expect("sources")
        .iter()
        .map(|s| s["segments"].as_u64().expect("segments"))
        .collect()
}

/// Scene 1: one tilted, off-centre loop with three lines (1, 3, 5 kHz, with phases), a
/// rectangular victim, a box map of line 2 (by `step`) and a plane map of every line (by
/// `cells`). Its only source is a circle, so the closed form applies.
fn loop_case(tag: &str) -> Case {
    let dir = scratch(&format!("{tag}-loop"));
    let radius_mm = 20.0;
    let centre_mm = [2.0, -3.0, 1.0];
    let axis = [0.0, 0.6, 0.8];
    let lines: [SpecLine; 3] = [(1e3, 1.0, 0.0), (3e3, 0.3, 30.0), (5e3, 0.2, -60.0)];
    let victim_at_mm = [5.0, 4.0, 32.0];
    let maps = [
        MapDef {
            id: "box",
            kind: "box",
            min_mm: [-31.0, -29.0, -20.0],
            max_mm: [33.0, 30.0, 27.0],
            grid: Grid::Step(4.0),
            line: Line::One(2),
        },
        MapDef {
            id: "plane",
            kind: "plane",
            min_mm: [-40.0, 1.0, -30.0],
            max_mm: [40.0, 1.0, 40.0],
            grid: Grid::Cells([40, 0, 35]),
            line: Line::All,
        },
    ];
    let mut text = format!(
        "[scene]\ntitle = \"tilted loop, three lines\"\n\n[[source]]\nid = \"coil\"\nkind = \"loop\"\n\
         radius = \"{radius_mm} mm\"\nposition = [\"{} mm\", \"{} mm\", \"{} mm\"]\naxis = [{}, {}, {}]\n\
         current = {}\n\n[[victim]]\nid = \"sense\"\nkind = \"rectangle\"\nwidth = \"30 mm\"\n\
         height = \"10 mm\"\nposition = [\"{} mm\", \"{} mm\", \"{} mm\"]\naxis = [0, 0, 1]\n\
         reference = [1, 0, 0]\n",
        centre_mm[0],
        centre_mm[1],
        centre_mm[2],
        axis[0],
        axis[1],
        axis[2],
        lines_toml(&lines),
        victim_at_mm[0],
        victim_at_mm[1],
        victim_at_mm[2],
    );
    for m in &maps {
        text.push_str(&m.toml());
    }
    let scene = dir.join("loop.toml");
    std::fs::write(&scene, text).unwrap();
    let segs = segments(&scene);
    let corners: Vec<Vec<f64>> = [[-15.0, -5.0], [15.0, -5.0], [15.0, 5.0], [-15.0, 5.0]]
        .iter()
        .map(|[x, y]| mm3([victim_at_mm[0] + x, victim_at_mm[1] + y, victim_at_mm[2]]))
        .collect();
    let circle = json!({"radius_m": radius_mm * MM, "center_m": mm3(centre_mm), "axis": axis});
    let loop_lines: Vec<Value> = lines
        .iter()
        .map(|(f, a, p)| json!({"frequency_hz": f, "peak_a": a, "phase_deg": p}))
        .collect();
    let mut loop_source = circle.clone();
    loop_source["lines"] = json!(loop_lines);
    Case {
        scene,
        out: dir.join("maps"),
        lines_hz: lines.iter().map(|l| l.0).collect(),
        maps: maps.iter().map(MapDef::expectation).collect(),
        loop_source,
        elements: vec![
            // A closed loop of N segments is a polyline of N + 1 points.
            json!({"name": "source:coil", "index": 0, "points": segs[0] + 1, "closed": true,
                   "size_m": radius_mm * MM, "circle": circle}),
            json!({"name": "victim:sense", "index": 1, "points": 5, "closed": true,
                   "size_m": 0.03, "vertices_m": corners}),
        ],
    }
}

/// Scene 2: two sources sharing the 10 kHz line (so their phasors add in the map), a
/// second line at 20 kHz from one of them, two victims (rectangle, triangle), a box map
/// of line 1 and a coarse box map of every line.
fn two_source_case(tag: &str) -> Case {
    let dir = scratch(&format!("{tag}-two-sources"));
    let frame_lines: [SpecLine; 2] = [(1e4, 1.0, 90.0), (2e4, 0.4, 0.0)];
    let maps = [
        MapDef {
            id: "cube",
            kind: "box",
            min_mm: [-26.0, -27.0, -25.0],
            max_mm: [26.0, 27.0, 29.0],
            grid: Grid::Cells([13, 9, 12]),
            line: Line::One(1),
        },
        MapDef {
            id: "coarse",
            kind: "box",
            min_mm: [-50.0, -50.0, -50.0],
            max_mm: [50.0, 50.0, 50.0],
            grid: Grid::Step(25.0),
            line: Line::All,
        },
    ];
    let mut text = format!(
        "[scene]\ntitle = \"loop and rectangle\"\n\n[[source]]\nid = \"ring\"\nkind = \"loop\"\n\
         radius = \"15 mm\"\ncurrent = {{ waveform = \"sine\", peak = \"0.5 A\", frequency = \"10 kHz\" }}\n\n\
         [[source]]\nid = \"frame\"\nkind = \"rectangle\"\nwidth = \"40 mm\"\nheight = \"20 mm\"\n\
         position = [\"0 mm\", \"0 mm\", \"-12 mm\"]\naxis = [0, 1, 0]\nreference = [1, 0, 0]\n\
         current = {}\n\n[[victim]]\nid = \"pcb\"\nkind = \"rectangle\"\nwidth = \"20 mm\"\n\
         height = \"5 mm\"\nposition = [\"0 mm\", \"30 mm\", \"0 mm\"]\naxis = [0, 1, 0]\n\
         reference = [1, 0, 0]\n\n[[victim]]\nid = \"tri\"\nkind = \"polygon\"\n\
         vertices = [[\"0 mm\", \"0 mm\", \"0 mm\"], [\"10 mm\", \"0 mm\", \"0 mm\"], [\"0 mm\", \"10 mm\", \"0 mm\"]]\n\
         position = [\"25 mm\", \"0 mm\", \"5 mm\"]\naxis = [0, 0, 1]\nreference = [1, 0, 0]\n",
        lines_toml(&frame_lines)
    );
    for m in &maps {
        text.push_str(&m.toml());
    }
    let scene = dir.join("two.toml");
    std::fs::write(&scene, text).unwrap();
    let segs = segments(&scene);
    let frame: Vec<Vec<f64>> = [[-20.0, -22.0], [20.0, -22.0], [20.0, -2.0], [-20.0, -2.0]]
        .iter()
        .map(|[x, z]| mm3([*x, 0.0, *z]))
        .collect();
    let pcb: Vec<Vec<f64>> = [[-10.0, -2.5], [10.0, -2.5], [10.0, 2.5], [-10.0, 2.5]]
        .iter()
        .map(|[x, z]| mm3([*x, 30.0, *z]))
        .collect();
    let tri = vec![
        mm3([25.0, 0.0, 5.0]),
        mm3([35.0, 0.0, 5.0]),
        mm3([25.0, 10.0, 5.0]),
    ];
    let ring = json!({"radius_m": 0.015, "center_m": [0.0, 0.0, 0.0], "axis": [0.0, 0.0, 1.0]});
    Case {
        scene,
        out: dir.join("maps"),
        lines_hz: vec![1e4, 2e4],
        maps: maps.iter().map(MapDef::expectation).collect(),
        loop_source: Value::Null,
        elements: vec![
            json!({"name": "source:ring", "index": 0, "points": segs[0] + 1, "closed": true,
                   "size_m": 0.015, "circle": ring}),
            json!({"name": "source:frame", "index": 1, "points": segs[1] + 1, "closed": true,
                   "size_m": 0.04, "vertices_m": frame}),
            json!({"name": "victim:pcb", "index": 2, "points": 5, "closed": true,
                   "size_m": 0.03, "vertices_m": pcb}),
            json!({"name": "victim:tri", "index": 3, "points": 4, "closed": true,
                   "size_m": 0.035, "vertices_m": tri}),
        ],
    }
}

/// Runs `program args`; Ok(stdout) on success, Err(report) otherwise.
fn run_checker(program: &str, args: &[&str]) -> Result<String, String> {
    let out = Command::new(program)
        .args(args)
        .output()
        .map_err(|e| format!("cannot run {program}: {e}"))?;
    let stdout = String::from_utf8_lossy(&out.stdout).into_owned();
    if out.status.success() {
        Ok(stdout)
    } else {
        Err(format!(
            "{program} {args:?} exited {:?}\n--- stdout\n{stdout}--- stderr\n{}",
            out.status.code(),
            String::from_utf8_lossy(&out.stderr)
        ))
    }
}

fn python_has_vtk() -> bool {
    Command::new("python3")
        .args(["-c", "import vtk"])
        .output()
        .is_ok_and(|o| o.status.success())
}

#[test]
fn vtk_package_reads_maps_and_scene_back_as_written() {
    assert!(
        python_has_vtk(),
        "this test needs Python's vtk package and `python3 -c \"import vtk\"` fails: \
         install it with `python3 -m pip install vtk`"
    );
    let mut failures = Vec::new();
    for case in [loop_case("vtk"), two_source_case("vtk")] {
        let exp = case.write_maps();
        match run_checker(
            "python3",
            &[&script("check_maps.py"), &exp.display().to_string()],
        ) {
            Ok(report) => println!("{report}"),
            Err(report) => failures.push(report),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

fn on_path(program: &str) -> bool {
    std::env::var_os("PATH")
        .is_some_and(|paths| std::env::split_paths(&paths).any(|d| d.join(program).is_file()))
}

#[test]
#[ignore = "needs ParaView's pvpython (Debian package paraview); run with cargo test --test vtk_readback -- --ignored"]
fn paraview_opens_maps_collection_and_scene() {
    assert!(
        on_path("pvpython"),
        "this test needs ParaView's pvpython on PATH and it is missing: \
         install it with `apt-get install paraview`"
    );
    let mut failures = Vec::new();
    for case in [loop_case("paraview"), two_source_case("paraview")] {
        let exp = case.write_maps();
        match run_checker(
            "pvpython",
            &[&script("check_paraview.py"), &exp.display().to_string()],
        ) {
            Ok(report) => println!("{report}"),
            Err(report) => failures.push(report),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// A scene with one source of three lines (1, 3, 5 kHz) and the given `[[map]]` text.
fn bad_scene(dir: &Path, map: &str) -> PathBuf {
    let text = format!(
        "[scene]\ntitle = \"bad map\"\n\n[[source]]\nid = \"coil\"\nkind = \"loop\"\n\
         radius = \"20 mm\"\ncurrent = {}\n\n[[map]]\nid = \"m\"\n{map}\n",
        lines_toml(&[(1e3, 1.0, 0.0), (3e3, 0.3, 0.0), (5e3, 0.2, 0.0)])
    );
    let path = dir.join("scene.toml");
    std::fs::write(&path, text).unwrap();
    path
}

/// Runs `map` on a bad scene: exit 2, nothing on stdout, one line on stderr, and no
/// output folder or file created. Returns that line.
fn refused(dir: &Path, scene: &Path, extra: &[&str]) -> String {
    let out_dir = dir.join("out");
    let scene_s = scene.display().to_string();
    let out_s = out_dir.display().to_string();
    let mut args = vec!["map", scene_s.as_str(), "--out", out_s.as_str()];
    args.extend_from_slice(extra);
    let out = strayflux(&args);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "exit status, stderr: {stderr}");
    assert!(
        out.stdout.is_empty(),
        "stdout: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    let line = stderr.trim_end();
    assert!(
        !line.is_empty() && !line.contains('\n'),
        "expected one line on stderr, got:\n{stderr}"
    );
    assert!(!out_dir.exists(), "{} was created", out_dir.display());
    let files: Vec<_> = std::fs::read_dir(dir).unwrap().flatten().collect();
    assert_eq!(files.len(), 1, "files beside the scene: {files:?}");
    line.to_string()
}

/// Checks that `line` is `FILE:LINE:COL: ...`, that the scene's line LINE sets one of
/// `keys`, that the message names that key, and that it contains `words`.
fn assert_located(line: &str, scene: &Path, keys: &[&str], words: &str) {
    let file = scene.display().to_string();
    let rest = line
        .strip_prefix(&format!("{file}:"))
        .unwrap_or_else(|| panic!("error does not start with the file name: {line}"));
    let mut parts = rest.splitn(3, ':');
    let row: usize = parts
        .next()
        .and_then(|x| x.parse().ok())
        .expect("line number");
    let col: usize = parts.next().and_then(|x| x.parse().ok()).expect("column");
    assert!(col >= 1, "column {col} in {line}");
    let text = std::fs::read_to_string(scene).unwrap();
    let written = text.lines().nth(row - 1).unwrap_or("");
    let key = keys
        .iter()
        .find(|k| written.trim_start().starts_with(&format!("{k} ")))
        .unwrap_or_else(|| panic!("line {row} ({written:?}) sets none of {keys:?}: {line}"));
    assert!(
        line.contains(key),
        "the message does not name `{key}`: {line}"
    );
    assert!(line.contains(words), "expected {words:?} in: {line}");
}

#[test]
fn bad_map_input_exits_two_with_one_located_line_and_writes_nothing() {
    // (case, map keys, keys the error may point at, words it must contain)
    let cases: [(&str, &str, &[&str], &str); 5] = [
        (
            "box-flat-axis",
            "kind = \"box\"\nmin = [\"0 mm\", \"0 mm\", \"0 mm\"]\nmax = [\"10 mm\", \"10 mm\", \"0 mm\"]\nstep = \"1 mm\"",
            &["min", "max"],
            "box",
        ),
        (
            "plane-two-flat-axes",
            "kind = \"plane\"\nmin = [\"0 mm\", \"0 mm\", \"0 mm\"]\nmax = [\"10 mm\", \"0 mm\", \"0 mm\"]\nstep = \"1 mm\"",
            &["min", "max"],
            "plane",
        ),
        (
            "step-and-cells",
            "kind = \"box\"\nmin = [\"0 mm\", \"0 mm\", \"0 mm\"]\nmax = [\"10 mm\", \"10 mm\", \"10 mm\"]\nstep = \"1 mm\"\ncells = [10, 10, 10]",
            &["step", "cells"],
            "step",
        ),
        (
            "line-7-of-3",
            "kind = \"box\"\nmin = [\"0 mm\", \"0 mm\", \"0 mm\"]\nmax = [\"10 mm\", \"10 mm\", \"10 mm\"]\nstep = \"1 mm\"\nline = 7",
            &["line"],
            "7",
        ),
        (
            "max-below-min",
            "kind = \"box\"\nmin = [\"0 mm\", \"0 mm\", \"0 mm\"]\nmax = [\"10 mm\", \"-10 mm\", \"10 mm\"]\nstep = \"1 mm\"",
            &["min", "max"],
            "y",
        ),
    ];
    for (name, map, keys, words) in cases {
        let dir = scratch(&format!("bad-{name}"));
        let scene = bad_scene(&dir, map);
        let line = refused(&dir, &scene, &[]);
        assert_located(&line, &scene, keys, words);
        println!("{name}: {line}");
    }
}

/// Sizes such as "38.3 GB" in `text`, in bytes.
fn sizes_in(text: &str) -> Vec<f64> {
    let words: Vec<&str> = text.split_whitespace().collect();
    let prefix = |p: &str| match p {
        "" => Some(1.0),
        "k" => Some(1e3),
        "M" => Some(1e6),
        "G" => Some(1e9),
        "T" => Some(1e12),
        _ => None,
    };
    words
        .windows(2)
        .filter_map(|w| {
            let unit = w[1].trim_end_matches([',', ';', '.', ')']);
            let x: f64 = w[0].parse().ok()?;
            Some(x * prefix(unit.strip_suffix('B')?)?)
        })
        .collect()
}

#[test]
fn a_map_too_big_for_max_memory_is_refused_with_its_estimate() {
    let dir = scratch("bad-huge");
    // 1 m cube at 2 mm: 501³ ≈ 1.26e8 points.
    let map = "kind = \"box\"\nmin = [\"0 m\", \"0 m\", \"0 m\"]\nmax = [\"1 m\", \"1 m\", \"1 m\"]\nstep = \"2 mm\"";
    let scene = bad_scene(&dir, map);
    let started = std::time::Instant::now();
    let line = refused(&dir, &scene, &["--max-memory", "100 MB"]);
    assert!(
        started.elapsed().as_secs_f64() < 5.0,
        "refusing took {:?}: was the map computed?",
        started.elapsed()
    );
    assert!(line.contains("\"m\""), "the message names the map: {line}");
    // A lower bound on any estimate: the file's own arrays, B_re and B_im (3 Float64
    // each) and B_rms (1 Float64), 56 B per point.
    let points = 501f64.powi(3);
    let floor = 56.0 * points;
    let sizes = sizes_in(&line);
    assert!(
        sizes.iter().any(|&s| s >= floor),
        "no estimate of at least {floor:.3e} B (the arrays alone) in: {line}"
    );
    assert!(
        sizes.iter().any(|&s| (s - 100e6).abs() < 1.0),
        "the message names the 100 MB limit: {line}"
    );
    println!("{line}");
}
