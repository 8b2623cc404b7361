//! Output files written whole or not at all: each is written beside its final name and
//! renamed into place, so a failed or interrupted run never leaves a partial file.

use crate::error::Error;
use std::path::{Path, PathBuf};

/// Creates `dir` (and its parents) if needed.
pub fn ensure_dir(dir: &Path) -> Result<(), Error> {
    std::fs::create_dir_all(dir).map_err(|e| {
        Error::Run(format!(
            "cannot create the output folder \"{}\": {e}",
            dir.display()
        ))
    })
}

/// Writes `bytes` to `path` through a temporary file in the same folder and a rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), Error> {
    let tmp = temp_name(path);
    let fail = |what: &str, e: std::io::Error| {
        let _ = std::fs::remove_file(&tmp);
        Error::Run(format!("cannot {what} \"{}\": {e}", path.display()))
    };
    std::fs::write(&tmp, bytes).map_err(|e| fail("write", e))?;
    std::fs::rename(&tmp, path).map_err(|e| fail("replace", e))
}

fn temp_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.{}.tmp", std::process::id()))
}
