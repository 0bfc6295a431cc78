//! Several targets of one data file in one run (`analyze --target a --target b`, `--all-targets`):
//! the file is read once, each target is prepared exactly as its own run would prepare it, targets
//! whose prepared tables are equal form a group, and within a group every forward selection is
//! computed once and shared (`search::cache`), on the full data and on every replicate. Each
//! target's finding, digest included, is the one its single-target run gives.
//!
//! Writing `DIR/<target>/` and the study summary is `output.rs`.

use crate::analysis::{attach_stability, Prepared, Progress};
use crate::data::fingerprint::content_index;
use crate::data::DataReader;
use crate::error::{Error, Result};
use crate::finding::Analysed;
use crate::resample::stability::run_replicate_shared;
use crate::resample::ReplicateRecord;
use crate::search::{local_parents_shared, Boundaries, ParentSearch, SearchData, TargetRequest};
use crate::settings::{Key, SettingProblem, Settings};
use crate::study::Study;
use crate::text::quoted;
use rayon::prelude::*;
use std::path::Path;
use std::sync::atomic::{AtomicU32, Ordering};
use std::sync::{Arc, Mutex};

pub mod output;

/// A check of the target names, run before any search (the output's folder rules: an analysis
/// into `DIR/<target>/` refuses a name that cannot be a folder; a batch has checked its plan).
pub type NamesCheck = dyn Fn(&[String]) -> Result<()> + Sync;

/// No check of the target names.
pub fn any_names(_: &[String]) -> Result<()> {
    Ok(())
}

/// Which targets a run analyses.
#[derive(Clone, Debug)]
pub enum TargetChoice {
    /// The targets named, in the order named.
    Named(Vec<String>),
    /// Every column left after the exclusions that varies on the rows used, in file order.
    All,
}

/// Reads the file once and prepares every target as its own run would (the same table, report and
/// study); targets whose tables are equal share one table. Every unknown target (and every other
/// problem of the settings) is reported at once, before any row is read.
pub fn prepare_targets(
    path: &Path,
    settings: &Settings,
    choice: &TargetChoice,
    names: &NamesCheck,
    progress: &dyn Progress,
) -> Result<Vec<Prepared>> {
    crate::data::names::check_data_path(path)?;
    let options = settings.reader();
    let reader = DataReader::open(path, options)?;
    if let TargetChoice::Named(targets) = choice {
        check_named(settings, targets, reader.header())?;
        names(targets)?;
    }
    let (raw, facts) = reader.read_rows()?;
    let targets = match choice {
        TargetChoice::Named(targets) => targets.clone(),
        TargetChoice::All => every_target(settings, &raw, progress)?,
    };
    if let TargetChoice::All = choice {
        names(&targets)?;
    }
    let content = content_index(&raw);
    let mut prepared: Vec<Prepared> = Vec::with_capacity(targets.len());
    for target in &targets {
        let said = Said::default();
        let checked = Study::new(settings, target, &raw)?;
        let mut one = crate::analysis::prepare_indexed(
            path,
            raw.clone(),
            facts.clone(),
            content.clone(),
            checked,
            options,
            &said,
        )?
        .with_document(settings);
        match prepared.iter().find(|p| *p.table == *one.table) {
            Some(same) => one.table = Arc::clone(&same.table),
            None => said.repeat(progress),
        }
        prepared.push(one);
    }
    Ok(prepared)
}

/// Progress lines kept back: a target whose table is another's would repeat what was said.
#[derive(Default)]
struct Said(Mutex<Vec<String>>);

impl Progress for Said {
    fn say(&self, message: &str) {
        self.0
            .lock()
            .expect("never poisoned")
            .push(message.to_string());
    }
}

impl Said {
    fn repeat(&self, progress: &dyn Progress) {
        for line in self.0.lock().expect("never poisoned").iter() {
            progress.say(line);
        }
    }
}

/// Every problem of the named targets against the header: unknown columns (with suggestions),
/// targets named twice.
fn check_named(
    settings: &Settings,
    targets: &[String],
    header: &crate::data::RawTable,
) -> Result<()> {
    let mut problems: Vec<SettingProblem> = Vec::new();
    for (i, target) in targets.iter().enumerate() {
        if targets[..i].contains(target) {
            problems.push(SettingProblem::about(Key::Targets).text(format!(
                "the target {} is named twice; name each target once",
                quoted(target)
            )));
            continue;
        }
        match Study::new(settings, target, header) {
            Ok(_) => {}
            Err(Error::Settings(found)) => {
                for p in found {
                    if !problems.contains(&p) {
                        problems.push(p);
                    }
                }
            }
            Err(other) => return Err(other),
        }
    }
    match problems.is_empty() {
        true => Ok(()),
        false => Err(Error::Settings(problems)),
    }
}

/// `--all-targets`: every column not excluded that varies on the rows every target would use
/// (a constant column is left out of every table, so it cannot be a target; it is named).
fn every_target(
    settings: &Settings,
    raw: &crate::data::RawTable,
    progress: &dyn Progress,
) -> Result<Vec<String>> {
    if settings.candidates().is_some() {
        return Err(Error::Settings(vec![SettingProblem::about(
            Key::Candidates,
        )
        .text("every column is a target with --all-targets, so none can be limited to ")
        .name(Key::Candidates)
        .text("; use ")
        .name(Key::Exclude)
        .text(" to leave columns out, or name the targets")]));
    }
    for name in settings.exclude() {
        raw.require_column(name, "excluded")?;
    }
    let used: Vec<usize> = (0..raw.names.len())
        .filter(|&j| !settings.exclude().contains(&raw.names[j]))
        .collect();
    let rows_used: Vec<usize> = (0..raw.n_rows())
        .filter(|&r| used.iter().all(|&j| raw.cell(j, r).is_some()))
        .collect();
    let mut targets = Vec::new();
    for &j in &used {
        let mut values = rows_used.iter().map(|&r| raw.cell(j, r));
        let first = values.next().flatten();
        // Text in a used column is refused when the first target is prepared, whatever it is.
        if values.all(|v| v == first) && !rows_used.is_empty() {
            progress.say(&format!(
                "column {} is constant on the rows used and is not a target",
                quoted(&raw.names[j])
            ));
        } else {
            targets.push(raw.names[j].clone());
        }
    }
    if targets.is_empty() {
        return Err(Error::input(format!(
            "{}: no column is left to analyse as a target after the exclusions",
            raw.file
        )));
    }
    Ok(targets)
}

/// Analyses every target of `choice`, sharing boundaries between targets of one table; findings
/// in the order of the targets, each with this invocation's run metadata.
pub fn analyze_targets(
    path: &Path,
    settings: &Settings,
    choice: &TargetChoice,
    names: &NamesCheck,
    command_line: Vec<String>,
    progress: &dyn Progress,
) -> Result<Vec<Analysed>> {
    let prepared = prepare_targets(path, settings, choice, names, progress)?;
    let mut fulls: Vec<Option<ParentSearch>> = vec![None; prepared.len()];
    let mut records: Vec<Vec<ReplicateRecord>> = vec![Vec::new(); prepared.len()];
    for group in groups(&prepared) {
        let members: Vec<&Prepared> = group.iter().map(|&i| &prepared[i]).collect();
        let searches = full_searches(&members, progress);
        let traces: Vec<&[crate::search::Step]> = searches
            .iter()
            .map(|s| s.markov_boundary.steps.as_slice())
            .collect();
        let group_records = replicates(&members, &traces, progress);
        for ((&i, search), recs) in group.iter().zip(searches).zip(group_records) {
            fulls[i] = Some(search);
            records[i] = recs;
        }
    }
    Ok(prepared
        .into_iter()
        .zip(fulls)
        .zip(records)
        .map(|((p, full), recs)| {
            let content = p.content.clone();
            let finding = p.finding(full.expect("every target searched"), command_line.clone());
            Analysed {
                finding: attach_stability(finding, &recs),
                content,
            }
        })
        .collect())
}

/// Positions of the targets, grouped by shared table, groups in order of their first target.
fn groups(prepared: &[Prepared]) -> Vec<Vec<usize>> {
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for (i, p) in prepared.iter().enumerate() {
        match groups
            .iter_mut()
            .find(|g| Arc::ptr_eq(&prepared[g[0]].table, &p.table))
        {
            Some(g) => g.push(i),
            None => groups.push(vec![i]),
        }
    }
    groups
}

/// The full-data searches of the targets of one table, sharing their boundaries.
fn full_searches(members: &[&Prepared], progress: &dyn Progress) -> Vec<ParentSearch> {
    let first = &members[0].study;
    let data = SearchData::new(&members[0].table, first.scaling, first.seed, 0);
    let requests: Vec<TargetRequest> = members.iter().map(|p| p.study.request(&data)).collect();
    progress.say(&format!(
        "searching the Markov boundaries of {} target(s) over {} columns, each boundary computed \
         once and shared, then each member's",
        members.len(),
        data.names().len()
    ));
    let boundaries = Boundaries::new(&data, &first.selection);
    let searches = local_parents_shared(
        &data,
        &requests,
        first.alpha,
        &first.selection,
        &boundaries,
        true,
    );
    for search in &searches {
        progress.say(&crate::analysis::full_data_line(search));
    }
    progress.say(&format!(
        "{} forward selections computed for {} target(s) on the full data",
        boundaries.computed(),
        members.len()
    ));
    searches
}

/// Every replicate of the plan for the targets of one table: the rows of replicate k are drawn
/// once and its boundaries shared; records by target, each in replicate order.
fn replicates(
    members: &[&Prepared],
    traces: &[&[crate::search::Step]],
    progress: &dyn Progress,
) -> Vec<Vec<ReplicateRecord>> {
    let first = &members[0].study;
    let count = first.resampling.count;
    if count == 0 {
        return vec![Vec::new(); members.len()];
    }
    progress.say(&format!(
        "running replicates 0..{count} ({}) for {} target(s), sharing each replicate's boundaries",
        first.resampling.kind.name(),
        members.len()
    ));
    let studies: Vec<(&Study, &[crate::search::Step])> = members
        .iter()
        .zip(traces)
        .map(|(p, t)| (&p.study, *t))
        .collect();
    let done = AtomicU32::new(0);
    let by_replicate: Vec<Vec<ReplicateRecord>> = (0..count)
        .into_par_iter()
        .map(|k| {
            let records = run_replicate_shared(&members[0].table, &studies, k);
            let finished = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress.advance("replicates", u64::from(finished), u64::from(count));
            records
        })
        .collect();
    let mut by_target = vec![Vec::with_capacity(count as usize); members.len()];
    for records in by_replicate {
        for (t, record) in records.into_iter().enumerate() {
            by_target[t].push(record);
        }
    }
    by_target
}
