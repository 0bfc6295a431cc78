//! The local parent search on samples of published Bayesian networks, from the committed copies in
//! `tests/data/` (origin and trimming in `tests/data/PROVENANCE.md`), compiled into the binary.
//! The guarantee exercised is that of Azadkia, Taeb and Bühlmann (arXiv:2111.14969): exact
//! recovery of a v-structure at the target. Only the discrete samples are embedded (they are small
//! and run in seconds); the nonlinear ALARM checks stay in the test suite.

use super::check::{Comparison, Measured};
use super::embedded::{Embedded, ALARM_DISCRETE, ASIA_DISCRETE};
use super::{Case, Group};
use crate::data::source::Source;
use crate::data::{DataReader, LoadOptions, Table};
use crate::measure::Scaling;
use crate::search::{local_parents, Outcome, ParentSearch, SelectionRule};

/// The reference-structure cases.
pub fn cases() -> Vec<Case> {
    vec![
        Case::new(
            "structure.alarm.hrbp",
            Group::Structure,
            "ALARM's HRBP ← ERRLOWOUTPUT, HRBP ← HR (a v-structure at a target whose \
             neighbourhood is a tree) is identified exactly from 5000 discrete samples, with the \
             defaults of forebear analyze",
            "ALARM network (Beinlich, Suermondt, Chavez and Cooper 1989), published parent lists; \
             samples tests/data/alarm_discrete_hr_lv.csv (tests/data/PROVENANCE.md)",
            || {
                vec![search_outcome(
                    &ALARM_DISCRETE,
                    "HRBP",
                    &["ERRLOWOUTPUT", "HR"],
                )]
            },
        ),
        Case::new(
            "structure.asia.either",
            Group::Structure,
            "ASIA's either ← tub, either ← lung (a logical OR) is identified exactly from 5000 \
             binary samples, where the keyed tie-breaks decide nearly every neighbour",
            "ASIA network (Lauritzen and Spiegelhalter 1988), published parent lists; samples \
             tests/data/asia_discrete_n5000_seed1.csv (tests/data/PROVENANCE.md)",
            || vec![search_outcome(&ASIA_DISCRETE, "either", &["lung", "tub"])],
        ),
    ]
}

/// Reads an embedded CSV file with the crate's reader (every cell of these files is present).
fn table(file: &Embedded) -> crate::error::Result<Table> {
    let text = file.text().map_err(crate::error::Error::internal)?;
    let source = Source::from_reader(Box::new(std::io::Cursor::new(text.into_bytes())));
    let (raw, _) =
        DataReader::start(source, file.path.into(), &LoadOptions::default())?.read_rows()?;
    let columns = (0..raw.names.len())
        .map(|j| raw.column_cells(j).map(|v| v.unwrap_or(f64::NAN)).collect())
        .collect();
    Ok(Table::from_columns(raw.names.clone(), columns))
}

/// The local parent search with the defaults of `forebear analyze` (rank scaling, seed 1,
/// α = 0.05, calibrated rule), every other column a candidate.
fn search(file: &Embedded, target: &str) -> crate::error::Result<ParentSearch> {
    let table = table(file)?;
    let data = crate::search::SearchData::new(&table, Scaling::Rank, 1, 0);
    let t = table.index_of(target).ok_or_else(|| {
        crate::error::Error::internal(format!("{} has no column {target}", file.path))
    })?;
    let candidates: Vec<usize> = (0..table.n_cols()).filter(|&j| j != t).collect();
    Ok(local_parents(
        &data,
        t,
        &candidates,
        0.05,
        &SelectionRule::calibrated(),
    ))
}

/// "identified {a, b}": the outcome and its parent sets, names sorted within a set.
fn shown(outcome: Outcome, sets: &[Vec<String>]) -> String {
    let sets: Vec<String> = sets
        .iter()
        .map(|set| {
            let mut names = set.clone();
            names.sort();
            format!("{{{}}}", names.join(", "))
        })
        .collect();
    format!("{} {}", outcome.name(), sets.join(" "))
}

fn search_outcome(file: &Embedded, target: &str, parents: &[&str]) -> Measured {
    let expected = shown(
        Outcome::Identified,
        &[parents.iter().map(|p| p.to_string()).collect()],
    );
    let observed = match search(file, target) {
        Ok(found) => shown(found.outcome, &found.parent_sets),
        Err(e) => format!("the search could not run: {e}"),
    };
    Measured::new(
        format!("outcome and parent sets of {target}"),
        Comparison::Exact { expected, observed },
    )
}
