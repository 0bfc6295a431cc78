//! Data in: reading a CSV into a validated table of named numeric columns.

pub mod compare;
pub mod fingerprint;
pub mod load;
pub mod table;

pub use load::{read_csv, LoadOptions, RawTable};
pub use table::{DataReport, Table};
