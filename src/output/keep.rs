//! A former output that a `--force` run replaces is kept, never deleted: it is renamed beside the
//! new one to `NAME.replaced-YYYYMMDDTHHMMSSZ`, the UTC time it was replaced (`…Z-2`, `…Z-3` when
//! that name is taken), so that what a reviewer may already hold stays on disk under a name that
//! says what it is and when it stopped being current.

use super::fsio::rename_noreplace;
use super::parent_of;
use std::io;
use std::path::{Path, PathBuf};

/// Most names tried for one second before giving up (a bound of our own).
const MAX_SAME_SECOND: u32 = 1000;

/// Renames the moved-aside former output `old` of the output folder `dir` to its dated name;
/// returns that name.
pub fn keep_former(old: &Path, dir: &Path) -> io::Result<PathBuf> {
    let stamp: String = crate::timefmt::now_rfc3339()
        .chars()
        .filter(|c| !matches!(c, '-' | ':'))
        .collect();
    let name = dir
        .file_name()
        .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
    for n in 1..=MAX_SAME_SECOND {
        let dated = match n {
            1 => format!("{name}.replaced-{stamp}"),
            n => format!("{name}.replaced-{stamp}-{n}"),
        };
        let to = parent_of(dir).join(dated);
        match rename_noreplace(old, &to) {
            Ok(()) => return Ok(to),
            Err(e)
                if matches!(
                    e.kind(),
                    io::ErrorKind::AlreadyExists | io::ErrorKind::DirectoryNotEmpty
                ) => {}
            Err(e) => return Err(e),
        }
    }
    Err(io::Error::new(
        io::ErrorKind::AlreadyExists,
        format!("{MAX_SAME_SECOND} dated names for this second are taken"),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_former_output_is_renamed_to_a_dated_name_and_a_taken_name_gets_a_number() {
        let dir = std::env::temp_dir().join(format!("forebear-keep-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let out = dir.join("results");
        let mut kept = Vec::new();
        for i in 0..2 {
            let old = dir.join(format!(".results.old-{i}"));
            std::fs::create_dir(&old).unwrap();
            std::fs::write(old.join("result.json"), format!("{i}")).unwrap();
            kept.push(keep_former(&old, &out).unwrap());
            assert!(!old.exists());
        }
        let name = kept[0].file_name().unwrap().to_string_lossy().into_owned();
        assert!(
            name.starts_with("results.replaced-20") && name.ends_with('Z'),
            "{name}"
        );
        assert_eq!(name.len(), "results.replaced-20261203T001425Z".len());
        assert_ne!(kept[0], kept[1]);
        for (i, path) in kept.iter().enumerate() {
            assert_eq!(
                std::fs::read_to_string(path.join("result.json")).unwrap(),
                format!("{i}")
            );
        }
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
