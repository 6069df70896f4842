//! Errors of the simulator and the exit codes scripts see.
//!
//! | code | meaning |
//! |---|---|
//! | 0 | success |
//! | 1 | usage or configuration error (bad option, bad config key or value) |
//! | 2 | data error (a trace or estimate file has a bad header, row, cell or time stamp) |
//! | 3 | an accuracy threshold or a coverage requirement was not met |
//! | 4 | input/output error (file missing, cannot write) |
//! | 5 | internal error (plotting failed, a bug) |

use std::fmt;
use std::path::PathBuf;

use crate::config::ConfigErrors;

/// Exit code: success.
pub const EXIT_OK: i32 = 0;
/// Exit code: usage or configuration error.
pub const EXIT_USAGE: i32 = 1;
/// Exit code: data error in a trace or estimate file.
pub const EXIT_DATA: i32 = 2;
/// Exit code: an accuracy threshold or coverage requirement failed.
pub const EXIT_THRESHOLD: i32 = 3;
/// Exit code: input/output error.
pub const EXIT_IO: i32 = 4;
/// Exit code: internal error.
pub const EXIT_INTERNAL: i32 = 5;

/// A located problem in a CSV file: which file, line and column (1-based), and why.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    /// File the row came from (`-` for standard input).
    pub file: String,
    /// 1-based line number in the file, when known.
    pub line: Option<u64>,
    /// 1-based column number, when the problem is in one cell.
    pub column: Option<usize>,
    /// Header name of that column, when known.
    pub header: Option<String>,
    /// What is wrong.
    pub message: String,
}

impl fmt::Display for DataError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.file)?;
        if let Some(line) = self.line {
            write!(f, ":{line}")?;
            if let Some(col) = self.column {
                write!(f, ":{col}")?;
            }
        }
        write!(f, ": ")?;
        if let Some(line) = self.line {
            write!(f, "line {line}")?;
            if let Some(col) = self.column {
                write!(f, ", column {col}")?;
                if let Some(h) = &self.header {
                    write!(f, " ({h})")?;
                }
            }
            write!(f, ": ")?;
        }
        write!(f, "{}", self.message)
    }
}

/// Every way a subcommand can fail; [`SimError::exit_code`] maps each to the documented code.
#[derive(Debug, thiserror::Error)]
pub enum SimError {
    /// Bad command-line use.
    #[error("usage: {0}")]
    Usage(String),
    /// The configuration file is invalid (each issue located by key, line and column).
    #[error("{0}")]
    Config(#[from] ConfigErrors),
    /// A trace or estimate file is invalid.
    #[error("{0}")]
    Data(Box<DataError>),
    /// An accuracy threshold or a coverage requirement was not met.
    #[error("threshold failed: {0}")]
    Threshold(String),
    /// A file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// The operating-system error.
        source: std::io::Error,
    },
    /// Something that should not happen (plotting backend failure, a bug).
    #[error("internal error: {0}")]
    Internal(String),
}

impl SimError {
    /// The process exit code for this error (see the module table).
    pub fn exit_code(&self) -> i32 {
        match self {
            Self::Usage(_) | Self::Config(_) => EXIT_USAGE,
            Self::Data(_) => EXIT_DATA,
            Self::Threshold(_) => EXIT_THRESHOLD,
            Self::Io { .. } => EXIT_IO,
            Self::Internal(_) => EXIT_INTERNAL,
        }
    }

    /// Wrap an I/O error with the path it concerns.
    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Self::Io {
            path: path.into(),
            source,
        }
    }

    /// The machine-readable kind, as written in `--json` error output.
    pub fn kind(&self) -> &'static str {
        match self {
            Self::Usage(_) => "usage",
            Self::Config(_) => "config",
            Self::Data(_) => "data",
            Self::Threshold(_) => "threshold",
            Self::Io { .. } => "io",
            Self::Internal(_) => "internal",
        }
    }
}

impl From<DataError> for SimError {
    fn from(e: DataError) -> Self {
        Self::Data(Box::new(e))
    }
}
