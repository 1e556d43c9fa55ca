//! What an earlier, interrupted run left beside the output, and what a new run may do
//! with it. Every state a kill can leave gets one message that names the way out.

use crate::output::{partial_path, progress_path};
use crate::resume::{temporary_path, ProgressRecord};
use crate::PipelineError;
use std::fs;
use std::path::Path;

/// Files an earlier run left beside `output`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Leftovers {
    /// Nothing.
    None,
    /// A partial output and its progress record: resumable.
    Interrupted,
    /// A partial output without a progress record: the run stopped while it was setting up
    /// the output, before finishing any time step.
    Unstarted,
    /// A progress record without its partial output (removed, or the run had finished).
    RecordOnly,
}

impl Leftovers {
    pub fn of(output: &Path) -> Leftovers {
        match (
            partial_path(output).exists(),
            progress_path(output).exists(),
        ) {
            (false, false) => Leftovers::None,
            (true, true) => Leftovers::Interrupted,
            (true, false) => Leftovers::Unstarted,
            (false, true) => Leftovers::RecordOnly,
        }
    }
}

/// Refuses what the user did not ask for: replacing an existing output (without
/// `--overwrite`), ignoring an interrupted run, or resuming what cannot be resumed.
/// `steps_total` is for messages.
pub(crate) fn check_leftovers(
    output: &Path,
    resume: bool,
    overwrite: bool,
    steps_total: usize,
) -> Result<(), PipelineError> {
    if overwrite {
        return Ok(());
    }
    let partial = partial_path(output);
    let record = progress_path(output);
    let refuse = |message: String| PipelineError::Output {
        path: output.to_path_buf(),
        message,
    };
    let cannot_resume = |message: String| PipelineError::Resume {
        path: output.to_path_buf(),
        message,
    };
    let complete = output.exists();
    match (Leftovers::of(output), resume) {
        (Leftovers::None | Leftovers::RecordOnly, false) if complete => Err(refuse(
            "already exists; pass --overwrite to replace it".into(),
        )),
        (Leftovers::None, false) => Ok(()),
        (Leftovers::None, true) if complete => Err(cannot_resume(
            "nothing to resume: the output is complete and no interrupted run is left beside it; pass --overwrite to compute it again".into(),
        )),
        (Leftovers::None, true) => Err(cannot_resume(format!(
            "no interrupted run to continue ({} is not there); run without --resume",
            partial.display()
        ))),
        (Leftovers::Interrupted, _) => match ProgressRecord::load(&record) {
            Ok(_) if resume => Ok(()),
            Ok(r) => Err(refuse(format!(
                "an interrupted run left {} ({} of {steps_total} time steps finished); pass --resume to continue it or --overwrite to start over",
                partial.display(),
                r.steps_done
            ))),
            // The record says why it cannot be used, and that --overwrite starts over.
            Err(why) => Err(why),
        },
        (Leftovers::Unstarted, false) => Err(refuse(format!(
            "an interrupted run left {} before finishing any time step (it stopped while setting up the output); pass --resume or --overwrite to start again",
            partial.display()
        ))),
        (Leftovers::Unstarted, true) => Ok(()),
        (Leftovers::RecordOnly, true) if complete => Err(cannot_resume(format!(
            "nothing to resume: the output is complete (the run finished; {} is left over); pass --overwrite to compute it again",
            record.display()
        ))),
        (Leftovers::RecordOnly, _) => Err(cannot_resume(format!(
            "the progress record {} of an interrupted run remains but its partial output {} is gone, so nothing can be resumed; pass --overwrite to start over",
            record.display(),
            partial.display()
        ))),
    }
}

/// Removes everything an earlier run left beside `output` (not the output itself).
pub(crate) fn remove_leftovers(output: &Path) -> Result<(), PipelineError> {
    let record = progress_path(output);
    for stale in [partial_path(output), temporary_path(&record), record] {
        if stale.exists() {
            fs::remove_file(&stale).map_err(|e| PipelineError::Output {
                path: stale.clone(),
                message: format!("cannot remove the interrupted run's file: {e}"),
            })?;
        }
    }
    Ok(())
}
