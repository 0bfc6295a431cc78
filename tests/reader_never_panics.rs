//! Property: any bytes, read with any reader options, give either a table or an input error
//! (exit code 2) — never a panic or an internal error. A quick, in-suite companion of the fuzz
//! target in `fuzz/` (which runs for minutes by hand); bytes are drawn from an alphabet rich in
//! the characters that matter to the reader, so that most inputs get past the header.

use forebear::analysis::{prepare, Silent};
use forebear::data::{read_csv, Delimiter, MissingPolicy};
use forebear::settings::SettingsInput;
use proptest::prelude::*;

const ALPHABET: &[u8] = b"0123456789.,;|\t\n\r\"+-eE xyNA#/inf\xe9\xef\xbb\xbf\0";

/// Reader settings drawn from the bits of `flags`, for `target`, without resampling.
fn settings(flags: u8, target: &str) -> SettingsInput {
    SettingsInput {
        delimiter: Some(Delimiter::ALL[usize::from(flags & 3)]),
        decimal_comma: Some(flags & 4 != 0),
        missing: Some(if flags & 8 != 0 {
            MissingPolicy::Error
        } else {
            MissingPolicy::DropRows
        }),
        replicates: Some(0),
        ..SettingsInput::for_target(target)
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
        let scratch = crate::common::Scratch::new("never-panics");
        let path = scratch.path("any.csv");
        std::fs::write(&path, &bytes).unwrap();
        let options = settings(flags, "").check_reader().unwrap();
        match read_csv(&path, &options) {
            Err(e) => prop_assert_eq!(e.exit_code(), 2, "{}", e),
            Ok(raw) => {
                let checked = settings(flags, &raw.names[0]).check().unwrap();
                if let Err(e) = prepare(&path, &checked, &raw.names[0], &Silent) {
                    prop_assert_eq!(e.exit_code(), 2, "{}", e);
                }
            }
        }
    }
}
