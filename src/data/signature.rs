//! What the first bytes of a file that is not UTF-8 text say it is: a wide Unicode encoding
//! (byte-order marks and zero-byte patterns of the Unicode Standard, §23.8 and §3.10), or a
//! compressed or binary format by its magic number (RFC 1952 gzip, the xz file format
//! specification, RFC 8878 Zstandard, the ZIP application note, and others).

/// The sentence for a file whose bytes are not UTF-8, and whether the file looks binary (so that
/// its bytes are not worth quoting). `head` is the start of the file, `value` the bytes of the
/// value that failed.
pub fn encoding_hint(head: &[u8], value: &[u8]) -> (String, bool) {
    if let Some(encoding) = wide_encoding(head).or_else(|| wide_encoding(value)) {
        return (
            format!("the file looks like {encoding}; save it as UTF-8"),
            true,
        );
    }
    if let Some(format) = binary_format(head) {
        return (format.to_string(), true);
    }
    (
        "the file seems to be saved in another encoding (such as Latin-1 or Windows-1252); save \
         it as UTF-8"
            .to_string(),
        false,
    )
}

/// The wide encoding that the byte-order mark or the zero bytes of mostly ASCII text point to:
/// `UTF-32 (little-endian)`, `UTF-16 (big-endian)`, ...
pub fn wide_encoding(bytes: &[u8]) -> Option<&'static str> {
    // The UTF-32 marks first: the little-endian one begins with the UTF-16 one.
    if bytes.starts_with(b"\xff\xfe\0\0") {
        return Some("UTF-32 (little-endian)");
    }
    if bytes.starts_with(b"\0\0\xfe\xff") {
        return Some("UTF-32 (big-endian)");
    }
    if bytes.starts_with(b"\xff\xfe") {
        return Some("UTF-16 (little-endian)");
    }
    if bytes.starts_with(b"\xfe\xff") {
        return Some("UTF-16 (big-endian)");
    }
    // Without a mark: ASCII characters as code units of 4 or 2 bytes leave zero bytes in place.
    match bytes {
        [a, 0, 0, 0, ..] if *a != 0 => Some("UTF-32 (little-endian)"),
        [0, 0, 0, a, ..] if *a != 0 => Some("UTF-32 (big-endian)"),
        [a, 0, b, 0, ..] if *a != 0 && *b != 0 => Some("UTF-16 (little-endian)"),
        [0, a, 0, b, ..] if *a != 0 && *b != 0 => Some("UTF-16 (big-endian)"),
        _ => None,
    }
}

/// The compressed, archive or binary format a file's magic number names, as advice.
fn binary_format(bytes: &[u8]) -> Option<&'static str> {
    const COMPRESSED: [(&[u8], &str); 5] = [
        (
            b"\x1f\x8b",
            "the file looks compressed (gzip); decompress it first",
        ),
        (
            b"\xfd7zXZ\0",
            "the file looks compressed (xz); decompress it first",
        ),
        (
            b"\x28\xb5\x2f\xfd",
            "the file looks compressed (Zstandard); decompress it first",
        ),
        (
            b"BZh",
            "the file looks compressed (bzip2); decompress it first",
        ),
        (
            b"7z\xbc\xaf\x27\x1c",
            "the file looks like a 7z archive; extract the CSV file first",
        ),
    ];
    const OTHER: [(&[u8], &str); 5] = [
        (
            b"PK\x03\x04",
            "the file looks like a ZIP archive or a spreadsheet workbook; export the sheet as CSV \
             (UTF-8)",
        ),
        (
            b"\xd0\xcf\x11\xe0",
            "the file looks like a legacy spreadsheet workbook; export the sheet as CSV (UTF-8)",
        ),
        (
            b"%PDF-",
            "the file looks like a PDF document; export the table as CSV (UTF-8)",
        ),
        (
            b"PAR1",
            "the file looks like a Parquet file; export the table as CSV (UTF-8)",
        ),
        (
            b"SQLite format 3\0",
            "the file looks like an SQLite database; export the table as CSV (UTF-8)",
        ),
    ];
    COMPRESSED
        .iter()
        .chain(OTHER.iter())
        .find(|(magic, _)| bytes.starts_with(magic))
        .map(|&(_, advice)| advice)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn byte_order_marks_tell_utf32_from_utf16() {
        assert_eq!(
            wide_encoding(b"\xff\xfe\0\0a\0\0\0"),
            Some("UTF-32 (little-endian)")
        );
        assert_eq!(
            wide_encoding(b"\0\0\xfe\xff\0\0\0a"),
            Some("UTF-32 (big-endian)")
        );
        assert_eq!(
            wide_encoding(b"\xff\xfea\0,\0"),
            Some("UTF-16 (little-endian)")
        );
        assert_eq!(
            wide_encoding(b"\xfe\xff\0a\0,"),
            Some("UTF-16 (big-endian)")
        );
    }

    #[test]
    fn zero_bytes_without_a_mark_tell_the_encoding() {
        assert_eq!(
            wide_encoding(b"a\0\0\0,\0\0\0"),
            Some("UTF-32 (little-endian)")
        );
        assert_eq!(
            wide_encoding(b"\0\0\0a\0\0\0,"),
            Some("UTF-32 (big-endian)")
        );
        assert_eq!(wide_encoding(b"a\0,\0b\0"), Some("UTF-16 (little-endian)"));
        assert_eq!(wide_encoding(b"\0a\0,\0b"), Some("UTF-16 (big-endian)"));
        assert_eq!(wide_encoding(b"a,b\n"), None);
    }

    #[test]
    fn magic_numbers_name_the_format() {
        let hint = |bytes: &[u8]| encoding_hint(bytes, b"").0;
        assert!(hint(b"\xfd7zXZ\0\0\x04").contains("xz"));
        assert!(hint(b"\x1f\x8b\x08").contains("gzip"));
        assert!(hint(b"BZh91AY&SY").contains("bzip2"));
        assert!(hint(b"\x28\xb5\x2f\xfd").contains("Zstandard"));
        assert!(hint(b"PK\x03\x04rest").contains("spreadsheet"));
        assert!(hint(b"%PDF-1.7\n\xe2").contains("PDF"));
        let (hint, binary) = encoding_hint(b"caf\xe9", b"caf\xe9");
        assert!(hint.contains("Latin-1") && !binary);
    }
}
