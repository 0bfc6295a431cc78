//! The reader flags shared by every command that reads a data file.

use crate::data::load::parse_delimiter;
use crate::data::{LoadOptions, MissingPolicy};
use crate::error::Result;
use clap::Args;

/// How the data file is read.
#[derive(Debug, Args)]
pub struct ReaderArgs {
    /// The character between values: ',' (default), ';', tab or '|'.
    #[arg(long, value_name = "CHAR", default_value = ",")]
    pub delimiter: String,
    /// Read decimal commas (3,14); then points are refused, and values need another delimiter
    /// (usually ';') unless they are quoted.
    #[arg(long)]
    pub decimal_comma: bool,
    /// Cell texts that mean "missing" (comma-separated; replaces the default list; an empty entry,
    /// as in ",NA", stands for empty cells).
    #[arg(
        long,
        value_name = "TOKENS",
        default_value = ",NA,NaN,null,#N/A",
        allow_hyphen_values = true
    )]
    pub missing_tokens: String,
    /// Rows missing a value in a used column: drop-rows (drop and count them) or error.
    #[arg(long, value_name = "POLICY", default_value = "drop-rows")]
    pub missing: String,
}

impl ReaderArgs {
    /// The reader options these flags describe.
    pub fn load_options(&self) -> Result<LoadOptions> {
        let options = LoadOptions {
            delimiter: parse_delimiter(&self.delimiter)?,
            decimal_comma: self.decimal_comma,
            missing_policy: MissingPolicy::parse(&self.missing)?,
            ..LoadOptions::default()
        };
        Ok(options.with_token_list(&self.missing_tokens))
    }
}
