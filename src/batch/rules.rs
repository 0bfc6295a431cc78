//! The rules a plan must follow: safe folder names, valid settings, unique study names. Used by
//! [`super::plan`] while it reads the file, so that every problem is reported at once.

use super::plan::{Collector, PlannedStudy, Problem, SettingsTable, StudyHead, RESERVED_NAMES};
use crate::data::LoadOptions;
use crate::measure::Scaling;
use crate::resample::{PlanKind, ResamplePlan};
use crate::search::{SelectionRule, StoppingRule};
use crate::study::StudyInput;
use crate::text::quoted;
use clap::ValueEnum;
use std::collections::BTreeMap;
use std::path::Path;

/// The device name `name` stands for under the Windows file naming rules (`CON`, `PRN`, `AUX`,
/// `NUL`, `COM0`–`COM9`, `LPT0`–`LPT9`, also with superscript digits 1–3, in any case, alone or
/// before an extension such as `nul.txt`), if it is one.
pub fn windows_device_name(name: &str) -> Option<String> {
    let stem = name.split('.').next().unwrap_or(name).trim_end_matches(' ');
    let upper = stem.to_uppercase();
    let plain = matches!(upper.as_str(), "CON" | "PRN" | "AUX" | "NUL");
    let numbered = ["COM", "LPT"].iter().any(|prefix| {
        upper.strip_prefix(prefix).is_some_and(|rest| {
            let mut digits = rest.chars();
            matches!(
                (digits.next(), digits.next()),
                (Some('0'..='9' | '\u{b9}' | '\u{b2}' | '\u{b3}'), None)
            )
        })
    });
    (plain || numbered).then_some(upper)
}

/// Why `name` cannot be a folder name inside the output folder, if it cannot.
pub fn unsafe_name(name: &str, strict: bool) -> Option<String> {
    if name.is_empty() {
        return Some("is empty".into());
    }
    if name.contains("..") {
        return Some("contains '..'".into());
    }
    if let Some(c) = name.chars().find(|c| matches!(c, '/' | '\\')) {
        return Some(format!("contains '{c}'"));
    }
    if let Some((c, what)) = name
        .chars()
        .find_map(|c| crate::text::hidden_character(c).map(|what| (c, what)))
    {
        return Some(format!("contains {what}, {}", crate::text::code_point(c)));
    }
    if let Some(device) = windows_device_name(name) {
        return Some(format!(
            "is the reserved device name {device} of the Windows file naming rules (with or \
             without an extension, in any case): such a folder cannot be created or copied there, \
             and dossiers must stay portable"
        ));
    }

    if name.starts_with('.') {
        return Some("starts with '.' (a hidden folder)".into());
    }
    if name.len() > 100 {
        return Some("is longer than 100 bytes".into());
    }
    if strict {
        if let Some(c) = name
            .chars()
            .find(|c| !(c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.')))
        {
            return Some(format!(
                "contains '{}'; use letters, digits, '-', '_' and '.'",
                c.escape_debug()
            ));
        }
        if RESERVED_NAMES.contains(&name.to_ascii_lowercase().as_str()) {
            return Some("is the name of a file of the batch output".into());
        }
    }
    None
}

pub(super) fn check_study(
    c: &mut Collector,
    head: StudyHead,
    settings: SettingsTable,
    inherited_problems: &[String],
    dir: &Path,
    place: &str,
) -> Option<PlannedStudy> {
    let before = c.problems.len();
    let name = head.name.get_ref().clone();
    if let Some(why) = unsafe_name(&name, true) {
        c.at(
            Some(head.name.span()),
            format!(
                "the study name {} {why}: it is used as a folder name",
                quoted(&name)
            ),
        );
    }
    let data = head.data.get_ref().clone();
    if data.trim().is_empty() {
        c.at(
            Some(head.data.span()),
            format!("{place}: 'data' must name a CSV file (relative to the plan file)"),
        );
    } else if let Some((ch, what)) = data
        .chars()
        .find_map(|ch| crate::text::hidden_character(ch).map(|what| (ch, what)))
    {
        c.at(
            Some(head.data.span()),
            format!(
                "{place}: the data file name {} holds {what}, {}; rename the file without it",
                quoted(&data),
                crate::text::code_point(ch)
            ),
        );
    }
    let targets = head.targets.get_ref().clone();
    if targets.is_empty() {
        c.at(
            Some(head.targets.span()),
            format!("{place}: 'targets' is empty; list at least one target column"),
        );
    }
    let mut seen: BTreeMap<String, &str> = BTreeMap::new();
    for target in &targets {
        if let Some(why) = unsafe_name(target, false) {
            c.at(
                Some(head.targets.span()),
                format!(
                    "{place}: the target {} {why}: it is used as a folder name",
                    quoted(target)
                ),
            );
        }
        if let Some(other) = seen.insert(target.to_lowercase(), target) {
            c.at(
                Some(head.targets.span()),
                format!(
                    "{place}: the target {} is listed twice (as {}; folder names that differ \
                     only in case collide on some file systems)",
                    quoted(target),
                    quoted(other)
                ),
            );
        }
    }
    let input = match check_settings(&settings, Some(&targets)) {
        Ok(input) => input,
        Err(problems) => {
            // A problem of [defaults] is reported there once, not again for every study.
            for m in problems.iter().filter(|m| !inherited_problems.contains(m)) {
                c.at(Some(head.name.span()), format!("{place}: {m}"));
            }
            return None;
        }
    };
    if c.problems.len() > before {
        return None;
    }
    let load = match reader_options(&settings) {
        Ok(load) => load,
        Err(message) => {
            c.at(Some(head.name.span()), format!("{place}: {message}"));
            return None;
        }
    };
    Some(PlannedStudy {
        name,
        data_path: dir.join(&data),
        data,
        targets,
        load,
        settings: input,
    })
}

/// The reader options of a study, through the command line's own parsers (same names, same
/// checks, same messages without the flags' dashes).
fn reader_options(s: &SettingsTable) -> std::result::Result<LoadOptions, String> {
    let plain = |e: crate::error::Error| e.to_string().replace("--", "");
    let mut load = LoadOptions::default();
    if let Some(delimiter) = &s.delimiter {
        load.delimiter = crate::data::load::parse_delimiter(delimiter).map_err(plain)?;
    }
    if let Some(policy) = &s.missing {
        load.missing_policy = crate::data::MissingPolicy::parse(policy).map_err(plain)?;
    }
    load.decimal_comma = s.decimal_comma.unwrap_or(false);
    Ok(match &s.missing_tokens {
        Some(tokens) => load.with_token_list(&tokens.join(",")),
        None => load,
    })
}

/// The settings as a study input, or every problem with them.
pub(super) fn check_settings(
    s: &SettingsTable,
    targets: Option<&[String]>,
) -> std::result::Result<StudyInput, Vec<String>> {
    let base = StudyInput::for_target("");
    let mut problems = Vec::new();
    let mut problem = |m: String| problems.push(m);
    let mut ok = true;
    let scaling = match s.scaling.as_deref() {
        None => base.scaling,
        Some(name) => Scaling::parse(name).unwrap_or_else(|| {
            problem(format!(
                "scaling {} is not known; use rank, standardize or none",
                quoted(name)
            ));
            ok = false;
            base.scaling
        }),
    };
    let resample = match s.resample.as_deref() {
        None => base.resample,
        Some(name) => PlanKind::parse(name).unwrap_or_else(|| {
            problem(format!(
                "resample {} is not known; use complementary-pairs, subsample or bootstrap",
                quoted(name)
            ));
            ok = false;
            base.resample
        }),
    };
    let alpha = s.alpha.unwrap_or(base.alpha);
    if !(alpha > 0.0 && alpha < 1.0) {
        problem(format!(
            "alpha {alpha} is not a level: it must lie strictly between 0 and 1"
        ));
        ok = false;
    }
    let threshold = s.stability_threshold.unwrap_or(base.stability_threshold);
    if !(threshold > 0.5 && threshold <= 1.0) {
        problem(format!(
            "stability_threshold {threshold} is outside (0.5, 1]: the error bound of Meinshausen \
             and Bühlmann (2010) needs a threshold above one half"
        ));
        ok = false;
    }
    let stopping_rule = match s.stopping_rule.as_deref() {
        None => base.selection.stopping_rule,
        Some(name) => StoppingRule::from_str(name, false).unwrap_or_else(|_| {
            problem(format!(
                "stopping_rule {} is not known; use calibrated or natural",
                quoted(name)
            ));
            ok = false;
            base.selection.stopping_rule
        }),
    };
    let selection = SelectionRule {
        stopping_rule,
        alpha: s.selection_alpha.unwrap_or(base.selection.alpha),
        permutations: s.permutations.unwrap_or(base.selection.permutations),
    };
    for p in selection.problems() {
        problem(p);
        ok = false;
    }
    let seed = s.seed.unwrap_or(base.seed);
    let replicates = s.replicates.unwrap_or(base.replicates);
    if let Err(e) = ResamplePlan::new(resample, replicates, s.fraction, seed) {
        problem(e.to_string().replace("--", ""));
        ok = false;
    }
    for token in s.missing_tokens.iter().flatten() {
        if token.contains(',') {
            problem(format!(
                "the missing_tokens entry {} contains a comma; list each token separately",
                quoted(token)
            ));
            ok = false;
        }
    }
    let exclude = s.exclude.clone().unwrap_or_default();
    for target in targets.unwrap_or_default() {
        if exclude.contains(target) {
            problem(format!(
                "the target {} is also excluded; remove it from 'exclude'",
                quoted(target)
            ));
            ok = false;
        }
    }
    if !ok {
        return Err(problems);
    }
    Ok(StudyInput {
        target: String::new(),
        exclude,
        candidates: s.candidates.clone(),
        seed,
        scaling,
        alpha,
        replicates,
        resample,
        fraction: s.fraction,
        stability_threshold: threshold,
        selection,
    })
}

pub(super) fn check_duplicates(c: &mut Collector, names: &[(String, usize)]) {
    let mut seen: BTreeMap<String, (&str, usize)> = BTreeMap::new();
    for (name, line) in names {
        let key = name.to_ascii_lowercase();
        if let Some((other, other_line)) = seen.get(&key) {
            c.problems.push(Problem {
                line: Some(*line),
                message: format!(
                    "the study name {} is used twice (also {} on line {other_line}); names must \
                     be unique, ignoring case, since each is a folder",
                    quoted(name),
                    quoted(other)
                ),
            });
        } else {
            seen.insert(key, (name, *line));
        }
    }
}
