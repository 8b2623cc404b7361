//! Running the `strayflux` binary from the CLI tests.

#![allow(dead_code)]

use serde_json::Value;
use std::process::{Command, Output};

/// The binary under test.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_strayflux"))
}

/// Runs the binary with `args` and collects its output.
pub fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

/// Asserts success and parses stdout as one JSON document.
pub fn stdout_json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "exit {:?}, stderr: {}",
        out.status.code(),
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("stdout is one JSON document")
}
