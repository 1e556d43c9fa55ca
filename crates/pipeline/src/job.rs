//! A compute job: checks, then read → solve → write with the three stages overlapping,
//! durable progress after every time step, and the final rename.

use crate::cells::{solve_slab, FlagCounts, SlabResult};
use crate::error::nc;
use crate::indicators::{IndicatorChoice, OutputField};
use crate::output::{
    define_output, partial_path, progress_path, utc_timestamp, write_slab, OutputLayout,
    OutputMetadata,
};
use crate::plan::{plan_slabs, SlabPlan};
use crate::resume::{file_identity, sync_parent, ProgressRecord};
use crate::PipelineError;
use acidscape_chem::ConstantChoice;
use acidscape_gridio::{GridError, RawSlab, Run};
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::mpsc::sync_channel;
use std::time::{Duration, Instant};

/// Receives progress from a running job (always on the thread that called [`run_job`]).
pub trait Progress {
    /// Called once before the first slab: cells to process in all, and already done.
    fn begin(&mut self, _total_cells: u64, _done_cells: u64) {}
    /// Called after every slab written.
    fn advance(&mut self, _cells: u64) {}
    /// Called after every time step made durable.
    fn step_finished(&mut self, _steps_done: usize, _steps_total: usize) {}
    /// Called once when the job ends, successfully or not.
    fn finish(&mut self) {}
}

/// Progress that shows nothing.
pub struct NoProgress;
impl Progress for NoProgress {}

/// What the user asked of a compute job.
#[derive(Clone, Debug)]
pub struct JobOptions {
    pub output: PathBuf,
    pub overwrite: bool,
    pub resume: bool,
    pub memory_budget_bytes: u64,
    pub constants: ConstantChoice,
    pub indicators: IndicatorChoice,
    /// The command line, for the output's history attribute.
    pub command_line: String,
    /// Deflate level 0-9 (0: no compression).
    pub deflate_level: i32,
    /// Stop (as if interrupted) once this many time steps are finished; for tests.
    pub stop_after_steps: Option<usize>,
    /// Upper limit on rows per slab, below what the budget allows (tests, tuning).
    pub max_rows_per_slab: Option<usize>,
}

/// What a finished job did.
#[derive(Clone, Debug)]
pub struct JobSummary {
    pub output: PathBuf,
    pub plan: SlabPlan,
    /// First time step computed by this invocation (> 0 after `--resume`).
    pub first_step: usize,
    /// Grid cells processed by this invocation (land included).
    pub cells_processed: u64,
    /// Flag counts over the whole output, all time steps.
    pub counts: FlagCounts,
    pub wall: Duration,
    /// Time spent in each stage (they overlap, so they may add up to more than `wall`): `read` is
    /// file I/O only, `compute` the unit and TEOS-10 conversions plus the solver.
    pub read: Duration,
    pub compute: Duration,
    pub write: Duration,
}

/// Plans a job without running it: checks options and output path, and splits the work.
pub fn plan_job(
    run: &Run,
    options: &JobOptions,
) -> Result<(SlabPlan, Vec<OutputField>), PipelineError> {
    let fields = options.indicators.fields()?;
    if !(0..=9).contains(&options.deflate_level) {
        return Err(PipelineError::Option {
            option: "--deflate-level".into(),
            message: format!(
                "{} is not a deflate level; expected 0 to 9",
                options.deflate_level
            ),
        });
    }
    let shape = run.shape();
    let mut plan = plan_slabs(
        [shape.levels, shape.rows, shape.cols],
        run.time_steps(),
        fields.len(),
        options.memory_budget_bytes,
    )?;
    if let Some(limit) = options.max_rows_per_slab {
        plan.limit_rows_per_slab(limit);
    }
    check_output_path(run, options)?;
    Ok((plan, fields))
}

/// Refuses outputs that would overwrite an input, an existing file (without `--overwrite`),
/// or an interrupted run's partial file (without `--resume` or `--overwrite`).
fn check_output_path(run: &Run, options: &JobOptions) -> Result<(), PipelineError> {
    let output = &options.output;
    let refuse = |message: String| PipelineError::Output {
        path: output.clone(),
        message,
    };
    if output.file_name().is_none() || output.is_dir() {
        return Err(refuse(
            "is a directory; give a file name such as indicators.nc".into(),
        ));
    }
    let directory = match output.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let directory = directory.canonicalize().map_err(|e| {
        refuse(format!(
            "its directory {} is not usable: {e}",
            directory.display()
        ))
    })?;
    let resolved = directory.join(output.file_name().unwrap_or_default());
    for input in run.input_files() {
        let input = input.canonicalize().unwrap_or(input);
        if input == resolved || input == partial_path(&resolved) {
            return Err(refuse(format!(
                "is an input of this run ({}); choose another output name",
                input.display()
            )));
        }
    }
    if output.exists() && !options.overwrite && !options.resume {
        return Err(refuse(
            "already exists; pass --overwrite to replace it".into(),
        ));
    }
    let partial = partial_path(output);
    if options.resume {
        if !partial.exists() || !progress_path(output).exists() {
            return Err(PipelineError::Resume {
                path: output.clone(),
                message: format!(
                    "no interrupted run to continue ({} or its progress record is missing); run without --resume",
                    partial.display()
                ),
            });
        }
    } else if (partial.exists() || progress_path(output).exists()) && !options.overwrite {
        return Err(refuse(format!(
            "an interrupted run left {}; pass --resume to continue it or --overwrite to start over",
            partial.display()
        )));
    }
    Ok(())
}

/// Lines describing everything that decides the output's values (see [`ProgressRecord`]).
fn job_description(run: &Run, plan: &SlabPlan, options: &JobOptions) -> Vec<String> {
    let mut job = vec![format!("acidscape {}", env!("CARGO_PKG_VERSION"))];
    job.extend(run.input_files().iter().map(|p| file_identity(p)));
    job.push(format!(
        "grid {} {} {} steps {}",
        plan.shape[0], plan.shape[1], plan.shape[2], plan.steps
    ));
    job.push(format!("constants {}", options.constants.describe()));
    job.push(options.indicators.describe());
    job.extend(
        run.provenance()
            .into_iter()
            .map(|(key, value)| format!("processing {key}: {}", value.replace('\n', " "))),
    );
    job
}

/// Runs a compute job to completion (or to a clean stop), writing `options.output`.
pub fn run_job(
    run: &Run,
    options: &JobOptions,
    progress: &mut dyn Progress,
) -> Result<JobSummary, PipelineError> {
    let started = Instant::now();
    let (plan, fields) = plan_job(run, options)?;
    let output = options.output.clone();
    let partial = partial_path(&output);
    let progress_file = progress_path(&output);
    let job = job_description(run, &plan, options);

    let mut record = if options.resume {
        let record = ProgressRecord::load(&progress_file)?;
        if let Some(why) = record.job_difference(&job) {
            return Err(PipelineError::Resume {
                path: output.clone(),
                message: format!("the inputs or options differ from the interrupted run: {why}"),
            });
        }
        record
    } else {
        ProgressRecord {
            steps_done: 0,
            counts: FlagCounts::default(),
            job,
        }
    };
    let first_step = record.steps_done.min(plan.steps);
    let mut slabs = plan.slabs(first_step);

    check_writable(&partial, options.resume)?;
    // Read the first slab before any output exists: unreadable inputs fail cleanly.
    let mut read_time = Duration::ZERO;
    let first = match slabs.next() {
        Some((step, rows)) => {
            let t = Instant::now();
            let slab = run.read_raw_slab(step, rows)?;
            read_time += t.elapsed();
            Some(slab)
        }
        None => None,
    };

    let mut file = if options.resume {
        let mut file = netcdf::append(&partial).map_err(|e| PipelineError::Resume {
            path: output.clone(),
            message: format!(
                "{} cannot be opened ({e}); it may have been damaged when the run stopped: start over with --overwrite",
                partial.display()
            ),
        })?;
        append_history(&mut file, &partial, &options.command_line)?;
        file
    } else {
        for stale in [&partial, &progress_file] {
            if stale.exists() {
                fs::remove_file(stale).map_err(|e| PipelineError::Output {
                    path: stale.clone(),
                    message: format!("cannot remove the interrupted run's file: {e}"),
                })?;
            }
        }
        nc(netcdf::create(&partial), &partial, || {
            "creating the file (is the directory writable?)".into()
        })?
    };
    let layout = if options.resume {
        OutputLayout::from_file(&file, &partial, plan.shape[0], plan.steps)?
    } else {
        let meta = OutputMetadata {
            command_line: options.command_line.clone(),
            constants: options.constants,
            indicators: options.indicators.clone(),
            deflate_level: options.deflate_level,
        };
        let layout = define_output(&mut file, &partial, run, &plan, &fields, &meta)?;
        nc(file.sync(), &partial, || "flushing definitions".into())?;
        record.save(&progress_file)?;
        layout
    };

    let total_cells = plan.cells_per_step() * plan.steps as u64;
    progress.begin(total_cells, plan.cells_per_step() * first_step as u64);
    let mut cells_processed = 0u64;
    let mut write_time = Duration::ZERO;
    let constants = options.constants;
    let fields_ref = &fields;

    let outcome = std::thread::scope(|scope| -> Result<(Duration, Duration), PipelineError> {
        // The reader only reads (libnetcdf is serialised); unit and TEOS-10 conversions run with
        // the solver on the rayon pool, so the reader never queues behind the solver's jobs.
        let (input_tx, input_rx) = sync_channel::<Result<RawSlab, GridError>>(1);
        let (result_tx, result_rx) = sync_channel::<Result<SlabResult, GridError>>(1);
        let reader = scope.spawn(move || {
            let mut busy = Duration::ZERO;
            if let Some(slab) = first {
                if input_tx.send(Ok(slab)).is_err() {
                    return busy;
                }
            }
            for (step, rows) in slabs {
                let t = Instant::now();
                let slab = run.read_raw_slab(step, rows);
                busy += t.elapsed();
                let failed = slab.is_err();
                if input_tx.send(slab).is_err() || failed {
                    break;
                }
            }
            busy
        });
        let solver = scope.spawn(move || {
            let mut busy = Duration::ZERO;
            for item in input_rx {
                let item = item.map(|inputs| {
                    let t = Instant::now();
                    let result = solve_slab(&run.convert_slab(inputs), fields_ref, &constants);
                    busy += t.elapsed();
                    result
                });
                let failed = item.is_err();
                if result_tx.send(item).is_err() || failed {
                    break;
                }
            }
            busy
        });

        let written = (|| -> Result<(), PipelineError> {
            for item in result_rx {
                let result = item?;
                let t = Instant::now();
                write_slab(&mut file, &partial, &layout, &fields, &result)?;
                write_time += t.elapsed();
                let cells = result.flags.len() as u64;
                cells_processed += cells;
                record.counts += result.counts;
                progress.advance(cells);
                if result.rows.end == plan.shape[1] {
                    // A finished time step: make it durable, then record it.
                    let t = Instant::now();
                    nc(file.sync(), &partial, || {
                        format!("flushing time step {}", result.step)
                    })?;
                    sync_file(&partial)?;
                    record.steps_done = result.step + 1;
                    record.save(&progress_file)?;
                    write_time += t.elapsed();
                    progress.step_finished(record.steps_done, plan.steps);
                    if options.stop_after_steps == Some(record.steps_done)
                        && record.steps_done < plan.steps
                    {
                        return Err(PipelineError::Stopped {
                            steps_done: record.steps_done,
                            steps_total: plan.steps,
                            partial: partial.clone(),
                        });
                    }
                }
            }
            Ok(())
        })();
        let read_busy = reader
            .join()
            .map_err(|_| PipelineError::Internal("the reader thread panicked".into()))?;
        let solve_busy = solver
            .join()
            .map_err(|_| PipelineError::Internal("the solver thread panicked".into()))?;
        written.map(|()| (read_busy, solve_busy))
    });
    progress.finish();
    let (read_busy, compute) = outcome?;
    if record.steps_done < plan.steps {
        return Err(PipelineError::Internal(format!(
            "only {} of {} time steps were written",
            record.steps_done, plan.steps
        )));
    }

    nc(file.close(), &partial, || "closing the file".into())?;
    sync_file(&partial)?;
    fs::rename(&partial, &output).map_err(|e| PipelineError::Output {
        path: output.clone(),
        message: format!(
            "cannot rename the finished {} into place: {e}",
            partial.display()
        ),
    })?;
    let _ = fs::remove_file(&progress_file);
    sync_parent(&output);

    Ok(JobSummary {
        output,
        plan,
        first_step,
        cells_processed,
        counts: record.counts,
        wall: started.elapsed(),
        read: read_time + read_busy,
        compute,
        write: write_time,
    })
}

/// Fails early, before any reading or solving, when the partial file cannot be written.
fn check_writable(partial: &Path, resume: bool) -> Result<(), PipelineError> {
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

fn sync_file(path: &Path) -> Result<(), PipelineError> {
    fs::File::open(path)
        .and_then(|f| f.sync_all())
        .map_err(|e| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("cannot flush to disk: {e}"),
        })
}

/// Adds the resuming command line to the history attribute.
fn append_history(
    file: &mut netcdf::FileMut,
    path: &Path,
    command_line: &str,
) -> Result<(), PipelineError> {
    let previous = match file.attribute("history").map(|a| a.value()) {
        Some(Ok(netcdf::AttributeValue::Str(text))) => text,
        _ => String::new(),
    };
    let history = format!("{previous}\n{}: resumed: {command_line}", utc_timestamp());
    nc(file.add_attribute("history", history), path, || {
        "updating the history attribute".into()
    })?;
    Ok(())
}
