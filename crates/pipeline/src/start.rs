//! Where a job starts: at the beginning, or (`--resume`) after the finished steps of an
//! interrupted run, once the progress record, the inputs and the partial output allow it; and
//! the partial output opened to be continued.

use crate::columns::ColumnWork;
use crate::error::nc;
use crate::flags::Flag;
use crate::job::{Ending, JobOptions, JobPlan, Progress};
use crate::leftovers::Leftovers;
use crate::output::{partial_path, progress_path, OutputLayout, FLAG_VARIABLE};
use crate::plan::SlabPlan;
use crate::repair::restore_cut_tail;
use crate::resume::{Fnv1a64, InputRecord, ProgressRecord};
use crate::PipelineError;
use acidscape_chem::Source;
use acidscape_gridio::{Run, UncertaintyField};
use std::fs;
use std::path::Path;

/// Lines describing everything but the inputs' content that decides the output's values
/// (see [`ProgressRecord`]).
fn job_description(
    run: &Run,
    plan: &SlabPlan,
    options: &JobOptions,
    work: Option<&ColumnWork>,
) -> Vec<String> {
    let mut job = vec![format!("acidscape {}", env!("CARGO_PKG_VERSION"))];
    job.push(format!(
        "grid {} {} {} steps {}",
        plan.shape[0], plan.shape[1], plan.shape[2], plan.steps
    ));
    let mut time = Fnv1a64::default();
    for value in run.time_values() {
        time.update(&value.to_le_bytes());
    }
    job.push(format!("time axis {:016x}", time.finish()));
    job.push(format!("constants {}", options.constants.describe()));
    job.push(options.indicators.describe());
    job.push(options.horizons.describe());
    if let Some(request) = &options.uncertainty {
        job.push(format!("uncertainty {}", request.describe()));
    }
    if let Some(work) = work {
        let g = work.geometry();
        job.push(format!("cell areas: {}", g.area_source));
        job.push(format!("sea floor: {}", g.sea_floor_source));
        job.push(format!("level bounds: {}", g.vertical.describe()));
    }
    job.extend(
        run.provenance()
            .into_iter()
            .map(|(key, value)| format!("processing {key}: {}", value.replace('\n', " "))),
    );
    job
}

/// Each input file's identity and the time steps that read it, the uncertainty fields' files
/// last (every step reads them).
fn input_records(
    run: &Run,
    fields: &[(Source, UncertaintyField)],
) -> Result<Vec<InputRecord>, PipelineError> {
    let steps = run.time_steps();
    let field_files = (fields.iter()).map(|(_, field)| {
        (
            field.path().to_path_buf(),
            field.has_time().then_some(0..steps),
        )
    });
    (run.input_files().into_iter())
        .zip(run.steps_of_files())
        .chain(field_files)
        .map(|(path, steps)| InputRecord::of(&path, steps))
        .collect()
}

/// The progress record a job continues or starts, with a note for the user when a resume
/// does not start where the interrupted run stopped.
fn starting_record(
    run: &Run,
    job: &JobPlan,
    options: &JobOptions,
    work: Option<&ColumnWork>,
    resuming: bool,
    progress: &mut dyn Progress,
) -> Result<ProgressRecord, PipelineError> {
    let inputs = input_records(run, &job.uncertainty_fields)?;
    let job = job_description(run, &job.slabs, options, work);
    let output = &options.output;
    if !resuming {
        let mut record = ProgressRecord::new(job, inputs);
        record.finish_steps(0);
        return Ok(record);
    }
    let refuse = |message: String| PipelineError::Resume {
        path: output.clone(),
        message,
    };
    let mut record = ProgressRecord::load(&progress_path(output))?;
    if let Some(why) = record.job_difference(&job) {
        return Err(refuse(format!(
            "the options or the run differ from the interrupted run: {why}; rerun with the same options, or start over with --overwrite"
        )));
    }
    let point = record.resume_point(&inputs).map_err(refuse)?;
    for path in &point.replaced {
        progress.note(&format!(
            "{} differs from the file the interrupted run read; it had not been read in full, so it is used as it is now",
            path.display()
        ));
    }
    if point.step < record.steps_done {
        progress.note(&format!(
            "time steps {} to {} read a replaced file and are computed again",
            point.step + 1,
            record.steps_done
        ));
    }
    record.steps_done = point.step;
    record.counts = point.counts;
    record.checkpoints.retain(|(step, _)| *step <= point.step);
    record.inputs = inputs;
    Ok(record)
}

/// Where a job starts, decided before its output is opened.
pub(crate) struct Start {
    /// The record the job keeps: a new one, or the interrupted run's, to continue.
    pub record: ProgressRecord,
    pub resuming: bool,
}

/// Decides where a job starts: at the beginning, or (`--resume`) after the finished steps of
/// the interrupted run, once its record matches this job (see [`starting_record`]) and its
/// partial output is writable and fit to continue (see [`check_partial`]).
pub(crate) fn decide_start(
    run: &Run,
    job: &JobPlan,
    options: &JobOptions,
    work: Option<&ColumnWork>,
    progress: &mut dyn Progress,
) -> Result<Start, PipelineError> {
    let partial = partial_path(&options.output);
    let leftovers = Leftovers::of(&options.output);
    let resuming = options.resume && leftovers == Leftovers::Interrupted;
    if options.resume && leftovers == Leftovers::Unstarted {
        progress.note(
            "the interrupted run had not finished any time step: starting from the beginning",
        );
    }
    let record = starting_record(run, job, options, work, resuming, progress)?;
    let first_step = record.steps_done.min(job.slabs.steps);
    let ended = Ending {
        partial: &partial,
        steps_total: job.slabs.steps,
        resuming,
        first_step,
    };
    if let Some(signal) = options.stop.requested() {
        return Err(ended.early(PipelineError::Signal { signal }, first_step));
    }
    check_writable(&partial, resuming).map_err(|e| ended.early(e, first_step))?;
    if resuming {
        check_partial(&partial, &job.slabs, first_step, progress)?;
    }
    Ok(Start { record, resuming })
}

/// The error of a partial output that cannot be continued: `why`, and the way out.
pub(crate) fn damaged_partial(partial: &Path, why: String) -> PipelineError {
    PipelineError::Resume {
        path: partial.to_path_buf(),
        message: format!(
            "{why}; it may have been damaged when the run stopped: start over with --overwrite"
        ),
    }
}

/// Before an interrupted run's partial output is opened to continue it after `steps_done`
/// steps: mends it when a failed write cut it short (see [`restore_cut_tail`]), and then
/// reads its last finished step back, so no work is built on a file that lost it.
pub(crate) fn check_partial(
    partial: &Path,
    plan: &SlabPlan,
    steps_done: usize,
    progress: &mut dyn Progress,
) -> Result<(), PipelineError> {
    if !restore_cut_tail(partial)? {
        return Ok(());
    }
    progress.note(&format!(
        "{} was cut short by a failed write; its tail is filled in and the unfinished time steps are written again",
        partial.display()
    ));
    if steps_done == 0 {
        return Ok(());
    }
    let file = netcdf::open(partial)
        .map_err(|e| damaged_partial(partial, format!("cannot be opened ({e})")))?;
    let layout = OutputLayout::from_file(&file, partial, plan.shape[0], plan.steps)?;
    let last = steps_done - 1;
    let extents = layout.extents(last, 0..plan.shape[1], plan.shape);
    let flag = file
        .variable(FLAG_VARIABLE)
        .ok_or_else(|| damaged_partial(partial, format!("it has no variable '{FLAG_VARIABLE}'")))?;
    flag.get_values::<Flag, _>(extents).map_err(|e| {
        damaged_partial(
            partial,
            format!("time step {} cannot be read back ({e})", last + 1),
        )
    })?;
    Ok(())
}

/// A partial output opened to be continued: its layout, and the resuming command line
/// (dated `resumed_at`) added to its history.
pub(crate) fn continue_partial(
    mut file: netcdf::FileMut,
    partial: &Path,
    plan: &SlabPlan,
    resumed_at: &str,
    command_line: &str,
) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
    let layout = OutputLayout::from_file(&file, partial, plan.shape[0], plan.steps)?;
    append_history(&mut file, partial, resumed_at, command_line)?;
    Ok((file, layout))
}

/// Fails early, before any reading or solving, when the partial file cannot be written.
pub(crate) fn check_writable(partial: &Path, resume: bool) -> Result<(), PipelineError> {
    let refuse = |e: std::io::Error| PipelineError::Output {
        path: partial.to_path_buf(),
        message: format!("cannot write here: {e}"),
    };
    if resume {
        fs::OpenOptions::new()
            .append(true)
            .open(partial)
            .map_err(refuse)?;
    } else {
        let existed = partial.exists();
        fs::OpenOptions::new()
            .write(true)
            .create(true)
            .truncate(false)
            .open(partial)
            .map_err(refuse)?;
        if !existed {
            fs::remove_file(partial).map_err(refuse)?;
        }
    }
    Ok(())
}

/// Adds the resuming command line to the history attribute.
fn append_history(
    file: &mut netcdf::FileMut,
    path: &Path,
    resumed_at: &str,
    command_line: &str,
) -> Result<(), PipelineError> {
    let previous = match file.attribute("history").map(|a| a.value()) {
        Some(Ok(netcdf::AttributeValue::Str(text))) => text,
        _ => String::new(),
    };
    let history = format!("{previous}\n{resumed_at}: resumed: {command_line}");
    nc(file.add_attribute("history", history), path, || {
        "updating the history attribute".into()
    })?;
    Ok(())
}
