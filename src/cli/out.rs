//! Standard output of the commands. Every write is checked, so a reader that went away
//! (`forebear demo --regenerate | head`) or a full disk is an error with a kind (`io::ErrorKind`),
//! never a panic and never a match on a message's text.

use crate::error::{Error, Result};
use std::io::Write;

/// Writes `text` to standard output as it is, and flushes it.
pub fn print(text: &str) -> Result<()> {
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())
        .and_then(|()| out.flush())
        .map_err(|e| stdout_error(&e))
}

/// Writes a line of text for a person to standard output, with control, bidirectional and
/// invisible characters shown as escapes ([`crate::text::for_terminal`]), so that a name or a path
/// never sends an escape sequence to the terminal.
pub fn line(text: &str) -> Result<()> {
    print(&format!("{}\n", crate::text::for_terminal(text)))
}

/// Writes a JSON document and a line break to standard output as it is: JSON escapes control
/// characters itself, and a program reading it needs the exact text.
pub fn json(text: &str) -> Result<()> {
    print(&format!("{text}\n"))
}

/// The error of a failed write to standard output: a closed pipe is the reader's choice, not a
/// failure; anything else (a full disk, a revoked terminal) is an I/O error the user can act on.
fn stdout_error(error: &std::io::Error) -> Error {
    if error.kind() == std::io::ErrorKind::BrokenPipe {
        Error::ClosedPipe
    } else {
        Error::input(format!("cannot write to standard output: {error}"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_closed_pipe_is_its_own_kind_and_other_failures_are_input_errors() {
        let closed = stdout_error(&std::io::Error::from(std::io::ErrorKind::BrokenPipe));
        assert!(matches!(closed, Error::ClosedPipe));
        assert_eq!(closed.exit_code(), 0);
        let full = stdout_error(&std::io::Error::from_raw_os_error(28)); // ENOSPC (POSIX)
        assert_eq!(full.exit_code(), 2);
        assert!(full
            .to_string()
            .starts_with("cannot write to standard output"));
    }
}
