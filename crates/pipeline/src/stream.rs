//! The overlapping read → solve → write loop of a job, with durable progress after every
//! finished time step and a clean stop when asked.

use crate::cells::{solve_slab, KeepOmega, SaturationStates, SlabResult, SlabSolver};
use crate::cells_uncertainty::{FieldAmounts, SlabUncertainty};
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
use acidscape_analysis::extent::CorrosiveExtent;
use acidscape_chem::Source;
use acidscape_gridio::{GridError, RawSlab, Run, UncertaintyField};
use std::fs;
use std::ops::Range;
use std::path::Path;
use std::sync::mpsc::sync_channel;
use std::sync::{Mutex, PoisonError};
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
    /// Adds the flag counts of the slab `rows` of `step` just written; returns whether the
    /// slab's extent goes into this process's extent of the step.
    fn count(&mut self, step: usize, rows: &Range<usize>, counts: FlagCounts) -> bool;
    /// Whether the slab just counted ends a round of steps (then they are flushed): the
    /// last slab of its step, in one process.
    fn closes_round(&self, rows: &Range<usize>, grid_rows: usize) -> bool {
        rows.end == grid_rows
    }
    /// The corrosive extent of the step being finished, from this process's share of it.
    fn whole_extent(
        &mut self,
        own: Option<CorrosiveExtent>,
    ) -> Result<Option<CorrosiveExtent>, PipelineError> {
        Ok(own)
    }
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
    fn count(&mut self, _step: usize, _rows: &Range<usize>, counts: FlagCounts) -> bool {
        self.record.counts += counts;
        true
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
    /// Time with netCDF reads or writes under way (see [`SerialNetcdf`]).
    pub netcdf: Duration,
    pub cells: u64,
}

/// The job's serial netCDF time. libnetcdf serves one call at a time (the netcdf crate holds one
/// global lock), so the time during which the reader or the writer is inside netCDF work is
/// the part of the run that no number of threads can shorten. Only entries and exits are
/// recorded (a lock held for the whole work would also keep the other side from its own
/// non-netCDF work, and cost memory: measured).
#[derive(Debug, Default)]
pub(crate) struct SerialNetcdf {
    clock: Mutex<SerialClock>,
}

#[derive(Debug, Default)]
struct SerialClock {
    /// Sides inside netCDF work now, and since when at least one has been.
    inside: u32,
    since: Option<Instant>,
    /// Time with at least one side inside.
    busy: Duration,
}

impl SerialNetcdf {
    /// Runs `work` (netCDF reads or writes) and records its time.
    pub(crate) fn run<T>(&self, work: impl FnOnce() -> T) -> T {
        let started = Instant::now();
        {
            let mut clock = self.clock.lock().unwrap_or_else(PoisonError::into_inner);
            if clock.inside == 0 {
                clock.since = Some(started);
            }
            clock.inside += 1;
        }
        let result = work();
        let ended = Instant::now();
        let mut clock = self.clock.lock().unwrap_or_else(PoisonError::into_inner);
        clock.inside -= 1;
        if clock.inside == 0 {
            if let Some(since) = clock.since.take() {
                clock.busy += ended - since;
            }
        }
        result
    }

    /// The time with netCDF work under way so far.
    pub(crate) fn total(&self) -> Duration {
        self.clock
            .lock()
            .unwrap_or_else(PoisonError::into_inner)
            .busy
    }
}

/// The inputs' standard-uncertainty fields of a job, each with the input it is for.
pub(crate) type InputFields = [(Source, UncertaintyField)];

/// One slab as read: the run's values and each uncertainty field's, not yet converted.
pub(crate) struct SlabRead {
    raw: RawSlab,
    fields: Vec<Vec<f64>>,
}

/// Reads one slab of the run and of each of its uncertainty fields (libnetcdf work only).
pub(crate) fn read_slab(
    run: &Run,
    fields: &InputFields,
    step: usize,
    rows: Range<usize>,
) -> Result<SlabRead, GridError> {
    let raw = run.read_raw_slab(step, rows.clone())?;
    let fields = (fields.iter())
        .map(|(_, field)| field.read(step, rows.clone()))
        .collect::<Result<_, _>>()?;
    Ok(SlabRead { raw, fields })
}

/// A solved slab with its column analysis, on its way to the writer.
pub(crate) struct Solved {
    cells: SlabResult,
    columns: Option<ColumnResult>,
}

/// Solves one slab and analyses its columns; the f64 Ω the analysis needed are dropped
/// before the slab goes on to the writer.
#[allow(clippy::too_many_arguments)]
fn solve(
    run: &Run,
    read: SlabRead,
    fields: &[OutputField],
    input_fields: &InputFields,
    options: &JobOptions,
    work: Option<&ColumnWork>,
    busy: &mut (Duration, Duration),
    spare: &mut SaturationStates,
) -> Result<Solved, PipelineError> {
    let t = Instant::now();
    let inputs = run.convert_slab(read.raw);
    let amounts: Vec<FieldAmounts> = (input_fields.iter().zip(read.fields))
        .map(|((source, field), mut values)| {
            field.convert(&mut values, &inputs);
            FieldAmounts {
                source: *source,
                relative: field.is_relative(),
                values,
            }
        })
        .collect();
    let keep = work.map_or(KeepOmega::default(), ColumnWork::keep);
    let buffers = std::mem::take(spare);
    let solver = SlabSolver::Kernel;
    let uncertainty = (options.uncertainty.as_ref()).map(|request| SlabUncertainty {
        request,
        fields: &amounts,
    });
    let mut cells = solve_slab(
        solver,
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
    input_fields: &InputFields,
    options: &JobOptions,
    work: Option<&ColumnWork>,
    first: Option<SlabRead>,
    slabs: impl Iterator<Item = (usize, Range<usize>)> + Send,
    sink: Sink<'_>,
    progress: &mut dyn Progress,
) -> Result<StageTimes, PipelineError> {
    let stop = &options.stop;
    let mut times = StageTimes::default();
    let serial = &SerialNetcdf::default();
    std::thread::scope(|scope| -> Result<StageTimes, PipelineError> {
        // The reader only reads (libnetcdf is serialised); unit and TEOS-10 conversions run with
        // the solver on the rayon pool, so the reader never queues behind the solver's jobs.
        let (input_tx, input_rx) = sync_channel::<Result<SlabRead, GridError>>(1);
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
                let slab = serial.run(|| read_slab(run, input_fields, step, rows));
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
                let item = item.map_err(PipelineError::from).and_then(|read| {
                    let (busy, spare) = (&mut busy, &mut spare);
                    solve(run, read, fields, input_fields, options, work, busy, spare)
                });
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
        let written = write_results(result_rx, &stages, sink, progress, &mut times, serial);
        times.read = reader
            .join()
            .map_err(|_| PipelineError::Internal("the reader thread panicked".into()))?;
        (times.compute, times.columns) = solver
            .join()
            .map_err(|_| PipelineError::Internal("the solver thread panicked".into()))?;
        times.netcdf = serial.total();
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
    serial: &SerialNetcdf,
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
        let with_step_zero = ledger.peers_on_step_zero();
        serial.run(|| -> Result<(), PipelineError> {
            write_slab(file, partial, layout, fields, &result)?;
            if let (Some(work), Some(columns)) = (work, &columns) {
                write_columns(
                    file,
                    partial,
                    layout,
                    work,
                    columns,
                    plan.shape,
                    with_step_zero,
                )?;
            }
            Ok(())
        })?;
        let adds_extent = ledger.count(result.step, &result.rows, result.counts);
        if let Some(columns) = columns {
            let sum = extent
                .get_or_insert_with(|| CorrosiveExtent::new(columns.extent.thresholds().clone()));
            if adds_extent {
                sum.merge(&columns.extent)
                    .map_err(|e| PipelineError::Internal(e.to_string()))?;
            }
        }
        times.write += t.elapsed();
        let cells = result.flags.len() as u64;
        times.cells += cells;
        progress.advance(cells);
        if ledger.closes_round(&result.rows, plan.shape[1]) {
            // A finished round: its extent, then make it durable and record it.
            let t = Instant::now();
            let extent = ledger.whole_extent(extent.take())?;
            serial.run(|| -> Result<(), PipelineError> {
                if let (Some(work), Some(sum)) = (work, extent) {
                    write_extent_step(file, partial, layout, work.plan(), result.step, &sum)?;
                }
                nc(file.sync(), partial, || {
                    format!("flushing time step {}", result.step + 1)
                })
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn serial_time_counts_overlapping_work_once() {
        let serial = SerialNetcdf::default();
        let spin = || {
            std::hint::black_box((0..10_000u64).fold(0u64, |a, b| std::hint::black_box(a ^ b)));
        };
        let timed = |work: &dyn Fn()| {
            let started = Instant::now();
            work();
            started.elapsed()
        };
        let alone = timed(&|| serial.run(spin));
        assert!(serial.total() <= alone);
        // Work that overlaps other work adds only the span of the two together.
        let before = serial.total();
        let outer = timed(&|| serial.run(|| serial.run(spin)));
        let added = serial.total() - before;
        assert!(added <= outer && added > Duration::ZERO);
        assert_eq!(serial.clock.lock().unwrap().inside, 0);
    }
}
