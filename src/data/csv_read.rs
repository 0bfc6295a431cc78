//! Records of a delimited text file (RFC 4180: quoted fields, doubled quotes, line breaks inside
//! quotes), streamed one at a time, with the byte-level checks every line goes through: UTF-8
//! (a leading byte-order mark, Unicode Standard §23.8, is skipped), one field per column, names.

use super::cells::{is_number_text, one_line, quoted};
use super::checks::FileFacts;
use super::delimiter::Delimiter;
use super::limits::{size_text, MAX_FIELD_BYTES, MAX_RECORD_BYTES};
use super::signature::{encoding_hint, wide_encoding};
use super::source::{is_record_too_long, Source};
use crate::error::{Error, Result};

/// A file read record by record, once, hashing its bytes on the way ([`Source`]).
pub struct Records {
    reader: csv::Reader<Source>,
    record: csv::ByteRecord,
    file: String,
    /// Whether a record that is not blank was read (the header): value lengths are checked from
    /// the next one on, names by their own, smaller limit.
    past_header: bool,
}

impl Records {
    /// Reads `source` (shown as `file` in messages) as records separated by `delimiter`.
    pub fn new(source: Source, file: &str, delimiter: Delimiter) -> Records {
        // Headers are read as an ordinary record so that every line, the first included, goes
        // through the same byte-level checks. Records end at '\n' only: with the reader's default
        // CRLF terminator, every record after the first of a CRLF file reports the line before its
        // own. The '\r' left at the end of the last field is removed with the surrounding spaces.
        let reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .delimiter(delimiter.byte())
            .terminator(csv::Terminator::Any(b'\n'))
            .from_reader(source);
        Records {
            reader,
            record: csv::ByteRecord::new(),
            file: file.to_string(),
            past_header: false,
        }
    }

    /// Reads the next record that is not a blank line; `false` at the end of the file. A record
    /// longer than [`MAX_RECORD_BYTES`] or with a value longer than [`MAX_FIELD_BYTES`] is refused.
    pub fn advance(&mut self) -> Result<bool> {
        loop {
            let start = self.reader.position().clone();
            self.reader.get_mut().begin_record(start.byte());
            let more = self
                .reader
                .read_byte_record(&mut self.record)
                .map_err(|error| {
                    let what = match error.kind() {
                        csv::ErrorKind::Io(e) if is_record_too_long(e) => {
                            return self.too_long(start.line(), start.byte())
                        }
                        csv::ErrorKind::Io(e) => {
                            format!("cannot be read: {}", one_line(&e.to_string()))
                        }
                        _ => one_line(&error.to_string()),
                    };
                    match error.position() {
                        Some(p) => {
                            Error::input(format!("{}, line {}: {what}", self.file, p.line()))
                        }
                        None => Error::input(format!("data file '{}' {what}", self.file)),
                    }
                })?;
            if self.reader.position().byte() - start.byte() > MAX_RECORD_BYTES as u64 {
                return Err(self.too_long(start.line(), start.byte()));
            }
            let blank = self.record.len() == 1 && self.record[0].trim_ascii().is_empty();
            if !more || !blank {
                let long = |f: &[u8]| f.len() > MAX_FIELD_BYTES;
                let checked = std::mem::replace(&mut self.past_header, true);
                if let Some(j) = self.record.iter().position(long).filter(|_| checked) {
                    return Err(Error::input(format!(
                        "{}, line {}, column {}: the value is longer than {}, the most one value \
                         may hold; check that the file is a CSV file and that every quote (\") is \
                         closed",
                        self.file,
                        self.line(),
                        j + 1,
                        size_text(MAX_FIELD_BYTES)
                    )));
                }
                return Ok(more);
            }
        }
    }

    /// The error for a record that grew past [`MAX_RECORD_BYTES`] from `line` (at byte `start`).
    fn too_long(&self, line: u64, start: u64) -> Error {
        let (bytes, _) = self.reader.get_ref().kept(start, u64::MAX);
        let hint = if bytes.contains(&b'"') {
            "; check for a quote (\") that is not closed"
        } else {
            "; the file does not look like CSV text with a line break after each row"
        };
        Error::input(format!(
            "{}, line {line}: the line is longer than {}, the most forebear reads as one line \
             (the header or a row, line breaks inside quotes included){hint}",
            self.file,
            size_text(MAX_RECORD_BYTES)
        ))
    }

    /// The bytes hashed so far: after the last record, the whole file's fingerprint.
    pub fn finish(self) -> Result<FileFacts> {
        self.reader.into_inner().finish(&self.file)
    }

    /// The current record.
    pub fn record(&self) -> &csv::ByteRecord {
        &self.record
    }

    /// The file line on which the current record starts (1-based).
    pub fn line(&self) -> u64 {
        self.record.position().map_or(0, |p| p.line())
    }

    /// The file line on which the next record starts: one past the current record's last line.
    pub fn next_line(&self) -> u64 {
        self.reader.position().line()
    }

    /// Field `j` of the current record as text, or an error naming the byte offset of the first
    /// byte that is not UTF-8. `place` is the line-and-column prefix of the message.
    pub fn text(&self, j: usize, place: impl FnOnce() -> String) -> Result<&str> {
        let bytes = &self.record[j];
        std::str::from_utf8(bytes).map_err(|_| {
            let offset = self.first_invalid_byte();
            let at = offset.map_or(String::new(), |(o, _)| format!(", byte offset {o}"));
            let shown = offset.map_or(String::new(), |(_, b)| format!(" (byte 0x{b:02X})"));
            let (hint, binary) = encoding_hint(self.reader.get_ref().head(), bytes);
            // The text of a binary file says nothing to a reader: leave it out.
            let value = if binary {
                "the value".to_string()
            } else {
                format!(
                    "the value {}",
                    quoted(String::from_utf8_lossy(bytes).trim())
                )
            };
            Error::input(format!(
                "{}{at}: {value} is not valid UTF-8 text{shown}; {hint}",
                place()
            ))
        })
    }

    /// Offset in the file, and value, of the first byte of the current record that does not
    /// belong to a UTF-8 sequence, found in the record's bytes as read (the file is not read
    /// again: it may be a pipe).
    fn first_invalid_byte(&self) -> Option<(u64, u8)> {
        let start = self.record.position()?.byte();
        let end = self.reader.position().byte();
        let (bytes, first) = self.reader.get_ref().kept(start, end);
        let error = std::str::from_utf8(bytes).err()?;
        let at = error.valid_up_to();
        Some((first + at as u64, bytes[at]))
    }

    /// Reads the header from the current record: trimmed, non-empty, distinct UTF-8 names.
    pub fn header(&self, delimiter: Delimiter) -> Result<Vec<String>> {
        let line = self.line();
        let file = &self.file;
        let mut names = Vec::with_capacity(self.record.len());
        for j in 0..self.record.len() {
            let name = self.text(j, || format!("{file}, line {line}, column {}", j + 1))?;
            if name.contains('\0') {
                return Err(Error::input(format!(
                    "{file}, line {line}, column {}: the column name holds zero bytes, as text saved \
                     as {} does; save the file as UTF-8",
                    j + 1,
                    wide_encoding(self.reader.get_ref().head()).unwrap_or("UTF-16 or UTF-32")
                )));
            }
            let name = name.trim();
            if name.contains('\r') {
                return Err(Error::input(format!(
                    "{file}, line {line}, column {}: the column name {} holds a carriage return: the \
                     file seems to end its lines with CR alone; save it with LF or CRLF line ends",
                    j + 1,
                    quoted(name)
                )));
            }
            names.push(name.to_string());
        }
        if let Some(other) = foreign_delimiter(&names, delimiter) {
            return Err(Error::input(format!(
                "{file}, line {line}: the header is the single name {} and seems to use {} between \
                 names, not {}; read it with --delimiter {}",
                quoted(&names[0]),
                other.name(),
                delimiter.plural(),
                other.flag_value()
            )));
        }
        check_names(&names, file, line, delimiter)?;
        Ok(names)
    }

    /// A row must have exactly one field per column.
    pub fn check_width(&self, names: &[String]) -> Result<()> {
        let record = &self.record;
        let (fields, width, line) = (record.len(), names.len(), self.line());
        let file = &self.file;
        let open_quote = self.open_quote_hint();
        if fields < width {
            return Err(Error::input(format!(
                "{file}, line {line}: the row has {fields} field(s) but the header has {width} \
                 columns, so column {} has no value; give every row one value per column (an empty \
                 cell marks a missing value){open_quote}",
                quoted(&names[fields])
            )));
        }
        if fields > width {
            let extra = String::from_utf8_lossy(&record[width]);
            return Err(Error::input(format!(
                "{file}, line {line}: the row has {fields} fields but the header has {width} \
                 columns, so the value {} after the last column {} has no column; check for an \
                 unquoted delimiter inside a value{open_quote}",
                quoted(extra.trim()),
                quoted(&names[width - 1])
            )));
        }
        Ok(())
    }

    /// When a field of the current record holds a line break, the likeliest cause of a bad row is
    /// a quote that was opened and never closed: say where the value starts and ends.
    pub fn open_quote_hint(&self) -> String {
        if !self.record.iter().any(|f| f.contains(&b'\n')) {
            return String::new();
        }
        let last = self.next_line().saturating_sub(1).max(self.line());
        format!(
            " (a quoted value runs from line {} to line {last}: check for a quote (\") that is \
             not closed)",
            self.line()
        )
    }
}

/// Another accepted delimiter, when the whole header is one name holding it.
fn foreign_delimiter(names: &[String], delimiter: Delimiter) -> Option<Delimiter> {
    let [only] = names else { return None };
    Delimiter::ALL
        .into_iter()
        .filter(|&d| d != delimiter)
        .max_by_key(|d| only.bytes().filter(|&b| b == d.byte()).count())
        .filter(|d| only.as_bytes().contains(&d.byte()))
}

fn check_names(names: &[String], file: &str, line: u64, delimiter: Delimiter) -> Result<()> {
    let filled: Vec<&String> = names.iter().filter(|n| !n.is_empty()).collect();
    let numeric = |n: &str| {
        is_number_text(n) || (delimiter != Delimiter::Comma && is_number_text(&n.replace(',', ".")))
    };
    if !filled.is_empty() && filled.iter().all(|n| numeric(n)) {
        let j = names.iter().position(|n| !n.is_empty()).unwrap_or(0);
        return Err(Error::input(format!(
            "{file}, line {line}, column {}: the first row holds the number {} where a column name \
             is expected; add a header row of column names",
            j + 1,
            quoted(&names[j])
        )));
    }
    if let Some(j) = names.iter().position(String::is_empty) {
        let hint = if j + 1 == names.len() && names.len() > 1 {
            format!(
                " (is there a {} at the end of the header?)",
                delimiter.name()
            )
        } else {
            String::new()
        };
        return Err(Error::input(format!(
            "{file}, line {line}, column {}: the column name is empty; give every column a name{hint}",
            j + 1
        )));
    }
    if let Some((first, j)) = super::names::repeated(names) {
        return Err(Error::input(format!(
            "{file}, line {line}: the column name {} appears twice (columns {} and {}); give \
             every column its own name",
            quoted(&names[j]),
            first + 1,
            j + 1
        )));
    }
    super::names::check(names, file, line)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    #[test]
    fn a_header_of_one_name_holding_another_delimiter_is_recognised() {
        assert_eq!(
            foreign_delimiter(&names(&["a;b;c"]), Delimiter::Comma),
            Some(Delimiter::Semicolon)
        );
        assert_eq!(
            foreign_delimiter(&names(&["a\tb"]), Delimiter::Comma),
            Some(Delimiter::Tab)
        );
        assert_eq!(
            foreign_delimiter(&names(&["a,b|c,d"]), Delimiter::Semicolon),
            Some(Delimiter::Comma)
        );
        assert_eq!(
            foreign_delimiter(&names(&["a", "b;c"]), Delimiter::Comma),
            None
        );
        assert_eq!(
            foreign_delimiter(&names(&["plain"]), Delimiter::Comma),
            None
        );
    }
}
