//! Limits that protect the user's machine from hostile or broken inputs.
//!
//! Each is generous for real playtests; going past one gives a clear problem, never a crash.

/// Largest field kept whole; longer fields are truncated with a warning.
pub const MAX_FIELD_BYTES: usize = 64 * 1024;
/// Most actors in one session (more and the session is set aside).
pub const MAX_ACTORS: usize = 8;
/// Fewest actors in a finished session.
pub const MIN_ACTORS: usize = 2;
/// Most event rows in one session (more and the session is set aside).
pub const MAX_EVENTS_PER_SESSION: usize = 200_000;
/// Most sessions in one set (later sessions are not read).
pub const MAX_SESSIONS: usize = 1_000_000;
/// Most event rows in one set (later rows are not read).
pub const MAX_EVENT_ROWS: u64 = 100_000_000;
/// Most distinct event labels in one set (later new labels are merged into one).
pub const MAX_EVENT_LABELS: usize = 4_096;
/// Most columns read from a header (later columns are ignored): the known columns and
/// [`MAX_STATE_COLUMNS`] state columns fit many times over.
pub const MAX_COLUMNS: usize = 1_024;
/// Most numeric state columns in one set (later columns are ignored).
pub const MAX_STATE_COLUMNS: usize = 64;
/// Largest size of a state value accepted: feature values are 32-bit numbers, so a larger
/// one would become infinite.
pub const MAX_STATE_VALUE: f64 = f32::MAX as f64;
/// Largest turn number accepted.
pub const MAX_TURN: u64 = 1_000_000;
/// Label that stands for every event label past [`MAX_EVENT_LABELS`].
pub const OTHER_LABEL: &str = "(other labels)";
