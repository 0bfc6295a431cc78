//! Column names a reader can trust: no name holds a character that prints as nothing, moves the
//! cursor or reorders the text around it, and no two names look the same.
//!
//! - A name holding a [`hidden_character`](crate::text::hidden_character) (a control character,
//!   a bidirectional control of Unicode Standard Annex #9, or an invisible format or
//!   default-ignorable character, as Unicode Technical Report #36 and Unicode Technical Standard
//!   #39 section 3.1 advise for identifiers) is refused: `x2` U+202E `evil`
//!   shows as `x2live`, and `a` U+200B `b` (a zero-width space) looks like `ab`.
//! - Two names that are the same text once both are in Normalization Form C (Unicode Standard
//!   Annex #15: canonically equivalent sequences, such as `é` as one character or as `e` and a
//!   combining accent) are refused as duplicates, and so are names that differ only in their
//!   white space (a no-break space for a space, two spaces for one), which HTML shows alike.
//!
//! Compatibility forms (NFKC: `x²` and `x2`) and letters of other scripts that look alike are not
//! refused: they look different in ordinary fonts, and files legitimately hold both.

use crate::error::{Error, Result};
use crate::text::{code_point, code_points, escaped, hidden_character};
use std::collections::BTreeMap;
use unicode_normalization::UnicodeNormalization;

/// The first name that repeats an earlier one, as (position of the earlier, position of the
/// repeat).
pub fn repeated(names: &[String]) -> Option<(usize, usize)> {
    let mut seen = BTreeMap::new();
    names
        .iter()
        .enumerate()
        .find_map(|(j, name)| seen.insert(name.as_str(), j).map(|first| (first, j)))
}

/// Refuses the first name that holds a hidden character, then the first pair of names that look
/// the same. `names` are the header's names (trimmed, non-empty, distinct as bytes); `line` is the
/// header's line in `file`.
pub fn check(names: &[String], file: &str, line: u64) -> Result<()> {
    for (j, name) in names.iter().enumerate() {
        if let Some((c, what)) = name
            .chars()
            .find_map(|c| hidden_character(c).map(|what| (c, what)))
        {
            return Err(Error::input(format!(
                "{file}, line {line}, column {}: the column name '{}' holds {what}, {}, which would \
                 not show as it is in messages and reports; rename the column without it",
                j + 1,
                crate::text::capped(&escaped(name), crate::text::ECHO_CHARS),
                code_point(c)
            )));
        }
    }
    let mut seen: BTreeMap<String, usize> = BTreeMap::new();
    for (j, name) in names.iter().enumerate() {
        if let Some(&first) = seen.get(&look(name)) {
            let other = &names[first];
            let why = if other.nfc().eq(name.nfc()) {
                "are the same text in different Unicode normalisation forms (Unicode Standard Annex \
                 #15) and look identical"
            } else {
                "differ only in their white space and look identical"
            };
            return Err(Error::input(format!(
                "{file}, line {line}: the column names '{}' (column {}) and '{}' (column {}) {why}; \
                 give every column its own name",
                crate::text::capped(&code_points(other), crate::text::ECHO_CHARS),
                first + 1,
                crate::text::capped(&code_points(name), crate::text::ECHO_CHARS),
                j + 1
            )));
        }
        seen.insert(look(name), j);
    }
    Ok(())
}

/// Refuses a data file whose path is not valid UTF-8. The dossier records the path, and its
/// reproduce command must name exactly this file when pasted into a shell; a record in JSON holds
/// Unicode text only, so such a name could only be written approximately.
pub fn check_data_path(path: &std::path::Path) -> Result<()> {
    if path.to_str().is_some() {
        return Ok(());
    }
    let bytes = path.as_os_str().as_encoded_bytes();
    let at = std::str::from_utf8(bytes)
        .err()
        .map_or(0, |e| e.valid_up_to());
    Err(Error::input(format!(
        "the data file name {} is not valid UTF-8 text (byte 0x{:02X} at byte offset {at} of the \
         name); the dossier records the name and a command that must name exactly this file: \
         rename the file with a UTF-8 name",
        crate::text::quoted(&path.to_string_lossy()),
        bytes.get(at).copied().unwrap_or(0)
    )))
}

/// What a name looks like: its Normalization Form C with every run of white space as one space.
fn look(name: &str) -> String {
    let normal: String = name.nfc().collect();
    normal.split_whitespace().collect::<Vec<_>>().join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn names(list: &[&str]) -> Vec<String> {
        list.iter().map(|s| s.to_string()).collect()
    }

    fn refusal(list: &[&str]) -> String {
        check(&names(list), "f.csv", 1).unwrap_err().to_string()
    }

    #[test]
    fn a_bidi_override_is_refused_with_its_code_point() {
        let m = refusal(&["y", "x2\u{202e}evil"]);
        assert!(m.contains("f.csv, line 1, column 2"), "{m}");
        assert!(m.contains("'x2\\u{202e}evil'"), "{m}");
        assert!(
            m.contains("U+202E") && m.contains("right-to-left override"),
            "{m}"
        );
    }

    #[test]
    fn canonically_equivalent_names_are_duplicates() {
        let m = refusal(&["caf\u{e9}", "y", "cafe\u{301}"]);
        assert!(m.contains("'caf\\u{e9}' (column 1)"), "{m}");
        assert!(m.contains("'cafe\\u{301}' (column 3)"), "{m}");
        assert!(m.contains("normalisation"), "{m}");
    }

    #[test]
    fn names_differing_only_in_white_space_are_duplicates() {
        let m = refusal(&["a b", "a\u{a0}b"]);
        assert!(m.contains("white space"), "{m}");
        assert!(refusal(&["a b", "a  b"]).contains("(column 2)"));
    }

    #[test]
    fn ordinary_names_pass() {
        assert!(check(
            &names(&["x2", "x²", "Temp (°C)", "a\u{a0}b", "ξ", "X2"]),
            "f",
            1
        )
        .is_ok());
    }
}
