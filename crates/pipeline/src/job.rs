//! A compute job: checks, then read → solve → write with the three stages overlapping
//! (see [`crate::stream`]), durable progress after every time step, and the final rename.
//! Any failure once the partial output holds finished work leaves it resumable.

use crate::cells_uncertainty::UncertaintyRequest;
use crate::columns::ColumnWork;
use crate::error::nc;
use crate::extent_table::{write_extent_table, ExtentOverview};
use crate::flags::{Flag, FlagCounts};
use crate::geometry::ColumnGeometry;
use crate::horizon_choice::{HorizonChoice, HorizonPlan};
use crate::indicators::{with_uncertainty_fields, IndicatorChoice, OutputField};
use crate::leftovers::{check_leftovers, remove_leftovers, Leftovers};
use crate::output::{
    define_output, partial_path, progress_path, utc_timestamp, OutputLayout, OutputMetadata,
    FLAG_VARIABLE,
};
use crate::plan::{plan_slabs_reading, ColumnLoad, SlabPlan};
use crate::repair::restore_cut_tail;
use crate::resume::{sync_parent, Fnv1a64, InputRecord, ProgressRecord};
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
pub(crate) fn starting_record(
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
    let leftovers = Leftovers::of(&output);
    let resuming = options.resume && leftovers == Leftovers::Interrupted;
    if options.resume && leftovers == Leftovers::Unstarted {
        progress.note(
            "the interrupted run had not finished any time step: starting from the beginning",
        );
    }
    let mut record = starting_record(run, &job, options, work.as_ref(), resuming, progress)?;
    let ended = Ending {
        partial: &partial,
        steps_total: plan.steps,
        resuming,
    };
    if let Some(signal) = options.stop.requested() {
        return Err(ended.early(PipelineError::Signal { signal }, record.steps_done));
    }
    let first_step = record.steps_done.min(plan.steps);
    let mut slabs = plan.slabs(first_step);
    check_writable(&partial, resuming).map_err(|e| ended.early(e, first_step))?;
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
        let opened = open_partial(&partial, plan, first_step, &options.command_line, progress);
        // A partial output that cannot be opened says so itself, with the way out.
        opened?
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
}

impl Ending<'_> {
    /// An end that leaves a resumable partial output with `steps_done` finished steps.
    pub(crate) fn kept(&self, cause: PipelineError, steps_done: usize) -> PipelineError {
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

/// Opens an interrupted run's partial output to continue it after `steps_done` steps,
/// mending it first when a failed write cut it short (see [`restore_cut_tail`]).
fn open_partial(
    partial: &Path,
    plan: &SlabPlan,
    steps_done: usize,
    command_line: &str,
    progress: &mut dyn Progress,
) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
    let damaged = |why: String| PipelineError::Resume {
        path: partial.to_path_buf(),
        message: format!(
            "{why}; it may have been damaged when the run stopped: start over with --overwrite"
        ),
    };
    let mended = restore_cut_tail(partial)?;
    if mended {
        progress.note(&format!(
            "{} was cut short by a failed write; its tail is filled in and the unfinished time steps are written again",
            partial.display()
        ));
    }
    let mut file =
        netcdf::append(partial).map_err(|e| damaged(format!("cannot be opened ({e})")))?;
    let layout = OutputLayout::from_file(&file, partial, plan.shape[0], plan.steps)?;
    if mended && steps_done > 0 {
        // The finished steps must read back before any work is built on them.
        let last = steps_done - 1;
        let extents = layout.extents(last, 0..plan.shape[1], plan.shape);
        let flag = file
            .variable(FLAG_VARIABLE)
            .ok_or_else(|| damaged(format!("it has no variable '{FLAG_VARIABLE}'")))?;
        flag.get_values::<Flag, _>(extents)
            .map_err(|e| damaged(format!("time step {} cannot be read back ({e})", last + 1)))?;
    }
    append_history(&mut file, partial, command_line)?;
    Ok((file, layout))
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
