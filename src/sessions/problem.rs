//! Problems found while reading a session set: where, how bad, and what was expected.

use serde::Serialize;
use std::fmt;
use std::path::PathBuf;

/// How bad a problem is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The whole set cannot be used (no readable events, a required column missing, no finished session).
    Unusable,
    /// One session is set aside; the rest of the set loads.
    SetAside,
    /// Something was ignored, replaced or truncated; nothing was set aside.
    Warning,
}

impl Severity {
    /// A short word for listings.
    pub fn word(self) -> &'static str {
        match self {
            Severity::Unusable => "unusable",
            Severity::SetAside => "set aside",
            Severity::Warning => "warning",
        }
    }
}

/// One defect in an input file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Problem {
    /// The file it was found in.
    pub file: PathBuf,
    /// 1-based line number, when known.
    pub line: Option<u64>,
    /// The column name (or JSON key), when known.
    pub column: Option<String>,
    /// How bad it is.
    pub severity: Severity,
    /// The session it concerns, when it concerns one.
    pub session: Option<String>,
    /// What is wrong and what was expected.
    pub message: String,
    /// A short stable key that groups problems of one kind (e.g. `turn_not_number`).
    pub kind: &'static str,
}

impl Problem {
    /// A problem in `file` of `severity` and `kind`, with a message.
    pub fn new(
        file: impl Into<PathBuf>,
        severity: Severity,
        kind: &'static str,
        message: impl Into<String>,
    ) -> Self {
        Problem {
            file: file.into(),
            line: None,
            column: None,
            severity,
            session: None,
            message: message.into(),
            kind,
        }
    }
    /// Attach a line number.
    pub fn at_line(mut self, line: u64) -> Self {
        self.line = Some(line);
        self
    }
    /// Attach a column name.
    pub fn in_column(mut self, column: impl Into<String>) -> Self {
        self.column = Some(column.into());
        self
    }
    /// Attach a session id.
    pub fn for_session(mut self, session: impl Into<String>) -> Self {
        self.session = Some(session.into());
        self
    }
}

impl fmt::Display for Problem {
    /// `file:line: message`, the form editors and terminals understand.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file.display())?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
        }
        write!(f, ": {}", self.message)
    }
}
