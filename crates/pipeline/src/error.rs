//! Errors of a compute job: each names the file, variable or option and what was expected.

use std::path::PathBuf;

#[derive(Debug, thiserror::Error)]
pub enum PipelineError {
    /// A user option that cannot be honoured.
    #[error("{option}: {message}")]
    Option { option: String, message: String },
    /// The run could not be read.
    #[error(transparent)]
    Grid(#[from] acidscape_gridio::GridError),
    /// The output path is unsafe or unusable.
    #[error("output {path}: {message}")]
    Output { path: PathBuf, message: String },
    /// A NetCDF call on the output failed.
    #[error("output {path}, {what}: {source}")]
    Netcdf {
        path: PathBuf,
        what: String,
        source: netcdf::Error,
    },
    /// `--resume` cannot continue this partial output.
    #[error("cannot resume into {path}: {message}")]
    Resume { path: PathBuf, message: String },
    /// The job stopped on request (a test hook) after some steps; the partial output remains.
    #[error("stopped on request after {steps_done} of {steps_total} time steps; {partial} holds the finished steps, continue with --resume")]
    Stopped {
        steps_done: usize,
        steps_total: usize,
        partial: PathBuf,
    },
    /// A worker thread ended without a result (a bug, reported rather than hidden).
    #[error("internal error: {0}")]
    Internal(String),
}

/// Attaches the output path and a description to a NetCDF error.
pub(crate) fn nc<T>(
    result: Result<T, netcdf::Error>,
    path: &std::path::Path,
    what: impl FnOnce() -> String,
) -> Result<T, PipelineError> {
    result.map_err(|source| PipelineError::Netcdf {
        path: path.to_path_buf(),
        what: what(),
        source,
    })
}
