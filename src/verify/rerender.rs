//! Re-rendering: every file of the dossier rendered again, with the renderers the analysis uses,
//! from the re-run's finding, and compared byte for byte with the files on disk.
//!
//! A re-run cannot re-derive the facts of the original run: when it started, how long it took, on
//! how many threads, the data path and command line as typed, which build of the method ran it,
//! the name of the analysed file (the reviewer's copy may be named otherwise), its bytes when the
//! reviewer received a re-saved copy, and when the manifest was generated. Those fields, and only
//! those, are copied from the record before the comparison; every one of them is excluded from
//! the result digest as well (a unit test holds that), and the report lists them.

use super::report::{check, visible, Check, Status};
use crate::analysis::Progress;
use crate::finding::Analysed;
use crate::manifest::{Manifest, MANIFEST_FILE};
use serde::de::DeserializeOwned;
use serde::Serialize;
use std::path::Path;

/// Fields of `result.json` always taken from the record.
pub(super) const RECORDED_FACTS: [&str; 11] = [
    "/run/started_utc",
    "/run/duration_seconds",
    "/run/threads",
    "/run/data_path",
    "/run/command_line",
    "/run/study_file",
    "/run/operator",
    "/run/document",
    "/tool/version",
    "/tool/build",
    "/data/file",
];

/// Fields of `result.json` taken from the record when the received file is a re-saved copy (the
/// same content in other bytes): the analysed file's byte hash and size.
pub(super) const RECORDED_BYTE_FACTS: [&str; 2] = ["/data/sha256", "/data/size_bytes"];

/// Fields of `manifest.json` taken from the record.
pub(super) const RECORDED_MANIFEST_FACTS: [&str; 1] = ["/generated_utc"];

/// The `result.json` fields taken from the record; `resaved` when the received bytes differ from
/// the analysed ones.
pub(super) fn recorded_fact_pointers(resaved: bool) -> Vec<&'static str> {
    let mut pointers = RECORDED_FACTS.to_vec();
    if resaved {
        pointers.extend(RECORDED_BYTE_FACTS);
    }
    pointers
}

/// Every field taken from the record, as `file#pointer` (RFC 6901, section 6).
pub(super) fn taken_from_record(result_pointers: &[&str]) -> Vec<String> {
    result_pointers
        .iter()
        .map(|p| format!("result.json#{p}"))
        .chain(
            RECORDED_MANIFEST_FACTS
                .iter()
                .map(|p| format!("{MANIFEST_FILE}#{p}")),
        )
        .collect()
}

/// `value` with the fields at `pointers` copied from `record`: a field of the record is set (added
/// when `value` lacks it, as an optional field a re-run does not fill), a field absent from the
/// record stays as it is. Returns the value and the pointers the record held (those copied).
pub(super) fn with_recorded<'p, T: Serialize + DeserializeOwned>(
    value: &T,
    record: &T,
    pointers: &[&'p str],
) -> Result<(T, Vec<&'p str>), String> {
    let mut tree = serde_json::to_value(value).map_err(|e| e.to_string())?;
    let source = serde_json::to_value(record).map_err(|e| e.to_string())?;
    let mut copied = Vec::new();
    for &pointer in pointers {
        let Some(recorded) = source.pointer(pointer) else {
            continue;
        };
        copied.push(pointer);
        if let Some(slot) = tree.pointer_mut(pointer) {
            *slot = recorded.clone();
        } else if let Some((parent, key)) = pointer.rsplit_once('/') {
            if let Some(serde_json::Value::Object(members)) = tree.pointer_mut(parent) {
                members.insert(key.to_string(), recorded.clone());
            }
        }
    }
    let value = serde_json::from_value(tree).map_err(|e| e.to_string())?;
    Ok((value, copied))
}

/// Every file of the dossier of `analysed`, in writing order, the manifest last with the
/// generation time of `recorded_manifest`.
fn render_dossier(
    analysed: &Analysed,
    recorded_manifest: &Manifest,
) -> Result<Vec<(&'static str, String)>, String> {
    let mut files = crate::report::render_all(&analysed.finding).map_err(|e| e.to_string())?;
    let manifest = Manifest::new(analysed, &files);
    let (mut manifest, _) = with_recorded(&manifest, recorded_manifest, &RECORDED_MANIFEST_FACTS)?;
    manifest.seal = manifest.computed_seal();
    files.push((MANIFEST_FILE, manifest.to_text()));
    Ok(files)
}

/// The `rendered files` check: every file of the dossier rendered again from `analysed` (the
/// re-run with the recorded run facts) and compared with the files in `dir`; skipped without it.
pub(super) fn check_rendered_dossier(
    dir: &Path,
    manifest: &Manifest,
    analysed: Option<&Analysed>,
    progress: &dyn Progress,
) -> Check {
    let Some(analysed) = analysed else {
        return check(
            "rendered files",
            Status::Skipped,
            vec![
                "not compared: the re-run did not complete, or result.json (which holds the run \
                  facts the files print) does not read"
                    .into(),
            ],
        );
    };
    progress.say("rendering every file of the dossier again from the re-run");
    match render_dossier(analysed, manifest) {
        Ok(rendered) => check_rendered(dir, &rendered, other_build(manifest).as_deref()),
        Err(e) => check(
            "rendered files",
            Status::Fail,
            vec![format!("the files could not be rendered again: {e}")],
        ),
    }
}

/// The build that wrote the dossier, described, when it is not this build.
fn other_build(manifest: &Manifest) -> Option<String> {
    let this = crate::finding::ToolInfo::current();
    (manifest.tool.version != this.version || manifest.tool.build != this.build)
        .then(|| manifest.tool.describe())
}

/// Compares every re-rendered file with the file of that name in `dir`, byte for byte.
/// `other_build` describes the build that wrote the dossier when it is not this one: its
/// renderers may differ from this build's, which the report then says (the difference still
/// fails, since the recorded build is itself only a record).
fn check_rendered(
    dir: &Path,
    rendered: &[(&'static str, String)],
    other_build: Option<&str>,
) -> Check {
    let mut problems = Vec::new();
    for (name, text) in rendered {
        match std::fs::read(dir.join(name)) {
            Err(e) => problems.push(format!(
                "{name} cannot be compared with its re-rendering: it is missing or unreadable ({e})"
            )),
            Ok(bytes) => {
                if let Some(difference) = first_difference(&bytes, text) {
                    problems.push(format!(
                        "{name} differs from its re-rendering: {difference}"
                    ));
                }
            }
        }
    }
    if problems.is_empty() {
        let names: Vec<&str> = rendered.iter().map(|(name, _)| *name).collect();
        check(
            "rendered files",
            Status::Pass,
            vec![format!(
                "the {} files rendered again from the re-run equal the files on disk byte for \
                 byte: {}",
                names.len(),
                names.join(", ")
            )],
        )
    } else {
        if let Some(build) = other_build {
            problems.push(format!(
                "the dossier records that another build wrote it ({build}); if that build \
                 rendered files differently from this one, verify with it to tell a change of \
                 renderer from an edit"
            ));
        }
        check("rendered files", Status::Fail, problems)
    }
}

/// Where the bytes on disk first differ from the re-rendered text, by line, or `None` when they
/// are equal.
fn first_difference(on_disk: &[u8], rendered: &str) -> Option<String> {
    if on_disk == rendered.as_bytes() {
        return None;
    }
    let disk = String::from_utf8_lossy(on_disk);
    let mut disk_lines = disk.split_inclusive('\n');
    let mut rendered_lines = rendered.split_inclusive('\n');
    let mut line = 1;
    loop {
        let pair = (disk_lines.next(), rendered_lines.next());
        if pair.0.is_some() && pair.0 == pair.1 {
            line += 1;
            continue;
        }
        return Some(match pair {
            (Some(a), Some(b)) => {
                let (shown_a, shown_b) = excerpts(a, b);
                format!("first difference at line {line}: on disk {shown_a}, re-rendered {shown_b}")
            }
            (Some(a), None) => format!(
                "the file on disk goes on after the re-rendering ends, at line {line}: {}",
                excerpts(a, "").0
            ),
            (None, Some(b)) => format!(
                "the file on disk ends before line {line}, where the re-rendering goes on with {}",
                excerpts("", b).1
            ),
            (None, None) => "the file on disk holds bytes that are not UTF-8 text".to_string(),
        });
    }
}

/// Both lines around their first differing character, quoted, with control and invisible
/// characters escaped and cut ends marked.
fn excerpts(a: &str, b: &str) -> (String, String) {
    const BEFORE: usize = 30;
    const WIDTH: usize = 80;
    let at = a.chars().zip(b.chars()).take_while(|(x, y)| x == y).count();
    let longest = a.chars().count().max(b.chars().count());
    let start = if longest <= WIDTH {
        0
    } else {
        at.saturating_sub(BEFORE)
    };
    let cut = |line: &str| {
        let total = line.chars().count();
        let body: String = line.chars().skip(start).take(WIDTH).collect();
        format!(
            "'{}{}{}'",
            if start > 0 { "…" } else { "" },
            visible(&body),
            if start + WIDTH < total { "…" } else { "" }
        )
    };
    (cut(a), cut(b))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_field_taken_from_the_record_is_excluded_from_the_digest() {
        // The digest vouches for the findings; what verify copies from the record must never be
        // part of them.
        for pointer in RECORDED_FACTS.iter().chain(&RECORDED_BYTE_FACTS) {
            assert!(
                crate::digest::DIGEST_EXCLUSIONS
                    .iter()
                    .any(|excluded| pointer == excluded
                        || pointer.starts_with(&format!("{excluded}/"))),
                "{pointer}"
            );
        }
    }

    #[test]
    fn every_run_fact_is_taken_from_the_record() {
        // A field added to the run facts must be added to RECORDED_FACTS, or no dossier verifies.
        let run = crate::finding::RunInfo {
            started_utc: String::new(),
            duration_seconds: 0.0,
            threads: 1,
            data_path: String::new(),
            command_line: Vec::new(),
            study_file: Some(crate::settings::StudyFileRecord {
                path: String::new(),
                sha256: String::new(),
            }),
            operator: String::new(),
            document: Some(crate::settings::DocumentControl::default()),
        };
        let tree = serde_json::to_value(run).unwrap();
        for key in tree.as_object().unwrap().keys() {
            assert!(
                RECORDED_FACTS.contains(&format!("/run/{key}").as_str()),
                "{key}"
            );
        }
    }

    #[test]
    fn recorded_fields_are_copied_and_nothing_else() {
        let value = serde_json::json!({"run": {"threads": 2, "x": 1}, "a": 1});
        let record = serde_json::json!({"run": {"threads": 8, "x": 5}, "a": 9});
        let (copied, _) = with_recorded(&value, &record, &["/run/threads", "/absent"]).unwrap();
        assert_eq!(
            copied,
            serde_json::json!({"run": {"threads": 8, "x": 1}, "a": 1})
        );
    }

    #[test]
    fn the_first_differing_line_is_named_with_both_versions() {
        let rendered = "# Title\nThe result is stable.\nend\n";
        assert_eq!(first_difference(rendered.as_bytes(), rendered), None);
        let edited = "# Title\nThe result is not stable.\nend\n";
        assert_eq!(
            first_difference(edited.as_bytes(), rendered).unwrap(),
            "first difference at line 2: on disk 'The result is not stable.\\n', re-rendered \
             'The result is stable.\\n'"
        );
        assert_eq!(
            first_difference(b"# Title\n", rendered).unwrap(),
            "the file on disk ends before line 2, where the re-rendering goes on with \
             'The result is stable.\\n'"
        );
        assert_eq!(
            first_difference(format!("{rendered}extra\n").as_bytes(), rendered).unwrap(),
            "the file on disk goes on after the re-rendering ends, at line 4: 'extra\\n'"
        );
    }

    #[test]
    fn long_lines_are_cut_around_the_difference_and_escaped() {
        let a = format!("{}X\u{202e}{}", "a".repeat(100), "b".repeat(100));
        let b = format!("{}Y{}", "a".repeat(100), "b".repeat(100));
        let (shown_a, shown_b) = excerpts(&a, &b);
        assert!(
            shown_a.starts_with("'…aaaa") && shown_a.ends_with("…'"),
            "{shown_a}"
        );
        assert!(shown_a.contains("X\\u{202e}b"), "{shown_a}");
        // Markdown's own escapes are shown as they are.
        assert_eq!(excerpts("a\\_b", "a_b").0, "'a\\_b'");
        assert!(shown_b.contains("Yb"), "{shown_b}");
    }
}
