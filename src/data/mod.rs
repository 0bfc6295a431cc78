//! Data in: reading a CSV file (or a Parquet, SAS transport or workbook file) into a validated table of named numeric columns.

pub mod cells;
pub mod checks;
pub mod compare;
pub mod csv_read;
pub mod delimiter;
pub mod fingerprint;
pub mod format;
pub mod limits;
pub mod load;
pub mod names;
mod parquet_file;
mod signature;
pub mod source;
mod spelling;
pub mod table;
mod unreadable;
mod workbook;
mod xpt;

pub use delimiter::Delimiter;
pub use load::{read_csv, read_data, DataReader, LoadOptions, MissingPolicy, RawTable};
pub use table::{DataReport, Table};
