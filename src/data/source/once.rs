//! Files whose bytes can be read only once: standard input, pipes, FIFOs and devices. Such a file
//! opened as data a second time in one process would give whatever is left (nothing, or a later
//! writer's bytes), and its fingerprint would describe bytes that were not the ones analysed; a
//! second open of a FIFO could also wait forever for a writer. So each is claimed when it is
//! opened, by device and inode, and a second open is refused with a sentence saying why.

use crate::error::{Error, Result};
use std::fs::Metadata;
use std::path::Path;

/// Refuses `path` (shown as `file`) before it is opened if it names a file that is not regular
/// and was already read by this process. Looks at the file without opening it (opening a FIFO
/// waits for a writer).
pub fn refuse_second_read(path: &Path, file: &str) -> Result<()> {
    match std::fs::metadata(path) {
        Ok(metadata) if imp::was_claimed(&metadata) => Err(second_read(file)),
        _ => Ok(()),
    }
}

/// Records that the file `metadata` describes is being read, if it is not a regular file;
/// refuses it if it was read before.
pub fn claim(metadata: &Metadata, file: &str) -> Result<()> {
    match imp::claim(metadata) {
        true => Ok(()),
        false => Err(second_read(file)),
    }
}

fn second_read(file: &str) -> Error {
    Error::input(format!(
        "data file '{file}' was already read by this command and is not a regular file (standard \
         input, a pipe, a FIFO or a device), so its bytes cannot be read again; save the data \
         to a file and give that file's path"
    ))
}

#[cfg(unix)]
mod imp {
    use std::collections::HashSet;
    use std::fs::Metadata;
    use std::os::unix::fs::MetadataExt;
    use std::sync::Mutex;

    /// (device, inode) of every non-regular file this process has opened as data.
    static CLAIMED: Mutex<Option<HashSet<(u64, u64)>>> = Mutex::new(None);

    fn key(metadata: &Metadata) -> Option<(u64, u64)> {
        (!metadata.is_file()).then(|| (metadata.dev(), metadata.ino()))
    }

    pub fn was_claimed(metadata: &Metadata) -> bool {
        let Some(key) = key(metadata) else {
            return false;
        };
        let claimed = CLAIMED
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        claimed.as_ref().is_some_and(|set| set.contains(&key))
    }

    pub fn claim(metadata: &Metadata) -> bool {
        let Some(key) = key(metadata) else {
            return true;
        };
        let mut claimed = CLAIMED
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner());
        claimed.get_or_insert_with(HashSet::new).insert(key)
    }
}

#[cfg(not(unix))]
mod imp {
    use std::fs::Metadata;

    pub fn was_claimed(_metadata: &Metadata) -> bool {
        false
    }

    pub fn claim(_metadata: &Metadata) -> bool {
        true
    }
}

#[cfg(all(test, unix))]
mod tests {
    use super::*;

    #[test]
    fn a_pipe_is_claimed_once_and_a_regular_file_any_number_of_times() {
        let (reader, _writer) = std::io::pipe().unwrap();
        let pipe = std::fs::File::from(std::os::fd::OwnedFd::from(reader));
        let metadata = pipe.metadata().unwrap();
        assert!(claim(&metadata, "p").is_ok());
        let error = claim(&metadata, "p").unwrap_err().to_string();
        assert!(error.contains("already read"), "{error}");
        let regular = std::fs::metadata(file!()).or_else(|_| std::fs::metadata("Cargo.toml"));
        let regular = regular.unwrap();
        assert!(claim(&regular, "r").is_ok());
        assert!(claim(&regular, "r").is_ok());
    }
}
