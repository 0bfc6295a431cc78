//! Data in: reading a CSV into a validated table of named numeric columns.

pub mod cells;
pub mod checks;
pub mod compare;
pub mod csv_read;
pub mod delimiter;
pub mod fingerprint;
pub mod limits;
pub mod load;
pub mod names;
mod signature;
pub mod source;
mod spelling;
pub mod table;
mod unreadable;

pub use delimiter::Delimiter;
pub use load::{read_csv, read_data, DataReader, LoadOptions, MissingPolicy, RawTable};
pub use table::{DataReport, Table};
