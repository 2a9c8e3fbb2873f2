//! Errors at the command line's boundary and their exit statuses.
//!
//! Owns: [`CliError`], the one error type the commands return, made from
//! each library error by its type (never by its message, so rewording a
//! message cannot change an exit status), and the exit status of each
//! kind: 2 a mistake in the input, 130 a run stopped by Ctrl-C or SIGTERM,
//! 0 an output pipe closed by its reader, 1 an internal failure.
//! May use: the library's error types.

use wearout::estimate::EstimateError;
use wearout::fit::FitError;
use wearout::frontier::FrontierError;
use wearout::recost::PoliciesError;
use wearout::report::ReportError;
use wearout::scenario::{LoadError, ScenarioError};
use wearout::shard::{MergeError, ShardError};

use super::interrupt;

/// Why a command did not finish.
#[derive(Debug)]
pub enum CliError {
    /// A mistake in what the user gave (a file, a field, an option), or a
    /// file that cannot be read or written: the message says what and
    /// where. Exit status 2.
    User(String),
    /// The run was stopped (Ctrl-C, SIGTERM). Exit status 130.
    Interrupted,
    /// The reader of the output went away (`wearout ... | head`): not a
    /// failure. Exit status 0, nothing printed.
    BrokenPipe,
    /// A failure that is not the user's (a bug). Exit status 1.
    Internal(String),
}

impl CliError {
    /// A user error with this message.
    pub fn user(message: impl Into<String>) -> Self {
        CliError::User(message.into())
    }

    /// The process's exit status for this error.
    pub fn exit_status(&self) -> u8 {
        match self {
            CliError::User(_) => 2,
            CliError::Interrupted => interrupt::EXIT_INTERRUPTED,
            CliError::BrokenPipe => 0,
            CliError::Internal(_) => 1,
        }
    }

    /// What to print on stderr, if anything.
    pub fn message(&self) -> Option<String> {
        match self {
            CliError::User(m) => Some(format!("error: {m}")),
            CliError::Interrupted => Some(interrupt::MESSAGE.to_string()),
            CliError::BrokenPipe => None,
            CliError::Internal(m) => Some(format!("internal error: {m}")),
        }
    }
}

/// Writing the output (stdout): a closed pipe is no failure.
impl From<std::io::Error> for CliError {
    fn from(e: std::io::Error) -> Self {
        if e.kind() == std::io::ErrorKind::BrokenPipe {
            CliError::BrokenPipe
        } else {
            CliError::User(format!("cannot write output: {e}"))
        }
    }
}

/// Serialising a result: the shapes are plain data, so a failure is a bug.
impl From<serde_json::Error> for CliError {
    fn from(e: serde_json::Error) -> Self {
        CliError::Internal(format!("cannot serialise the result: {e}"))
    }
}

impl From<LoadError> for CliError {
    fn from(e: LoadError) -> Self {
        CliError::User(e.to_string())
    }
}

impl From<ScenarioError> for CliError {
    fn from(e: ScenarioError) -> Self {
        CliError::User(e.to_string())
    }
}

impl From<PoliciesError> for CliError {
    fn from(e: PoliciesError) -> Self {
        CliError::User(e.to_string())
    }
}

impl From<EstimateError> for CliError {
    fn from(e: EstimateError) -> Self {
        CliError::User(e.to_string())
    }
}

impl From<FrontierError> for CliError {
    fn from(e: FrontierError) -> Self {
        match e {
            FrontierError::Interrupted => CliError::Interrupted,
            FrontierError::NoSearchSpace
            | FrontierError::TooLarge { .. }
            | FrontierError::NothingFits(_) => CliError::User(e.to_string()),
        }
    }
}

impl From<ShardError> for CliError {
    fn from(e: ShardError) -> Self {
        match e {
            ShardError::Interrupted => CliError::Interrupted,
            ShardError::BadSpec { .. }
            | ShardError::NotAShard { .. }
            | ShardError::Format { .. }
            | ShardError::Damaged { .. }
            | ShardError::Read { .. }
            | ShardError::Write(_) => CliError::User(e.to_string()),
        }
    }
}

impl From<MergeError> for CliError {
    fn from(e: MergeError) -> Self {
        match e {
            MergeError::Shard(e) => e.into(),
            e => CliError::User(e.to_string()),
        }
    }
}

impl From<ReportError> for CliError {
    fn from(e: ReportError) -> Self {
        match e {
            ReportError::Interrupted => CliError::Interrupted,
            ReportError::Write { .. } | ReportError::Occupied { .. } | ReportError::Empty => {
                CliError::User(e.to_string())
            }
            ReportError::Plot { .. }
            | ReportError::Csv(_)
            | ReportError::Json(_)
            | ReportError::Mismatch { .. } => CliError::Internal(e.to_string()),
        }
    }
}

impl From<FitError> for CliError {
    fn from(e: FitError) -> Self {
        match e {
            FitError::Plot { .. } => CliError::Internal(e.to_string()),
            e => CliError::User(e.to_string()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn each_kind_has_its_exit_status() {
        // Exit statuses: 2 for a mistake in the input and 130 = 128 +
        // SIGINT after an interruption (common practice of command-line
        // tools; shells report a process ended by Ctrl-C so).
        assert_eq!(CliError::user("x").exit_status(), 2);
        assert_eq!(CliError::Interrupted.exit_status(), 130);
        assert_eq!(CliError::BrokenPipe.exit_status(), 0);
        assert_eq!(CliError::Internal("x".into()).exit_status(), 1);
        assert_eq!(CliError::BrokenPipe.message(), None);
    }

    #[test]
    fn errors_are_told_apart_by_type_not_by_message() {
        let pipe = std::io::Error::new(std::io::ErrorKind::BrokenPipe, "interrupted");
        assert!(matches!(CliError::from(pipe), CliError::BrokenPipe));
        let other = std::io::Error::other("broken pipe");
        assert!(matches!(CliError::from(other), CliError::User(_)));
        assert!(matches!(
            CliError::from(ShardError::Interrupted),
            CliError::Interrupted
        ));
        assert!(matches!(
            CliError::from(ShardError::Write("interrupted".into())),
            CliError::User(_)
        ));
        assert!(matches!(
            CliError::from(MergeError::Shard(ShardError::Interrupted)),
            CliError::Interrupted
        ));
        assert!(matches!(
            CliError::from(FrontierError::Interrupted),
            CliError::Interrupted
        ));
        assert!(matches!(
            CliError::from(ReportError::Mismatch {
                policy: "F1".into(),
                trial: 3
            }),
            CliError::Internal(_)
        ));
        assert!(matches!(
            CliError::from(ReportError::Interrupted),
            CliError::Interrupted
        ));
    }
}
