//! Data in: reading a CSV into a validated table of named numeric columns.

pub mod cells;
pub mod checks;
pub mod compare;
pub mod csv_read;
pub mod fingerprint;
pub mod load;
pub mod names;
pub mod table;
mod unreadable;

pub use load::{read_csv, LoadOptions, MissingPolicy, RawTable};
pub use table::{DataReport, Table};
