//! Atomic output files: write to a temporary file beside the target, then rename.
//!
//! A reader never sees a half-written file under the final name, and an interrupted run leaves
//! at most a `.tellturn-tmp` file behind, never a truncated output.

use std::fs;
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// The temporary name used while `path` is being written.
pub fn temp_path(path: &Path) -> PathBuf {
    let mut name = path
        .file_name()
        .map(|n| n.to_os_string())
        .unwrap_or_default();
    name.push(format!(".{}.tellturn-tmp", std::process::id()));
    path.with_file_name(name)
}

/// Write `bytes` to `path` atomically (temporary file, flush, rename).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_atomic_with(path, |w| w.write_all(bytes))
}

/// Write to `path` atomically, letting `fill` stream the content into a buffered writer.
pub fn write_atomic_with<F>(path: &Path, fill: F) -> io::Result<()>
where
    F: FnOnce(&mut dyn Write) -> io::Result<()>,
{
    let tmp = temp_path(path);
    let result = (|| {
        let file = fs::File::create(&tmp)?;
        let mut w = io::BufWriter::new(file);
        fill(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}
