//! The error type shared by every command, and its mapping to exit codes.

use thiserror::Error;

/// Everything that can stop a command. Each message is one sentence for the user.
#[derive(Debug, Error)]
pub enum Error {
    /// Bad usage or bad input (exit code 2): the user can fix it.
    #[error("{0}")]
    Input(String),
    /// Settings that break a rule (exit code 2). Each problem carries the key at fault; shown here
    /// as the command line names them, re-rendered by study files and plans at their keys.
    #[error("{}", crate::settings::key::render_flags(.0))]
    Settings(Vec<crate::settings::key::SettingProblem>),
    /// Several problems of one file (a study file, a plan), each a line naming its place, and a
    /// closing summary (exit code 2). The summary is the message; the lines come before it.
    #[error("{summary}")]
    Problems {
        /// One line per problem.
        problems: Vec<String>,
        /// What they amount to.
        summary: String,
    },
    /// Verification found a difference or a batch found drift (exit code 1).
    #[error("{0}")]
    Mismatch(String),
    /// A failure that is not the user's fault (exit code 3).
    #[error("internal error: {0}")]
    Internal(String),
    /// The reader of standard output went away (a closed pipe): nothing is left to say, and it is
    /// not a failure (exit code 0, no message).
    #[error("standard output was closed by its reader")]
    ClosedPipe,
}

impl Error {
    /// Shorthand for an input error.
    pub fn input(message: impl Into<String>) -> Self {
        Error::Input(message.into())
    }

    /// Shorthand for an internal error.
    pub fn internal(message: impl Into<String>) -> Self {
        Error::Internal(message.into())
    }

    /// The process exit code of DESIGN.md's command-line contract.
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Mismatch(_) => 1,
            Error::Input(_) | Error::Settings(_) | Error::Problems { .. } => 2,
            Error::Internal(_) => 3,
            Error::ClosedPipe => 0,
        }
    }
}

/// Result alias used across the crate.
pub type Result<T> = std::result::Result<T, Error>;
