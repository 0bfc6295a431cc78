//! `forebear demo [--out DIR]`: writes the invented demo data and analyses its two targets.

use crate::analysis::Progress;
use crate::data::LoadOptions;
use crate::demo::{generate_demo_csv, DEMO_CSV, DEMO_FILE, DEMO_TARGETS};
use crate::error::{Error, Result};
use crate::study::StudyInput;
use clap::Args;
use std::path::PathBuf;

/// Arguments of `demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Output folder.
    #[arg(long, default_value = "forebear-demo")]
    pub out: PathBuf,
    /// Re-create the demo CSV from its seeded generator and print it to stdout (maintainers).
    #[arg(long)]
    pub regenerate: bool,
    /// Replace the dossiers of an earlier demo run in the same folder.
    #[arg(long)]
    pub force: bool,
}

/// Runs `demo`.
pub fn run(args: DemoArgs, progress: &dyn Progress) -> Result<()> {
    if args.regenerate {
        print!("{}", generate_demo_csv());
        return Ok(());
    }
    let data_dir = args.out.join("demo-data");
    std::fs::create_dir_all(&data_dir)
        .map_err(|e| Error::input(format!("cannot create '{}': {e}", data_dir.display())))?;
    let data = data_dir.join(DEMO_FILE);
    std::fs::write(&data, DEMO_CSV)
        .map_err(|e| Error::input(format!("cannot write '{}': {e}", data.display())))?;
    progress.say(&format!(
        "demo data: {} (an invented filter-disc firing line)",
        data.display()
    ));
    for target in DEMO_TARGETS {
        let input = StudyInput::for_target(target);
        let argv = vec![
            "forebear".into(),
            "analyze".into(),
            data.display().to_string(),
            "--target".into(),
            target.into(),
            "--out".into(),
            args.out.join(target).display().to_string(),
        ];
        super::analyze::analyze_into(
            &data,
            &input,
            &LoadOptions::default(),
            &args.out.join(target),
            args.force,
            argv,
            progress,
        )?;
    }
    println!(
        "demo output is in {}/ (one folder per target; open dossier.html)",
        args.out.display()
    );
    println!(
        "a reviewer checks a dossier with: forebear verify {} --data {}",
        args.out.join(DEMO_TARGETS[0]).display(),
        data.display()
    );
    Ok(())
}
