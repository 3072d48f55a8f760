//! The error type shared by the library and the command line.
//!
//! Two kinds matter to a user: bad input (exit code 2, the message names what
//! and where) and an internal fault (exit code 1). I/O errors on output are
//! handled by the CLI (a closed pipe ends quietly).

use std::fmt;

#[derive(Debug)]
pub enum Error {
    /// The user's input is wrong; the message says what, where and how to fix it.
    Input(String),
    /// Something inside the program went wrong.
    Internal(String),
    /// Reading or writing failed.
    Io(std::io::Error),
}

impl Error {
    pub fn input(msg: impl Into<String>) -> Error {
        Error::Input(msg.into())
    }

    pub fn exit_code(&self) -> i32 {
        match self {
            Error::Input(_) => 2,
            Error::Internal(_) | Error::Io(_) => 1,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::Input(m) => f.write_str(m),
            Error::Internal(m) => write!(f, "internal error: {m}"),
            Error::Io(e) => write!(f, "{e}"),
        }
    }
}

impl std::error::Error for Error {}

impl From<std::io::Error> for Error {
    fn from(e: std::io::Error) -> Self {
        Error::Io(e)
    }
}

pub type Result<T> = std::result::Result<T, Error>;
