//! The local parent search: forward selection with the natural stopping rule (FOCI, Azadkia and
//! Chatterjee 2021) and parent recovery from mutual Markov-boundary membership (Azadkia, Taeb and
//! Bühlmann, arXiv:2111.14969).

pub mod cache;
pub mod collider;
pub mod forward;
mod independence;
pub mod knowledge;
pub mod orient;
pub mod parents;
pub mod rule;
pub mod screening;
pub mod shrink;

pub use cache::{local_parents_shared, Boundaries, TargetRequest};
pub use forward::{forward_select, Selection, Step, StopReason};
pub use parents::{local_parents, local_parents_with, Component, Outcome, PairTest, ParentSearch};
pub use rule::{SelectionRule, StoppingRule};

use crate::data::Table;
use crate::measure::neighbors::blocks::Blocks;
use crate::measure::neighbors::{Column, Neighbourhood};
use crate::measure::permutation::LOCAL_PERMUTATION_ROWS;
use crate::measure::scaling::Scaled;
use crate::measure::Scaling;
use crate::rng::Key;

/// The columns one search works on: raw values (for response ranks and ξ_n) and scaled values
/// (for nearest neighbours), by column position.
pub struct SearchData<'a> {
    table: &'a Table,
    scaled: Vec<Scaled>,
    /// Study seed and replicate number: the coordinates of every keyed draw.
    pub seed: u64,
    /// Replicate number; 0 is the full data.
    pub replicate: u64,
    /// Original row behind each row when rows repeat (bootstrap).
    origins: Option<Vec<u32>>,
    /// Fewest rows per block of the local permutation.
    block_rows: usize,
}

impl<'a> SearchData<'a> {
    /// Scales every column of `table` once.
    pub fn new(table: &'a Table, scaling: Scaling, seed: u64, replicate: u64) -> Self {
        let scaled = (0..table.n_cols())
            .map(|j| scaling.scale(table.column(j)))
            .collect();
        SearchData {
            table,
            scaled,
            seed,
            replicate,
            origins: None,
            block_rows: LOCAL_PERMUTATION_ROWS,
        }
    }

    /// Another number of rows per local-permutation block (for the calibration study only; the
    /// method uses `LOCAL_PERMUTATION_ROWS`).
    pub fn with_block_rows(mut self, rows: usize) -> Self {
        self.block_rows = rows;
        self
    }

    /// Marks rows that are copies of one original row (bootstrap): such rows are never each
    /// other's nearest neighbour.
    pub fn with_origins(mut self, origins: Vec<u32>) -> Self {
        self.origins = Some(origins);
        self
    }

    /// Nearest neighbours of every row in the space of `columns`, ties broken under the key of
    /// (`response`, `columns`).
    pub fn neighbours(&self, response: usize, columns: &[usize]) -> Vec<u32> {
        self.neighbourhood(columns)
            .choose(&self.neighbour_key(response, columns))
    }

    /// The neighbour structure of the space of `columns`, before any tie is broken.
    pub fn neighbourhood(&self, columns: &[usize]) -> Neighbourhood {
        let space = self.space(columns);
        match &self.origins {
            None => Neighbourhood::new(&space),
            Some(origins) => Neighbourhood::with_origins(&space, origins.clone()),
        }
    }

    /// Column names.
    pub fn names(&self) -> &[String] {
        self.table.names()
    }

    /// Name of column `j`.
    pub fn name(&self, j: usize) -> &str {
        &self.table.names()[j]
    }

    /// Raw values of column `j`.
    pub fn raw(&self, j: usize) -> &[f64] {
        self.table.column(j)
    }

    /// Scaled values of the columns of a space.
    pub fn space(&self, columns: &[usize]) -> Vec<Column<'_>> {
        columns.iter().map(|&j| self.scaled[j].column()).collect()
    }

    /// Number of rows.
    pub fn n_rows(&self) -> usize {
        self.table.n_rows()
    }

    /// The key of the nearest-neighbour tie-breaks for `response` in the space of `columns`
    /// (DESIGN.md: study seed, replicate, target, conditioning set and candidate; the set is
    /// sorted, so the key does not depend on the order in which columns were selected).
    pub fn neighbour_key(&self, response: usize, columns: &[usize]) -> Key {
        let names: Vec<&str> = columns.iter().map(|&j| self.name(j)).collect();
        Key::new("nearest-neighbour", self.seed)
            .number(self.replicate)
            .text(self.name(response))
            .set(&names)
            .finish()
    }

    /// The blocks of the local permutation in the space of `hood`, a neighbourhood this data
    /// built (`neighbourhood`, or a prepared space of `space`): `Blocks::new` on its columns with
    /// this data's rows per block, without sorting the rows again.
    pub fn permutation_blocks_of(&self, hood: Neighbourhood) -> Blocks {
        hood.into_blocks(self.block_rows)
    }

    /// The key of the null draws of a permutation test of `response` given the set `columns`:
    /// `purpose` names the test (a selection step, a shrink test, a collider test) and `tested`
    /// the column tested where the set alone does not determine it.
    pub fn permutation_key(
        &self,
        purpose: &str,
        response: usize,
        columns: &[usize],
        tested: Option<usize>,
    ) -> Key {
        let names: Vec<&str> = columns.iter().map(|&j| self.name(j)).collect();
        Key::new("permutation", self.seed)
            .text(purpose)
            .number(self.replicate)
            .text(self.name(response))
            .set(&names)
            .text(tested.map_or("", |j| self.name(j)))
            .finish()
    }

    /// The key of the tie-breaks in x of ξ_n(x, y).
    pub fn xi_key(&self, x: usize, y: usize) -> Key {
        Key::new("xi-tie-break", self.seed)
            .number(self.replicate)
            .text(self.name(x))
            .text(self.name(y))
            .finish()
    }
}
