//! Output files written whole or not at all: each is written beside its final name and
//! renamed into place, so a failed or interrupted run never leaves a partial file.

use crate::error::Error;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// Temporary files being written, removed if the run is interrupted.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Makes sure `dir` is a folder we can write to, before any work is done: creates it
/// if it is missing but its parent exists (as `mkdir` would), and fails (exit 1) if the
/// parent is missing, if `dir` is a file, or if it cannot be written.
pub fn ensure_dir(dir: &Path) -> Result<(), Error> {
    let shown = dir.display();
    if !dir.exists() {
        let parent = dir
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        if !parent.is_dir() {
            return Err(Error::Run(format!(
                "the output folder \"{shown}\" cannot be made: its parent \"{}\" does not \
                 exist (create it, or choose another folder with --out)",
                parent.display()
            )));
        }
        std::fs::create_dir(dir)
            .map_err(|e| Error::Run(format!("cannot create the output folder \"{shown}\": {e}")))?;
    }
    if !dir.is_dir() {
        return Err(Error::Run(format!(
            "the output folder \"{shown}\" is not a folder (a file has that name)"
        )));
    }
    let probe = dir.join(format!(".strayflux-write-test.{}", std::process::id()));
    std::fs::write(&probe, b"")
        .and_then(|_| std::fs::remove_file(&probe))
        .map_err(|e| {
            Error::Run(format!(
                "cannot write in the output folder \"{shown}\": {e}"
            ))
        })
}

/// Writes `bytes` to `path` through a temporary file in the same folder and a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    let tmp = temp_name(path);
    register(&tmp, true);
    let fail = |what: &str, e: std::io::Error| {
        let _ = std::fs::remove_file(&tmp);
        register(&tmp, false);
        Error::Run(format!("cannot {what} \"{}\": {e}", path.display()))
    };
    std::fs::write(&tmp, bytes).map_err(|e| fail("write", e))?;
    std::fs::rename(&tmp, path).map_err(|e| fail("replace", e))?;
    register(&tmp, false);
    Ok(())
}

fn register(tmp: &Path, add: bool) {
    if let Ok(mut list) = PENDING.lock() {
        if add {
            list.push(tmp.to_path_buf());
        } else {
            list.retain(|p| p != tmp);
        }
    }
}

/// Removes every temporary file still being written (call on interruption). Final
/// names are untouched: they hold either the previous result or a complete new one.
pub fn remove_pending() {
    if let Ok(list) = PENDING.lock() {
        for p in list.iter() {
            let _ = std::fs::remove_file(p);
        }
    }
}

fn temp_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.{}.tmp", std::process::id()))
}
