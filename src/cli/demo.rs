//! `forebear demo [--out DIR]`: writes the invented demo data and analyses its two targets.

use crate::analysis::Progress;
use crate::demo::{generate_demo_csv, write_demo_data, DEMO_TARGETS};
use crate::error::{Error, Result};
use crate::settings::{DocumentControl, SettingsInput};
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
    /// With --regenerate: draw the scenario with this seed instead of the demo's (other rows,
    /// same columns and mechanisms), e.g. to make the data files of a test plan.
    #[arg(long, requires = "regenerate", value_name = "N")]
    pub data_seed: Option<u64>,
    /// Replace the dossiers of an earlier demo run in the same folder.
    #[arg(long)]
    pub force: bool,
}

/// Runs `demo`.
pub fn run(args: DemoArgs, operator: &str, progress: &dyn Progress) -> Result<()> {
    if args.regenerate {
        match args.data_seed {
            Some(seed) => super::out::print(&crate::demo::generate_demo_csv_seeded(seed))?,
            None => super::out::print(&generate_demo_csv())?,
        }
        return Ok(());
    }
    let data = write_demo_data(&args.out.join("demo-data"))?;
    progress.say(&format!(
        "demo data: {} (an invented filter-disc firing line)",
        data.display()
    ));
    for target in DEMO_TARGETS {
        let document = demo_document(target);
        let settings = SettingsInput {
            document: Some(document.clone()),
            ..SettingsInput::for_target(target)
        }
        .check()
        .map_err(Error::Settings)?;
        let mut argv: Vec<String> = vec![
            "forebear".into(),
            "analyze".into(),
            data.display().to_string(),
            "--target".into(),
            target.into(),
            "--out".into(),
            args.out.join(target).display().to_string(),
        ];
        for key in crate::settings::document::DOCUMENT_KEYS {
            if let Some(text) = document.field(key) {
                argv.extend([key.flag(), text.clone()]);
            }
        }
        let out = args.out.join(target);
        let request = crate::dossier::DossierRequest {
            data: &data,
            settings: &settings,
            target,
            study_file: None,
            out: &out,
            force: args.force,
            operator,
        };
        let finding = crate::dossier::write_dossier(&request, argv, progress)?;
        super::analyze::print_written(&finding, &out)?;
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

/// The document control of a demo dossier: what an analyst would give for a controlled document
/// (invented, as the scenario is).
fn demo_document(target: &str) -> DocumentControl {
    let number = DEMO_TARGETS.iter().position(|t| *t == target).unwrap_or(0) + 1;
    DocumentControl {
        title: Some(format!("Demo study: direct drivers of {target}")),
        id: Some(format!("DEMO-FD-{number:03}")),
        purpose: Some(format!(
            "Show on invented filter-disc firing data which measured process variables directly \
             drive {target}, and how stable that finding is"
        )),
        version: Some("1.0".into()),
        prepared_by: Some("forebear demo (invented analyst)".into()),
    }
}
