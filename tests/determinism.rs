//! Results must not depend on the number of threads: every parallel piece is summed in
//! a fixed order. `couple --json`, `sweep --json` and a map file are compared byte for
//! byte across RAYON_NUM_THREADS = 1, 2 and 7.

use std::path::PathBuf;
use std::process::Command;

fn run(threads: usize, args: &[&str]) -> Vec<u8> {
    let out = Command::new(env!("CARGO_BIN_EXE_strayflux"))
        .args(args)
        .env("RAYON_NUM_THREADS", threads.to_string())
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out.stdout
}

#[test]
fn outputs_are_byte_identical_for_any_thread_count() {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("determinism");
    std::fs::create_dir_all(&dir).unwrap();
    let scene = dir.join("scene.toml");
    std::fs::write(
        &scene,
        r#"
[[source]]
id = "coil"
kind = "helix"
radius = "6 mm"
length = "10 mm"
turns = 3
current = { waveform = "triangle", peak = "1 A", frequency = "100 kHz", harmonics = 4 }
[[source]]
id = "ring"
kind = "loop"
radius = "9 mm"
position = ["0 mm", "30 mm", "0 mm"]
axis = [1, 0, 0]
current = { peak = "0.3 A", frequency = "300 kHz", phase = "40 deg" }
[[victim]]
id = "v"
kind = "rectangle"
width = "12 mm"
height = "4 mm"
position = ["25 mm", "0 mm", "2 mm"]
limit = "50 uV"
[[sweep]]
id = "s"
victim = "v"
vary = "distance"
along = [1, 0, 0]
from = "1 mm"
to = "100 mm"
steps = 10
orientation = "worst"
[[map]]
id = "m"
kind = "box"
min = ["-15 mm", "-15 mm", "-10 mm"]
max = ["15 mm", "15 mm", "10 mm"]
step = "2 mm"
"#,
    )
    .unwrap();
    let s = scene.to_str().unwrap();
    let mut couples = Vec::new();
    let mut sweeps = Vec::new();
    let mut maps = Vec::new();
    for threads in [1, 2, 7] {
        couples.push(run(threads, &["couple", s, "--json"]));
        let out = dir.join(format!("out{threads}"));
        let o = out.to_str().unwrap();
        sweeps.push(run(threads, &["sweep", s, "--json", "--out", o]));
        run(threads, &["map", s, "--out", o]);
        maps.push(std::fs::read(out.join("m.vti")).unwrap());
    }
    for k in 1..3 {
        assert_eq!(couples[0], couples[k], "couple --json differs");
        assert_eq!(sweeps[0], sweeps[k], "sweep --json differs");
        assert_eq!(maps[0], maps[k], "m.vti differs");
    }
    // Two runs with the same thread count agree too.
    assert_eq!(couples[1], run(2, &["couple", s, "--json"]));
}

#[test]
fn shielded_outputs_are_byte_identical_for_any_thread_count() {
    // The spectral shield sum runs in parallel over wavenumber nodes and points; its
    // pieces are summed in a fixed order too.
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("determinism-shield");
    std::fs::create_dir_all(&dir).unwrap();
    let scene = dir.join("scene.toml");
    std::fs::write(
        &scene,
        r#"
[[source]]
id = "coil"
kind = "loop"
radius = "6 mm"
current = { waveform = "square", peak = "1 A", frequency = "20 kHz", rise = "500 ns", harmonics = 5 }
[[victim]]
id = "v"
kind = "rectangle"
width = "12 mm"
height = "4 mm"
position = ["5 mm", "0 mm", "9 mm"]
[[shield]]
id = "plate"
material = "aluminium"
thickness = "0.5 mm"
position = [0, 0, "4 mm"]
axis = [0, 0, 1]
[[sweep]]
id = "s"
victim = "v"
vary = "frequency"
from = "1 kHz"
to = "100 kHz"
steps = 5
[[map]]
id = "m"
kind = "plane"
min = ["-10 mm", "-10 mm", "7 mm"]
max = ["10 mm", "10 mm", "7 mm"]
step = "2 mm"
"#,
    )
    .unwrap();
    let s = scene.to_str().unwrap();
    let mut outs = Vec::new();
    for threads in [1, 2, 7] {
        let out = dir.join(format!("out{threads}"));
        let o = out.to_str().unwrap();
        let c = run(threads, &["couple", s, "--json"]);
        let w = run(threads, &["sweep", s, "--json", "--out", o]);
        run(threads, &["map", s, "--out", o]);
        outs.push((c, w, std::fs::read(out.join("m.vti")).unwrap()));
    }
    for k in 1..3 {
        assert_eq!(outs[0].0, outs[k].0, "couple --json differs");
        assert_eq!(outs[0].1, outs[k].1, "sweep --json differs");
        assert_eq!(outs[0].2, outs[k].2, "m.vti differs");
    }
}
