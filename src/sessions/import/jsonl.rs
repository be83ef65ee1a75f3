//! Events as JSON Lines: one object per line with the same keys as the CSV columns.

use super::builder::{RawEvent, SetBuilder};
use crate::sessions::limits::MAX_FIELD_BYTES;
use crate::sessions::{Problem, Severity};
use serde_json::Value;
use std::io::{BufRead, Read};
use std::path::Path;

/// Longest line read whole; longer lines are skipped with a warning.
const MAX_LINE_BYTES: usize = 4 * MAX_FIELD_BYTES + 4096;

fn text_of(v: &Value) -> String {
    let s = match v {
        Value::Null => String::new(),
        Value::String(s) => s.clone(),
        Value::Number(n) => n.to_string(),
        other => other.to_string(),
    };
    if s.len() > MAX_FIELD_BYTES {
        let mut end = MAX_FIELD_BYTES;
        while !s.is_char_boundary(end) {
            end -= 1;
        }
        s[..end].to_string()
    } else {
        s
    }
}

/// Consume the rest of a line without keeping it, so an oversized line costs no memory.
fn skip_line<R: BufRead>(reader: &mut R) -> std::io::Result<()> {
    loop {
        let buf = match reader.fill_buf() {
            Ok(buf) => buf,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        };
        if buf.is_empty() {
            return Ok(());
        }
        match buf.iter().position(|&b| b == b'\n') {
            Some(i) => {
                reader.consume(i + 1);
                return Ok(());
            }
            None => {
                let n = buf.len();
                reader.consume(n);
            }
        }
    }
}

/// Read JSON Lines events from `reader`.
pub(crate) fn read_events<R: BufRead>(b: &mut SetBuilder, file: &Path, mut reader: R) {
    b.set_file(file);
    let mut buf = Vec::new();
    let mut line_no = 0u64;
    let mut rows = 0u64;
    let mut decoded = 0u64;
    loop {
        buf.clear();
        let n = match reader
            .by_ref()
            .take(MAX_LINE_BYTES as u64 + 1)
            .read_until(b'\n', &mut buf)
        {
            Ok(n) => n,
            Err(e) => {
                b.problems.push(
                    Problem::new(
                        file,
                        Severity::Warning,
                        "unreadable",
                        format!("reading stopped here: {e}"),
                    )
                    .at_line(line_no + 1),
                );
                break;
            }
        };
        if n == 0 {
            break;
        }
        line_no += 1;
        if buf.len() > MAX_LINE_BYTES && buf.last() != Some(&b'\n') {
            // Skip the rest of an oversized line (a read error shows again on the next read).
            let _ = skip_line(&mut reader);
            b.warn(
                Problem::new(
                    file,
                    Severity::Warning,
                    "field_truncated",
                    format!("line is longer than {MAX_LINE_BYTES} bytes; skipped"),
                )
                .at_line(line_no),
            );
            continue;
        }
        let mut bytes: &[u8] = &buf;
        if line_no == 1 && bytes.starts_with(b"\xEF\xBB\xBF") {
            bytes = &bytes[3..];
        }
        let text = match std::str::from_utf8(bytes) {
            Ok(s) => std::borrow::Cow::Borrowed(s),
            Err(_) => {
                decoded += 1;
                encoding_rs::WINDOWS_1252.decode(bytes).0
            }
        };
        let text = text.trim();
        if text.is_empty() {
            continue;
        }
        let object = match serde_json::from_str::<Value>(text) {
            Ok(Value::Object(m)) => m,
            Ok(_) => {
                b.warn(
                    Problem::new(
                        file,
                        Severity::Warning,
                        "bad_json",
                        "line is not a JSON object; expected {\"session\": …, \"turn\": …, \"actor\": …, \"event\": …} — skipped",
                    )
                    .at_line(line_no),
                );
                continue;
            }
            Err(e) => {
                b.warn(
                    Problem::new(
                        file,
                        Severity::Warning,
                        "bad_json",
                        format!("line is not valid JSON ({e}); skipped"),
                    )
                    .at_line(line_no),
                );
                continue;
            }
        };
        let mut session = String::new();
        let mut turn = None;
        let mut actor = String::new();
        let mut event = None;
        let mut detail = String::new();
        let mut state_values: Vec<(u16, String)> = Vec::new();
        for (key, value) in &object {
            let key = key.trim().to_lowercase();
            match key.as_str() {
                "session" => session = text_of(value),
                "turn" => turn = Some(text_of(value)),
                "actor" => actor = text_of(value),
                "event" => event = Some(text_of(value)),
                "detail" => detail = text_of(value),
                "" => {}
                _ => {
                    if let Some(c) = b.state_column(&key) {
                        state_values.push((c, text_of(value)));
                    }
                }
            }
        }
        let (Some(turn), Some(event)) = (turn, event) else {
            b.warn(
                Problem::new(
                    file,
                    Severity::Warning,
                    "missing_key",
                    "object lacks `turn` or `event`; expected keys session, turn, actor, event — skipped",
                )
                .at_line(line_no),
            );
            continue;
        };
        let state: Vec<(u16, &str)> = state_values.iter().map(|(c, v)| (*c, v.as_str())).collect();
        rows += 1;
        let raw = RawEvent {
            session: &session,
            turn: &turn,
            actor: &actor,
            event: &event,
            detail: &detail,
            state: &state,
            line: line_no,
        };
        if !b.add_event(&raw) {
            break;
        }
    }
    if decoded > 0 {
        b.problems.push(Problem::new(
            file,
            Severity::Warning,
            "not_utf8",
            format!(
                "{decoded} line(s) were not valid UTF-8 and were decoded as Latin-1 (Windows-1252)"
            ),
        ));
    }
    if rows == 0 {
        b.problems.push(Problem::new(
            file,
            Severity::Unusable,
            "no_rows",
            if line_no == 0 {
                "the file is empty; expected one JSON object per line"
            } else {
                "no readable event objects in the file"
            },
        ));
    }
}
