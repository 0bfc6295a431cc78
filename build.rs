//! Embeds the build identity: the git commit when built from a checkout (with `-modified` when the
//! working tree differs from it), so that a dossier names the exact source that produced it.

use std::process::Command;

fn git(args: &[&str]) -> Option<String> {
    let out = Command::new("git").args(args).output().ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).trim().to_string())
}

fn main() {
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
