//! Fingerprints of a data file: the SHA-256 of its bytes, and the SHA-256 of its parsed content in
//! a canonical binary form, with a compact index that locates a difference.
//!
//! Two fingerprints tell "same content, different bytes" (the file was re-saved with other line
//! endings, quoting or number formatting) from "different data". The content encoding
//! (`forebear.content/1`) is, in order: the tag, the number of columns (u64 little-endian), each
//! column name as its byte length (u64 LE) and UTF-8 bytes, the number of rows (u64 LE), then the
//! cells row by row, each one byte `0` for a missing value or `1` followed by the IEEE 754 bits of
//! the value (u64 LE; -0 is written as +0, since they are equal numbers).
//!
//! The index holds a 32-bit tag of every row (the first 4 bytes of the SHA-256 of the row's cell
//! encoding) and of every block of [`BLOCK_ROWS`] rows of every column. Tags only locate a
//! difference for the message; whether the data are the same is decided by the full SHA-256.

use super::load::RawTable;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

/// Rows per column block of the index.
pub const BLOCK_ROWS: usize = 256;

/// Tag at the start of the canonical content encoding.
pub const CONTENT_TAG: &[u8] = b"forebear.content/1";

pub use crate::digest::hex;

/// SHA-256 (hex) of a text.
pub fn sha256_text(text: &str) -> String {
    hex(&Sha256::digest(text.as_bytes()))
}

/// The content fingerprint of a parsed file and its locating index.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, schemars::JsonSchema, Deserialize)]
pub struct ContentIndex {
    /// SHA-256 (hex) of the canonical content encoding.
    pub sha256: String,
    /// Column names in file order.
    pub columns: Vec<String>,
    /// Data rows (header excluded).
    pub rows: usize,
    /// Rows per column block.
    pub block_rows: usize,
    /// 8 hex digits per row, concatenated.
    pub row_tags: String,
    /// Per column (file order): 8 hex digits per block of `block_rows` rows, concatenated.
    pub block_tags: Vec<String>,
}

/// One cell's canonical bytes.
fn cell_bytes(cell: Option<f64>) -> ([u8; 9], usize) {
    let mut out = [0u8; 9];
    match cell {
        None => (out, 1),
        Some(v) => {
            let v = if v == 0.0 { 0.0 } else { v };
            out[0] = 1;
            out[1..].copy_from_slice(&v.to_bits().to_le_bytes());
            (out, 9)
        }
    }
}

fn tag(hasher: Sha256) -> String {
    hex(&hasher.finalize()[..4])
}

/// Computes the content fingerprint and index of a parsed file.
pub fn content_index(raw: &RawTable) -> ContentIndex {
    let (n_cols, n_rows) = (raw.names.len(), raw.lines.len());
    let mut whole = Sha256::new();
    whole.update(CONTENT_TAG);
    whole.update((n_cols as u64).to_le_bytes());
    for name in &raw.names {
        whole.update((name.len() as u64).to_le_bytes());
        whole.update(name.as_bytes());
    }
    whole.update((n_rows as u64).to_le_bytes());
    let mut row_tags = String::with_capacity(8 * n_rows);
    let mut blocks: Vec<Sha256> = vec![Sha256::new(); n_cols];
    let mut block_tags: Vec<String> = vec![String::new(); n_cols];
    for r in 0..n_rows {
        let mut row = Sha256::new();
        for (j, block) in blocks.iter_mut().enumerate() {
            let (bytes, len) = cell_bytes(raw.cell(j, r));
            whole.update(&bytes[..len]);
            row.update(&bytes[..len]);
            block.update(&bytes[..len]);
        }
        row_tags.push_str(&tag(row));
        if (r + 1) % BLOCK_ROWS == 0 || r + 1 == n_rows {
            for (block, tags) in blocks.iter_mut().zip(&mut block_tags) {
                tags.push_str(&tag(std::mem::take(block)));
            }
        }
    }
    ContentIndex {
        sha256: hex(&whole.finalize()),
        columns: raw.names.clone(),
        rows: n_rows,
        block_rows: BLOCK_ROWS,
        row_tags,
        block_tags,
    }
}

impl ContentIndex {
    /// The tag of row `r` (0-based).
    pub fn row_tag(&self, r: usize) -> Option<&str> {
        self.row_tags.get(8 * r..8 * r + 8)
    }

    /// The tag of block `b` of column `j`.
    pub fn block_tag(&self, j: usize, b: usize) -> Option<&str> {
        self.block_tags.get(j).and_then(|t| t.get(8 * b..8 * b + 8))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn raw(names: &[&str], rows: &[&[Option<f64>]]) -> RawTable {
        RawTable::from_cells(
            "t.csv",
            names.iter().map(|s| s.to_string()).collect(),
            (0..names.len())
                .map(|j| rows.iter().map(|r| r[j]).collect())
                .collect(),
        )
    }

    #[test]
    fn content_hash_is_sha256_of_the_documented_encoding() {
        // The encoding written out by hand from the module documentation, hashed by sha2 directly.
        let table = raw(&["a", "b"], &[&[Some(1.5), None], &[Some(-0.0), Some(2.0)]]);
        let mut bytes = CONTENT_TAG.to_vec();
        bytes.extend(2u64.to_le_bytes());
        for name in ["a", "b"] {
            bytes.extend(1u64.to_le_bytes());
            bytes.extend(name.as_bytes());
        }
        bytes.extend(2u64.to_le_bytes());
        for cell in [Some(1.5f64), None, Some(0.0), Some(2.0)] {
            match cell {
                None => bytes.push(0),
                Some(v) => {
                    bytes.push(1);
                    bytes.extend(v.to_bits().to_le_bytes());
                }
            }
        }
        let index = content_index(&table);
        assert_eq!(index.sha256, hex(&Sha256::digest(&bytes)));
        assert_eq!(index.rows, 2);
        assert_eq!(index.row_tags.len(), 16);
        assert_eq!(
            index.block_tags,
            vec![index.block_tags[0].clone(), index.block_tags[1].clone()]
        );
        assert_eq!(index.block_tags[0].len(), 8);
    }

    #[test]
    fn one_changed_cell_changes_its_row_tag_and_its_column_block_tag_only() {
        let rows: Vec<Vec<Option<f64>>> = (0..600)
            .map(|r| vec![Some(r as f64), Some((r * 7 % 13) as f64), None])
            .collect();
        let refs: Vec<&[Option<f64>]> = rows.iter().map(Vec::as_slice).collect();
        let a = content_index(&raw(&["x", "y", "z"], &refs));
        let mut changed = rows.clone();
        changed[300][1] = Some(99.0);
        let refs: Vec<&[Option<f64>]> = changed.iter().map(Vec::as_slice).collect();
        let b = content_index(&raw(&["x", "y", "z"], &refs));
        assert_ne!(a.sha256, b.sha256);
        let differing_rows: Vec<usize> =
            (0..600).filter(|&r| a.row_tag(r) != b.row_tag(r)).collect();
        assert_eq!(differing_rows, vec![300]);
        // 600 rows: blocks 0..256, 256..512, 512..600; row 300 is in block 1.
        assert_eq!(a.block_tags[0].len(), 3 * 8);
        for j in 0..3 {
            for block in 0..3 {
                assert_eq!(
                    a.block_tag(j, block) == b.block_tag(j, block),
                    !(j == 1 && block == 1),
                    "column {j} block {block}"
                );
            }
        }
    }

    #[test]
    fn renaming_a_column_changes_the_hash_but_no_tag() {
        let rows: [&[Option<f64>]; 2] = [&[Some(1.0), Some(2.0)], &[Some(3.0), Some(4.0)]];
        let a = content_index(&raw(&["x", "y"], &rows));
        let b = content_index(&raw(&["x", "w"], &rows));
        assert_ne!(a.sha256, b.sha256);
        assert_eq!((a.row_tags, a.block_tags), (b.row_tags, b.block_tags));
    }
}
