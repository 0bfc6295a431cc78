//! `forebear batch` (issue 7), on the real binary: a plan of three studies drawn from the demo
//! generator with different seeds, the index and its links, drift against a previous run, a
//! failing study, shards collected, and plans rejected before anything runs.

use crate::common;
use crate::common::{
    assert_refused, beside, exit_code, fresh_dir, lossy_stderr as stderr, spawn_in, Hold,
};
use forebear::demo::generate_demo_csv_seeded;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Child, Output};

const PLAN: &str = r#"# three lines of the invented filter-disc scenario
[defaults]
seed = 11
replicates = 4

[[study]]
name = "line-a"
data = "data/line_a.csv"
targets = ["crush_strength", "pore_density"]

[[study]]
name = "line-b"
data = "data/line_b.csv"
targets = ["crush_strength"]
exclude = ["conveyor_speed"]

[[study]]
name = "line-c"
data = "data/line_c.csv"
targets = ["crush_strength"]
seed = 3
"#;

/// One pair without resampling, for the tests of the output folder.
const SMALL_PLAN: &str = r#"[defaults]
seed = 11
replicates = 0

[[study]]
name = "line-a"
data = "data/line_a.csv"
targets = ["crush_strength"]
"#;

struct Scratch(PathBuf);

impl Scratch {
    /// A folder with the three data files (demo seeds 101, 102, 103) and the plan.
    fn with_plan(test: &str) -> Scratch {
        let dir = fresh_dir(&format!("batch-{test}"));
        std::fs::create_dir_all(dir.join("data")).unwrap();
        for (name, seed) in [("line_a", 101), ("line_b", 102), ("line_c", 103)] {
            std::fs::write(
                dir.join(format!("data/{name}.csv")),
                generate_demo_csv_seeded(seed),
            )
            .unwrap();
        }
        std::fs::write(dir.join("plan.toml"), PLAN).unwrap();
        Scratch(dir)
    }
    /// [`Scratch::with_plan`] with `small.toml` (one pair, no resampling) besides.
    fn with_small_plan(test: &str) -> Scratch {
        let s = Scratch::with_plan(test);
        std::fs::write(s.path("small.toml"), SMALL_PLAN).unwrap();
        s
    }
    fn path(&self, name: &str) -> PathBuf {
        self.0.join(name)
    }
    /// Runs `forebear batch small.toml ARGS` to its end.
    fn small(&self, args: &[&str]) -> Output {
        self.start_small(args, None).wait_with_output().unwrap()
    }
    /// Starts `forebear batch small.toml ARGS`, stopping at a hold point if one is given.
    fn start_small(&self, args: &[&str], hold: Option<(&Hold, &str)>) -> Child {
        let all = ["batch", "small.toml"].iter().chain(args);
        spawn_in(&self.0, all, hold)
    }
    /// Runs `forebear --quiet batch plan.toml ARGS` in the scratch folder.
    fn batch(&self, args: &[&str]) -> Output {
        common::bin()
            .current_dir(&self.0)
            .args(["--quiet", "batch", "plan.toml"])
            .args(args)
            .output()
            .unwrap()
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn summary(dir: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(dir.join("summary.json")).unwrap()).unwrap()
}

fn changes(summary: &Value) -> Vec<(String, String, String)> {
    summary["drift"]["changes"]
        .as_array()
        .expect("drift was checked")
        .iter()
        .map(|c| {
            (
                c["study"].as_str().unwrap().to_string(),
                c["target"].as_str().unwrap().to_string(),
                c["kind"].as_str().unwrap().to_string(),
            )
        })
        .collect()
}

/// Every link target in `text` that follows `marker` up to `end`.
fn links<'a>(text: &'a str, marker: &str, end: char) -> Vec<&'a str> {
    text.split(marker)
        .skip(1)
        .map(|rest| &rest[..rest.find(end).unwrap()])
        .collect()
}

#[test]
fn three_study_plan_runs_end_to_end_and_every_index_link_resolves() {
    let s = Scratch::with_plan("end-to-end");
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let out = s.path("out");
    let summary = summary(&out);
    assert_eq!(summary["schema"], "forebear.batch/1");
    assert_eq!(summary["totals"]["pairs"], 4);
    assert_eq!(summary["totals"]["done"], 4);
    assert_eq!(summary["drift"], Value::Null);
    for (study, target) in [
        ("line-a", "crush_strength"),
        ("line-a", "pore_density"),
        ("line-b", "crush_strength"),
        ("line-c", "crush_strength"),
    ] {
        let entry = &summary["studies"][study]["targets"][target];
        assert_eq!(entry["status"], "done", "{study}/{target}");
        let result: Value = serde_json::from_str(
            &std::fs::read_to_string(out.join(study).join(target).join("result.json")).unwrap(),
        )
        .unwrap();
        assert_eq!(entry["digest"], result["digest"], "{study}/{target}");
        assert!(out.join(study).join(target).join("manifest.json").is_file());
    }
    let html = std::fs::read_to_string(out.join("index.html")).unwrap();
    let html_links = links(&html, "href=\"", '"');
    assert_eq!(html_links.len(), 4, "{html}");
    for link in html_links {
        assert!(out.join(link).is_file(), "index.html links to {link}");
    }
    let markdown = std::fs::read_to_string(out.join("index.md")).unwrap();
    let md_links = links(&markdown, "](", ')');
    assert_eq!(md_links.len(), 4, "{markdown}");
    for link in md_links {
        assert!(out.join(link).is_file(), "index.md links to {link}");
    }
}

#[test]
fn a_batch_dossier_verifies_against_its_data() {
    let s = Scratch::with_plan("verify");
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let verify = common::bin()
        .args(["--quiet", "verify"])
        .arg(s.path("out/line-c/crush_strength"))
        .arg("--data")
        .arg(s.path("data/line_c.csv"))
        .output()
        .unwrap();
    assert_eq!(exit_code(&verify), 0, "{}", stderr(&verify));
    assert!(String::from_utf8_lossy(&verify.stdout).contains("VERIFIED"));
}

#[test]
fn previous_run_on_unchanged_data_reports_no_drift() {
    let s = Scratch::with_plan("no-drift");
    assert_eq!(exit_code(&s.batch(&["--out", "night1"])), 0);
    let run = s.batch(&["--out", "night2", "--previous", "night1", "--fail-on-drift"]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let summary = summary(&s.path("night2"));
    assert_eq!(changes(&summary), vec![]);
    assert_eq!(summary["drift"]["threshold"], 0.2);
    let html = std::fs::read_to_string(s.path("night2/index.html")).unwrap();
    assert!(html.contains("No drift"), "{html}");
}

#[test]
fn changing_one_data_file_reports_drift_of_that_study_only_and_fail_on_drift_exits_1() {
    let s = Scratch::with_plan("drift");
    assert_eq!(exit_code(&s.batch(&["--out", "night1"])), 0);
    std::fs::write(s.path("data/line_b.csv"), generate_demo_csv_seeded(907)).unwrap();
    let run = s.batch(&["--out", "night2", "--previous", "night1", "--fail-on-drift"]);
    assert_eq!(exit_code(&run), 1, "{}", stderr(&run));
    let summary = summary(&s.path("night2"));
    let found = changes(&summary);
    assert!(!found.is_empty());
    assert!(
        found
            .iter()
            .all(|(study, target, _)| study == "line-b" && target == "crush_strength"),
        "{found:?}"
    );
    assert!(found.iter().any(|(_, _, kind)| kind == "data"), "{found:?}");
    assert_eq!(summary["totals"]["changes"], found.len());
    // Without --fail-on-drift the same drift is listed but the run succeeds.
    let listed = s.batch(&["--out", "night3", "--previous", "night1"]);
    assert_eq!(exit_code(&listed), 0, "{}", stderr(&listed));
    let index = std::fs::read_to_string(s.path("night3/index.md")).unwrap();
    assert!(index.contains("**Drift:"), "{index}");
}

#[test]
fn a_changed_plan_lists_appeared_and_vanished_pairs() {
    let s = Scratch::with_plan("appear");
    assert_eq!(exit_code(&s.batch(&["--out", "night1"])), 0);
    let edited = PLAN.replace(
        r#"targets = ["crush_strength", "pore_density"]"#,
        r#"targets = ["pore_density", "echo_amplitude"]"#,
    );
    std::fs::write(s.path("plan.toml"), edited).unwrap();
    let run = s.batch(&["--out", "night2", "--previous", "night1"]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let found = changes(&summary(&s.path("night2")));
    assert_eq!(
        found,
        vec![
            ("line-a".into(), "crush_strength".into(), "vanished".into()),
            ("line-a".into(), "echo_amplitude".into(), "appeared".into()),
        ]
    );
}

#[test]
fn a_study_whose_data_file_is_missing_fails_alone_with_exit_code_2() {
    let s = Scratch::with_plan("missing");
    std::fs::remove_file(s.path("data/line_b.csv")).unwrap();
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 2, "{}", stderr(&run));
    let summary = summary(&s.path("out"));
    assert_eq!(summary["totals"]["failed"], 1);
    assert_eq!(summary["totals"]["done"], 3);
    let failed = &summary["studies"]["line-b"]["targets"]["crush_strength"];
    assert_eq!(failed["status"], "failed");
    assert!(
        failed["error"].as_str().unwrap().contains("line_b.csv"),
        "{failed}"
    );
    assert!(!s.path("out/line-b").exists());
    for done in [
        "line-a/crush_strength",
        "line-a/pore_density",
        "line-c/crush_strength",
    ] {
        assert!(
            s.path("out").join(done).join("dossier.html").is_file(),
            "{done}"
        );
    }
    let html = std::fs::read_to_string(s.path("out/index.html")).unwrap();
    assert!(html.contains("line_b.csv"), "the index shows the error");
}

#[test]
fn three_shards_collected_give_the_summary_and_index_of_one_run_byte_for_byte() {
    let s = Scratch::with_plan("shards");
    assert_eq!(exit_code(&s.batch(&["--out", "whole"])), 0);
    for i in 0..3 {
        let shard = format!("{i}/3");
        let out = format!("shard-{i}");
        let run = s.batch(&["--shard", &shard, "--out", &out]);
        assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    }
    // Pair k of the plan goes to shard k mod 3: four pairs, so shard 0 holds two.
    assert_eq!(summary(&s.path("shard-0"))["totals"]["pairs"], 2);
    assert_eq!(summary(&s.path("shard-2"))["totals"]["pairs"], 1);
    let run = s.batch(&[
        "--collect",
        "shard-2",
        "shard-0",
        "shard-1",
        "--out",
        "collected",
    ]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let whole = std::fs::read(s.path("whole/summary.json")).unwrap();
    let collected = std::fs::read(s.path("collected/summary.json")).unwrap();
    assert!(whole == collected, "summary.json differs");
    // The pages are the same but for their date line (when the run started, when the shards
    // were collected), which summary.json does not hold.
    for file in ["index.html", "index.md"] {
        let undated = |dir: &str| -> Vec<String> {
            std::fs::read_to_string(s.path(dir).join(file))
                .unwrap()
                .lines()
                .filter(|l| !l.contains(" (UTC): "))
                .map(str::to_string)
                .collect()
        };
        assert_eq!(undated("whole"), undated("collected"), "{file} differs");
        let collected = std::fs::read_to_string(s.path("collected").join(file)).unwrap();
        assert!(
            collected.contains("Shards collected (UTC): "),
            "{collected}"
        );
        let whole = std::fs::read_to_string(s.path("whole").join(file)).unwrap();
        assert!(whole.contains("Run started (UTC): "), "{whole}");
    }
    assert!(s
        .path("collected/line-a/pore_density/dossier.html")
        .is_file());
    // With --previous, the collected drift equals the single run's too.
    assert_eq!(
        exit_code(&s.batch(&["--out", "whole2", "--previous", "whole"])),
        0
    );
    let run = s.batch(&[
        "--collect",
        "shard-0",
        "shard-1",
        "shard-2",
        "--out",
        "collected2",
        "--previous",
        "whole",
    ]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    assert!(
        std::fs::read(s.path("whole2/summary.json")).unwrap()
            == std::fs::read(s.path("collected2/summary.json")).unwrap()
    );
}

#[test]
fn collect_refuses_a_missing_shard_and_writes_nothing() {
    let s = Scratch::with_plan("collect-missing");
    for i in [0, 2] {
        let shard = format!("{i}/3");
        let out = format!("shard-{i}");
        assert_eq!(exit_code(&s.batch(&["--shard", &shard, "--out", &out])), 0);
    }
    let run = s.batch(&["--collect", "shard-0", "shard-2", "--out", "collected"]);
    assert_eq!(exit_code(&run), 2);
    assert!(
        stderr(&run).contains("shard 1/3 is missing"),
        "{}",
        stderr(&run)
    );
    assert!(!s.path("collected").exists());
}

#[test]
fn unsafe_names_and_unknown_keys_are_all_rejected_before_anything_runs() {
    let s = Scratch::with_plan("rejected");
    let plan = r#"[defaults]
replicates = 4
colour = "blue"

[[study]]
name = "../escape"
data = "data/line_a.csv"
targets = ["crush_strength"]

[[study]]
name = "line\u0007bell"
data = "data/line_b.csv"
targets = ["crush_strength"]

[[study]]
name = "line-c"
data = "data/line_c.csv"
targets = ["crush_strength", "a\\b"]
replicate = 4

[[study]]
name = "LINE-C"
data = "data/line_c.csv"
targets = []
"#;
    std::fs::write(s.path("plan.toml"), plan).unwrap();
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 2);
    let err = stderr(&run);
    for expected in [
        "plan.toml:3:1: unknown key 'colour' in [defaults]",
        "plan.toml:6:8: the study name '../escape' contains '..'",
        "plan.toml:11:8: the study name 'line\\u{7}bell' contains a control character",
        "plan.toml:18:1: [[study]] 'line-c': the target 'a\\\\b' contains '\\'",
        "plan.toml:19:1: unknown key 'replicate' in [[study]] 'line-c'; did you mean 'replicates'?",
        "plan.toml:22:8: the study name 'LINE-C' is used twice (also 'line-c' on line 16)",
        "plan.toml:24:1: [[study]] 'LINE-C': no target column is named",
        "7 problem(s), listed above; nothing was run",
    ] {
        assert!(err.contains(expected), "missing {expected:?} in:\n{err}");
    }
    assert!(!s.path("out").exists(), "nothing may be written");
}

#[test]
fn bad_settings_are_rejected_with_their_line_before_anything_runs() {
    let s = Scratch::with_plan("settings");
    let plan = PLAN
        .replace("replicates = 4", "replicates = 5\nalpha = 1.5")
        .replace("seed = 3", "seed = 3\nscaling = \"log\"");
    std::fs::write(s.path("plan.toml"), plan).unwrap();
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 2);
    let err = stderr(&run);
    assert!(
        err.contains("plan.toml:5:1: [defaults]: alpha 1.5 is not a level"),
        "{err}"
    );
    assert!(
        err.contains("replicates 5: complementary pairs come in twos"),
        "{err}"
    );
    assert!(
        err.contains("plan.toml:23:11: [[study]] 'line-c': scaling: unknown variant `log`"),
        "{err}"
    );
    // A problem of [defaults] is listed once, not once per study.
    assert_eq!(err.matches("alpha 1.5").count(), 1, "{err}");
    assert!(!s.path("out").exists());
}

#[test]
fn check_mode_treats_a_missing_data_file_as_a_plan_problem() {
    let s = Scratch::with_plan("check");
    let ok = s.batch(&["--check"]);
    assert_eq!(exit_code(&ok), 0, "{}", stderr(&ok));
    assert!(String::from_utf8_lossy(&ok.stdout).contains("3 studies, 4 study–target pairs"));
    std::fs::remove_file(s.path("data/line_c.csv")).unwrap();
    let missing = s.batch(&["--check"]);
    assert_eq!(exit_code(&missing), 2);
    assert!(
        stderr(&missing).contains("plan.toml:19:8: [[study]] 'line-c': the data file"),
        "{}",
        stderr(&missing)
    );
    assert!(!s.path("forebear-batch").exists());
}

#[test]
fn check_reports_every_problem_of_a_plan_and_its_data_headers_in_one_round_at_each_key() {
    let s = Scratch::with_plan("check-all");
    let plan = r#"[defaults]
alpha = 1.5
replicates = 4

[[study]]
name = "line-a"
data = "data/line_a.csv"
targets = ["crush_strength", "pore_densty"]

[[study]]
name = "line-b"
data = "data/line_b.csv"
targets = ["crush_strength"]
exclude = ["conveyor_sped"]
scaling = "log"
colour = "blue"

[[study]]
name = "line-c"
data = "data/line_d.csv"
targets = ["crush_strength"]
"#;
    std::fs::write(s.path("plan.toml"), plan).unwrap();
    let checked = s.batch(&["--check"]);
    assert_eq!(exit_code(&checked), 2);
    let err = stderr(&checked);
    let lines: Vec<&str> = err.lines().collect();
    let expected = [
        "plan.toml:2:1: [defaults]: alpha 1.5 is not a level",
        "plan.toml:8:1: [[study]] 'line-a': ",
        "the target column 'pore_densty' is not in the header; did you mean 'pore_density'?",
        "plan.toml:14:1: [[study]] 'line-b': ",
        "the excluded column 'conveyor_sped' is not in the header; did you mean 'conveyor_speed'?",
        "plan.toml:15:11: [[study]] 'line-b': scaling: unknown variant `log`",
        "plan.toml:16:1: unknown key 'colour' in [[study]] 'line-b'",
        "plan.toml:20:8: [[study]] 'line-c': the data file",
        "line_d.csv' does not exist",
        "plan.toml: 6 problem(s), listed above; nothing was run",
    ];
    for needle in expected {
        assert!(err.contains(needle), "missing {needle:?} in:\n{err}");
    }
    assert_eq!(
        lines.len(),
        7,
        "six problems and the count, one line each:\n{err}"
    );
    // The study whose only fault is a header mismatch was checked against its file even though
    // other studies (and [defaults]) have problems of their own.
    assert!(!s.path("forebear-batch").exists());
}

#[test]
fn a_folder_given_as_a_plans_data_file_is_called_a_folder() {
    let s = Scratch::with_small_plan("folder-data");
    std::fs::remove_file(s.path("data/line_a.csv")).unwrap();
    std::fs::create_dir(s.path("data/line_a.csv")).unwrap();
    let batch = |args: &[&str]| {
        common::bin()
            .current_dir(&s.0)
            .args(["batch", "small.toml"])
            .args(args)
            .output()
            .unwrap()
    };
    let checked = batch(&["--check"]);
    let err = assert_refused(
        &checked,
        &[
            "small.toml:7:8: [[study]] 'line-a'",
            "line_a.csv",
            "is a folder",
        ],
    );
    assert!(!err.contains("does not exist"), "{err}");
    let ran = batch(&["--out", "out"]);
    let err = assert_refused(&ran, &["is a folder"]);
    assert!(!err.contains("does not exist"), "{err}");
    let summary = std::fs::read_to_string(s.path("out/summary.json")).unwrap();
    assert!(summary.contains("is a folder"), "{summary}");
}

#[test]
fn a_plan_asking_for_more_replicates_than_the_limit_is_refused() {
    let s = Scratch::with_small_plan("replicates-limit");
    let plan = SMALL_PLAN.replace("replicates = 0", "replicates = 20000");
    std::fs::write(s.path("small.toml"), plan).unwrap();
    let checked = s.small(&["--check"]);
    assert_refused(&checked, &["20000", "above the limit of 10000"]);
    assert!(!s.path("forebear-batch").exists());
}

#[test]
fn a_former_batch_output_is_replaced_only_with_force_and_a_foreign_folder_never() {
    let s = Scratch::with_plan("force");
    assert_eq!(exit_code(&s.batch(&["--out", "out"])), 0);
    let again = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&again), 2);
    assert!(
        stderr(&again).contains("pass --force"),
        "{}",
        stderr(&again)
    );
    assert_eq!(exit_code(&s.batch(&["--out", "out", "--force"])), 0);
    std::fs::write(s.path("out/notes.txt"), "mine").unwrap();
    let foreign = s.batch(&["--out", "out", "--force"]);
    assert_eq!(exit_code(&foreign), 2);
    assert!(s.path("out/notes.txt").is_file(), "a user's file survives");
    std::fs::create_dir_all(s.path("elsewhere")).unwrap();
    std::fs::write(s.path("elsewhere/data.csv"), "a,b\n1,2\n").unwrap();
    let other = s.batch(&["--out", "elsewhere", "--force"]);
    assert_eq!(exit_code(&other), 2);
    assert!(stderr(&other).contains("no summary.json written by forebear batch"));
}

#[test]
fn a_folder_that_appears_at_out_during_a_batch_is_left_as_it_is_and_the_batch_refuses() {
    let s = Scratch::with_small_plan("appears");
    let hold = Hold::new(&s.0, "hold");
    let mut child = s.start_small(&["--out", "out"], Some((&hold, "batch:before-swap")));
    hold.wait(&mut child);
    common::place_user_file(&s.path("out/notes.txt"));
    hold.release();
    let run = child.wait_with_output().unwrap();
    assert_refused(
        &run,
        &["changed while forebear ran (it now holds files but no summary.json"],
    );
    common::assert_user_file(&s.path("out/notes.txt"));
    assert_eq!(std::fs::read_dir(s.path("out")).unwrap().count(), 1);
    assert_eq!(beside(&s.path("out")), Vec::<String>::new());
}

#[test]
fn a_second_batch_on_one_out_fails_while_the_first_runs_and_never_replaces_its_output() {
    let s = Scratch::with_small_plan("second");
    let hold = Hold::new(&s.0, "hold");
    let mut first = s.start_small(&["--out", "out"], Some((&hold, "batch:before-swap")));
    hold.wait(&mut first);
    let second = s.small(&["--out", "out", "--force"]);
    let busy = format!(
        "another forebear run (process {}) is writing the output folder 'out'",
        first.id()
    );
    assert_refused(&second, &[&busy]);
    hold.release();
    let first = first.wait_with_output().unwrap();
    assert_eq!(exit_code(&first), 0, "{}", stderr(&first));
    let written = std::fs::read_to_string(s.path("out/summary.json")).unwrap();
    let later = s.small(&["--out", "out"]);
    assert_eq!(exit_code(&later), 2);
    assert!(
        stderr(&later).contains("pass --force"),
        "{}",
        stderr(&later)
    );
    assert_eq!(
        std::fs::read_to_string(s.path("out/summary.json")).unwrap(),
        written
    );
}

/// Two batches started at once, with no hook: whichever comes second, it fails (the lock while
/// the first runs, the former output without --force after it), and one complete output stays.
#[test]
fn two_batches_started_together_on_one_out_give_one_output_and_one_refusal() {
    let s = Scratch::with_small_plan("together");
    let a = s.start_small(&["--out", "out"], None);
    let b = s.start_small(&["--out", "out"], None);
    let runs = [a.wait_with_output().unwrap(), b.wait_with_output().unwrap()];
    let mut codes: Vec<i32> = runs.iter().map(exit_code).collect();
    codes.sort();
    assert_eq!(codes, [0, 2], "{} | {}", stderr(&runs[0]), stderr(&runs[1]));
    let refused = runs.iter().find(|r| exit_code(r) == 2).unwrap();
    assert!(
        stderr(refused).contains("another forebear run")
            || stderr(refused).contains("pass --force"),
        "{}",
        stderr(refused)
    );
    assert_eq!(summary(&s.path("out"))["totals"]["done"], 1);
    assert!(s.path("out/line-a/crush_strength/manifest.json").is_file());
    assert_eq!(beside(&s.path("out")), Vec::<String>::new());
}

#[test]
fn a_user_file_inside_a_study_folder_keeps_a_batch_output_from_being_replaced() {
    let s = Scratch::with_small_plan("study-file");
    assert_eq!(exit_code(&s.small(&["--out", "out"])), 0);
    common::place_user_file(&s.path("out/line-a/notes.txt"));
    assert_refused(
        &s.small(&["--out", "out", "--force"]),
        &["'line-a/notes.txt'"],
    );
    common::assert_user_file(&s.path("out/line-a/notes.txt"));
}

#[test]
fn a_batch_killed_between_the_renames_is_put_back_by_the_next_run() {
    let s = Scratch::with_small_plan("killed");
    assert_eq!(exit_code(&s.small(&["--out", "out"])), 0);
    let former = std::fs::read_to_string(s.path("out/summary.json")).unwrap();
    let hold = Hold::new(&s.0, "hold");
    let mut child = s.start_small(
        &["--out", "out", "--force"],
        Some((&hold, "batch:between-renames")),
    );
    hold.kill_there(&mut child);
    assert!(!s.path("out").exists());
    assert_refused(
        &s.small(&["--out", "out"]),
        &["put back the former output from '.out.old-"],
    );
    assert_eq!(
        std::fs::read_to_string(s.path("out/summary.json")).unwrap(),
        former
    );
    assert_eq!(beside(&s.path("out")), Vec::<String>::new());
}

#[test]
fn the_example_nightly_plan_is_valid_and_names_existing_data() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/nightly-plan.toml");
    let plan = forebear::batch::plan::Plan::load(&path).expect("the example plan is valid");
    assert_eq!(plan.studies.len(), 2);
    assert_eq!(plan.pairs().len(), 3);
    assert!(plan.missing_data().is_empty());
}

#[test]
fn reader_and_candidate_keys_of_a_plan_reach_the_analysis_and_bad_ones_are_rejected() {
    let s = Scratch::with_plan("reader-keys");
    // line_c re-saved with ';' between values and decimal commas.
    let text = std::fs::read_to_string(s.path("data/line_c.csv")).unwrap();
    let european: String = text.replace(',', ";").replace('.', ",");
    std::fs::write(s.path("data/line_c.csv"), european).unwrap();
    let plan = PLAN.replace(
        "seed = 3\n",
        "seed = 3\ndelimiter = \";\"\ndecimal_comma = true\nmissing = \"error\"\n\
         candidates = [\"kiln_peak_temp\", \"pore_density\", \"binder_fraction\"]\n",
    );
    std::fs::write(s.path("plan.toml"), &plan).unwrap();
    let run = s.batch(&["--out", "out"]);
    assert_eq!(exit_code(&run), 0, "{}", stderr(&run));
    let result: Value = serde_json::from_str(
        &std::fs::read_to_string(s.path("out/line-c/crush_strength/result.json")).unwrap(),
    )
    .unwrap();
    assert_eq!(
        result["settings"]["candidates"],
        serde_json::json!(["kiln_peak_temp", "binder_fraction", "pore_density"])
    );
    let verify = common::bin()
        .args(["--quiet", "verify"])
        .arg(s.path("out/line-c/crush_strength"))
        .arg("--data")
        .arg(s.path("data/line_c.csv"))
        .output()
        .unwrap();
    assert_eq!(
        verify.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&verify.stdout)
    );
    std::fs::write(
        s.path("plan.toml"),
        plan.replace("missing = \"error\"", "missing = \"ignore\"")
            .replace("delimiter = \";\"", "delimiter = \"#\""),
    )
    .unwrap();
    let bad = s.batch(&["--out", "out2"]);
    assert_eq!(exit_code(&bad), 2);
    assert!(stderr(&bad).contains("'line-c'"), "{}", stderr(&bad));
    assert!(!s.path("out2").exists());
}

// ---- drift against the number of replicates, and unstable headlines (issue 11) ----------------

use forebear::batch::drift::{compare, Drift};
use forebear::batch::{
    Entry, EntryData, EntryStability, PlanRef, Status, StudySummary, Summary, Totals,
};
use forebear::resample::stability::OutcomeFrequency;
use forebear::search::Outcome;

/// A done entry with the given headline: outcome, parent sets, frequency of `replicates`.
fn entry(
    outcome: Outcome,
    parents: &[&str],
    headline: f64,
    replicates: u32,
    stable: bool,
) -> Entry {
    let parent_sets: Vec<Vec<String>> = match parents {
        [] => Vec::new(),
        _ => vec![parents.iter().map(|p| p.to_string()).collect()],
    };
    Entry {
        status: Status::Done,
        error: None,
        failure: None,
        pair: 0,
        outcome: Some(outcome.name().to_string()),
        parent_sets,
        markov_boundary: Vec::new(),
        stability: Some(EntryStability {
            replicates,
            threshold: 0.6,
            headline,
            headline_stable: stable,
            headline_contradicted: headline < 0.5,
            most_frequent_other: (headline < 1.0).then(|| OutcomeFrequency {
                outcome: Outcome::Identified,
                parent_sets: vec![vec!["kiln_peak_temp".into(), "pore_density".into()]],
                frequency: 1.0 - headline,
                count: ((1.0 - headline) * f64::from(replicates)).round() as u32,
            }),
            markov_boundary: Default::default(),
            parents: Default::default(),
        }),
        data: Some(EntryData {
            sha256: "a".repeat(64),
            content_sha256: "b".repeat(64),
            rows_read: 1500,
            rows_used: 1494,
        }),
        digest: Some("c".repeat(64)),
        dossier: Some("line-a/crush_strength".into()),
        with_knowledge: None,
    }
}

/// A summary holding one pair, line-a / crush_strength.
fn summary_of(entry: Entry) -> Summary {
    let mut targets = std::collections::BTreeMap::new();
    targets.insert("crush_strength".to_string(), entry);
    let mut studies = std::collections::BTreeMap::new();
    studies.insert(
        "line-a".to_string(),
        StudySummary {
            data: "data/line_a.csv".into(),
            targets,
        },
    );
    Summary {
        schema: "forebear.batch/1".into(),
        tool: forebear::finding::ToolInfo::current(),
        plan: PlanRef {
            file: "plan.toml".into(),
            sha256: "d".repeat(64),
        },
        shard: None,
        studies,
        drift: None,
        totals: Totals::default(),
    }
}

fn drift_between(before: Entry, after: Entry) -> Drift {
    compare(&summary_of(before), "e", &summary_of(after), 0.2)
}

#[test]
fn a_headline_move_beyond_the_threshold_but_within_twice_its_sampling_error_is_not_drift() {
    // 0.70 → 0.45 of 20 replicates each: a move of 0.25 against a band of
    // 2·sqrt(0.21/20 + 0.2475/20) ≈ 0.30.
    let found = drift_between(
        entry(Outcome::Identified, &["a", "b"], 0.70, 20, true),
        entry(Outcome::Identified, &["a", "b"], 0.45, 20, false),
    );
    assert!(found.changes.is_empty(), "{:?}", found.changes);
}

#[test]
fn a_headline_move_beyond_the_threshold_and_twice_its_sampling_error_is_drift() {
    // 0.95 → 0.60 of 100 replicates each: a move of 0.35 against a band of about 0.11.
    let found = drift_between(
        entry(Outcome::Identified, &["a", "b"], 0.95, 100, true),
        entry(Outcome::Identified, &["a", "b"], 0.60, 100, true),
    );
    assert_eq!(found.changes.len(), 1, "{:?}", found.changes);
    assert_eq!(found.changes[0].kind, "stability");
    assert!(
        found.changes[0].detail.contains("twice the sampling error"),
        "{}",
        found.changes[0].detail
    );
}

/// `entry` with a result read with stated knowledge.
fn with_knowledge(mut e: Entry, outcome: Outcome, parents: &[&str], stable: bool) -> Entry {
    e.with_knowledge = Some(forebear::batch::EntryKnowledge {
        outcome: outcome.name().to_string(),
        parent_sets: match parents {
            [] => Vec::new(),
            _ => vec![parents.iter().map(|p| p.to_string()).collect()],
        },
        resting_on_knowledge: parents.iter().map(|p| p.to_string()).collect(),
        stable: Some(stable),
    });
    e
}

#[test]
fn a_change_of_the_result_with_knowledge_is_drift_unless_neither_is_stable() {
    let data = || entry(Outcome::NotIdentifiable, &[], 0.9, 100, true);
    let found = drift_between(
        with_knowledge(data(), Outcome::Identified, &["b"], true),
        with_knowledge(data(), Outcome::NotIdentifiable, &[], true),
    );
    assert_eq!(found.changes.len(), 1, "{:?}", found.changes);
    assert_eq!(found.changes[0].kind, "knowledge");
    assert!(found.changes[0]
        .detail
        .contains("with the stated knowledge: identified {b} → not_identifiable"));
    let found = drift_between(
        with_knowledge(data(), Outcome::Identified, &["b"], false),
        with_knowledge(data(), Outcome::NotIdentifiable, &[], false),
    );
    assert!(found.changes.is_empty(), "{:?}", found.changes);
    assert_eq!(found.unstable_outcomes.len(), 1);
    let found = drift_between(
        data(),
        with_knowledge(data(), Outcome::Identified, &["b"], true),
    );
    assert_eq!(found.changes[0].detail, "knowledge stated now, not before");
    let same = drift_between(
        with_knowledge(data(), Outcome::Identified, &["b"], true),
        with_knowledge(data(), Outcome::Identified, &["b"], false),
    );
    assert!(same.changes.is_empty() && same.unstable_outcomes.is_empty());
}

#[test]
fn an_outcome_change_between_two_unstable_headlines_is_listed_but_is_not_drift() {
    let found = drift_between(
        entry(Outcome::NotIdentifiable, &[], 0.40, 100, false),
        entry(Outcome::Identified, &["a", "b"], 0.55, 100, false),
    );
    assert!(found.changes.is_empty(), "{:?}", found.changes);
    assert_eq!(found.unstable_outcomes.len(), 1);
    let change = &found.unstable_outcomes[0];
    assert_eq!(change.kind, "unstable_outcome");
    assert!(
        change.detail.contains("0.40 of 100") && change.detail.contains("0.55 of 100"),
        "both headlines' frequencies: {}",
        change.detail
    );
    // When either headline was stable, the same change is drift.
    let found = drift_between(
        entry(Outcome::NotIdentifiable, &[], 0.40, 100, false),
        entry(Outcome::Identified, &["a", "b"], 0.90, 100, true),
    );
    assert!(found.unstable_outcomes.is_empty());
    assert!(
        found.changes.iter().any(|c| c.kind == "outcome"),
        "{:?}",
        found.changes
    );
}

#[test]
fn the_index_flags_a_contradicted_headline_and_says_an_unstable_outcome_is_not_drift() {
    let before = summary_of(entry(Outcome::NotIdentifiable, &[], 0.40, 100, false));
    let mut after = summary_of(entry(Outcome::Identified, &["a", "b"], 0.30, 100, false));
    after.drift = Some(compare(&before, "e", &after, 0.2));
    after.totals.unstable_outcomes = 1;
    let dated = forebear::batch::index::Dated::run("2026-12-03T01:00:00Z");
    let markdown = forebear::batch::index::render_markdown(&after, &dated).unwrap();
    assert!(
        markdown
            .contains("**contradicted by resamples** (most frequent other result 0.70: identified"),
        "{markdown}"
    );
    assert!(markdown.contains("**No drift**"), "{markdown}");
    assert!(
        markdown.contains("unstable outcome (not drift)"),
        "{markdown}"
    );
    assert!(markdown.contains("are **not drift**"), "{markdown}");
    let html = forebear::batch::index::render_html(&after, &dated).unwrap();
    assert!(html.contains("contradicted by resamples"), "{html}");
    assert!(html.contains("<strong>not drift</strong>"), "{html}");
}

#[test]
fn a_summary_written_before_the_headline_fields_still_reads() {
    // Older summaries have neither `headline_contradicted` nor `most_frequent_other`.
    let mut value = serde_json::to_value(summary_of(entry(
        Outcome::Identified,
        &["a", "b"],
        0.9,
        100,
        true,
    )))
    .unwrap();
    let stability = &mut value["studies"]["line-a"]["targets"]["crush_strength"]["stability"];
    let object = stability.as_object_mut().unwrap();
    object.remove("headline_contradicted");
    object.remove("most_frequent_other");
    let summary: Summary = serde_json::from_value(value).unwrap();
    let read = summary.studies["line-a"].targets["crush_strength"]
        .stability
        .as_ref()
        .unwrap();
    assert!(!read.headline_contradicted && read.most_frequent_other.is_none());
}
