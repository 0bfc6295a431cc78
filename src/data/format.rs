//! The data file formats besides CSV, told by their first bytes (never by the file's name):
//! Parquet, SAS transport (XPT version 5) and spreadsheet workbooks. Each is read whole from
//! memory, every byte of the file once through the [`Source`]'s hasher, into the same
//! [`RawTable`] as the same table in CSV (so that the content fingerprint and the result digest
//! are those of the CSV twin).

use super::checks::FileFacts;
use super::delimiter::Delimiter;
use super::limits::{MAX_BINARY_BYTES, MAX_COLUMNS};
use super::load::{LoadOptions, RawTable};
use super::source::Source;
use super::{parquet_file, workbook, xpt};
use crate::error::{Error, Result};

/// The column names and the cells by column (`None`: missing) a binary format's reader returns.
pub type NamedCells = (Vec<String>, Vec<Vec<Option<f64>>>);

/// A data file format other than CSV.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Apache Parquet.
    Parquet,
    /// SAS transport, version 5.
    Xpt,
    /// A spreadsheet workbook (a ZIP container such as xlsx, or the legacy compound file).
    Workbook,
}

impl Format {
    /// The name recorded in the result's data record (`data.format`).
    pub fn name(self) -> &'static str {
        match self {
            Format::Parquet => "parquet",
            Format::Xpt => "xpt",
            Format::Workbook => "workbook",
        }
    }
}

/// How many first bytes tell the format.
pub const SIGNATURE_BYTES: usize = 48;

/// Whether `head`, the first bytes read so far, could still be the start of a signature (too
/// short to tell): the reading of the start stops as soon as they tell.
pub fn undecided(head: &[u8]) -> bool {
    SIGNATURES
        .iter()
        .any(|magic| head.len() < magic.len() && magic.starts_with(head))
}

/// Every first-bytes signature read here (or refused with advice by [`refuse_unread`]).
const SIGNATURES: [&[u8]; 5] = [
    parquet_file::MAGIC,
    xpt::MAGIC,
    xpt::MAGIC_V8,
    b"PK\x03\x04",
    b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1",
];

/// The format the first bytes of a file name, if it is one forebear reads besides CSV.
pub fn recognise(head: &[u8]) -> Option<Format> {
    if head.starts_with(parquet_file::MAGIC) {
        Some(Format::Parquet)
    } else if head.starts_with(xpt::MAGIC) {
        Some(Format::Xpt)
    } else if head.starts_with(b"PK\x03\x04")
        || head.starts_with(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1")
    {
        Some(Format::Workbook)
    } else {
        None
    }
}

/// Refuses the head of a SAS transport file of a version forebear does not read.
pub fn refuse_unread(head: &[u8], file: &str) -> Result<()> {
    if head.starts_with(xpt::MAGIC_V8) {
        return Err(Error::input(format!(
            "{file}: the file is a SAS transport file of version 8 (long names); forebear reads \
             version 5: export it with the XPORT engine (version 5), or as CSV"
        )));
    }
    Ok(())
}

/// Reads a file of `format` whole from `source` into raw cells.
pub fn read(
    format: Format,
    source: Source,
    file: String,
    options: &LoadOptions,
) -> Result<(RawTable, FileFacts)> {
    check_options(format, &file, options)?;
    let (bytes, mut facts) = source.read_all(&file, MAX_BINARY_BYTES)?;
    let (names, cells, lines) = match format {
        Format::Parquet => numbered(parquet_file::read(bytes, &file)?),
        Format::Xpt => numbered(xpt::read(&bytes, &file)?),
        Format::Workbook => {
            let (names, cells, sheet, lines) = workbook::read(bytes, &file, options)?;
            facts.sheet = Some(sheet);
            (names, cells, lines)
        }
    };
    facts.format = Some(format.name().to_string());
    check_names(&names, &file)?;
    if lines.is_empty() {
        return Err(Error::input(format!(
            "{file}: the {} file holds column names but no rows; it needs rows of numbers",
            format.name()
        )));
    }
    let mut raw = RawTable::from_cells(&file, names, cells);
    raw.lines = lines;
    Ok((raw, facts))
}

/// Rows numbered 2, 3, ... as if the names were line 1.
fn numbered((names, cells): NamedCells) -> (Vec<String>, Vec<Vec<Option<f64>>>, Vec<u64>) {
    let rows = cells.first().map_or(0, Vec::len) as u64;
    (names, cells, (2..2 + rows).collect())
}

/// Refuses a CSV reader setting given with a binary format, where it means nothing.
fn check_options(format: Format, file: &str, options: &LoadOptions) -> Result<()> {
    let setting = if options.delimiter != Delimiter::Comma {
        "a delimiter"
    } else if options.decimal_comma {
        "--decimal-comma"
    } else if options.sheet.is_some() && format != Format::Workbook {
        "a sheet"
    } else {
        return Ok(());
    };
    Err(Error::input(format!(
        "{file}: the file is a {} file, which {setting} does not apply to (it is a setting for \
         {}); leave it out",
        format.name(),
        if setting == "a sheet" {
            "workbooks"
        } else {
            "CSV files"
        }
    )))
}

/// The names as a CSV header's: at most [`MAX_COLUMNS`], none empty, none twice, none with a
/// hidden character or looking like another.
fn check_names(names: &[String], file: &str) -> Result<()> {
    if names.len() > MAX_COLUMNS {
        return Err(Error::input(format!(
            "{file}: the file has {} columns, more than {MAX_COLUMNS}, the most forebear reads; \
             leave out the columns the study does not need",
            names.len()
        )));
    }
    if let Some(j) = names.iter().position(String::is_empty) {
        return Err(Error::input(format!(
            "{file}, column {}: the column name is empty; give every column a name",
            j + 1
        )));
    }
    if let Some((first, j)) = super::names::repeated(names) {
        return Err(Error::input(format!(
            "{file}: the column name '{}' appears twice (columns {} and {}); give every column \
             its own name",
            names[j],
            first + 1,
            j + 1
        )));
    }
    super::names::check(names, file, 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn first_bytes_tell_the_format() {
        assert_eq!(recognise(b"PAR1\x15\x04"), Some(Format::Parquet));
        assert_eq!(recognise(xpt::MAGIC), Some(Format::Xpt));
        assert_eq!(recognise(b"PK\x03\x04\x14\0"), Some(Format::Workbook));
        assert_eq!(
            recognise(b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1\0"),
            Some(Format::Workbook)
        );
        assert_eq!(recognise(b"a,b\n1,2\n"), None);
        assert_eq!(recognise(b"PAR"), None);
        // A CSV header tells at its first byte; the start of a signature needs more.
        assert!(!undecided(b"k"));
        assert!(undecided(b""));
        assert!(undecided(b"PA"));
        assert!(undecided(b"HEADER RECORD***"));
        assert!(!undecided(b"PAR1"));
    }

    #[test]
    fn csv_settings_are_refused_for_a_binary_format() {
        let semicolon = LoadOptions {
            delimiter: Delimiter::Semicolon,
            ..LoadOptions::default()
        };
        let error = check_options(Format::Parquet, "f", &semicolon).unwrap_err();
        assert!(error.to_string().contains("delimiter"));
        let sheet = LoadOptions {
            sheet: Some("s".into()),
            ..LoadOptions::default()
        };
        assert!(check_options(Format::Xpt, "f", &sheet).is_err());
        assert!(check_options(Format::Workbook, "f", &sheet).is_ok());
    }
}
