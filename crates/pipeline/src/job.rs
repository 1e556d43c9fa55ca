//! A compute job: checks, then read → solve → write with the three stages overlapping
//! (see [`crate::stream`]), durable progress after every time step, and the final rename.
//! Any failure once the partial output holds finished work leaves it resumable.

use crate::cells_uncertainty::UncertaintyRequest;
use crate::columns::ColumnWork;
use crate::error::nc;
use crate::extent_table::{write_extent_table, ExtentOverview};
use crate::flags::FlagCounts;
use crate::geometry::ColumnGeometry;
use crate::horizon_choice::{HorizonChoice, HorizonPlan};
use crate::indicators::{with_uncertainty_fields, IndicatorChoice, OutputField};
use crate::leftovers::{check_leftovers, remove_leftovers};
use crate::output::{
    define_output, partial_path, progress_path, utc_timestamp, OutputLayout, OutputMetadata,
};
use crate::plan::{plan_slabs_reading, ColumnLoad, SlabPlan};
use crate::resume::{sync_parent, ProgressRecord};
use crate::start::{continue_partial, damaged_partial, decide_start, Start};
use crate::stop::StopRequest;
use crate::stream::{read_slab, stream, sync_file, OwnRecord, Sink};
use crate::PipelineError;
use acidscape_chem::{ConstantChoice, Source};
use acidscape_gridio::{Run, UncertaintyField};
use std::fs;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

/// Receives progress from a running job (always on the thread that called [`run_job`]).
pub trait Progress {
    /// Called once before the first slab: cells to process in all, and already done.
    fn begin(&mut self, _total_cells: u64, _done_cells: u64) {}
    /// Called after every slab written.
    fn advance(&mut self, _cells: u64) {}
    /// Called after every time step made durable.
    fn step_finished(&mut self, _steps_done: usize, _steps_total: usize) {}
    /// A remark the user should see (e.g. where a resumed job starts, and why).
    fn note(&mut self, _text: &str) {}
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
    /// Stop (as if interrupted) once this many time steps are finished (0: right after the
    /// output is set up); for tests.
    pub stop_after_steps: Option<usize>,
    /// Upper limit on rows per slab, below what the budget allows (tests, tuning).
    pub max_rows_per_slab: Option<usize>,
    /// Saturation horizons and the extent of corrosive water.
    pub horizons: HorizonChoice,
    /// Standard uncertainties to propagate: a companion field per indicator when set.
    pub uncertainty: Option<UncertaintyRequest>,
    /// Set from outside (signal handlers) to stop after the current slab.
    pub stop: StopRequest,
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
    /// Of `compute`: the column analysis (horizons, thicknesses, corrosive extent).
    pub columns: Duration,
    pub write: Duration,
    /// Time inside netCDF reads and writes (the first read, the stream's, closing the output):
    /// serial whatever the number of threads, as libnetcdf serves one call at a time.
    pub serial_netcdf: Duration,
    /// The corrosive-extent table written beside the output, with its first and last steps.
    pub extent: Option<ExtentOverview>,
    /// Whether the output has standard-uncertainty fields.
    pub uncertainty: bool,
}

/// What a job plans to do: the slabs, the output fields and the horizons.
#[derive(Clone, Debug)]
pub struct JobPlan {
    pub slabs: SlabPlan,
    pub fields: Vec<OutputField>,
    pub horizons: Option<HorizonPlan>,
    /// The inputs' standard-uncertainty fields, opened and checked against the run, in the
    /// order of the request's `fields`.
    pub uncertainty_fields: Vec<(Source, UncertaintyField)>,
    /// The output file.
    pub output: PathBuf,
}

/// Plans a job without running it: checks options and output path, and splits the work.
pub fn plan_job(run: &Run, options: &JobOptions) -> Result<JobPlan, PipelineError> {
    let uncertainty_fields = match &options.uncertainty {
        Some(request) => request.open_fields(run)?,
        None => Vec::new(),
    };
    let fields =
        with_uncertainty_fields(options.indicators.fields()?, options.uncertainty.as_ref());
    let horizons = options.horizons.plan(&options.indicators)?;
    let columns = horizons
        .as_ref()
        .map_or(ColumnLoad::default(), HorizonPlan::column_load);
    if !(0..=9).contains(&options.deflate_level) {
        return Err(PipelineError::Option {
            option: "--deflate-level".into(),
            message: format!(
                "{} is not a deflate level; expected 0 to 9",
                options.deflate_level
            ),
        });
    }
    let plan = plan_run_slabs(
        run,
        fields.len(),
        uncertainty_fields.len(),
        columns,
        options.memory_budget_bytes,
        options.max_rows_per_slab,
    )?;
    run.read_in_slabs_of((plan.read_cache_bytes > 0).then_some(plan.rows_per_slab));
    check_output_path(run, options, plan.steps)?;
    Ok(JobPlan {
        slabs: plan,
        fields,
        horizons,
        uncertainty_fields,
        output: options.output.clone(),
    })
}

/// Splits `run` into slabs of at most `max_rows` rows that fit `budget_bytes` (with
/// `uncertainty_fields` inputs' uncertainty fields read beside the inputs), fitted to the
/// inputs' chunks (see [`SlabPlan::fit_input_chunks`]).
pub fn plan_run_slabs(
    run: &Run,
    output_fields: usize,
    uncertainty_fields: usize,
    columns: ColumnLoad,
    budget_bytes: u64,
    max_rows: Option<usize>,
) -> Result<SlabPlan, PipelineError> {
    let shape = run.shape();
    let mut plan = plan_slabs_reading(
        [shape.levels, shape.rows, shape.cols],
        run.time_steps(),
        output_fields,
        uncertainty_fields,
        columns,
        budget_bytes,
    )?;
    if let Some(limit) = max_rows {
        plan.limit_rows_per_slab(limit);
    }
    plan.fit_input_chunks(run.input_chunk_rows(), |rows| run.read_cache_bytes(rows));
    Ok(plan)
}

/// Refuses outputs that would overwrite an input, and leftovers the user did not say what
/// to do with (see [`check_leftovers`]).
fn check_output_path(run: &Run, options: &JobOptions, steps: usize) -> Result<(), PipelineError> {
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
    check_leftovers(output, options.resume, options.overwrite, steps)
}

/// Runs a compute job to completion (or to a clean stop), writing `options.output`.
pub fn run_job(
    run: &Run,
    options: &JobOptions,
    progress: &mut dyn Progress,
) -> Result<JobSummary, PipelineError> {
    let started = Instant::now();
    let job = plan_job(run, options)?;
    let work = column_work(run, &job)?;
    let plan = &job.slabs;
    let output = options.output.clone();
    let partial = partial_path(&output);
    let record_path = progress_path(&output);
    let Start {
        mut record,
        resuming,
    } = decide_start(run, &job, options, work.as_ref(), progress)?;
    let ended = Ending {
        partial: &partial,
        steps_total: plan.steps,
        resuming,
        first_step: record.steps_done.min(plan.steps),
    };
    let first_step = ended.first_step;
    let mut slabs = plan.slabs(first_step);
    // Read the first slab before any output exists: unreadable inputs fail cleanly.
    let read_started = Instant::now();
    let first = match slabs.next() {
        Some((step, rows)) => Some(
            read_slab(run, &job.uncertainty_fields, step, rows)
                .map_err(|e| ended.early(e.into(), first_step))?,
        ),
        None => None,
    };
    let first_read = read_started.elapsed();

    let (mut file, layout) = if resuming {
        // A partial output that cannot be opened says so itself, with the way out.
        let file = netcdf::append(&partial)
            .map_err(|e| damaged_partial(&partial, format!("cannot be opened ({e})")))?;
        continue_partial(
            file,
            &partial,
            plan,
            &utc_timestamp(),
            &options.command_line,
        )?
    } else {
        create_partial(run, &job, options, work.as_ref(), &partial)?
    };
    record
        .save(&record_path)
        .map_err(|e| ended.kept(e, first_step))?;
    if options.stop_after_steps == Some(0) {
        return Err(ended.kept(PipelineError::StopHook, 0));
    }

    let total_cells = plan.cells_per_step() * plan.steps as u64;
    progress.begin(total_cells, plan.cells_per_step() * first_step as u64);
    let mut ledger = OwnRecord {
        record: &mut record,
        path: &record_path,
    };
    let sink = Sink {
        file: &mut file,
        partial: &partial,
        layout: &layout,
        ledger: &mut ledger,
    };
    let streamed = stream(
        run,
        plan,
        &job.fields,
        &job.uncertainty_fields,
        options,
        work.as_ref(),
        first,
        slabs,
        sink,
        progress,
    );
    progress.finish();
    let times = streamed.map_err(|e| ended.kept(e, record.steps_done))?;
    let finish_started = Instant::now();
    let extent = finish_job(run, &job, work.as_ref(), file, &record)
        .map_err(|e| ended.kept(e, plan.steps))?;
    let finish = finish_started.elapsed();
    let _ = fs::remove_file(&record_path);
    sync_parent(&output);

    Ok(JobSummary {
        output,
        plan: job.slabs,
        first_step,
        cells_processed: times.cells,
        counts: record.counts,
        wall: started.elapsed(),
        read: first_read + times.read,
        compute: times.compute,
        columns: times.columns,
        write: times.write,
        serial_netcdf: first_read + times.netcdf + finish,
        extent,
        uncertainty: options.uncertainty.is_some(),
    })
}

/// The column analysis of a job, when it computes horizons: reads the cells' geometry.
pub(crate) fn column_work(run: &Run, job: &JobPlan) -> Result<Option<ColumnWork>, PipelineError> {
    let Some(plan) = &job.horizons else {
        return Ok(None);
    };
    let geometry = ColumnGeometry::of(run)?;
    let work = ColumnWork::new(plan.clone(), geometry).with_depth_uncertainty(&job.fields);
    Ok(Some(work))
}

/// Once every step is written: the extent table (read back from the output), then the
/// output closed, made durable and renamed into place.
fn finish_job(
    run: &Run,
    job: &JobPlan,
    work: Option<&ColumnWork>,
    file: netcdf::FileMut,
    record: &ProgressRecord,
) -> Result<Option<ExtentOverview>, PipelineError> {
    let (output, partial) = (&job.output, partial_path(&job.output));
    if record.steps_done < job.slabs.steps {
        return Err(PipelineError::Internal(format!(
            "only {} of {} time steps were written",
            record.steps_done, job.slabs.steps
        )));
    }
    let extent = work
        .map(|w| write_extent_table(&file, &partial, output, &run.step_dates(), w))
        .transpose()?;
    finish_output(file, &partial, output)?;
    Ok(extent)
}

/// How a job that ends early reports it: once the partial output holds finished work (or
/// when resuming one), the cause comes with what is kept and how to go on.
pub(crate) struct Ending<'a> {
    pub partial: &'a Path,
    pub steps_total: usize,
    pub resuming: bool,
    /// The first step this job computes (after the finished ones, when resuming).
    pub first_step: usize,
}

impl Ending<'_> {
    /// An end that leaves a resumable partial output with `steps_done` finished steps; or,
    /// when a resumed job could not add a single step to it, one to start over: a partial
    /// output whose metadata a killed process left half-updated fails every resume the same
    /// way.
    pub(crate) fn kept(&self, cause: PipelineError, steps_done: usize) -> PipelineError {
        let not_continued =
            self.resuming && steps_done <= self.first_step && steps_done < self.steps_total;
        if not_continued && matches!(cause, PipelineError::Netcdf { .. }) {
            return PipelineError::Resume {
                path: self.partial.to_path_buf(),
                message: format!(
                    "{cause}\nNo time step could be added to it. Unless the disk was full or a quota or file-size limit was reached (then make room and resume), it was probably damaged when the interrupted run stopped (a process killed in the middle of a write can leave it half-updated) and resuming would fail the same way: start over with --overwrite."
                ),
            };
        }
        PipelineError::Interrupted {
            cause: Box::new(cause),
            steps_done,
            steps_total: self.steps_total,
            partial: self.partial.to_path_buf(),
        }
    }

    /// An end before the output is opened: only a resumed job has kept work to speak of.
    pub(crate) fn early(&self, cause: PipelineError, steps_done: usize) -> PipelineError {
        if self.resuming {
            self.kept(cause, steps_done)
        } else {
            cause
        }
    }
}

/// Creates and defines a new partial output, after removing what an earlier run left. A
/// failure removes the half-defined file: nothing of value is lost.
fn create_partial(
    run: &Run,
    job: &JobPlan,
    options: &JobOptions,
    work: Option<&ColumnWork>,
    partial: &Path,
) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
    remove_leftovers(&options.output)?;
    let setup = OutputSetup {
        run,
        job,
        options,
        work,
        partial,
    };
    setup
        .define(utc_timestamp(), || netcdf::create(partial))
        .map_err(|e| {
            let _ = fs::remove_file(partial);
            setup_failure(partial, e)
        })
}

/// What defining a new partial output needs.
pub(crate) struct OutputSetup<'a> {
    pub run: &'a Run,
    pub job: &'a JobPlan,
    pub options: &'a JobOptions,
    pub work: Option<&'a ColumnWork>,
    pub partial: &'a Path,
}

impl OutputSetup<'_> {
    /// Creates the partial output with `create`, defines it (its history dated `created`) and
    /// makes the definitions durable.
    pub(crate) fn define(
        &self,
        created: String,
        create: impl FnOnce() -> netcdf::Result<netcdf::FileMut>,
    ) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
        let partial = self.partial;
        let mut file = nc(create(), partial, || {
            "creating the file (is the directory writable?)".into()
        })?;
        let options = self.options;
        let meta = OutputMetadata {
            command_line: options.command_line.clone(),
            created,
            constants: options.constants,
            indicators: options.indicators.clone(),
            deflate_level: options.deflate_level,
            uncertainty: options.uncertainty.clone(),
        };
        let job = self.job;
        let layout = define_output(
            &mut file,
            partial,
            self.run,
            &job.slabs,
            &job.fields,
            &meta,
            self.work,
        )?;
        nc(file.sync(), partial, || "flushing definitions".into())?;
        sync_file(partial)?;
        Ok((file, layout))
    }
}

/// The error of a failed output setup, saying what to do.
pub(crate) fn setup_failure(partial: &Path, e: PipelineError) -> PipelineError {
    let cause = match e {
        PipelineError::Grid(grid) => grid.to_string(),
        PipelineError::Netcdf { what, source, .. } => format!("{what}: {source}"),
        other => return other,
    };
    PipelineError::Output {
        path: partial.to_path_buf(),
        message: format!(
            "setting up the output failed ({cause}; a full disk, a quota or a file-size limit are common causes); nothing was kept: run the same command again once the cause is dealt with"
        ),
    }
}

/// Closes the finished partial output, makes it durable and renames it into place.
fn finish_output(
    file: netcdf::FileMut,
    partial: &Path,
    output: &Path,
) -> Result<(), PipelineError> {
    nc(file.close(), partial, || "closing the file".into())?;
    place_output(partial, output)
}

/// Makes the finished, closed partial output durable and renames it into place.
pub(crate) fn place_output(partial: &Path, output: &Path) -> Result<(), PipelineError> {
    sync_file(partial)?;
    fs::rename(partial, output).map_err(|e| PipelineError::Output {
        path: output.to_path_buf(),
        message: format!(
            "cannot rename the finished {} into place: {e}",
            partial.display()
        ),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn write_failure() -> PipelineError {
        PipelineError::Netcdf {
            path: PathBuf::from("/out/.x.nc.partial"),
            what: "writing 'ph' at time step 5".into(),
            source: netcdf::Error::Netcdf(-101),
        }
    }

    #[test]
    fn a_resume_that_adds_no_step_says_to_start_over() {
        let partial = Path::new("/out/.x.nc.partial");
        let ending = |resuming| Ending {
            partial,
            steps_total: 10,
            resuming,
            first_step: 4,
        };
        let offers_resume = |e: &PipelineError| e.to_string().contains("with --resume to continue");
        // A resumed job that could not write one step: resuming again would fail the same way.
        let failed = ending(true).kept(write_failure(), 4);
        assert!(matches!(failed, PipelineError::Resume { .. }), "{failed}");
        assert!(!offers_resume(&failed), "{failed}");
        assert!(failed.to_string().contains("start over with --overwrite"));
        // Once it added a step, or when it was not a resume, or not a netCDF failure: resumable.
        for kept in [
            ending(true).kept(write_failure(), 5),
            ending(false).kept(write_failure(), 4),
            ending(true).kept(PipelineError::Signal { signal: 15 }, 4),
        ] {
            assert!(matches!(kept, PipelineError::Interrupted { .. }), "{kept}");
            assert!(offers_resume(&kept), "{kept}");
        }
    }
}
