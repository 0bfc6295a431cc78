//! Property: any bytes, read with any reader options, give either a table or an input error
//! (exit code 2) — never a panic or an internal error. A quick, in-suite companion of the fuzz
//! target in `fuzz/` (which runs for minutes by hand); bytes are drawn from an alphabet rich in
//! the characters that matter to the reader, so that most inputs get past the header.

use forebear::analysis::{prepare, Silent};
use forebear::data::{read_csv, LoadOptions, MissingPolicy};
use forebear::study::StudyInput;
use proptest::prelude::*;

const ALPHABET: &[u8] = b"0123456789.,;|\t\n\r\"+-eE xyNA#/inf\xe9\xef\xbb\xbf\0";

fn options(flags: u8) -> LoadOptions {
    LoadOptions {
        delimiter: [b',', b';', b'\t', b'|'][usize::from(flags & 3)],
        decimal_comma: flags & 4 != 0,
        missing_policy: if flags & 8 != 0 {
            MissingPolicy::Error
        } else {
            MissingPolicy::DropRows
        },
        ..LoadOptions::default()
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn any_bytes_are_read_or_refused_as_bad_input(
        flags in any::<u8>(),
        picks in proptest::collection::vec(0..ALPHABET.len(), 0..400),
    ) {
        let bytes: Vec<u8> = picks.iter().map(|&i| ALPHABET[i]).collect();
        let dir = std::env::temp_dir().join(format!("forebear-never-panics-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("any.csv");
        std::fs::write(&path, &bytes).unwrap();
        let options = options(flags);
        match read_csv(&path, &options) {
            Err(e) => prop_assert_eq!(e.exit_code(), 2, "{}", e),
            Ok(raw) => {
                let mut input = StudyInput::for_target(&raw.names[0]);
                input.replicates = 0;
                if let Err(e) = prepare(&path, &input, &options, &Silent) {
                    prop_assert_eq!(e.exit_code(), 2, "{}", e);
                }
            }
        }
    }
}
