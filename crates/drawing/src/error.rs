//! Errors of the draw job: each names the file (or option), the variable and what was expected.

use std::path::PathBuf;

/// Everything that can stop a figure.
#[derive(Debug, thiserror::Error)]
pub enum DrawError {
    /// An option that does not say what the figure needs.
    #[error("{option}: {message}")]
    Option {
        /// The option as users write it (e.g. `--range`).
        option: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// A variable of a file that cannot be drawn as asked.
    #[error("{}, variable '{variable}': {message}", file.display())]
    Variable {
        /// The file.
        file: PathBuf,
        /// The variable.
        variable: String,
        /// What is wrong and what was expected.
        message: String,
    },
    /// A file that cannot be used as given.
    #[error("{}: {message}", file.display())]
    File {
        /// The file.
        file: PathBuf,
        /// What is wrong and what was expected.
        message: String,
    },
    /// Reading an output of compute or compare failed.
    #[error(transparent)]
    Read(#[from] acidscape_gridio::GridError),
    /// Drawing or writing the figure failed.
    #[error(transparent)]
    Figure(#[from] acidscape_figures::FigureError),
}

impl DrawError {
    /// An error about an option.
    pub(crate) fn option(option: &str, message: impl Into<String>) -> Self {
        DrawError::Option {
            option: option.to_string(),
            message: message.into(),
        }
    }

    /// An error about a variable of a file.
    pub(crate) fn variable(
        file: &std::path::Path,
        variable: &str,
        message: impl Into<String>,
    ) -> Self {
        DrawError::Variable {
            file: file.to_path_buf(),
            variable: variable.to_string(),
            message: message.into(),
        }
    }

    /// An error about a file.
    pub(crate) fn file(file: &std::path::Path, message: impl Into<String>) -> Self {
        DrawError::File {
            file: file.to_path_buf(),
            message: message.into(),
        }
    }
}

/// Shorthand for results of this crate.
pub type Result<T> = std::result::Result<T, DrawError>;
