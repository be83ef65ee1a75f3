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

/// Several files written as one: each goes to its temporary name first, and only when every
/// one is complete are they renamed to their final names. On any error (or when `proceed`
/// says stop before the renames) the temporary files are removed and no final name is
/// touched, so an interrupted run leaves either all new files or none (an earlier run's
/// files stay as they were).
pub struct StagedFiles {
    staged: Vec<(PathBuf, PathBuf)>,
}

impl StagedFiles {
    /// Nothing staged yet.
    pub fn new() -> Self {
        StagedFiles { staged: Vec::new() }
    }

    /// Write `path`'s content to its temporary name.
    pub fn stage<F>(&mut self, path: &Path, fill: F) -> io::Result<()>
    where
        F: FnOnce(&mut dyn Write) -> io::Result<()>,
    {
        let tmp = temp_path(path);
        // Recorded first, so a failed write's partial temp file is removed on drop too.
        self.staged.push((tmp.clone(), path.to_path_buf()));
        let file = fs::File::create(&tmp)?;
        let mut w = io::BufWriter::new(file);
        fill(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()
    }

    /// Rename every staged file to its final name.
    pub fn commit(mut self) -> io::Result<Vec<PathBuf>> {
        let staged = std::mem::take(&mut self.staged);
        let mut done = Vec::with_capacity(staged.len());
        for (i, (tmp, path)) in staged.iter().enumerate() {
            if let Err(e) = fs::rename(tmp, path) {
                for (t, _) in &staged[i..] {
                    let _ = fs::remove_file(t);
                }
                return Err(e);
            }
            done.push(path.clone());
        }
        Ok(done)
    }
}

impl Default for StagedFiles {
    fn default() -> Self {
        Self::new()
    }
}

impl Drop for StagedFiles {
    fn drop(&mut self) {
        for (tmp, _) in &self.staged {
            let _ = fs::remove_file(tmp);
        }
    }
}

#[cfg(test)]
mod staged_tests {
    use super::*;

    #[test]
    fn staged_files_appear_together_or_not_at_all() {
        let dir = std::env::temp_dir().join(format!("tellturn-staged-{}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        let (a, b) = (dir.join("a.txt"), dir.join("b.txt"));
        fs::write(&a, "old a").unwrap();
        // Dropped before commit (a cancel): nothing changes, no temp file stays.
        let mut s = StagedFiles::new();
        s.stage(&a, |w| w.write_all(b"new a")).unwrap();
        s.stage(&b, |w| w.write_all(b"new b")).unwrap();
        drop(s);
        assert_eq!(fs::read_to_string(&a).unwrap(), "old a");
        assert!(!b.exists());
        // A failing writer: the error comes back, and nothing changes either.
        let mut s = StagedFiles::new();
        s.stage(&a, |w| w.write_all(b"new a")).unwrap();
        let e = s.stage(&b, |_| Err(io::Error::other("disk full")));
        assert!(e.is_err());
        drop(s);
        assert_eq!(fs::read_to_string(&a).unwrap(), "old a");
        assert!(!b.exists());
        // Committed: both new.
        let mut s = StagedFiles::new();
        s.stage(&a, |w| w.write_all(b"new a")).unwrap();
        s.stage(&b, |w| w.write_all(b"new b")).unwrap();
        assert_eq!(s.commit().unwrap(), vec![a.clone(), b.clone()]);
        assert_eq!(fs::read_to_string(&a).unwrap(), "new a");
        assert_eq!(fs::read_to_string(&b).unwrap(), "new b");
        let names: Vec<_> = fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names.len(), 2, "{names:?}");
        let _ = fs::remove_dir_all(&dir);
    }
}
