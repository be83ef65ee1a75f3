//! The model file: JSON with a format name, a version, the feature spec, the fitted model and a
//! training summary. Loading checks the size, the format and version, and every index and
//! length before the model is used — a model file from elsewhere is data, never code.

use super::win_model::{Fitted, WinModel};
use crate::atomic::write_atomic;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};

/// The `format` field of every tellturn model file.
pub const MODEL_FORMAT: &str = "tellturn-model";
/// The model-file version this build writes and reads.
pub const MODEL_VERSION: u32 = 1;
/// Largest model file accepted.
pub const MAX_MODEL_BYTES: u64 = 256 * 1024 * 1024;
/// Largest size of a logistic coefficient on the feature scale accepted in a model file.
/// Fitted models' are many orders smaller; with this bound a margin summed over feature values
/// (32-bit numbers, at most about 3.4e38) stays finite.
pub const MAX_RAW_COEFFICIENT: f64 = 1e30;

#[derive(Serialize, Deserialize)]
struct ModelFile {
    format: String,
    version: u32,
    model: WinModel,
}

#[derive(Serialize)]
struct ModelFileRef<'a> {
    format: &'a str,
    version: u32,
    model: &'a WinModel,
}

/// Why a model file could not be used.
#[derive(Debug, thiserror::Error)]
pub enum ModelFileError {
    /// The file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file.
        path: PathBuf,
        /// The error.
        source: std::io::Error,
    },
    /// The file is larger than [`MAX_MODEL_BYTES`].
    #[error("{path}: the file is {size} bytes; a tellturn model file is at most {max} bytes")]
    TooLarge {
        /// The file.
        path: PathBuf,
        /// Its size.
        size: u64,
        /// The limit.
        max: u64,
    },
    /// The content is not a tellturn model file.
    #[error("{path}: not a tellturn model file: {reason}")]
    NotAModel {
        /// The file.
        path: PathBuf,
        /// What was wrong.
        reason: String,
    },
    /// The file was written by an incompatible version.
    #[error(
        "{path}: model-file version {found} is not supported (this tellturn reads version {supported}); retrain with `tellturn train`"
    )]
    Version {
        /// The file.
        path: PathBuf,
        /// The version found.
        found: u64,
        /// The version supported.
        supported: u32,
    },
    /// The content parsed but is inconsistent.
    #[error("{path}: the model is inconsistent: {reason}")]
    Invalid {
        /// The file.
        path: PathBuf,
        /// What is inconsistent.
        reason: String,
    },
}

/// Write a model file atomically.
pub fn save_model(model: &WinModel, path: &Path) -> Result<(), ModelFileError> {
    let file = ModelFileRef {
        format: MODEL_FORMAT,
        version: MODEL_VERSION,
        model,
    };
    let json = serde_json::to_vec(&file).map_err(|e| ModelFileError::NotAModel {
        path: path.to_path_buf(),
        reason: e.to_string(),
    })?;
    write_atomic(path, &json).map_err(|source| ModelFileError::Io {
        path: path.to_path_buf(),
        source,
    })
}

/// Read and validate a model file.
pub fn load_model(path: &Path) -> Result<WinModel, ModelFileError> {
    let io = |source| ModelFileError::Io {
        path: path.to_path_buf(),
        source,
    };
    let size = std::fs::metadata(path).map_err(io)?.len();
    if size > MAX_MODEL_BYTES {
        return Err(ModelFileError::TooLarge {
            path: path.to_path_buf(),
            size,
            max: MAX_MODEL_BYTES,
        });
    }
    let bytes = std::fs::read(path).map_err(io)?;
    model_from_bytes(&bytes, path)
}

/// Parse and validate model-file bytes; `path` is only used in messages.
pub fn model_from_bytes(bytes: &[u8], path: &Path) -> Result<WinModel, ModelFileError> {
    let not = |reason: String| ModelFileError::NotAModel {
        path: path.to_path_buf(),
        reason,
    };
    if bytes.len() as u64 > MAX_MODEL_BYTES {
        return Err(ModelFileError::TooLarge {
            path: path.to_path_buf(),
            size: bytes.len() as u64,
            max: MAX_MODEL_BYTES,
        });
    }
    let value: serde_json::Value =
        serde_json::from_slice(bytes).map_err(|e| not(format!("not valid JSON ({e})")))?;
    let format = value.get("format").and_then(|f| f.as_str());
    if format != Some(MODEL_FORMAT) {
        return Err(not(format!(
            "expected \"format\": \"{MODEL_FORMAT}\", found {}",
            format.map_or("none".to_string(), |f| format!("\"{f}\""))
        )));
    }
    let version = value.get("version").and_then(|v| v.as_u64()).unwrap_or(0);
    if version != MODEL_VERSION as u64 {
        return Err(ModelFileError::Version {
            path: path.to_path_buf(),
            found: version,
            supported: MODEL_VERSION,
        });
    }
    let file: ModelFile =
        serde_json::from_value(value).map_err(|e| not(format!("unexpected content ({e})")))?;
    validate(&file.model).map_err(|reason| ModelFileError::Invalid {
        path: path.to_path_buf(),
        reason,
    })?;
    Ok(file.model)
}

fn check_fitted(what: &str, fitted: &Fitted, width: usize) -> Result<(), String> {
    let finite = |v: &[f64], name: &str| {
        if v.iter().all(|x| x.is_finite()) {
            Ok(())
        } else {
            Err(format!(
                "{what}: {name} holds a value that is not a finite number"
            ))
        }
    };
    match fitted {
        Fitted::Logistic(m) => {
            for (name, len) in [
                ("coefficients", m.coefficients.len()),
                ("means", m.means.len()),
                ("scales", m.scales.len()),
                ("impute", m.impute.len()),
                ("estimated", m.estimated.len()),
            ] {
                if len != width {
                    return Err(format!(
                        "{what}: {name} has {len} entries but the feature spec has {width} columns"
                    ));
                }
            }
            finite(&m.coefficients, "coefficients")?;
            finite(&m.means, "means")?;
            finite(&m.scales, "scales")?;
            finite(&m.impute, "impute")?;
            if m.scales.contains(&0.0) {
                return Err(format!("{what}: a column scale is zero"));
            }
            if !m.intercept.is_finite() {
                return Err(format!("{what}: the intercept is not a finite number"));
            }
            // Predictions use coefficients on the feature scale (coefficient / scale): bounded
            // so that a margin over 32-bit feature values can never overflow into NaN.
            let raw = m.raw_coefficients();
            if let Some(j) = raw.iter().position(|u| u.abs() > MAX_RAW_COEFFICIENT) {
                return Err(format!(
                    "{what}: column {j} has coefficient {:?} at scale {:?}, {:?} on the feature scale; \
                     a fitted model's are far below {MAX_RAW_COEFFICIENT:e}",
                    m.coefficients[j], m.scales[j], raw[j]
                ));
            }
            if let Some(j) = m.impute.iter().position(|v| v.abs() > f64::from(f32::MAX)) {
                return Err(format!(
                    "{what}: column {j} fills in missing values with {:?}, more than a feature value can hold",
                    m.impute[j]
                ));
            }
            if !m.raw_intercept().is_finite() {
                return Err(format!(
                    "{what}: the intercept on the feature scale is not a finite number (check the means)"
                ));
            }
        }
        Fitted::Boosted(m) => {
            if m.n_features != width {
                return Err(format!(
                    "{what}: the trees expect {} columns but the feature spec has {width}",
                    m.n_features
                ));
            }
            if !m.base_score.is_finite() {
                return Err(format!("{what}: the base score is not a finite number"));
            }
            for (t, tree) in m.trees.iter().enumerate() {
                let leaves = tree.leaf_values.len();
                if leaves == 0 || leaves != tree.nodes.len() + 1 {
                    return Err(format!(
                        "{what}: tree {t} has {} nodes and {leaves} leaves (a tree has one leaf more than nodes)",
                        tree.nodes.len()
                    ));
                }
                finite(&tree.leaf_values, "a leaf value")?;
                for (i, node) in tree.nodes.iter().enumerate() {
                    if node.feature as usize >= width {
                        return Err(format!(
                            "{what}: tree {t} node {i} tests column {} of {width}",
                            node.feature
                        ));
                    }
                    // A threshold past the 32-bit range reads as infinite, and an infinite
                    // one could not be written back (JSON has no infinity).
                    if !node.threshold.is_finite() {
                        return Err(format!(
                            "{what}: tree {t} node {i} has no threshold a feature value can be compared with \
                             (read as {}; expected a finite number of at most about 3.4e38 in size)",
                            node.threshold
                        ));
                    }
                    for child in [node.left, node.right] {
                        // Children come after their parent, so walking a tree always ends.
                        let ok = if child >= 0 {
                            (child as usize) > i && (child as usize) < tree.nodes.len()
                        } else {
                            (!child as usize) < leaves
                        };
                        if !ok {
                            return Err(format!(
                                "{what}: tree {t} node {i} points to a child ({child}) that does not exist"
                            ));
                        }
                    }
                }
            }
        }
    }
    Ok(())
}

/// Check every length and index of a model against its feature spec.
pub fn validate(model: &WinModel) -> Result<(), String> {
    let width = model.spec.width();
    if width != model.spec.column_names().len() {
        return Err("the feature spec is inconsistent".into());
    }
    if model.spec.params.window == 0 {
        return Err("the feature window is zero".into());
    }
    check_fitted("win model", &model.win, width)?;
    if let Some(d) = &model.draw {
        check_fitted("draw model", d, width)?;
    }
    Ok(())
}
