//! Errors of the comparison: each names the file (or option) and what was expected.

use std::path::PathBuf;

/// Everything that can stop a comparison.
#[derive(Debug, thiserror::Error)]
pub enum ComparisonError {
    /// An option that does not say what the comparison needs.
    #[error("{option}: {message}")]
    Option {
        /// The option as users write it (e.g. `--window`).
        option: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// Reading an indicator file (or a region mask) failed.
    #[error(transparent)]
    Read(#[from] acidscape_gridio::GridError),
    /// A file that cannot be used as given.
    #[error("{file}: {message}")]
    File {
        /// The file.
        file: PathBuf,
        /// What is wrong and what was expected.
        message: String,
    },
    /// Two runs that cannot be compared (grid, depths, units).
    #[error("{first} and {second} cannot be compared: {message}")]
    Mismatch {
        /// The first run's file.
        first: PathBuf,
        /// The other run's file.
        second: PathBuf,
        /// What differs.
        message: String,
    },
    /// Writing an output failed.
    #[error("output {path}: {message}")]
    Output {
        /// The output's final path.
        path: PathBuf,
        /// What failed.
        message: String,
    },
    /// A step that every process of a shared comparison took failed on one of them (see
    /// [`crate::share::agree`]): every process has this error, with the same message.
    #[error("{message}")]
    Together {
        /// The failing process's message, and which process it was.
        message: String,
    },
}

impl ComparisonError {
    /// An error about an option.
    pub(crate) fn option(option: &str, message: impl Into<String>) -> Self {
        ComparisonError::Option {
            option: option.to_string(),
            message: message.into(),
        }
    }

    /// An error about a file.
    pub(crate) fn file(file: &std::path::Path, message: impl Into<String>) -> Self {
        ComparisonError::File {
            file: file.to_path_buf(),
            message: message.into(),
        }
    }
}

/// Shorthand for results of this crate.
pub type Result<T> = std::result::Result<T, ComparisonError>;
