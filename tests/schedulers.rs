//! The scheduler examples, run as the schedulers would run them (issue 16, item 7): every shard of
//! each example with the scheduler's index variables set and the built binary first on PATH, then
//! the merge (or the collect step), compared with one single run. Slurm and Kubernetes number
//! their tasks from 0, LSF and Grid Engine from 1. 6 replicates on 8 shards leave empty ranges
//! (0..0, 2..2, 3..3), which must merge like any other part.

use crate::common::*;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const REPLICATES: u32 = 6;
const SHARDS: u32 = 8;
const SEED: &str = "7";
const TARGET: &str = "crush_strength";

fn examples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("examples")
}

fn example_text(name: &str) -> String {
    std::fs::read_to_string(examples().join(name)).unwrap()
}

/// PATH with the folder of the built binary first.
fn path_with_binary() -> OsString {
    let bin = Path::new(env!("CARGO_BIN_EXE_forebear")).parent().unwrap();
    let mut paths = vec![bin.to_path_buf()];
    paths.extend(std::env::split_paths(
        &std::env::var_os("PATH").unwrap_or_default(),
    ));
    std::env::join_paths(paths).unwrap()
}

/// A shell command run in `dir` as a scheduler would: the study settings in the environment,
/// plus `vars`.
fn scheduled(dir: &Path, program: &str, args: &[&str], vars: &[(&str, String)]) -> Output {
    let mut command = Command::new(program);
    command
        .args(args)
        .current_dir(dir)
        .env("PATH", path_with_binary())
        .env("EXAMPLES", examples())
        .env("DATA", "study.csv")
        .env("TARGET", TARGET)
        .env("REPLICATES", REPLICATES.to_string())
        .env("SHARDS", SHARDS.to_string())
        .env("SEED", SEED);
    for (name, value) in vars {
        command.env(name, value);
    }
    command.output().unwrap()
}

/// A folder with the demo data as `study.csv`, and the digest of one single run on it.
fn study(name: &str) -> (Scratch, String) {
    let scratch = Scratch::new(name);
    let data = write_demo_csv(&scratch.dir.clone());
    std::fs::rename(&data, scratch.path("study.csv")).unwrap();
    let single = scratch.path("single");
    let replicates = REPLICATES.to_string();
    let output = run([
        "analyze",
        scratch.path("study.csv").to_str().unwrap(),
        "--target",
        TARGET,
        "--replicates",
        &replicates,
        "--seed",
        SEED,
        "--out",
        single.to_str().unwrap(),
    ]);
    assert_success(&output);
    let digest = result_json(&single)["digest"].as_str().unwrap().to_string();
    (scratch, digest)
}

/// Merges `parts/shard-0` … `parts/shard-7` in `dir` and returns the merged digest.
fn merge_all(dir: &Path) -> String {
    let mut args = vec!["merge".to_string()];
    args.extend((0..SHARDS).map(|i| dir.join(format!("parts/shard-{i}")).display().to_string()));
    args.extend(["--out".into(), dir.join("merged").display().to_string()]);
    let output = run(&args);
    assert_success(&output);
    result_json(&dir.join("merged"))["digest"]
        .as_str()
        .unwrap()
        .to_string()
}

/// Runs every shard of a bash example whose task number is `first + i` in variable `var`.
fn run_array_script(script: &str, var: &str, first: u32, extra: &[(&str, &str)]) {
    let (scratch, single) = study(script);
    let dir = scratch.dir.clone();
    let script_path = examples().join(script);
    for i in 0..SHARDS {
        let mut vars = vec![(var, (first + i).to_string())];
        vars.extend(extra.iter().map(|(n, v)| (*n, v.to_string())));
        let output = scheduled(&dir, "bash", &[script_path.to_str().unwrap()], &vars);
        assert_success(&output);
    }
    assert_eq!(merge_all(&dir), single, "{script}: merged digest");
}

#[test]
fn slurm_array_shards_numbered_from_0_merge_to_the_single_run_digest() {
    run_array_script(
        "slurm-array.sh",
        "SLURM_ARRAY_TASK_ID",
        0,
        &[("SLURM_CPUS_PER_TASK", "1")],
    );
}

#[test]
fn lsf_array_shards_numbered_from_1_merge_to_the_single_run_digest() {
    run_array_script(
        "lsf-array.sh",
        "LSB_JOBINDEX",
        1,
        &[("LSB_DJOB_NUMPROC", "1")],
    );
}

#[test]
fn grid_engine_array_tasks_numbered_from_1_merge_to_the_single_run_digest() {
    run_array_script("sge-array.sh", "SGE_TASK_ID", 1, &[("NSLOTS", "1")]);
}

/// The shell of a Job's container: the lines of the block scalar after `args:` / `- |`, with the
/// Job's volume `/work` moved to `dir`.
fn container_shell(yaml: &str, dir: &Path) -> String {
    let lines: Vec<&str> = yaml.lines().collect();
    let start = lines
        .iter()
        .position(|l| l.trim() == "- |")
        .expect("a block scalar under args");
    let indent = lines[start + 1].len() - lines[start + 1].trim_start().len();
    let body: Vec<&str> = lines[start + 1..]
        .iter()
        .take_while(|l| l.trim().is_empty() || l.len() - l.trim_start().len() >= indent)
        .map(|l| l.get(indent..).unwrap_or(""))
        .collect();
    body.join("\n")
        .replace("/work/", &format!("{}/", dir.display()))
}

#[test]
fn kubernetes_indexed_job_completions_merge_to_the_single_run_digest() {
    let (scratch, single) = study("k8s");
    let dir = scratch.dir.clone();
    let yaml = example_text("kubernetes-indexed-job.yaml");
    assert!(yaml.contains(&format!("completions: {SHARDS}")));
    let shell = container_shell(&yaml, &dir);
    assert!(shell.contains("--replicate-range"), "{shell}");
    let shell = shell.replace("--target assay_potency", &format!("--target {TARGET}"));
    let shell = shell.replace("--seed 20261201", &format!("--seed {SEED}"));
    std::fs::create_dir_all(dir.join("parts")).unwrap();
    for i in 0..SHARDS {
        let output = scheduled(
            &dir,
            "sh",
            &["-c", &shell],
            &[("JOB_COMPLETION_INDEX", i.to_string())],
        );
        assert_success(&output);
    }
    assert_eq!(merge_all(&dir), single);
}

#[test]
fn the_snakefile_shards_run_the_same_shard_script_as_the_array_examples() {
    let snakefile = example_text("Snakefile");
    assert!(
        snakefile.contains("sh {EXAMPLES}/replicate-shard.sh {wildcards.index} {params.shards}"),
        "{snakefile}"
    );
    assert!(snakefile.contains("forebear merge {input} --out dossier"));
    for script in ["slurm-array.sh", "lsf-array.sh", "sge-array.sh"] {
        assert!(
            example_text(script).contains("/replicate-shard.sh\" \\\n"),
            "{script} runs the shared shard script"
        );
    }
    // Run it only where Snakemake is installed (it is never installed by the tests).
    let Ok(version) = Command::new("snakemake").arg("--version").output() else {
        return;
    };
    if !version.status.success() {
        return;
    }
    let (scratch, single) = study("snakemake");
    let dir = scratch.dir.clone();
    let output = scheduled(
        &dir,
        "snakemake",
        &[
            "--snakefile",
            examples().join("Snakefile").to_str().unwrap(),
            "--cores",
            "2",
            "--config",
            &format!("shards={SHARDS}"),
            &format!("examples={}", examples().display()),
        ],
        &[],
    );
    assert_success(&output);
    let merged = result_json(&dir.join("dossier"))["digest"].clone();
    assert_eq!(merged.as_str().unwrap(), single);
}

#[test]
fn an_empty_replicate_range_is_a_part_and_a_range_past_the_plan_is_refused() {
    let (scratch, _) = study("empty-range");
    let data = scratch.path("study.csv");
    let data = data.to_str().unwrap();
    let part = |range: &str, out: &str| {
        run([
            "analyze",
            data,
            "--target",
            TARGET,
            "--replicates",
            "10",
            "--seed",
            SEED,
            "--replicate-range",
            range,
            "--out",
            out,
        ])
    };
    let empty = scratch.path("empty");
    assert_success(&part("10..10", empty.to_str().unwrap()));
    let text = std::fs::read_to_string(empty.join("partial.json")).unwrap();
    let value: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(value["range"], serde_json::json!([10, 10]));
    assert_eq!(value["records"], serde_json::json!([]));
    for (range, shown) in [("12..10", "12..10"), ("14..14", "14..14"), ("5..3", "5..3")] {
        let out = scratch.path("refused");
        let output = part(range, out.to_str().unwrap());
        assert_eq!(exit_code(&output), 2, "{range}");
        let stderr = lossy_stderr(&output);
        assert!(
            stderr.contains(&format!("--replicate-range {shown}")) && stderr.contains("0..10"),
            "{stderr}"
        );
        assert!(!out.exists(), "{range}: nothing written");
    }
}

/// A plan of two studies and four (study, target) pairs on the demo data, two replicates each.
fn four_pair_plan(scratch: &Scratch) -> PathBuf {
    write_demo_csv(&scratch.dir.clone());
    scratch.write(
        "plan.toml",
        "[defaults]\nseed = 11\nreplicates = 2\n\n\
         [[study]]\nname = \"line-a\"\ndata = \"filter_discs.csv\"\n\
         targets = [\"crush_strength\", \"pore_density\"]\n\n\
         [[study]]\nname = \"line-b\"\ndata = \"filter_discs.csv\"\n\
         targets = [\"echo_amplitude\", \"probe_gap\"]\n",
    )
}

fn collect_and_compare(dir: &Path, shards: &[PathBuf]) {
    let mut args: Vec<OsString> = vec!["batch".into(), "plan.toml".into(), "--collect".into()];
    args.extend(shards.iter().map(|s| s.clone().into_os_string()));
    args.extend(["--out".into(), "together".into()]);
    assert_success(&run_in(dir, &args));
    assert_success(&run_in(dir, ["batch", "plan.toml", "--out", "single"]));
    // summary.json is the same bytes; the index is dated differently (run started / collected).
    assert_eq!(
        std::fs::read(dir.join("together/summary.json")).unwrap(),
        std::fs::read(dir.join("single/summary.json")).unwrap(),
        "summary.json"
    );
}

#[test]
fn slurm_batch_array_shards_collect_to_the_single_run_summary() {
    let scratch = Scratch::new("slurm-batch");
    four_pair_plan(&scratch);
    let dir = scratch.dir.clone();
    let script = examples().join("slurm-batch-array.sh");
    for i in 0..3 {
        let output = scheduled(
            &dir,
            "bash",
            &[script.to_str().unwrap()],
            &[
                ("SLURM_ARRAY_TASK_ID", i.to_string()),
                ("SLURM_CPUS_PER_TASK", "1".into()),
                ("PLAN", "plan.toml".into()),
                ("SHARDS", "3".into()),
            ],
        );
        assert_success(&output);
    }
    let shards: Vec<PathBuf> = (0..3)
        .map(|i| dir.join(format!("nightly/shard-{i}")))
        .collect();
    collect_and_compare(&dir, &shards);
}

#[test]
fn kubernetes_batch_indexed_job_collects_to_the_single_run_summary() {
    let scratch = Scratch::new("k8s-batch");
    four_pair_plan(&scratch);
    let dir = scratch.dir.clone();
    std::fs::create_dir_all(dir.join("plans")).unwrap();
    std::fs::copy(dir.join("plan.toml"), dir.join("plans/nightly.toml")).unwrap();
    std::fs::copy(
        dir.join("filter_discs.csv"),
        dir.join("plans/filter_discs.csv"),
    )
    .unwrap();
    let shell = container_shell(&example_text("kubernetes-batch-indexed-job.yaml"), &dir);
    for i in 0..3 {
        let output = scheduled(
            &dir,
            "sh",
            &["-c", &shell],
            &[
                ("JOB_COMPLETION_INDEX", i.to_string()),
                ("SHARDS", "3".into()),
            ],
        );
        assert_success(&output);
    }
    let shards: Vec<PathBuf> = (0..3)
        .map(|i| dir.join(format!("nightly/shard-{i}")))
        .collect();
    // The shards ran plans/nightly.toml: collect with that plan.
    std::fs::copy(dir.join("plans/nightly.toml"), dir.join("plan.toml")).unwrap();
    collect_and_compare(&dir, &shards);
}

#[test]
fn batch_list_json_gives_every_pair_and_the_shard_that_runs_it() {
    let scratch = Scratch::new("batch-list");
    four_pair_plan(&scratch);
    let dir = scratch.dir.clone();
    let output = run_in(
        &dir,
        ["batch", "plan.toml", "--list", "--shards", "3", "--json"],
    );
    assert_success(&output);
    let value: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(value["schema"], "forebear.batch-list/1");
    assert_eq!(value["plan"], "plan.toml");
    assert_eq!(value["shards"], 3);
    let plan_text = std::fs::read(dir.join("plan.toml")).unwrap();
    assert_eq!(value["plan_sha256"], sha256_hex(&plan_text));
    let pairs: Vec<(u64, String, String, u64)> = value["pairs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| {
            (
                p["index"].as_u64().unwrap(),
                p["study"].as_str().unwrap().to_string(),
                p["target"].as_str().unwrap().to_string(),
                p["shard"].as_u64().unwrap(),
            )
        })
        .collect();
    let expected = [
        (0, "line-a", "crush_strength", 0),
        (1, "line-a", "pore_density", 1),
        (2, "line-b", "echo_amplitude", 2),
        (3, "line-b", "probe_gap", 0),
    ];
    let expected: Vec<(u64, String, String, u64)> = expected
        .iter()
        .map(|(i, s, t, k)| (*i, s.to_string(), t.to_string(), *k))
        .collect();
    assert_eq!(pairs, expected);
    // Each listed shard is the one `--shard i/3` runs: shard 0 writes exactly its two pairs.
    assert_success(&run_in(
        &dir,
        ["batch", "plan.toml", "--shard", "0/3", "--out", "s0"],
    ));
    for (pair, shard) in [
        ("line-a/crush_strength", 0),
        ("line-a/pore_density", 1),
        ("line-b/echo_amplitude", 2),
        ("line-b/probe_gap", 0),
    ] {
        let ran = dir.join("s0").join(pair).join("dossier.md").exists();
        assert_eq!(ran, shard == 0, "{pair}");
    }
    let text = run_in(&dir, ["batch", "plan.toml", "--list"]);
    assert_success(&text);
    assert_eq!(
        lossy_stdout(&text),
        "0/1\tline-a\tcrush_strength\n0/1\tline-a\tpore_density\n\
         0/1\tline-b\techo_amplitude\n0/1\tline-b\tprobe_gap\n"
    );
    let zero = run_in(&dir, ["batch", "plan.toml", "--list", "--shards", "0"]);
    assert_eq!(exit_code(&zero), 2);
}
