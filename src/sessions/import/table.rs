//! A delimited text table read as a stream: delimiter sniffing, BOM, CRLF, quoted fields,
//! non-UTF-8 text decoded as Windows-1252 (a superset of Latin-1), oversized fields truncated.

use crate::sessions::limits::{MAX_COLUMNS, MAX_FIELD_BYTES};
use crate::sessions::{Problem, Severity};
use std::io::{self, Read};
use std::path::{Path, PathBuf};

/// Bytes looked at to guess the delimiter.
const SNIFF_BYTES: usize = 64 * 1024;

/// A streaming reader over one delimited file that yields decoded rows.
pub(crate) struct Table<R: Read> {
    file: PathBuf,
    rdr: csv::Reader<io::Chain<io::Cursor<Vec<u8>>, R>>,
    record: csv::ByteRecord,
    /// Header names, trimmed and lower-cased.
    pub headers: Vec<String>,
    /// Header names as written.
    pub raw_headers: Vec<String>,
    /// The current row's fields, decoded; reused between rows.
    pub fields: Vec<String>,
    /// Fields the header has, including those past [`MAX_COLUMNS`] that are not read.
    header_fields: usize,
    /// Every field from this index on is empty (so a short row clears only what the row
    /// before it filled, and its cost does not grow with the header's width).
    filled: usize,
    /// The line the current row starts on.
    pub line: u64,
    decoded_fields: u64,
    first_decoded_line: u64,
    truncated_fields: u64,
    first_truncated: Option<(u64, String)>,
    extra_fields: u64,
    first_extra_line: u64,
    /// Problems found by the reader itself.
    pub problems: Vec<Problem>,
}

/// Guess the delimiter from the first line: the most frequent of comma, semicolon and tab
/// outside quotes (comma when none appears).
pub(crate) fn sniff_delimiter(head: &[u8]) -> u8 {
    let mut counts = [0usize; 3];
    let mut in_quotes = false;
    for &b in head {
        match b {
            b'"' => in_quotes = !in_quotes,
            b'\n' if !in_quotes => break,
            b',' if !in_quotes => counts[0] += 1,
            b';' if !in_quotes => counts[1] += 1,
            b'\t' if !in_quotes => counts[2] += 1,
            _ => {}
        }
    }
    let delims = [b',', b';', b'\t'];
    let mut best = 0;
    for i in 1..3 {
        if counts[i] > counts[best] {
            best = i;
        }
    }
    delims[best]
}

impl<R: Read> Table<R> {
    /// Open a table: sniff the delimiter, skip a BOM, read the header row.
    ///
    /// Fails with an `Unusable` problem when the file is empty or unreadable.
    pub fn open(file: &Path, mut inner: R) -> Result<Self, Box<Problem>> {
        let mut head = Vec::with_capacity(SNIFF_BYTES);
        (&mut inner)
            .take(SNIFF_BYTES as u64)
            .read_to_end(&mut head)
            .map_err(|e| {
                Box::new(Problem::new(
                    file,
                    Severity::Unusable,
                    "unreadable",
                    format!("cannot read the file: {e}"),
                ))
            })?;
        if head.starts_with(b"\xEF\xBB\xBF") {
            head.drain(..3);
        }
        if head.iter().all(|b| b.is_ascii_whitespace()) {
            return Err(Box::new(Problem::new(
                file,
                Severity::Unusable,
                "empty_file",
                "the file is empty; expected a header row naming the columns",
            )));
        }
        let delimiter = sniff_delimiter(&head);
        let rdr = csv::ReaderBuilder::new()
            .delimiter(delimiter)
            .has_headers(false)
            .flexible(true)
            .from_reader(io::Cursor::new(head).chain(inner));
        let mut table = Table {
            file: file.to_path_buf(),
            rdr,
            record: csv::ByteRecord::new(),
            headers: Vec::new(),
            raw_headers: Vec::new(),
            fields: Vec::new(),
            header_fields: 0,
            filled: 0,
            line: 0,
            decoded_fields: 0,
            first_decoded_line: 0,
            truncated_fields: 0,
            first_truncated: None,
            extra_fields: 0,
            first_extra_line: 0,
            problems: Vec::new(),
        };
        match table.rdr.read_byte_record(&mut table.record) {
            Ok(true) => {}
            Ok(false) => {
                return Err(Box::new(Problem::new(
                    file,
                    Severity::Unusable,
                    "empty_file",
                    "the file is empty; expected a header row naming the columns",
                )));
            }
            Err(e) => {
                return Err(Box::new(
                    Problem::new(
                        file,
                        Severity::Unusable,
                        "unreadable",
                        format!("cannot read the header row: {e}"),
                    )
                    .at_line(1),
                ));
            }
        }
        table.line = table.record.position().map_or(1, |p| p.line());
        let header_record = std::mem::take(&mut table.record);
        table.header_fields = header_record.len();
        if header_record.len() > MAX_COLUMNS {
            table.problems.push(
                Problem::new(
                    file,
                    Severity::Warning,
                    "header_too_wide",
                    format!(
                        "the header names {} columns; only the first {MAX_COLUMNS} are read \
                         (expected session, turn, actor, event, detail and state columns)",
                        header_record.len()
                    ),
                )
                .at_line(table.line),
            );
        }
        for raw in header_record.iter().take(MAX_COLUMNS) {
            let name = table.decode(raw, "header");
            table.raw_headers.push(name.trim().to_string());
            table.headers.push(name.trim().to_lowercase());
        }
        table.fields = vec![String::new(); table.headers.len()];
        Ok(table)
    }

    /// Index of a column by its lower-cased name.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.headers.iter().position(|h| h == name)
    }

    fn decode(&mut self, raw: &[u8], column: &str) -> String {
        let raw = if raw.len() > MAX_FIELD_BYTES {
            self.truncated_fields += 1;
            if self.first_truncated.is_none() {
                self.first_truncated = Some((self.line, column.to_string()));
            }
            &raw[..MAX_FIELD_BYTES]
        } else {
            raw
        };
        match std::str::from_utf8(raw) {
            Ok(s) => s.to_string(),
            Err(e) if raw.len() == MAX_FIELD_BYTES && e.error_len().is_none() => {
                // Truncation cut a multi-byte character in half: keep the whole characters.
                String::from_utf8_lossy(&raw[..e.valid_up_to()]).into_owned()
            }
            Err(_) => {
                self.decoded_fields += 1;
                if self.first_decoded_line == 0 {
                    self.first_decoded_line = self.line;
                }
                let (text, _, _) = encoding_rs::WINDOWS_1252.decode(raw);
                text.into_owned()
            }
        }
    }

    /// Read the next row into [`Table::fields`]; `false` at the end of the file.
    ///
    /// Missing trailing fields read as empty; a read error ends the table with a problem.
    pub fn next_row(&mut self) -> bool {
        loop {
            match self.rdr.read_byte_record(&mut self.record) {
                Ok(false) => return false,
                Ok(true) => {}
                Err(e) => {
                    let line = e.position().map_or(self.line + 1, |p| p.line());
                    self.problems.push(
                        Problem::new(
                            &self.file,
                            Severity::Warning,
                            "unreadable",
                            format!(
                                "reading stopped here: {e}; the rows before this line were kept"
                            ),
                        )
                        .at_line(line),
                    );
                    return false;
                }
            }
            self.line = self.record.position().map_or(self.line + 1, |p| p.line());
            if self.record.len() == 1 && self.record[0].iter().all(|b| b.is_ascii_whitespace()) {
                continue; // a blank line
            }
            if self.record.len() > self.header_fields {
                self.extra_fields += 1;
                if self.first_extra_line == 0 {
                    self.first_extra_line = self.line;
                }
            }
            let record = std::mem::take(&mut self.record);
            let present = record.len().min(self.headers.len());
            for (i, raw) in record.iter().take(present).enumerate() {
                let value = if raw.len() <= MAX_FIELD_BYTES && raw.is_ascii() {
                    // Fast path: plain ASCII needs no decoding.
                    let mut f = std::mem::take(&mut self.fields[i]);
                    f.clear();
                    f.push_str(std::str::from_utf8(raw).unwrap_or_default());
                    f
                } else {
                    let column = self.headers[i].clone();
                    self.decode(raw, &column)
                };
                self.fields[i] = value;
            }
            // Missing trailing fields read as empty.
            for f in self.fields.iter_mut().take(self.filled).skip(present) {
                f.clear();
            }
            self.filled = present;
            self.record = record;
            return true;
        }
    }

    /// Turn the reader's counters into warnings (call once, at the end).
    pub fn finish(mut self) -> Vec<Problem> {
        if self.decoded_fields > 0 {
            self.problems.push(
                Problem::new(
                    &self.file,
                    Severity::Warning,
                    "not_utf8",
                    format!(
                        "text is not valid UTF-8; {} field(s) were decoded as Latin-1 (Windows-1252) — \
                         save the file as UTF-8 to be sure names read as intended",
                        self.decoded_fields
                    ),
                )
                .at_line(self.first_decoded_line),
            );
        }
        if let Some((line, column)) = self.first_truncated.take() {
            self.problems.push(
                Problem::new(
                    &self.file,
                    Severity::Warning,
                    "field_truncated",
                    format!(
                        "{} field(s) longer than {} KiB were truncated (first in column `{column}`)",
                        self.truncated_fields,
                        MAX_FIELD_BYTES / 1024
                    ),
                )
                .at_line(line)
                .in_column(column),
            );
        }
        if self.extra_fields > 0 {
            self.problems.push(
                Problem::new(
                    &self.file,
                    Severity::Warning,
                    "extra_fields",
                    format!(
                        "{} row(s) have more fields than the header names; the extra fields were ignored",
                        self.extra_fields
                    ),
                )
                .at_line(self.first_extra_line),
            );
        }
        self.problems
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn delimiter_is_the_most_frequent_separator_outside_quotes() {
        assert_eq!(sniff_delimiter(b"a,b,c\n1;2;3;4;5"), b',');
        assert_eq!(sniff_delimiter(b"a;b;c\n"), b';');
        assert_eq!(sniff_delimiter(b"a\tb\tc"), b'\t');
        assert_eq!(sniff_delimiter(b"\"x;y;z\",b\n"), b',');
        assert_eq!(sniff_delimiter(b"single"), b',');
    }
}
