//! Typed errors at the library boundary. Each message names the file, the
//! column and the problem in one line, so the CLI can print it as is.

use std::path::PathBuf;
use thiserror::Error;

/// Problems with the user's data or flags that stop a scan (exit status 2).
#[derive(Debug, Error)]
pub enum InputError {
    #[error("{path}: cannot read file: {reason}")]
    Unreadable { path: PathBuf, reason: String },
    #[error("{path}: file is empty (no header row)")]
    Empty { path: PathBuf },
    #[error("{path}: file has a header but no data rows")]
    HeaderOnly { path: PathBuf },
    #[error("{path}: column `{column}` not found{suggestion}")]
    UnknownColumn {
        path: PathBuf,
        column: String,
        suggestion: String,
    },
    #[error("{path}: column name `{column}` appears more than once in the header")]
    DuplicateColumn { path: PathBuf, column: String },
    #[error("{path}: line {line}: {reason}")]
    Malformed {
        path: PathBuf,
        line: usize,
        reason: String,
    },
    #[error("{path}: bytes that are not valid UTF-8 near line {line}; re-save the file as UTF-8")]
    NotUtf8 { path: PathBuf, line: usize },
    #[error("{path}: {reason}")]
    Format { path: PathBuf, reason: String },
    #[error("{path}: protected attribute `{column}` {reason}")]
    BadProtected {
        path: PathBuf,
        column: String,
        reason: String,
    },
    #[error("{path}: column `{column}`: {reason}")]
    BadColumn {
        path: PathBuf,
        column: String,
        reason: String,
    },
    #[error("{0}")]
    Usage(String),
}
