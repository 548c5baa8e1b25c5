//! Typed errors. Every user-facing error carries one sentence that names the file, the row
//! or key, and what was expected; the binary prints it and exits with status 2.

use std::fmt;

#[derive(Debug)]
pub enum Error {
    /// Bad user input (a spec, a table, an option): the message says where and what was expected.
    Input(String),
    /// The file system or a table format failed underneath us.
    Io(String),
    /// The run was interrupted (Ctrl-C); finished work is kept.
    Interrupted,
}

pub type Result<T> = std::result::Result<T, Error>;

impl Error {
    pub fn input(msg: impl Into<String>) -> Self {
        Error::Input(msg.into())
    }
    pub fn io(msg: impl Into<String>) -> Self {
        Error::Io(msg.into())
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(m) | Error::Io(m) => write!(f, "{m}"),
            Error::Interrupted => write!(f, "interrupted; finished chunks were kept (rerun with --resume)"),
        }
    }
}

impl std::error::Error for Error {}

/// Attach a path to an I/O error.
pub fn io_at(path: &std::path::Path, e: impl fmt::Display) -> Error {
    Error::Io(format!("{}: {e}", path.display()))
}
