//! The overlapping read → solve → write loop of a job, with durable progress after every
//! finished time step and a clean stop when asked.

use crate::cells::{solve_slab, KeepOmega, SaturationStates, SlabResult};
use crate::column_output::{write_columns, write_extent_step};
use crate::columns::{ColumnResult, ColumnWork};
use crate::error::nc;
use crate::flags::FlagCounts;
use crate::indicators::OutputField;
use crate::job::{JobOptions, Progress};
use crate::output::{write_slab, OutputLayout};
use crate::plan::SlabPlan;
use crate::resume::ProgressRecord;
use crate::PipelineError;
use acidscape_gridio::{GridError, RawSlab, Run};
use std::fs;
use std::ops::Range;
use std::path::Path;
use std::sync::mpsc::sync_channel;
use std::time::{Duration, Instant};

/// Where a stream writes, and where it records its progress.
pub(crate) struct Sink<'a> {
    pub file: &'a mut netcdf::FileMut,
    pub partial: &'a Path,
    pub layout: &'a OutputLayout,
    pub ledger: &'a mut dyn Ledger,
}

/// Keeps a job's progress: the flag counts of what was written, and the steps made durable.
pub(crate) trait Ledger {
    /// Adds the flag counts of a slab of `step` just written.
    fn count(&mut self, step: usize, counts: FlagCounts);
    /// Records that `step` is durable in the output; returns the time steps the whole job has
    /// finished.
    fn step_durable(&mut self, step: usize) -> Result<usize, PipelineError>;
    /// Whether other processes write slabs of step 0 at the same time (collective writes).
    fn peers_on_step_zero(&self) -> bool {
        false
    }
}

/// The ledger of a job in one process: its progress record, saved after every step.
pub(crate) struct OwnRecord<'a> {
    pub record: &'a mut ProgressRecord,
    pub path: &'a Path,
}

impl Ledger for OwnRecord<'_> {
    fn count(&mut self, _step: usize, counts: FlagCounts) {
        self.record.counts += counts;
    }

    fn step_durable(&mut self, step: usize) -> Result<usize, PipelineError> {
        self.record.finish_steps(step + 1);
        self.record.save(self.path)?;
        Ok(self.record.steps_done)
    }
}

/// Busy time of each stage.
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct StageTimes {
    pub read: Duration,
    pub compute: Duration,
    /// Of `compute`: the column analysis (horizons, thicknesses, extent).
    pub columns: Duration,
    pub write: Duration,
    pub cells: u64,
}

/// A solved slab with its column analysis, on its way to the writer.
pub(crate) struct Solved {
    cells: SlabResult,
    columns: Option<ColumnResult>,
}

/// Solves one slab and analyses its columns; the f64 Ω the analysis needed are dropped
/// before the slab goes on to the writer.
fn solve(
    run: &Run,
    raw: RawSlab,
    fields: &[OutputField],
    options: &JobOptions,
    work: Option<&ColumnWork>,
    busy: &mut (Duration, Duration),
    spare: &mut SaturationStates,
) -> Result<Solved, PipelineError> {
    let t = Instant::now();
    let inputs = run.convert_slab(raw);
    let keep = work.map_or(KeepOmega::default(), ColumnWork::keep);
    let buffers = std::mem::take(spare);
    let uncertainty = options.uncertainty.as_ref();
    let mut cells = solve_slab(
        &inputs,
        fields,
        &options.constants,
        keep,
        buffers,
        uncertainty,
    );
    let solved = t.elapsed();
    let columns = work.map(|w| w.analyse(&inputs, &cells)).transpose()?;
    // Kept for the next slab's states (no allocation, no zeroing).
    *spare = std::mem::take(&mut cells.omega);
    busy.0 += t.elapsed();
    busy.1 += t.elapsed() - solved;
    Ok(Solved { cells, columns })
}

/// Streams `slabs` (the first already read) through the solver into `sink`. Returns the
/// cause when it stops early; finished steps stay durable in the sink whatever happens.
#[allow(clippy::too_many_arguments)]
pub(crate) fn stream(
    run: &Run,
    plan: &SlabPlan,
    fields: &[OutputField],
    options: &JobOptions,
    work: Option<&ColumnWork>,
    first: Option<RawSlab>,
    slabs: impl Iterator<Item = (usize, Range<usize>)> + Send,
    sink: Sink<'_>,
    progress: &mut dyn Progress,
) -> Result<StageTimes, PipelineError> {
    let stop = &options.stop;
    let mut times = StageTimes::default();
    std::thread::scope(|scope| -> Result<StageTimes, PipelineError> {
        // The reader only reads (libnetcdf is serialised); unit and TEOS-10 conversions run with
        // the solver on the rayon pool, so the reader never queues behind the solver's jobs.
        let (input_tx, input_rx) = sync_channel::<Result<RawSlab, GridError>>(1);
        let (result_tx, result_rx) = sync_channel::<Result<Solved, PipelineError>>(1);
        let reader = scope.spawn(move || {
            let mut busy = Duration::ZERO;
            if let Some(slab) = first {
                if input_tx.send(Ok(slab)).is_err() {
                    return busy;
                }
            }
            for (step, rows) in slabs {
                if stop.requested().is_some() {
                    break;
                }
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
            let mut busy = (Duration::ZERO, Duration::ZERO);
            let mut spare = SaturationStates::default();
            for item in input_rx {
                let item = item
                    .map_err(PipelineError::from)
                    .and_then(|raw| solve(run, raw, fields, options, work, &mut busy, &mut spare));
                let failed = item.is_err();
                if result_tx.send(item).is_err() || failed {
                    break;
                }
            }
            busy
        });

        let stages = Stages {
            plan,
            fields,
            options,
            work,
        };
        let written = write_results(result_rx, &stages, sink, progress, &mut times);
        times.read = reader
            .join()
            .map_err(|_| PipelineError::Internal("the reader thread panicked".into()))?;
        (times.compute, times.columns) = solver
            .join()
            .map_err(|_| PipelineError::Internal("the solver thread panicked".into()))?;
        written.map(|()| times)
    })
}

/// What the writer needs to know of the job.
struct Stages<'a> {
    plan: &'a SlabPlan,
    fields: &'a [OutputField],
    options: &'a JobOptions,
    work: Option<&'a ColumnWork>,
}

/// The writing end of [`stream`], on the calling thread (the output handle never moves).
fn write_results(
    results: impl IntoIterator<Item = Result<Solved, PipelineError>>,
    stages: &Stages,
    sink: Sink<'_>,
    progress: &mut dyn Progress,
    times: &mut StageTimes,
) -> Result<(), PipelineError> {
    let Stages {
        plan,
        fields,
        options,
        work,
    } = *stages;
    let Sink {
        file,
        partial,
        layout,
        ledger,
    } = sink;
    // The corrosive extent of the step being written, merged slab by slab.
    let mut extent = None;
    for item in results {
        let Solved {
            cells: result,
            columns,
        } = item?;
        let t = Instant::now();
        write_slab(file, partial, layout, fields, &result)?;
        if let (Some(work), Some(columns)) = (work, columns) {
            let with_step_zero = ledger.peers_on_step_zero();
            write_columns(
                file,
                partial,
                layout,
                work,
                &columns,
                plan.shape,
                with_step_zero,
            )?;
            match &mut extent {
                None => extent = Some(columns.extent),
                Some(sum) => sum
                    .merge(&columns.extent)
                    .map_err(|e| PipelineError::Internal(e.to_string()))?,
            }
        }
        times.write += t.elapsed();
        let cells = result.flags.len() as u64;
        times.cells += cells;
        ledger.count(result.step, result.counts);
        progress.advance(cells);
        if result.rows.end == plan.shape[1] {
            // A finished time step: its extent, then make it durable and record it.
            let t = Instant::now();
            if let (Some(work), Some(sum)) = (work, extent.take()) {
                write_extent_step(file, partial, layout, work.plan(), result.step, &sum)?;
            }
            nc(file.sync(), partial, || {
                format!("flushing time step {}", result.step + 1)
            })?;
            sync_file(partial)?;
            let steps_done = ledger.step_durable(result.step)?;
            times.write += t.elapsed();
            progress.step_finished(steps_done, plan.steps);
            if options.stop_after_steps == Some(steps_done) && steps_done < plan.steps {
                return Err(PipelineError::StopHook);
            }
        }
        if let Some(signal) = options.stop.requested() {
            return Err(PipelineError::Signal { signal });
        }
    }
    if let Some(signal) = options.stop.requested() {
        return Err(PipelineError::Signal { signal });
    }
    Ok(())
}

/// Flushes a file's data to disk.
pub(crate) fn sync_file(path: &Path) -> Result<(), PipelineError> {
    fs::File::open(path)
        .and_then(|f| f.sync_all())
        .map_err(|e| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("cannot flush to disk: {e}"),
        })
}
