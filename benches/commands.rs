//! Whole-command timings of the shield demo, each a run of the `strayflux` binary (so
//! nothing is cached between runs, as for a user), a few times each (a shielded sweep
//! takes seconds, too long for criterion's samples): `cargo bench --bench commands`. It
//! prints, for `scenes/shield-options.toml`:
//!
//! * `couple`: one shielded coupling of the demo (4400-segment helix, 1 mm aluminium);
//! * `sweep`: its 61-step frequency sweep with four `compare` options, the safe-value
//!   bisection and the orientation search at the placed position;
//! * `sweep, no compare`, `sweep, 2 steps, no compare`: the same sweep cut down, to
//!   show which part of the command costs what;
//!
//! with the fastest and the median of the runs, and the ratio of the sweep to one
//! `couple`. `STRAYFLUX_BENCH_RUNS` sets the runs per case (default 3). The figures go
//! into docs/performance.md, "Sweeps, couple and probe".

use std::path::{Path, PathBuf};
use std::time::Instant;

fn main() {
    if std::env::args().any(|a| a == "--list" || a == "--test") {
        return;
    }
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let dir = root.join("target/bench-commands");
    std::fs::create_dir_all(&dir).unwrap();
    let demo = std::fs::read_to_string(root.join("scenes/shield-options.toml")).unwrap();
    let no_compare: String = demo
        .lines()
        .filter(|l| !l.trim_start().starts_with("compare"))
        .map(|l| format!("{l}\n"))
        .collect();
    assert_ne!(no_compare, demo, "the demo's sweep has a `compare` line");
    let two_steps = no_compare.replace("steps = 61", "steps = 2");
    assert_ne!(two_steps, no_compare, "the demo's sweep has 61 steps");
    let scene = |name: &str, text: &str| -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    };
    let full = scene("shield-options.toml", &demo);
    let cut = scene("no-compare.toml", &no_compare);
    let two = scene("two-steps.toml", &two_steps);
    let runs: usize = std::env::var("STRAYFLUX_BENCH_RUNS")
        .ok()
        .and_then(|r| r.parse().ok())
        .unwrap_or(3);
    let out = dir.join("out");
    let couple = time(runs, || command(&["couple", full.to_str().unwrap()]));
    report("couple", &couple);
    let sweep_of = |p: &Path| {
        time(runs, || {
            command(&["sweep", p.to_str().unwrap(), "--out", out.to_str().unwrap()])
        })
    };
    let sweep = sweep_of(&full);
    report("sweep", &sweep);
    report("sweep, no compare", &sweep_of(&cut));
    report("sweep, 2 steps, no compare", &sweep_of(&two));
    println!(
        "sweep / couple (medians): {:.1}",
        median(&sweep) / median(&couple)
    );
}

/// Runs the release binary with `args`; panics unless it succeeds.
fn command(args: &[&str]) {
    let status = std::process::Command::new(env!("CARGO_BIN_EXE_strayflux"))
        .args(args)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .status()
        .unwrap();
    assert!(status.success(), "strayflux {args:?} failed");
}

/// Wall times of `runs` calls of `f`, s.
fn time(runs: usize, f: impl Fn()) -> Vec<f64> {
    (0..runs)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .collect()
}

fn median(t: &[f64]) -> f64 {
    let mut s = t.to_vec();
    s.sort_by(f64::total_cmp);
    s[s.len() / 2]
}

fn report(name: &str, t: &[f64]) {
    let fastest = t.iter().copied().fold(f64::INFINITY, f64::min);
    println!(
        "{name:<28} fastest {fastest:.2} s, median {:.2} s over {} runs",
        median(t),
        t.len()
    );
}
