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
    /// An input file that cannot be used (beyond what the run reader checks).
    #[error("input {path}: {message}")]
    Input { path: PathBuf, message: String },
    /// The output path is unsafe or unusable.
    #[error("output {path}: {message}")]
    Output { path: PathBuf, message: String },
    /// A NetCDF call on the output failed.
    #[error("output {path}, {what}: {source} (writing failed; a full disk, a quota or a file-size limit are common causes)")]
    Netcdf {
        path: PathBuf,
        what: String,
        source: netcdf::Error,
    },
    /// `--resume` cannot continue this partial output.
    #[error("cannot resume into {path}: {message}")]
    Resume { path: PathBuf, message: String },
    /// The job was asked to stop (a test hook).
    #[error("stopped on request")]
    StopHook,
    /// A signal asked the job to stop.
    #[error("stopped by {} (as a batch scheduler sends at the wall-time limit, or Ctrl-C)", crate::stop::signal_name(*signal))]
    Signal { signal: usize },
    /// The job ended early after its partial output held finished work: the cause, and what
    /// the user can do. Only this error leaves a partial output behind.
    #[error("{cause}\n{}", interrupted_advice(*steps_done, *steps_total, partial))]
    Interrupted {
        cause: Box<PipelineError>,
        steps_done: usize,
        steps_total: usize,
        partial: PathBuf,
    },
    /// A failure rank 0 of an MPI job found before any rank wrote, and told every rank: all
    /// end with it, and only rank 0 reports it.
    #[error("{message}")]
    AllRanks {
        message: String,
        signal: Option<usize>,
    },
    /// A worker thread ended without a result (a bug, reported rather than hidden).
    #[error("internal error: {0}")]
    Internal(String),
}

/// What a user can do after an interrupted job.
fn interrupted_advice(steps_done: usize, steps_total: usize, partial: &std::path::Path) -> String {
    format!(
        "{steps_done} of {steps_total} time steps are finished and kept in {}. Once the cause is dealt with, run the same command with --resume to continue from time step {}, or with --overwrite to start over.",
        partial.display(),
        steps_done + 1
    )
}

impl PipelineError {
    /// The signal that stopped the job, if one did.
    pub fn signal(&self) -> Option<usize> {
        match self {
            PipelineError::Signal { signal } => Some(*signal),
            PipelineError::Interrupted { cause, .. } => cause.signal(),
            PipelineError::AllRanks { signal, .. } => *signal,
            _ => None,
        }
    }
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
