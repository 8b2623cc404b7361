//! Interrupted runs and unusable output folders (issue: "Outputs written whole or not at
//! all"). A map stopped by Ctrl-C (SIGINT) exits with status 130 and one stopped by
//! SIGKILL dies; either way the previous result under the final name is byte-identical
//! afterwards and no partial file takes a final name. A missing parent folder, a file
//! where the folder should be, and (when not running as root) a read-only folder give
//! exit status 1 and a one-line message before any work is done. Unix only.

#![cfg(unix)]

mod cli_support;

use cli_support::{bin, run};
use std::path::{Path, PathBuf};
use std::process::Stdio;
use std::time::{Duration, Instant};

fn work_dir(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("strayflux-intr-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// A scene with one box map `m` of `cells`³ cells around a 10 mm loop.
fn map_scene(dir: &Path, cells: usize) -> PathBuf {
    let text = format!(
        "[scene]\ntitle = \"interrupt test (invented numbers)\"\n\n[[source]]\nid = \"a\"\n\
         kind = \"loop\"\nradius = \"10 mm\"\ncurrent = {{ frequency = \"10 kHz\", peak = \"1 A\" }}\n\n\
         [[map]]\nid = \"m\"\nkind = \"box\"\nmin = [\"-30 mm\", \"-30 mm\", \"5 mm\"]\n\
         max = [\"30 mm\", \"30 mm\", \"30 mm\"]\ncells = [{cells}, {cells}, {cells}]\n"
    );
    let p = dir.join(format!("scene-{cells}.toml"));
    std::fs::write(&p, text).unwrap();
    p
}

fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Writes a small map into `out`, then starts a large one with the same id, sends
/// `signal` after 1.5 s while it is still computing, and returns its exit status.
fn interrupted_map(name: &str, signal: &str) -> (std::process::ExitStatus, PathBuf, Vec<u8>) {
    let dir = work_dir(name);
    let out = dir.join("out");
    let small = map_scene(&dir, 4);
    let first = run(&[
        "map",
        small.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert_eq!(first.status.code(), Some(0));
    let before = std::fs::read(out.join("m.vti")).unwrap();
    let before_list = listing(&out);
    // 160³ cells of a 528-segment loop: about 2e9 segment-point pairs, many seconds.
    let big = map_scene(&dir, 160);
    let mut child = bin()
        .args(["map", big.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    std::thread::sleep(Duration::from_millis(1500));
    assert!(
        child.try_wait().unwrap().is_none(),
        "the large map finished too soon to interrupt"
    );
    let pid = child.id().to_string();
    let sent = std::process::Command::new("kill")
        .args([signal, &pid])
        .status()
        .unwrap();
    assert!(sent.success());
    let status = child.wait().unwrap();
    assert!(start.elapsed() < Duration::from_secs(60));
    assert_eq!(
        listing(&out),
        before_list,
        "files appeared or vanished in {}",
        out.display()
    );
    (status, out, before)
}

#[test]
fn ctrl_c_mid_map_exits_130_and_keeps_the_previous_result() {
    use std::os::unix::process::ExitStatusExt;
    let (status, out, before) = interrupted_map("int", "-INT");
    assert_eq!(
        status.code(),
        Some(130),
        "status {status:?} (signal {:?})",
        status.signal()
    );
    assert_eq!(std::fs::read(out.join("m.vti")).unwrap(), before);
}

#[test]
fn sigkill_mid_map_keeps_the_previous_result() {
    use std::os::unix::process::ExitStatusExt;
    let (status, out, before) = interrupted_map("kill", "-KILL");
    assert_eq!(status.signal(), Some(9));
    assert_eq!(std::fs::read(out.join("m.vti")).unwrap(), before);
}

fn assert_run_error(args: &[&str], words: &str) {
    let out = run(args);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{args:?}: {err}");
    assert!(out.stdout.is_empty());
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    assert!(err.contains(words), "expected `{words}` in `{err}`");
}

#[test]
fn unusable_output_folders_exit_one_before_any_work() {
    let dir = work_dir("dirs");
    let scene = map_scene(&dir, 4);
    let s = scene.to_str().unwrap();
    let missing = dir.join("no-such-parent").join("out");
    assert_run_error(
        &["map", s, "--out", missing.to_str().unwrap()],
        "does not exist",
    );
    assert!(!missing.exists());
    let file = dir.join("a-file");
    std::fs::write(&file, "x").unwrap();
    assert_run_error(
        &["map", s, "--out", file.to_str().unwrap()],
        "is not a folder",
    );
    // A missing folder whose parent exists is made, as mkdir would.
    let fresh = dir.join("fresh");
    let ok = run(&["map", s, "--out", fresh.to_str().unwrap()]);
    assert_eq!(ok.status.code(), Some(0));
    assert!(fresh.join("m.vti").exists());
    // Root may write anywhere, so the read-only case is checked only for other users.
    let ro = dir.join("read-only");
    std::fs::create_dir(&ro).unwrap();
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
    if std::fs::write(ro.join("probe"), "x").is_err() {
        assert_run_error(&["map", s, "--out", ro.to_str().unwrap()], "cannot write");
    }
    let _ = std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755));
}
