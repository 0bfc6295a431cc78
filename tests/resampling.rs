//! Seeded resampling and stability (Shah and Samworth 2013 complementary pairs; Meinshausen and
//! Bühlmann 2010 bound), sharding and merging, through the real binary and the library.

use crate::common::{bin, fresh_dir, result_json as result, write_demo_csv};
use forebear::data::Table;
use forebear::measure::Scaling;
use forebear::resample::{PlanKind, ResamplePlan};
use forebear::rng::{standard_normal, Key};
use forebear::search::SearchData;
use std::path::{Path, PathBuf};
use std::process::{Output, Stdio};

fn forebear(args: &[&str]) -> Output {
    bin()
        .arg("--quiet")
        .args(args)
        .stdin(Stdio::null())
        .output()
        .unwrap()
}

fn scratch(name: &str) -> PathBuf {
    fresh_dir(&format!("resampling-{name}"))
}

fn demo_csv(dir: &Path) -> String {
    path(&write_demo_csv(dir))
}

fn path(p: &Path) -> String {
    p.display().to_string()
}

#[test]
fn stability_keys_and_frequencies_are_in_result_json() {
    let dir = scratch("keys");
    let data = demo_csv(&dir);
    let out = dir.join("out");
    let run = forebear(&[
        "analyze",
        &data,
        "--target",
        "crush_strength",
        "--replicates",
        "20",
        "--out",
        &path(&out),
    ]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let r = result(&out);
    let st = &r["stability"];
    assert_eq!(st["replicates"], 20);
    assert_eq!(st["plan"]["kind"], "complementary-pairs");
    assert_eq!(st["plan"]["count"], 20);
    assert_eq!(r["settings"]["resampling"]["count"], 20);
    let mb = st["markov_boundary"].as_object().unwrap();
    assert_eq!(mb.len(), 8, "every candidate has a frequency");
    for (column, f) in mb {
        let f = f.as_f64().unwrap();
        assert!((0.0..=1.0).contains(&f), "{column}: {f}");
        assert_eq!(
            (f * 20.0).fract(),
            0.0,
            "{column}: a count over 20 replicates"
        );
    }
    // The demo's true parents recur in (nearly) every half sample; an unrelated column does not.
    assert!(st["parents"]["kiln_peak_temp"].as_f64().unwrap() >= 0.8);
    assert!(st["parents"]["pore_density"].as_f64().unwrap() >= 0.8);
    assert!(st["markov_boundary"]["slurry_moisture"].as_f64().unwrap() <= 0.2);
    let outcomes = st["outcomes"].as_array().unwrap();
    let total: f64 = outcomes
        .iter()
        .map(|o| o["frequency"].as_f64().unwrap())
        .sum();
    assert!(
        (total - 1.0).abs() < 1e-12,
        "outcome frequencies sum to one"
    );
    assert_eq!(outcomes[0]["outcome"], "identified");
    assert_eq!(st["replicate_digests"].as_array().unwrap().len(), 20);
    assert_eq!(
        st["trace_spread"].as_array().unwrap().len(),
        r["markov_boundary"].as_array().unwrap().len()
    );
    // check-values.md formula on the run's own q and p.
    let q = st["error_bound"]["q"].as_f64().unwrap();
    let bound = st["error_bound"]["expected_false_members"]
        .as_f64()
        .unwrap();
    assert!((bound - q * q / ((2.0 * 0.6 - 1.0) * 8.0)).abs() < 1e-12);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn three_uneven_shards_merge_to_the_single_run_digest() {
    let dir = scratch("shards");
    let data = demo_csv(&dir);
    let single = dir.join("single");
    let common = [
        "--target",
        "pore_density",
        "--replicates",
        "12",
        "--seed",
        "5",
    ];
    let mut args = vec!["analyze", &data];
    args.extend(common);
    let single_s = path(&single);
    let mut single_args = args.clone();
    single_args.extend(["--out", &single_s]);
    assert!(forebear(&single_args).status.success());
    let mut parts = Vec::new();
    for (k, range) in ["0..1", "1..8", "8..12"].iter().enumerate() {
        let part = path(&dir.join(format!("part{k}")));
        let mut part_args = args.clone();
        part_args.extend(["--replicate-range", range, "--out", &part]);
        let run = forebear(&part_args);
        assert!(
            run.status.success(),
            "{}",
            String::from_utf8_lossy(&run.stderr)
        );
        parts.push(part);
    }
    // Merge in another order than computed: the result must not depend on it.
    let merged = path(&dir.join("merged"));
    let run = forebear(&["merge", &parts[2], &parts[0], &parts[1], "--out", &merged]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let a = result(&single);
    let b = result(Path::new(&merged));
    assert_eq!(a["digest"], b["digest"]);
    assert_eq!(a["stability"], b["stability"]);

    // Missing, doubled and foreign parts are refused with exit code 2.
    let missing = forebear(&[
        "merge",
        &parts[0],
        &parts[2],
        "--out",
        &path(&dir.join("m2")),
    ]);
    assert_eq!(missing.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&missing.stderr).contains("do not cover replicate 1"));
    let doubled = forebear(&[
        "merge",
        &parts[0],
        &parts[1],
        &parts[1],
        &parts[2],
        "--out",
        &path(&dir.join("m3")),
    ]);
    assert_eq!(doubled.status.code(), Some(2));
    let other_seed = path(&dir.join("other"));
    let run = forebear(&[
        "analyze",
        &data,
        "--target",
        "pore_density",
        "--replicates",
        "12",
        "--seed",
        "6",
        "--replicate-range",
        "1..8",
        "--out",
        &other_seed,
    ]);
    assert!(run.status.success());
    let foreign = forebear(&[
        "merge",
        &parts[0],
        &other_seed,
        &parts[2],
        "--out",
        &path(&dir.join("m4")),
    ]);
    assert_eq!(foreign.status.code(), Some(2));
    let message = String::from_utf8_lossy(&foreign.stderr);
    assert!(message.contains("seeds differ"), "{message}");
    assert!(!dir.join("m2").exists() && !dir.join("m3").exists() && !dir.join("m4").exists());
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn bad_resampling_settings_are_clear_errors_with_exit_code_2() {
    let dir = scratch("bad");
    let data = demo_csv(&dir);
    let out = path(&dir.join("out"));
    let cases: [(&[&str], &str); 7] = [
        (&["--replicates", "7"], "must be even"),
        (
            &["--resample", "subsample", "--fraction", "1.5"],
            "strictly between 0 and 1",
        ),
        (
            &["--resample", "subsample", "--fraction", "0"],
            "strictly between 0 and 1",
        ),
        (&["--stability-threshold", "0.5"], "outside (0.5, 1]"),
        (
            &["--replicates", "10", "--replicate-range", "5..12"],
            "outside the plan",
        ),
        (
            &["--replicates", "10", "--replicate-range", "five"],
            "not a range",
        ),
        (&["--resample", "jackknife"], "possible values"),
    ];
    for (extra, expected) in cases {
        let mut args = vec![
            "analyze",
            data.as_str(),
            "--target",
            "crush_strength",
            "--out",
            &out,
        ];
        args.extend(extra);
        let run = forebear(&args);
        let stderr = String::from_utf8_lossy(&run.stderr);
        assert_eq!(run.status.code(), Some(2), "{extra:?}: {stderr}");
        assert!(stderr.contains(expected), "{extra:?}: {stderr}");
        assert!(!dir.join("out").exists(), "{extra:?} left output behind");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn subsample_and_bootstrap_plans_run_and_are_recorded() {
    let dir = scratch("plans");
    let data = demo_csv(&dir);
    for (kind, extra) in [
        ("subsample", vec!["--fraction", "0.4"]),
        ("bootstrap", vec![]),
    ] {
        let out = path(&dir.join(kind));
        let mut args = vec![
            "analyze",
            data.as_str(),
            "--target",
            "crush_strength",
            "--replicates",
            "6",
        ];
        args.extend(["--resample", kind, "--out", &out]);
        args.extend(extra);
        let run = forebear(&args);
        assert!(
            run.status.success(),
            "{kind}: {}",
            String::from_utf8_lossy(&run.stderr)
        );
        let r = result(Path::new(&out));
        assert_eq!(r["stability"]["plan"]["kind"], kind);
        assert_eq!(r["stability"]["replicates"], 6);
    }
    let r = result(&dir.join("subsample"));
    assert_eq!(r["stability"]["plan"]["fraction"], 0.4);
    std::fs::remove_dir_all(&dir).unwrap();
}

/// T_n(y, z) on the rows of one bootstrap replicate of independent columns.
fn bootstrap_t_n(exclude_copies: bool) -> f64 {
    let n = 2000;
    let key = Key::new("bootstrap-independent", 4).finish();
    let cols: Vec<Vec<f64>> = (0..2)
        .map(|c| {
            let mut rng = key.stream(c);
            (0..n).map(|_| standard_normal(&mut rng)).collect()
        })
        .collect();
    let table = Table::from_columns(vec!["y".into(), "z".into()], cols);
    let plan = ResamplePlan::new(PlanKind::Bootstrap, 2, None);
    let drawn = plan.rows(3, 0, n);
    let sub = table.select_rows(&drawn.rows);
    let mut data = SearchData::new(&sub, Scaling::Rank, 3, 1);
    if exclude_copies {
        data = data.with_origins(drawn.rows.iter().map(|&r| r as u32).collect());
    }
    let ranks = forebear::measure::TargetRanks::new(data.raw(0));
    let joint = data.neighbours(0, &[1]);
    forebear::measure::Ratio {
        numerator: ranks.numerator(None, &joint),
        denominator: ranks.denominator(None),
    }
    .value()
    .unwrap()
}

#[test]
fn bootstrap_replicate_of_independent_columns_shows_no_spurious_dependence() {
    // Independent y and z: T = 0 (Azadkia and Chatterjee 2021, Theorem 2.1). In a bootstrap sample
    // about 37 % of draws repeat a row (1 − 1/e, classical); if a copy could be its own neighbour the
    // coefficient would see perfect dependence on those rows.
    let honest = bootstrap_t_n(true);
    let naive = bootstrap_t_n(false);
    assert!(honest.abs() < 0.06, "with copies excluded: {honest}");
    assert!(naive > 0.2, "the failure the exclusion prevents: {naive}");
}
