//! The character between values: one type for the reader, the command line, study files, plans and
//! the recorded data report (where it is written as the character itself, `","` or `"\t"`).

use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// The delimiters the reader accepts.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Delimiter {
    /// `,` (the default; RFC 4180).
    #[default]
    Comma,
    /// `;` (usual where the decimal mark is a comma).
    Semicolon,
    /// A tab character.
    Tab,
    /// `|`.
    Pipe,
}

impl Delimiter {
    /// Every delimiter, in the order messages list them.
    pub const ALL: [Delimiter; 4] = [
        Delimiter::Comma,
        Delimiter::Semicolon,
        Delimiter::Tab,
        Delimiter::Pipe,
    ];

    /// The byte between fields.
    pub fn byte(self) -> u8 {
        match self {
            Delimiter::Comma => b',',
            Delimiter::Semicolon => b';',
            Delimiter::Tab => b'\t',
            Delimiter::Pipe => b'|',
        }
    }

    /// The character itself, as recorded in `result.json`.
    pub fn text(self) -> String {
        (self.byte() as char).to_string()
    }

    /// The name in a message: `','`, `';'`, `tab`, `'|'`.
    pub fn name(self) -> String {
        match self {
            Delimiter::Tab => "tab".to_string(),
            d => format!("'{}'", d.byte() as char),
        }
    }

    /// The name in the plural, for "names separated by …".
    pub fn plural(self) -> &'static str {
        match self {
            Delimiter::Comma => "commas",
            Delimiter::Semicolon => "semicolons",
            Delimiter::Tab => "tabs",
            Delimiter::Pipe => "'|' characters",
        }
    }

    /// How to write it after `--delimiter` in a shell.
    pub fn flag_value(self) -> &'static str {
        match self {
            Delimiter::Comma => "','",
            Delimiter::Semicolon => "';'",
            Delimiter::Tab => "tab",
            Delimiter::Pipe => "'|'",
        }
    }
}

impl std::str::FromStr for Delimiter {
    type Err = String;

    /// The character itself, or its name: `,` `comma`, `;` `semicolon`, tab `\t` `tab`, `|` `pipe`.
    fn from_str(text: &str) -> Result<Delimiter, String> {
        match text {
            "," | "comma" => Ok(Delimiter::Comma),
            ";" | "semicolon" => Ok(Delimiter::Semicolon),
            "\t" | "\\t" | "tab" => Ok(Delimiter::Tab),
            "|" | "pipe" => Ok(Delimiter::Pipe),
            _ => Err(format!(
                "{} is not supported; use ',' (the default), ';', tab or '|'",
                crate::text::quoted(text)
            )),
        }
    }
}

impl std::fmt::Display for Delimiter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.name())
    }
}

impl Serialize for Delimiter {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(&self.text())
    }
}

impl schemars::JsonSchema for Delimiter {
    fn schema_name() -> std::borrow::Cow<'static, str> {
        "Delimiter".into()
    }

    fn json_schema(_: &mut schemars::SchemaGenerator) -> schemars::Schema {
        schemars::json_schema!({
            "type": "string",
            "description": "The field delimiter, as the character itself.",
            "enum": [",", ";", "\t", "|"]
        })
    }
}

impl<'de> Deserialize<'de> for Delimiter {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Delimiter, D::Error> {
        let text = String::deserialize(deserializer)?;
        text.parse().map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_delimiter_reads_back_from_its_character_and_its_name() {
        for d in Delimiter::ALL {
            assert_eq!(d.text().parse::<Delimiter>(), Ok(d));
            let json = serde_json::to_string(&d).unwrap();
            assert_eq!(serde_json::from_str::<Delimiter>(&json).unwrap(), d);
        }
        assert_eq!("tab".parse::<Delimiter>(), Ok(Delimiter::Tab));
        assert_eq!(serde_json::to_string(&Delimiter::Tab).unwrap(), "\"\\t\"");
        assert_eq!("\\t".parse::<Delimiter>(), Ok(Delimiter::Tab));
        let error = ":".parse::<Delimiter>().unwrap_err();
        assert!(error.contains("':'") && error.contains("tab"), "{error}");
    }
}
