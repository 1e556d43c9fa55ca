use std::path::PathBuf;

/// Everything that can go wrong while making a figure.
#[derive(Debug, thiserror::Error)]
pub enum FigureError {
    /// Input arrays of the wrong length or shape.
    #[error("{what}: expected {expected} values, got {got}")]
    Shape {
        what: String,
        expected: usize,
        got: usize,
    },
    /// Input values the figure cannot use (named, with the reason).
    #[error("{0}")]
    Input(String),
    /// The bundled font could not be loaded.
    #[error("font: {0}")]
    Font(String),
    /// The drawing library reported an error.
    #[error("drawing failed: {0}")]
    Drawing(String),
    /// Writing the PNG file failed.
    #[error("cannot write figure {path}: {message}")]
    Write { path: PathBuf, message: String },
}

impl FigureError {
    pub(crate) fn drawing(error: impl std::fmt::Display) -> Self {
        FigureError::Drawing(error.to_string())
    }

    pub(crate) fn input(message: impl Into<String>) -> Self {
        FigureError::Input(message.into())
    }

    /// Checks that `what` holds `expected` values.
    pub(crate) fn check_len(what: &str, expected: usize, got: usize) -> Result<(), Self> {
        if expected == got {
            Ok(())
        } else {
            Err(FigureError::Shape {
                what: what.to_string(),
                expected,
                got,
            })
        }
    }
}
