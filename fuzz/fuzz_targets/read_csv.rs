//! Fuzz target: arbitrary bytes as a data file, read with reader options taken from the first
//! byte, then validated for a study of the first column; small tables are also searched. Any
//! panic is a bug: bad input must become an `Error`, never a crash.
#![no_main]

use forebear::data::{LoadOptions, MissingPolicy};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|bytes: &[u8]| {
    let Some((&flags, content)) = bytes.split_first() else {
        return;
    };
    let options = LoadOptions {
        delimiter: [b',', b';', b'\t', b'|'][usize::from(flags & 3)],
        decimal_comma: flags & 4 != 0,
        missing_policy: if flags & 8 != 0 {
            MissingPolicy::Error
        } else {
            MissingPolicy::DropRows
        },
        ..LoadOptions::default()
    };
    forebear_fuzz_support::exercise(content, &options, flags & 16 != 0);
});

mod forebear_fuzz_support {
    use forebear::analysis::{prepare, Silent};
    use forebear::data::{read_csv, LoadOptions};
    use forebear::study::StudyInput;
    use std::path::PathBuf;

    /// One file per fuzzing process, rewritten for every input.
    fn path() -> PathBuf {
        let dir =
            std::env::var_os("FOREBEAR_FUZZ_DIR").map_or_else(std::env::temp_dir, PathBuf::from);
        dir.join(format!("forebear-fuzz-{}.csv", std::process::id()))
    }

    pub fn exercise(content: &[u8], options: &LoadOptions, resample: bool) {
        let path = path();
        std::fs::write(&path, content).expect("the scratch file can be written");
        let Ok(raw) = read_csv(&path, options) else {
            return;
        };
        let Some(target) = raw.names.first().cloned() else {
            return;
        };
        let small = raw.n_rows() <= 40 && raw.names.len() <= 5;
        let mut input = StudyInput::for_target(&target);
        input.replicates = if resample && small { 4 } else { 0 };
        let Ok(prepared) = prepare(&path, &input, options, &Silent) else {
            return;
        };
        if small {
            let full = prepared.full_search(&Silent);
            let records = prepared.replicates(0..prepared.study.resampling.count, &full, &Silent);
            let finding = prepared.finding(full, Vec::new());
            let _ = forebear::analysis::attach_stability(finding, &records);
        }
    }
}
