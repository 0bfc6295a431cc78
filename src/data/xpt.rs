//! SAS transport files, version 5 (the record layout SAS Institute published as technical note
//! TS-140, "The record layout of a data set in SAS transport (XPORT) format"): 80-byte records, a
//! library header, one member with its NAMESTR records (140 bytes per variable) and the
//! observations, numbers as IBM System/360 hexadecimal floating point.
//!
//! Numeric variables only: a character variable is refused, naming it. One member per file.

use super::format::NamedCells;
use crate::error::{Error, Result};

/// The start of the first record of a version 5 transport file.
pub const MAGIC: &[u8] = b"HEADER RECORD*******LIBRARY HEADER RECORD!!!!!!!";

/// The start of the first record of a version 8 transport file (longer names; not read).
pub const MAGIC_V8: &[u8] = b"HEADER RECORD*******LIBV8   HEADER RECORD!!!!!!!";

const RECORD: usize = 80;
const MEMBER: &[u8] = b"HEADER RECORD*******MEMBER  HEADER RECORD!!!!!!!";
const NAMESTR: &[u8] = b"HEADER RECORD*******NAMESTR HEADER RECORD!!!!!!!";
const OBS: &[u8] = b"HEADER RECORD*******OBS     HEADER RECORD!!!!!!!";

/// One variable as its NAMESTR record describes it.
#[derive(Clone, Debug, PartialEq)]
pub struct Variable {
    /// The variable's name (trailing blanks removed).
    pub name: String,
    /// Whether it is numeric (type 1) rather than character (type 2).
    pub numeric: bool,
    /// Bytes per value in an observation.
    pub length: usize,
    /// Offset of the value in an observation.
    pub position: usize,
}

/// The names and the cells by column (`None`: a missing value) of the one member of `bytes`.
pub fn read(bytes: &[u8], file: &str) -> Result<NamedCells> {
    let bad = |what: &str| {
        Error::input(format!(
            "{file}: the SAS transport file is damaged or not version 5 ({what}); export the data \
             set again with the XPORT engine (version 5), or as CSV"
        ))
    };
    let record = |i: usize| bytes.get(i * RECORD..(i + 1) * RECORD);
    // Records 0-2: library header; 3: member header; 4-6: descriptor; 7: NAMESTR header.
    let member = record(3).ok_or_else(|| bad("it ends inside the library header"))?;
    if !member.starts_with(MEMBER) {
        return Err(bad("no member header in record 4"));
    }
    let namestr_size = digits(&member[74..78]).unwrap_or(140);
    if namestr_size != 140 && namestr_size != 136 {
        return Err(bad("the NAMESTR length is neither 140 nor 136"));
    }
    let header = record(7).ok_or_else(|| bad("it ends before the NAMESTR header"))?;
    if !header.starts_with(NAMESTR) {
        return Err(bad("no NAMESTR header in record 8"));
    }
    let count = digits(&header[54..58]).ok_or_else(|| bad("no variable count"))?;
    if count == 0 {
        return Err(Error::input(format!(
            "{file}: the SAS transport data set has no variables; it needs numeric variables"
        )));
    }
    let start = 8 * RECORD;
    let end = start + count * namestr_size;
    let block = bytes
        .get(start..end)
        .ok_or_else(|| bad("it ends inside the NAMESTR records"))?;
    let variables: Vec<Variable> = block
        .chunks_exact(namestr_size)
        .map(parse_namestr)
        .collect();
    if let Some(v) = variables.iter().find(|v| !v.numeric) {
        return Err(Error::input(format!(
            "{file}: the SAS transport variable '{}' holds characters; forebear reads numeric \
             variables only, so drop the variable (or encode it as numbers) and export again",
            v.name
        )));
    }
    let width = variables
        .iter()
        .map(|v| v.position + v.length)
        .max()
        .unwrap_or(0);
    if let Some(v) = variables
        .iter()
        .find(|v| !(2..=8).contains(&v.length) || v.position + v.length > width)
    {
        return Err(bad(&format!(
            "the variable '{}' has length {}",
            v.name, v.length
        )));
    }
    let obs_start = end.div_ceil(RECORD) * RECORD;
    let obs = bytes
        .get(obs_start..obs_start + RECORD)
        .ok_or_else(|| bad("it ends before the observation header"))?;
    if !obs.starts_with(OBS) {
        return Err(bad("no observation header after the NAMESTR records"));
    }
    let data = &bytes[obs_start + RECORD..];
    let data = match find_record(data, MEMBER) {
        Some(at) => {
            return Err(Error::input(format!(
                "{file}: the SAS transport file holds more than one data set (a second member \
                 header at byte {}); forebear reads one data set per file: export each data set to \
                 its own file",
                obs_start + RECORD + at
            )))
        }
        None => data,
    };
    let mut rows = data.len() / width;
    // The last record is padded with blanks: a trailing row of blanks only is padding.
    while rows > 0
        && data[(rows - 1) * width..rows * width]
            .iter()
            .all(|&b| b == b' ')
    {
        rows -= 1;
    }
    let mut columns = vec![Vec::with_capacity(rows); variables.len()];
    for row in data.chunks_exact(width).take(rows) {
        for (column, v) in columns.iter_mut().zip(&variables) {
            column.push(decode(&row[v.position..v.position + v.length]));
        }
    }
    let names = variables.into_iter().map(|v| v.name).collect();
    Ok((names, columns))
}

/// The first offset (a multiple of 80) at which a record starting with `prefix` begins.
fn find_record(data: &[u8], prefix: &[u8]) -> Option<usize> {
    (0..data.len())
        .step_by(RECORD)
        .find(|&at| data[at..].starts_with(prefix))
}

/// A number written in ASCII digits (blanks around it allowed).
fn digits(field: &[u8]) -> Option<usize> {
    std::str::from_utf8(field).ok()?.trim().parse().ok()
}

/// One NAMESTR record (TS-140): big-endian 16-bit type at 0, length at 4, the name in bytes
/// 8-15, the position in the observation as a 32-bit integer at 84.
pub fn parse_namestr(record: &[u8]) -> Variable {
    let short = |at: usize| u16::from_be_bytes([record[at], record[at + 1]]);
    let name = String::from_utf8_lossy(&record[8..16])
        .trim_end_matches([' ', '\0'])
        .to_string();
    Variable {
        name,
        numeric: short(0) == 1,
        length: usize::from(short(4)),
        position: u32::from_be_bytes([record[84], record[85], record[86], record[87]]) as usize,
    }
}

/// A numeric value of 2 to 8 bytes: `None` for a missing value (a first byte of `.`, `_` or a
/// letter `A`-`Z`, the rest zero), else the IBM number (a shorter value is its first bytes).
pub fn decode(value: &[u8]) -> Option<f64> {
    let mut bytes = [0u8; 8];
    bytes[..value.len()].copy_from_slice(value);
    let first = bytes[0];
    if (first == b'.' || first == b'_' || first.is_ascii_uppercase())
        && bytes[1..].iter().all(|&b| b == 0)
    {
        return None;
    }
    Some(ibm_to_ieee(u64::from_be_bytes(bytes)))
}

/// An IBM System/360 long hexadecimal floating-point number (IBM "z/Architecture Principles of
/// Operation", chapter "Floating-Point Overview and Support Instructions", hexadecimal format:
/// sign bit, 7-bit exponent of 16 in excess-64, 56-bit fraction 0.F) as the nearest IEEE 754
/// double. The fraction is rounded once to 53 bits (ties to even, as the integer conversion
/// does); the power of two is then exact, as every IBM exponent lies in the double's normal range.
pub fn ibm_to_ieee(bits: u64) -> f64 {
    let negative = bits >> 63 == 1;
    let exponent = ((bits >> 56) & 0x7f) as i32;
    let fraction = bits & 0x00ff_ffff_ffff_ffff;
    let magnitude = if fraction == 0 {
        0.0
    } else {
        // value = fraction × 2^-56 × 16^(exponent - 64).
        let power = 4 * (exponent - 64) - 56;
        let scale = f64::from_bits(((power + 1023) as u64) << 52);
        fraction as f64 * scale
    };
    if negative {
        -magnitude
    } else {
        magnitude
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_ibm_patterns_convert_exactly() {
        assert_eq!(ibm_to_ieee(0x4110_0000_0000_0000), 1.0);
        assert_eq!(ibm_to_ieee(0xC276_A000_0000_0000), -118.625);
        // 0.1 rounded to 56 bits of fraction: 0x1999999999999A × 2^-56, the double nearest 0.1.
        assert_eq!(ibm_to_ieee(0x4019_9999_9999_999A), 0.1);
        assert_eq!(ibm_to_ieee(0), 0.0);
        assert_eq!(ibm_to_ieee(0x4210_0000_0000_0000), 16.0);
        assert_eq!(ibm_to_ieee(0x4080_0000_0000_0000), 0.5);
        // The largest fraction needs rounding to 53 bits: 0.FFFFFFFFFFFFFF rounds up to 1.
        assert_eq!(ibm_to_ieee(0x40FF_FFFF_FFFF_FFFF), 1.0);
    }

    #[test]
    fn missing_patterns_are_missing_and_short_values_are_padded() {
        for first in [b'.', b'_', b'A', b'Z'] {
            assert_eq!(decode(&[first, 0, 0, 0, 0, 0, 0, 0]), None);
        }
        assert_eq!(decode(&[b'.', 0, 0]), None);
        assert_eq!(decode(&[0x41, 0x10, 0, 0]), Some(1.0));
        assert_eq!(decode(&[0xC2, 0x76, 0xA0]), Some(-118.625));
        // A first byte of a letter with other bytes set is a number, not a missing value.
        assert!(decode(&[b'A', 1, 0, 0, 0, 0, 0, 0]).is_some());
    }

    #[test]
    fn a_namestr_record_gives_name_type_length_and_position() {
        let mut record = [0u8; 140];
        record[0..2].copy_from_slice(&1u16.to_be_bytes());
        record[4..6].copy_from_slice(&8u16.to_be_bytes());
        record[8..16].copy_from_slice(b"DOSE    ");
        record[84..88].copy_from_slice(&16u32.to_be_bytes());
        let v = parse_namestr(&record);
        assert_eq!(
            v,
            Variable {
                name: "DOSE".into(),
                numeric: true,
                length: 8,
                position: 16
            }
        );
        record[0..2].copy_from_slice(&2u16.to_be_bytes());
        assert!(!parse_namestr(&record).numeric);
    }
}
