//! Helpers shared by the integration test modules (each uses a part of them): scratch folders
//! unique within the one test process, running the real binary, and the assertions on its output.
#![allow(dead_code)]

use std::ffi::OsStr;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// The forebear binary as a command, not started yet.
pub fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_forebear"))
}

/// A fresh, empty folder `forebear-NAME-PID-N` under the system temp dir. Every integration test
/// runs in one process, so N counts the folders made in it: two tests (of any module) that pass the
/// same name still get different folders. Left in place; [`Scratch`] is one removed when dropped.
pub fn fresh_dir(name: &str) -> PathBuf {
    static COUNTER: AtomicUsize = AtomicUsize::new(0);
    let n = COUNTER.fetch_add(1, Ordering::Relaxed);
    let dir = std::env::temp_dir().join(format!("forebear-{name}-{}-{n}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// A fresh folder under the system temp dir ([`fresh_dir`]), removed when dropped.
pub struct Scratch {
    pub dir: PathBuf,
}

impl Scratch {
    pub fn new(test: &str) -> Scratch {
        Scratch {
            dir: fresh_dir(test),
        }
    }

    pub fn write(&self, name: &str, bytes: impl AsRef<[u8]>) -> PathBuf {
        let path = self.dir.join(name);
        std::fs::write(&path, bytes).unwrap();
        path
    }

    pub fn path(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    /// Names in the folder, sorted (hidden staging folders included).
    pub fn entries(&self) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(&self.dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }
}

/// A scratch folder reads as its path (`dir.join(..)`, `&dir` where a `&Path` is wanted).
impl std::ops::Deref for Scratch {
    type Target = Path;
    fn deref(&self) -> &Path {
        &self.dir
    }
}

impl AsRef<Path> for Scratch {
    fn as_ref(&self) -> &Path {
        &self.dir
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// Runs the forebear binary with `args`.
pub fn run<I, S>(args: I) -> Output
where
    I: IntoIterator<Item = S>,
    S: AsRef<OsStr>,
{
    bin().args(args).output().expect("the binary runs")
}

/// Runs the forebear binary with `args` in the folder `dir`.
pub fn run_in<I, S>(dir: &Path, args: I) -> Output
where
    I: IntoIterator<Item = S>,
    S: AsRef<OsStr>,
{
    bin()
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the binary runs")
}

/// `forebear analyze DATA --target TARGET --out SCRATCH/out --replicates 0 EXTRA...` (resampling
/// only when `extra` asks for it).
pub fn analyze(scratch: &Scratch, data: &Path, target: &str, extra: &[&str]) -> Output {
    let out = scratch.path("out");
    let mut args: Vec<&OsStr> = vec![OsStr::new("analyze"), data.as_os_str()];
    args.extend([
        OsStr::new("--target"),
        OsStr::new(target),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    if !extra.contains(&"--replicates") {
        args.extend([OsStr::new("--replicates"), OsStr::new("0")]);
    }
    args.extend(extra.iter().map(OsStr::new));
    run(args)
}

/// `forebear analyze DATA --config CONFIG EXTRA... --out OUT`.
pub fn analyze_with_config(data: &Path, config: &Path, extra: &[&str], out: &Path) -> Output {
    let mut args: Vec<&OsStr> = vec![
        OsStr::new("analyze"),
        data.as_os_str(),
        OsStr::new("--config"),
        config.as_os_str(),
    ];
    args.extend(extra.iter().map(OsStr::new));
    args.extend([OsStr::new("--out"), out.as_os_str()]);
    run(args)
}

/// `forebear --quiet verify OUT --data DATA EXTRA...`.
pub fn verify(out: &Path, data: &Path, extra: &[&str]) -> Output {
    bin()
        .args(["--quiet", "verify"])
        .arg(out)
        .arg("--data")
        .arg(data)
        .args(extra)
        .output()
        .unwrap()
}

pub fn stderr_of(output: &Output) -> String {
    String::from_utf8(output.stderr.clone()).expect("stderr is UTF-8")
}

/// Stderr as text, any byte that is not UTF-8 replaced.
pub fn lossy_stderr(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

/// Stdout as text, any byte that is not UTF-8 replaced.
pub fn lossy_stdout(output: &Output) -> String {
    String::from_utf8_lossy(&output.stdout).into_owned()
}

/// The exit code of a process that ended by itself (not killed by a signal).
pub fn exit_code(output: &Output) -> i32 {
    output.status.code().expect("not killed by a signal")
}

/// The demo data (`forebear::demo::DEMO_CSV`) written to `dir/filter_discs.csv`; returns its path.
pub fn write_demo_csv(dir: &Path) -> PathBuf {
    let path = dir.join("filter_discs.csv");
    std::fs::write(&path, forebear::demo::DEMO_CSV).unwrap();
    path
}

/// Asserts the contract for bad input: exit 2, one line starting with "forebear: error:", every
/// `needle` present, no panic, nothing on stdout, and nothing in the scratch folder but `inputs`.
pub fn assert_input_error(
    output: &Output,
    scratch: &Scratch,
    inputs: &[&str],
    needles: &[&str],
) -> String {
    let stderr = stderr_of(output);
    assert_eq!(
        output.status.code(),
        Some(2),
        "exit code 2 expected; stderr: {stderr}"
    );
    assert!(!stderr.contains("panicked"), "no panic: {stderr}");
    let lines: Vec<&str> = stderr.lines().collect();
    assert_eq!(lines.len(), 1, "one line on stderr: {stderr:?}");
    let line = lines[0];
    assert!(line.starts_with("forebear: error: "), "prefix: {line}");
    for needle in needles {
        assert!(
            line.contains(needle),
            "stderr should mention {needle:?}: {line}"
        );
    }
    assert!(
        output.stdout.is_empty(),
        "nothing on stdout: {:?}",
        String::from_utf8_lossy(&output.stdout)
    );
    let mut expected: Vec<String> = inputs.iter().map(|s| s.to_string()).collect();
    expected.sort();
    assert_eq!(
        scratch.entries(),
        expected,
        "no output or staging folder left behind"
    );
    line.to_string()
}

/// Asserts exit code 2 with every `needle` on stderr; returns stderr.
pub fn assert_refused(output: &Output, needles: &[&str]) -> String {
    let stderr = stderr_of(output);
    assert_eq!(
        output.status.code(),
        Some(2),
        "exit code 2 expected; stderr: {stderr}"
    );
    for needle in needles {
        assert!(
            stderr.contains(needle),
            "stderr should mention {needle:?}: {stderr}"
        );
    }
    stderr
}

pub fn assert_success(output: &Output) {
    assert_eq!(
        output.status.code(),
        Some(0),
        "stderr: {}",
        stderr_of(output)
    );
}

pub fn result_json(dir: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(dir.join("result.json")).expect("result.json exists");
    serde_json::from_str(&text).expect("result.json parses")
}

/// An invented table of `rows` rows as columns x1, x2, y, z: y depends on x1 and x2, z is
/// unrelated. Deterministic (xorshift, Marsaglia 2003).
pub fn table(rows: usize) -> Vec<[f64; 4]> {
    let mut next = uniform_stream(0x2545_f491_4f6c_dd1d);
    (0..rows)
        .map(|_| {
            let (x1, x2, z, e) = (next(), next(), next(), next());
            [x1, x2, x1 + x2 * x2 + 0.1 * e, z]
        })
        .collect()
}

/// `rows` as text with `delimiter` between values and `point` as decimal separator.
pub fn delimited(rows: &[[f64; 4]], delimiter: &str, point: &str) -> String {
    let mut text = ["x1", "x2", "y", "z"].join(delimiter) + "\n";
    for r in rows {
        let cells: Vec<String> = r
            .iter()
            .map(|v| format!("{v:.4}").replace('.', point))
            .collect();
        text.push_str(&cells.join(delimiter));
        text.push('\n');
    }
    text
}

/// A deterministic stream of uniform numbers in [0, 1) from `seed` (xorshift, Marsaglia 2003), for
/// invented test data.
pub fn uniform_stream(seed: u64) -> impl FnMut() -> f64 {
    let mut state = seed;
    move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// SHA-256 of `bytes`, lower-case hex.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest;
    sha2::Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Re-seals a dossier's `manifest.json` as a careful forger would after editing the dossier:
/// `edit` may change the manifest (drop a file from its list, change a digest); then every hash
/// the manifest holds is recomputed: each listed file that exists from its bytes, the settings
/// from their canonical JSON, and the seal as src/manifest.rs computes it (SHA-256 of the
/// canonical JSON, keys sorted and no whitespace, of the manifest without its seal). The
/// manifest keeps its layout.
pub fn reseal(dossier: &Path, edit: impl FnOnce(&mut forebear::manifest::Manifest)) {
    let path = dossier.join("manifest.json");
    let mut manifest: forebear::manifest::Manifest =
        serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
    edit(&mut manifest);
    for (name, hash) in manifest.files.iter_mut() {
        if let Ok(bytes) = std::fs::read(dossier.join(name)) {
            *hash = sha256_hex(&bytes);
        }
    }
    let settings = serde_json::to_string(&manifest.settings.canonical).unwrap();
    manifest.settings.sha256 = sha256_hex(settings.as_bytes());
    let mut tree = serde_json::to_value(&manifest).unwrap();
    tree.as_object_mut().unwrap().remove("seal");
    manifest.seal = sha256_hex(serde_json::to_string(&tree).unwrap().as_bytes());
    std::fs::write(&path, manifest.to_text()).unwrap();
}

/// Replaces every `from` by `to` in the dossier file `name` (which must hold `from`), then
/// re-seals the manifest with every hash recomputed.
pub fn forge_text(dossier: &Path, name: &str, from: &str, to: &str) {
    forge_texts(dossier, &[(name, from, to)]);
}

/// Several edits of [`forge_text`], the manifest re-sealed once after all of them.
pub fn forge_texts(dossier: &Path, edits: &[(&str, &str, &str)]) {
    for (name, from, to) in edits {
        let path = dossier.join(name);
        let text = std::fs::read_to_string(&path).unwrap();
        assert!(text.contains(from), "{name} holds no {from:?}");
        std::fs::write(&path, text.replace(from, to)).unwrap();
    }
    reseal(dossier, |_| {});
}

/// The binary's test hook `FOREBEAR_TEST_HOLD` (src/output/fsio.rs): a process started with
/// [`Hold::apply`] creates the hold file when it reaches the named point and waits there until the
/// test removes it, so that a test acts at an exact moment instead of guessing a delay.
pub struct Hold {
    pub file: PathBuf,
}

impl Hold {
    /// A hold whose file is `dir/name` (`dir` must exist; the file must not).
    pub fn new(dir: &Path, name: &str) -> Hold {
        Hold {
            file: dir.join(name),
        }
    }

    /// Makes `command` stop at `point` (`dossier:before-swap`, `batch:between-renames`, ...).
    pub fn apply<'c>(&self, command: &'c mut Command, point: &str) -> &'c mut Command {
        command
            .env("FOREBEAR_TEST_HOLD", point)
            .env("FOREBEAR_TEST_HOLD_FILE", &self.file)
    }

    /// Waits (at most five minutes) until `child` has reached the point; fails if it ends first.
    pub fn wait(&self, child: &mut Child) {
        let start = Instant::now();
        while !self.file.exists() {
            if let Some(status) = child.try_wait().unwrap() {
                let mut stderr = String::new();
                if let Some(mut pipe) = child.stderr.take() {
                    let _ = pipe.read_to_string(&mut stderr);
                }
                panic!("the process ended ({status}) before the hold point; stderr: {stderr}");
            }
            assert!(
                start.elapsed() < Duration::from_secs(300),
                "the process never reached the hold point"
            );
            std::thread::sleep(Duration::from_millis(20));
        }
    }

    /// Lets the held process go on.
    pub fn release(&self) {
        std::fs::remove_file(&self.file).unwrap();
    }

    /// Waits until `child` has reached the point, kills it there with SIGKILL (nothing can run in
    /// the process after it), and returns its process id.
    pub fn kill_there(&self, child: &mut Child) -> u32 {
        self.wait(child);
        let pid = child.id();
        child.kill().unwrap();
        child.wait().unwrap();
        self.release();
        pid
    }
}

/// Starts the forebear binary with `args` in `dir`, stdout and stderr captured.
pub fn spawn_in<I, S>(dir: &Path, args: I, hold: Option<(&Hold, &str)>) -> Child
where
    I: IntoIterator<Item = S>,
    S: AsRef<OsStr>,
{
    let mut command = bin();
    command
        .current_dir(dir)
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    if let Some((hold, point)) = hold {
        hold.apply(&mut command, point);
    }
    command.spawn().expect("the binary starts")
}

/// Waits for `child` at most `limit` (polling), killing it and failing with its stderr after that.
pub fn finish_within(mut child: Child, limit: Duration) -> Output {
    let deadline = Instant::now() + limit;
    while child.try_wait().unwrap().is_none() {
        if Instant::now() > deadline {
            let _ = child.kill();
            let output = child.wait_with_output().unwrap();
            panic!(
                "forebear did not finish within {limit:?}: {}",
                String::from_utf8_lossy(&output.stderr)
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    child.wait_with_output().unwrap()
}

/// Sends `signal` (a name such as `HUP`) to `child` with kill(1).
pub fn send_signal(child: &Child, signal: &str) {
    let status = Command::new("kill")
        .args([format!("-{signal}"), child.id().to_string()])
        .status()
        .unwrap();
    assert!(status.success(), "kill -{signal}");
}

/// Names beside the output folder `out` that start with `.NAME.`: staging folders, moved-aside
/// former outputs and the lock file, sorted.
pub fn beside(out: &Path) -> Vec<String> {
    let prefix = format!(".{}.", out.file_name().unwrap().to_string_lossy());
    let mut names: Vec<String> = std::fs::read_dir(out.parent().unwrap())
        .unwrap()
        .flatten()
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.starts_with(&prefix))
        .collect();
    names.sort();
    names
}

/// A user's file at `path` (its folder is created): what forebear must never delete.
pub fn place_user_file(path: &Path) {
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(path, "the user's notes").unwrap();
}

/// Asserts that the user's file at `path` is still there, unchanged.
pub fn assert_user_file(path: &Path) {
    let text = std::fs::read_to_string(path).expect("the user's file is still there");
    assert_eq!(text, "the user's notes", "the user's file is unchanged");
}

/// A fresh folder with `data/line_a.csv` (demo seed 101) and `plan.toml`: one study, target
/// crush_strength, `replicates` replicates.
pub fn one_study_plan(name: &str, replicates: u32) -> PathBuf {
    let dir = fresh_dir(name);
    std::fs::create_dir_all(dir.join("data")).unwrap();
    std::fs::write(
        dir.join("data/line_a.csv"),
        forebear::demo::generate_demo_csv_seeded(101),
    )
    .unwrap();
    std::fs::write(
        dir.join("plan.toml"),
        format!(
            "[defaults]\nseed = 11\nreplicates = {replicates}\n\n[[study]]\nname = \"line-a\"\n\
             data = \"data/line_a.csv\"\ntargets = [\"crush_strength\"]\n"
        ),
    )
    .unwrap();
    dir
}

/// Runs the built-in reference cases whose ids start with `prefix` (the same cases `forebear
/// qualify` runs, so a test and the qualification record cannot disagree) and fails with every
/// measured quantity of each case that did not pass. Returns how many cases ran.
pub fn assert_reference_cases_pass(prefix: &str) -> usize {
    let cases: Vec<forebear::qualify::Case> = forebear::qualify::catalogue()
        .into_iter()
        .filter(|c| c.id.starts_with(prefix))
        .collect();
    assert!(
        !cases.is_empty(),
        "no reference case starts with '{prefix}'"
    );
    let failed: Vec<String> = cases
        .iter()
        .map(forebear::qualify::run_case)
        .filter(|r| !r.passed)
        .map(|r| {
            let measured: Vec<String> = r
                .measured
                .iter()
                .map(|m| {
                    format!(
                        "{}: expected {}, observed {}, tolerance {}",
                        m.quantity,
                        m.comparison.expected_text(),
                        m.comparison.observed_text(),
                        m.comparison.tolerance_text()
                    )
                })
                .collect();
            format!("{} ({}): {}", r.id, r.source, measured.join("; "))
        })
        .collect();
    assert!(
        failed.is_empty(),
        "failed reference cases:\n{}",
        failed.join("\n")
    );
    cases.len()
}
