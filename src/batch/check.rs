//! `batch --check`: every problem of a plan in one round — the plan's own (settings, names) and,
//! for each study that passes them, a header-only read of its data file, which checks every
//! target, excluded and candidate column against the header.

use super::plan::{placed, read_plan, unusable_data, Plan, PlannedStudy, Problem};
use crate::data::DataReader;
use crate::settings::toml_table::Placed;
use crate::settings::Naming;
use crate::study::Study;
use std::path::Path;

impl Plan {
    /// Every problem of the plan at `path`, in the order of the text (nothing when it is ready to
    /// run), and the number of studies and study–target pairs it holds.
    pub fn check(path: &Path) -> (Vec<Problem>, usize, usize) {
        let text = match read_plan(path) {
            Ok(text) => text,
            Err(problems) => return (problems, 0, 0),
        };
        let dir = path.parent().unwrap_or(Path::new(""));
        let (studies, mut problems) = super::plan::parse(&text, dir);
        for study in &studies {
            problems.extend(header_problems(study));
        }
        let pairs = studies.iter().map(|s| s.targets.len()).sum();
        (placed(&text, problems), studies.len(), pairs)
    }
}

/// The problems of one study's columns against its data file's header (the rows are not read).
fn header_problems(study: &PlannedStudy) -> Vec<Placed> {
    let place = format!("[[study]] {}", crate::text::quoted(&study.name));
    let at_data = |message: String| Placed {
        span: Some(study.places.data.clone()),
        message: format!("{place}: {message}"),
    };
    if let Some(why) = unusable_data(&study.data_path) {
        return vec![at_data(format!(
            "the data file '{}' {why}",
            study.data_path.display()
        ))];
    }
    let reader = match DataReader::open(&study.data_path, study.settings.reader()) {
        Ok(reader) => reader,
        Err(e) => return vec![at_data(e.to_string())],
    };
    let mut problems = Vec::new();
    for target in &study.targets {
        match Study::new(&study.settings, target, reader.header()) {
            Ok(_) => {}
            Err(crate::error::Error::Settings(found)) => {
                for p in found {
                    let placed = Placed {
                        span: Some(study.places.of(p.key)),
                        message: format!("{place}: {}", p.render(Naming::Keys)),
                    };
                    // An excluded column missing from the header is one problem, not one per target.
                    if !problems.contains(&placed) {
                        problems.push(placed);
                    }
                }
            }
            Err(e) => problems.push(at_data(e.to_string())),
        }
    }
    problems
}
