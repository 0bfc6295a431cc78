//! User-controlled text shown to a person: column names, values, file names, plan strings.
//!
//! One policy for every place that shows such text on a terminal, in a message or in a report:
//! characters that move the cursor, change the terminal's state, reorder the text around them or
//! print as nothing ([`hidden_character`]) are never passed through; they are written as escapes
//! (`\n`, `\u{202e}`) so that what a reader sees is what is there. Long strings are cut at
//! [`ECHO_CHARS`] characters with their full size in bytes.
//!
//! The classes follow Unicode Standard Annex #9 (the explicit directional formatting characters,
//! section 2), Unicode Technical Report #36 (security considerations: invisible and bidirectional
//! characters in identifiers) and Unicode Technical Standard #39 (section 3.1, characters
//! restricted in identifiers: Default_Ignorable_Code_Point and format characters).

use unicode_properties::{GeneralCategory, UnicodeGeneralCategory};

/// Most characters of one user string a message or a report shows; the rest is replaced by
/// `… (N bytes)`.
pub const ECHO_CHARS: usize = 200;

/// What `c` is, when it is a character that must not reach a reader as it is: a control
/// character (C0 including line breaks, tab and ESC; DEL; C1), a bidirectional formatting
/// character (Unicode Standard Annex #9), or an invisible one (a format character, General
/// Category Cf, or a Default_Ignorable_Code_Point such as a zero-width space, a variation
/// selector or a Hangul filler), or a line or paragraph separator.
pub fn hidden_character(c: char) -> Option<&'static str> {
    let name = match c {
        '\0' => "a null character",
        '\t' => "a tab",
        '\n' => "a line feed (a line break)",
        '\r' => "a carriage return",
        '\u{1b}' => "an escape character (it starts terminal control sequences)",
        '\u{7f}' => "a delete control character",
        '\u{85}' => "a next-line control character (a line break)",
        '\u{9b}' => "a control sequence introducer (it starts terminal control sequences)",
        '\u{9d}' => "an operating system command introducer (it starts terminal control sequences)",
        c if c.is_control() && (c as u32) < 0x80 => "a control character",
        c if c.is_control() => "a C1 control character",
        '\u{202a}' => "a left-to-right embedding (a bidirectional control)",
        '\u{202b}' => "a right-to-left embedding (a bidirectional control)",
        '\u{202c}' => "a pop directional formatting character (a bidirectional control)",
        '\u{202d}' => "a left-to-right override (a bidirectional control)",
        '\u{202e}' => "a right-to-left override (a bidirectional control)",
        '\u{2066}' => "a left-to-right isolate (a bidirectional control)",
        '\u{2067}' => "a right-to-left isolate (a bidirectional control)",
        '\u{2068}' => "a first strong isolate (a bidirectional control)",
        '\u{2069}' => "a pop directional isolate (a bidirectional control)",
        '\u{200e}' => "a left-to-right mark (an invisible bidirectional control)",
        '\u{200f}' => "a right-to-left mark (an invisible bidirectional control)",
        '\u{61c}' => "an Arabic letter mark (an invisible bidirectional control)",
        '\u{200b}' => "a zero width space (invisible)",
        '\u{200c}' => "a zero width non-joiner (invisible)",
        '\u{200d}' => "a zero width joiner (invisible)",
        '\u{2060}' => "a word joiner (invisible)",
        '\u{feff}' => "a zero width no-break space or byte-order mark (invisible)",
        '\u{ad}' => "a soft hyphen (invisible)",
        '\u{34f}' => "a combining grapheme joiner (invisible)",
        '\u{180e}' => "a Mongolian vowel separator (invisible)",
        '\u{2028}' => "a line separator (a line break)",
        '\u{2029}' => "a paragraph separator (a line break)",
        '\u{fe00}'..='\u{fe0f}' | '\u{e0100}'..='\u{e01ef}' => {
            "a variation selector (invisible; it changes how the character before it looks)"
        }
        '\u{180b}'..='\u{180d}' | '\u{180f}' => "a Mongolian free variation selector (invisible)",
        '\u{e0000}'..='\u{e007f}' => "a tag character (invisible)",
        '\u{115f}' | '\u{1160}' | '\u{3164}' | '\u{ffa0}' => "a Hangul filler (invisible)",
        '\u{17b4}' | '\u{17b5}' => "a Khmer inherent vowel (invisible)",
        // The remaining Default_Ignorable_Code_Point ranges are unassigned: reserved so that a
        // future character there prints as nothing.
        '\u{2065}'
        | '\u{fff0}'..='\u{fff8}'
        | '\u{e0080}'..='\u{e00ff}'
        | '\u{e01f0}'..='\u{e0fff}' => "a reserved invisible code point",
        c if c.general_category() == GeneralCategory::Format => "a format character (invisible)",
        _ => return None,
    };
    Some(name)
}

/// The escape of a hidden character: `\n`, `\r`, `\t`, `\0`, or `\u{…}` in lowercase hex.
fn push_escape(out: &mut String, c: char) {
    match c {
        '\n' => out.push_str("\\n"),
        '\r' => out.push_str("\\r"),
        '\t' => out.push_str("\\t"),
        '\0' => out.push_str("\\0"),
        c => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
    }
}

/// `text` with every [`hidden_character`] written as its escape and everything else as it is.
/// Safe to print on a terminal; what a reader sees is what is there. Backslashes are kept, so a
/// message that already holds escapes keeps them readable.
pub fn escaped(text: &str) -> String {
    if !text.chars().any(|c| hidden_character(c).is_some()) {
        return text.to_string();
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if hidden_character(c).is_some() {
            push_escape(&mut out, c);
        } else {
            out.push(c);
        }
    }
    out
}

/// `text` with every character outside printable ASCII written as `\u{…}` (hidden ones as in
/// [`escaped`]): used when two names look alike, so that their difference shows.
pub fn code_points(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if c == ' ' || c.is_ascii_graphic() {
            out.push(c);
        } else {
            push_escape(&mut out, c);
        }
    }
    out
}

/// At most `limit` characters of `text`; a longer text ends with `… (N bytes)`.
pub fn capped(text: &str, limit: usize) -> String {
    match text.char_indices().nth(limit) {
        None => text.to_string(),
        Some((cut, _)) => format!("{}… ({} bytes)", &text[..cut], text.len()),
    }
}

/// A user string in single quotes for a message: cut at [`ECHO_CHARS`] characters, hidden
/// characters escaped, and `'` and `\` inside escaped with a backslash, so that the quoted form
/// says exactly which text it is.
pub fn quoted(text: &str) -> String {
    let (shown, rest) = match text.char_indices().nth(ECHO_CHARS) {
        None => (text, String::new()),
        Some((cut, _)) => (&text[..cut], format!("… ({} bytes)", text.len())),
    };
    let mut out = String::with_capacity(shown.len() + 2);
    out.push('\'');
    for c in shown.chars() {
        match c {
            '\'' | '\\' => {
                out.push('\\');
                out.push(c);
            }
            c if hidden_character(c).is_some() => push_escape(&mut out, c),
            c => out.push(c),
        }
    }
    out.push_str(&rest);
    out.push('\'');
    out
}

/// A line for the terminal (stderr or stdout): hidden characters escaped, so that no name, value
/// or path in it can send a control sequence or reorder the line.
pub fn for_terminal(line: &str) -> String {
    escaped(line)
}

/// A name in a list of names (`a, b` or `{a, b}`): as it is, or in double quotes (inner quotes
/// doubled) when it holds a list's punctuation or is the word a list uses for nothing, so that the
/// set {`a`, `b`} and a column named `a, b` (`"a, b"`), or no column and a column named `none`
/// (`"none"`), read apart.
pub fn list_item(name: &str) -> String {
    if name.contains([',', ';', '{', '}', '"']) || name == "none" {
        format!("\"{}\"", name.replace('"', "\"\""))
    } else {
        name.to_string()
    }
}

/// `U+202E` for a message.
pub fn code_point(c: char) -> String {
    format!("U+{:04X}", c as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn controls_bidi_and_invisible_characters_are_hidden_characters() {
        for c in [
            '\0',
            '\n',
            '\r',
            '\t',
            '\u{1b}',
            '\u{7f}',
            '\u{85}',
            '\u{9b}',
            '\u{202e}',
            '\u{2066}',
            '\u{200e}',
            '\u{61c}',
            '\u{200b}',
            '\u{200d}',
            '\u{2060}',
            '\u{feff}',
            '\u{ad}',
            '\u{fe0f}',
            '\u{e0041}',
            '\u{3164}',
            '\u{2028}',
            '\u{600}',
            '\u{e0100}',
        ] {
            assert!(hidden_character(c).is_some(), "{:?}", c);
        }
        for c in [
            'a', ' ', 'é', 'ß', 'ξ', '²', '\u{a0}', '\u{301}', '…', '€', '中',
        ] {
            assert_eq!(hidden_character(c), None, "{c:?}");
        }
        assert_eq!(
            hidden_character('\u{202e}'),
            Some("a right-to-left override (a bidirectional control)")
        );
    }

    #[test]
    fn escaped_text_shows_what_is_there() {
        assert_eq!(escaped("x2\u{202e}evil"), "x2\\u{202e}evil");
        assert_eq!(
            escaped("a\nb\t\u{1b}]0;t\u{7}"),
            "a\\nb\\t\\u{1b}]0;t\\u{7}"
        );
        assert_eq!(escaped("caf\u{e9} \\ 'x'"), "caf\u{e9} \\ 'x'");
        assert_eq!(code_points("cafe\u{301}"), "cafe\\u{301}");
        assert_eq!(code_points("a\u{a0}b c"), "a\\u{a0}b c");
    }

    #[test]
    fn quoted_strings_are_bounded_and_unambiguous() {
        assert_eq!(quoted("a\nb"), "'a\\nb'");
        assert_eq!(quoted("it's a\\b"), "'it\\'s a\\\\b'");
        let long = "é".repeat(300);
        assert_eq!(
            quoted(&long),
            format!("'{}… (600 bytes)'", "é".repeat(ECHO_CHARS))
        );
        assert_eq!(capped("abcdef", 3), "abc… (6 bytes)");
        assert_eq!(capped("abc", 3), "abc");
    }

    #[test]
    fn a_name_holding_list_punctuation_reads_apart_from_a_list() {
        assert_eq!(list_item("a"), "a");
        assert_eq!(list_item("a, b"), "\"a, b\"");
        assert_eq!(list_item("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(list_item("none"), "\"none\"");
    }
}
