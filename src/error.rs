//! The crate's error type. Each variant decides the exit code the binary
//! returns: bad input or usage 2, not identified 3, anything else 1.

use std::path::PathBuf;

/// Everything that can stop an analysis.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A malformed graph file, with its place.
    #[error(transparent)]
    Graph(#[from] crate::graph::ParseError),
    /// Bad input or usage: the message names the file, line, column or flag.
    #[error("{0}")]
    Input(String),
    /// The effect is not identified by the criteria the tool knows.
    #[error("{0}")]
    NotIdentified(String),
    /// A numerical failure that makes a result meaningless.
    #[error("{0}")]
    Numerical(String),
    /// A file that could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
}

impl Error {
    /// The process exit code for this error (see the command-line contract).
    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Graph(_) | Error::Input(_) | Error::Io { .. } => 2,
            Error::NotIdentified(_) => 3,
            Error::Numerical(_) => 1,
        }
    }

    /// Shorthand for an input error.
    pub fn input(msg: impl Into<String>) -> Self {
        Error::Input(msg.into())
    }

    /// An I/O error on `path`.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            source,
        }
    }
}

/// Result with the crate's error.
pub type Result<T, E = Error> = std::result::Result<T, E>;
