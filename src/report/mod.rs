//! The report: `report.html` (self-contained), `summary.json` and the CSV tables, written
//! atomically into a folder that is never one of the input folders. The engine does the work
//! ([`crate::study`]); this module only lays it out.

pub mod escape;
pub mod html;
pub mod svg;
pub mod tables;

use crate::atomic::StagedFiles;
use crate::progress::{Cancel, Cancelled, Progress};
use crate::study::Study;
use std::path::{Path, PathBuf};

/// Why a report could not be written.
#[derive(Debug, thiserror::Error)]
pub enum ReportError {
    /// The output folder is (inside) an input folder.
    #[error(
        "{out} is inside the input folder {input}; reports are never written into an input folder — choose another --out"
    )]
    IntoInput {
        /// The output folder.
        out: PathBuf,
        /// The input folder.
        input: PathBuf,
    },
    /// Writing failed.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The error.
        source: std::io::Error,
    },
    /// Cancelled.
    #[error("cancelled")]
    Cancelled(#[from] Cancelled),
}

/// The files a report consists of.
pub const REPORT_FILES: [&str; 6] = [
    "report.html",
    "summary.json",
    "turn_probabilities.csv",
    "decisions.csv",
    "turn_accuracy.csv",
    "event_impact.csv",
];

fn canonical(p: &Path) -> PathBuf {
    std::fs::canonicalize(p).unwrap_or_else(|_| p.to_path_buf())
}

/// Where `out` would be once created: its nearest existing ancestor, resolved, plus the rest.
fn resolved(out: &Path) -> PathBuf {
    let absolute = if out.is_absolute() {
        out.to_path_buf()
    } else {
        std::env::current_dir().unwrap_or_default().join(out)
    };
    let mut rest = Vec::new();
    let mut at = absolute.as_path();
    while !at.exists() {
        match (at.parent(), at.file_name()) {
            (Some(parent), Some(name)) => {
                rest.push(name.to_os_string());
                at = parent;
            }
            _ => break,
        }
    }
    let mut p = canonical(at);
    for name in rest.iter().rev() {
        p.push(name);
    }
    p
}

/// Refuse an output folder that is, or lies inside, one of the input folders (checked before
/// anything is created or trained).
pub fn check_output_dir(roots: &[PathBuf], out: &Path) -> Result<(), ReportError> {
    let target = resolved(out);
    for root in roots.iter().filter(|r| !r.as_os_str().is_empty()) {
        if target.starts_with(canonical(root)) {
            return Err(ReportError::IntoInput {
                out: out.to_path_buf(),
                input: root.clone(),
            });
        }
    }
    Ok(())
}

/// Write every report file into `out` (created if needed; never inside an input folder).
pub fn write_report(
    study: &Study,
    out: &Path,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Vec<PathBuf>, ReportError> {
    let roots: Vec<PathBuf> = study.sets.iter().map(|s| s.root.clone()).collect();
    check_output_dir(&roots, out)?;
    let created = !out.exists();
    std::fs::create_dir_all(out).map_err(|source| ReportError::Io {
        path: out.to_path_buf(),
        source,
    })?;
    let result = write_files(study, out, progress, cancel);
    if result.is_err() && created {
        // Only removes the folder when it is still empty (nothing of ours was committed).
        let _ = std::fs::remove_dir(out);
    }
    result
}

/// The six files, staged and committed together.
fn write_files(
    study: &Study,
    out: &Path,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Vec<PathBuf>, ReportError> {
    type Writer = fn(&Study, &mut dyn std::io::Write) -> std::io::Result<()>;
    let writers: [(&str, Writer); 6] = [
        ("report.html", |s, w| {
            w.write_all(html::render(s).as_bytes())
        }),
        ("summary.json", tables::summary_json),
        ("turn_probabilities.csv", tables::turn_probabilities),
        ("decisions.csv", tables::decisions),
        ("turn_accuracy.csv", tables::turn_accuracy),
        ("event_impact.csv", tables::event_impact),
    ];
    // All six files are staged and renamed together only once every one is complete and no
    // cancel came: an interrupted report leaves no new file at all.
    let mut staged = StagedFiles::new();
    for (i, (name, write)) in writers.iter().enumerate() {
        cancel.check()?;
        progress.report("writing report", i as f64 / writers.len() as f64);
        let path = out.join(name);
        staged
            .stage(&path, |w| write(study, w))
            .map_err(|source| ReportError::Io {
                path: path.clone(),
                source,
            })?;
    }
    cancel.check()?;
    let written = staged.commit().map_err(|source| ReportError::Io {
        path: out.to_path_buf(),
        source,
    })?;
    progress.report("writing report", 1.0);
    Ok(written)
}
