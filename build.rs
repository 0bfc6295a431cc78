//! Embeds the build identity: the git commit when built from a checkout (with `-modified` when the
//! working tree differs from it), so that a dossier names the exact source that produced it. Also
//! compresses the committed reference fixtures that `forebear qualify` compiles in
//! (src/qualify/embedded.rs), so the binary carries them at about a third of their size.

use std::process::Command;

fn git(args: &[&str]) -> Option<String> {
    let out = Command::new("git").args(args).output().ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
}

/// The committed fixtures `forebear qualify` needs at run time, each written DEFLATE-compressed
/// (RFC 1951) to `OUT_DIR/<file name>.deflate`.
const FIXTURES: [&str; 4] = [
    "tests/reference/xi_scipy.json",
    "tests/reference/chi2_scipy.json",
    "tests/data/alarm_discrete_hr_lv.csv",
    "tests/data/asia_discrete_n5000_seed1.csv",
];

fn compress_fixtures() {
    let out = std::path::PathBuf::from(std::env::var_os("OUT_DIR").expect("cargo sets OUT_DIR"));
    for path in FIXTURES {
        let bytes = std::fs::read(path).unwrap_or_else(|e| panic!("cannot read {path}: {e}"));
        let name = std::path::Path::new(path).file_name().expect("a file name");
        let target = out.join(format!("{}.deflate", name.to_string_lossy()));
        std::fs::write(&target, miniz_oxide::deflate::compress_to_vec(&bytes, 10))
            .unwrap_or_else(|e| panic!("cannot write {}: {e}", target.display()));
        println!("cargo:rerun-if-changed={path}");
    }
}

fn main() {
    compress_fixtures();
    let commit = git(&["rev-parse", "HEAD"]).filter(|c| c.len() == 40);
    let identity = match commit {
        Some(commit) => {
            let modified = git(&["status", "--porcelain", "--untracked-files=no"])
                .is_some_and(|s| !s.is_empty());
            format!("{commit}{}", if modified { "-modified" } else { "" })
        }
        None => String::new(),
    };
    println!("cargo:rustc-env=FOREBEAR_GIT_COMMIT={identity}");
    if let Some(dir) = git(&["rev-parse", "--git-dir"]) {
        for file in ["HEAD", "index"] {
            println!("cargo:rerun-if-changed={dir}/{file}");
        }
    }
    // Sources too, so that "-modified" follows edits that are not yet staged.
    for path in ["build.rs", "src", "templates", "Cargo.toml"] {
        println!("cargo:rerun-if-changed={path}");
    }
}
