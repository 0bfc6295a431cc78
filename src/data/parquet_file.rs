//! Apache Parquet files (the format specification of the Apache Parquet project), read with the
//! `parquet` crate without Arrow: numeric columns only (integers of every width, floats, booleans
//! as 0 and 1, decimals stored as 32- or 64-bit integers), nulls as missing values, row groups in
//! order. A column of any other type is refused, naming it and its type.

use super::format::NamedCells;
use crate::error::{Error, Result};
use bytes::Bytes;
use parquet::basic::{ConvertedType, LogicalType, Type as PhysicalType};
use parquet::data_type::Decimal;
use parquet::file::reader::{FileReader, SerializedFileReader};
use parquet::record::Field;
use parquet::schema::types::ColumnDescriptor;

/// The first (and last) four bytes of a Parquet file.
pub const MAGIC: &[u8] = b"PAR1";

/// The names and the cells by column (`None`: a null) of a Parquet file held in `bytes`.
pub fn read(bytes: Vec<u8>, file: &str) -> Result<NamedCells> {
    let damaged = |e: parquet::errors::ParquetError| {
        Error::input(format!(
            "{file}: the Parquet file cannot be read ({}); write it again, or export the table \
             as CSV",
            super::cells::one_line(&e.to_string())
        ))
    };
    let reader = SerializedFileReader::new(Bytes::from(bytes)).map_err(damaged)?;
    let schema = reader.metadata().file_metadata().schema_descr_ptr();
    for field in schema.root_schema().get_fields() {
        if field.is_group() {
            return Err(refusal(file, field.name(), "a nested group"));
        }
    }
    let mut names = Vec::with_capacity(schema.num_columns());
    for j in 0..schema.num_columns() {
        let column = schema.column(j);
        if let Some(kind) = refused_type(&column) {
            return Err(refusal(file, column.name(), &kind));
        }
        names.push(column.name().to_string());
    }
    let mut columns: Vec<Vec<Option<f64>>> = vec![Vec::new(); names.len()];
    for row in reader.get_row_iter(None).map_err(damaged)? {
        let row = row.map_err(damaged)?;
        for (j, (name, field)) in row.get_column_iter().enumerate() {
            let value = number(field).ok_or_else(|| refusal(file, name, &format!("{field:?}")))?;
            columns[j].push(value);
        }
    }
    Ok((names, columns))
}

/// The refusal of a column that is not numeric.
fn refusal(file: &str, column: &str, kind: &str) -> Error {
    Error::input(format!(
        "{file}: the Parquet column '{column}' is of type {kind}, not a number; forebear reads \
         integer, floating-point, boolean and decimal columns only, so drop the column (or encode \
         it as numbers) and write the file again"
    ))
}

/// The type of a column forebear does not read, described; `None` for a numeric column.
fn refused_type(column: &ColumnDescriptor) -> Option<String> {
    if column.max_rep_level() > 0 || column.path().parts().len() > 1 {
        return Some("a repeated or nested field".into());
    }
    let physical = column.physical_type();
    let logical = column.logical_type_ref();
    let numeric = match physical {
        PhysicalType::BOOLEAN | PhysicalType::FLOAT | PhysicalType::DOUBLE => logical.is_none(),
        PhysicalType::INT32 | PhysicalType::INT64 => match logical {
            None => matches!(
                column.converted_type(),
                ConvertedType::NONE
                    | ConvertedType::INT_8
                    | ConvertedType::INT_16
                    | ConvertedType::INT_32
                    | ConvertedType::INT_64
                    | ConvertedType::UINT_8
                    | ConvertedType::UINT_16
                    | ConvertedType::UINT_32
                    | ConvertedType::UINT_64
                    | ConvertedType::DECIMAL
            ),
            Some(LogicalType::Integer { .. } | LogicalType::Decimal { .. }) => true,
            Some(_) => false,
        },
        _ => false,
    };
    if numeric {
        return None;
    }
    Some(match logical {
        Some(logical) => format!("{logical:?} (stored as {physical})"),
        None if column.converted_type() != ConvertedType::NONE => {
            format!("{} (stored as {physical})", column.converted_type())
        }
        None => physical.to_string(),
    })
}

/// A cell as a number: `Some(None)` for a null, `None` for a value that is no number.
fn number(field: &Field) -> Option<Option<f64>> {
    Some(Some(match field {
        Field::Null => return Some(None),
        Field::Bool(b) => f64::from(u8::from(*b)),
        Field::Byte(v) => f64::from(*v),
        Field::Short(v) => f64::from(*v),
        Field::Int(v) => f64::from(*v),
        Field::Long(v) => *v as f64,
        Field::UByte(v) => f64::from(*v),
        Field::UShort(v) => f64::from(*v),
        Field::UInt(v) => f64::from(*v),
        Field::ULong(v) => *v as f64,
        // Widened exactly.
        Field::Float(v) => f64::from(*v),
        Field::Double(v) => *v,
        Field::Decimal(d) => decimal(d)?,
        _ => return None,
    }))
}

/// A decimal stored as a 32- or 64-bit integer: the unscaled integer divided by 10^scale, one
/// correctly rounded division (the double nearest the decimal when both parts are exact, as for
/// the same number written in a CSV file).
fn decimal(d: &Decimal) -> Option<f64> {
    let unscaled = match d {
        Decimal::Int32 { value, .. } => f64::from(i32::from_be_bytes(*value)),
        Decimal::Int64 { value, .. } => i64::from_be_bytes(*value) as f64,
        Decimal::Bytes { .. } => return None,
    };
    let scale = d.scale();
    Some(if scale >= 0 {
        unscaled / 10f64.powi(scale)
    } else {
        unscaled * 10f64.powi(-scale)
    })
}
