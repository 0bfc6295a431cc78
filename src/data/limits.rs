//! The bounds of what the reader accepts, so that any input, a file without line breaks such as
//! `/dev/zero` included, is refused quickly with bounded memory. Each is far above real data and
//! documented in the README ("Limits").

/// Most bytes of one line: the header or a row, line breaks inside quotes included. 100 000
/// columns of numbers written with 17 significant digits and an exponent take about 2.5 MB.
pub const MAX_RECORD_BYTES: usize = 16 * 1024 * 1024;

/// Most bytes of one value (a cell). Spreadsheet programs commonly cap a cell at 32 767
/// characters; a number needs a few dozen bytes.
pub const MAX_FIELD_BYTES: usize = 64 * 1024;

/// Most bytes of one column name: it is shown in every table of the dossier.
pub const MAX_NAME_BYTES: usize = 1024;

/// Most columns: the dossier lists every column, and rendering was measured linear up to this.
pub const MAX_COLUMNS: usize = 100_000;

/// The largest binary data file (Parquet, SAS transport, workbook) read: these are read whole into
/// memory.
pub const MAX_BINARY_BYTES: u64 = 4 << 30;

/// A size in bytes for a message: `16 MiB`, `64 KiB`, `1024 bytes`.
pub fn size_text(bytes: usize) -> String {
    const MIB: usize = 1024 * 1024;
    if bytes >= MIB && bytes.is_multiple_of(MIB) {
        format!("{} MiB", bytes / MIB)
    } else if bytes > 1024 && bytes.is_multiple_of(1024) {
        format!("{} KiB", bytes / 1024)
    } else {
        format!("{bytes} bytes")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_read_in_binary_units() {
        assert_eq!(size_text(MAX_RECORD_BYTES), "16 MiB");
        assert_eq!(size_text(MAX_FIELD_BYTES), "64 KiB");
        assert_eq!(size_text(MAX_NAME_BYTES), "1024 bytes");
    }
}
