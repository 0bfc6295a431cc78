//! `forebear demo [--out DIR]`: writes the invented demo data and analyses its two targets.

use crate::analysis::Progress;
use crate::demo::{generate_demo_csv, DEMO_CSV, DEMO_FILE, DEMO_TARGETS};
use crate::error::{Error, Result};
use crate::output::{fs_error, rename_file_noreplace, sync_dir, write_synced};
use crate::settings::SettingsInput;
use clap::Args;
use std::path::{Path, PathBuf};

/// Arguments of `demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "forebear-demo")]
    pub out: PathBuf,
    /// Re-create the demo CSV from its seeded generator and print it to stdout (maintainers).
    #[arg(long)]
    pub regenerate: bool,
    /// With --regenerate: draw the scenario with this seed instead of the demo's (other rows,
    /// same columns and mechanisms), e.g. to make the data files of a test plan.
    #[arg(long, requires = "regenerate", value_name = "N")]
    pub data_seed: Option<u64>,
    /// Replace the dossiers of an earlier demo run in the same folder.
    #[arg(long)]
    pub force: bool,
}

/// Runs `demo`.
pub fn run(args: DemoArgs, progress: &dyn Progress) -> Result<()> {
    if args.regenerate {
        match args.data_seed {
            Some(seed) => super::out::print(&crate::demo::generate_demo_csv_seeded(seed))?,
            None => super::out::print(&generate_demo_csv())?,
        }
        return Ok(());
    }
    let data_dir = args.out.join("demo-data");
    std::fs::create_dir_all(&data_dir).map_err(|e| fs_error("create the folder", &data_dir, &e))?;
    let data = data_dir.join(DEMO_FILE);
    write_demo_data(&data)?;
    progress.say(&format!(
        "demo data: {} (an invented filter-disc firing line)",
        data.display()
    ));
    for target in DEMO_TARGETS {
        let settings = SettingsInput::for_target(target)
            .check()
            .map_err(Error::Settings)?;
        let argv = vec![
            "forebear".into(),
            "analyze".into(),
            data.display().to_string(),
            "--target".into(),
            target.into(),
            "--out".into(),
            args.out.join(target).display().to_string(),
        ];
        let out = args.out.join(target);
        let request = super::analyze::Request {
            data: &data,
            settings: &settings,
            target,
            study_file: None,
            out: &out,
            force: args.force,
        };
        super::analyze::analyze_into(&request, argv, progress)?;
    }
    super::out::line(&format!(
        "demo output is in {}/ (one folder per target; open dossier.html)",
        args.out.display()
    ))?;
    super::out::line(&format!(
        "a reviewer checks a dossier with: forebear verify {} --data {}",
        args.out.join(DEMO_TARGETS[0]).display(),
        data.display()
    ))?;
    Ok(())
}

/// Writes the demo CSV to `path` unless it is already there. A different file of that name (the
/// user's, or edited) is never overwritten, even with `--force`. The file is written beside its
/// place and renamed without replacing, so it appears whole or not at all.
fn write_demo_data(path: &Path) -> Result<()> {
    let same = |path: &Path| std::fs::read(path).is_ok_and(|bytes| bytes == DEMO_CSV.as_bytes());
    let refuse = || {
        Err(Error::input(format!(
            "'{}' exists and is not the demo data; forebear does not overwrite it: move it away, \
             or choose another --out",
            path.display()
        )))
    };
    if std::fs::symlink_metadata(path).is_ok() {
        return if same(path) { Ok(()) } else { refuse() };
    }
    let staged = path.with_file_name(format!(".{DEMO_FILE}.partial-{}", std::process::id()));
    write_synced(&staged, DEMO_CSV.as_bytes()).map_err(|e| fs_error("write", &staged, &e))?;
    let placed = rename_file_noreplace(&staged, path);
    let _ = std::fs::remove_file(&staged);
    match placed {
        Ok(()) => {
            let folder = path.parent().unwrap_or(Path::new("."));
            sync_dir(folder).map_err(|e| fs_error("write in", folder, &e))
        }
        // Another demo run placed it first.
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && same(path) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => refuse(),
        Err(e) => Err(fs_error("write", path, &e)),
    }
}
