//! The reader flags shared by every command that reads a data file.

use crate::data::{Delimiter, LoadOptions, MissingPolicy};
use crate::error::{Error, Result};
use crate::settings::{Key, SettingsInput, DEFAULT_MISSING_TOKENS};
use clap::Args;

/// How the data file is read.
#[derive(Debug, Args)]
pub struct ReaderArgs {
    /// The character between values: ',' (default), ';', tab or '|'.
    #[arg(long, value_name = "CHAR", default_value = ",")]
    pub delimiter: Delimiter,
    /// Read decimal commas (3,14); then points are refused, and values need another delimiter
    /// (usually ';') unless they are quoted.
    #[arg(long)]
    pub decimal_comma: bool,
    /// Cell texts that mean "missing" (comma-separated; replaces the default list; an empty entry,
    /// as in ",NA", stands for empty cells).
    #[arg(
        long,
        value_name = "TOKENS",
        default_value_t = DEFAULT_MISSING_TOKENS.join(","),
        allow_hyphen_values = true
    )]
    pub missing_tokens: String,
    /// Rows missing a value in a used column: drop-rows (drop and count them) or error.
    #[arg(long, value_name = "POLICY", value_enum, default_value_t = MissingPolicy::DropRows)]
    pub missing: MissingPolicy,
    /// The sheet to read when the data file is a workbook (xlsx, xls): its name as the tabs show
    /// it. The first sheet when not given.
    #[arg(long, value_name = "NAME")]
    pub sheet: Option<String>,
}

impl ReaderArgs {
    /// Sets in `input` the reader settings whose flags are in `explicit` (typed, not defaulted).
    pub fn give(&self, input: &mut SettingsInput, explicit: &[Key]) {
        let given = |key: Key| explicit.contains(&key);
        input.delimiter = given(Key::Delimiter).then_some(self.delimiter);
        input.decimal_comma = given(Key::DecimalComma).then_some(self.decimal_comma);
        input.missing = given(Key::Missing).then_some(self.missing);
        if self.sheet.is_some() {
            input.sheet = self.sheet.clone();
        }
        input.missing_tokens = given(Key::MissingTokens).then(|| {
            // Empty entries are kept: "" stands for empty cells.
            self.missing_tokens.split(',').map(str::to_string).collect()
        });
    }

    /// The reader options of these flags alone (every flag, typed or defaulted), for commands
    /// that take no study file.
    pub fn load_options(&self) -> Result<LoadOptions> {
        let mut input = SettingsInput::default();
        self.give(&mut input, &Key::ALL);
        input.check_reader().map_err(Error::Settings)
    }
}
