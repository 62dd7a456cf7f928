//! The one error type of the CLI: a message for the user. The core's own errors print their
//! numbers compactly (1e300, not 301 digits), so they are passed through as they are.

use std::fmt;

/// An input, solver or usage error, already worded for the user.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CliError {
    message: String,
}

impl CliError {
    /// An error with this message.
    pub fn new(message: impl Into<String>) -> Self {
        Self { message: message.into() }
    }

    /// The message.
    pub fn message(&self) -> &str {
        &self.message
    }
}

impl fmt::Display for CliError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for CliError {}
