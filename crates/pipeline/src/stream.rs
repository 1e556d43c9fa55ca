//! The overlapping read → solve → write loop of a job, with durable progress after every
//! finished time step and a clean stop when asked.

use crate::cells::{solve_slab, SlabResult};
use crate::error::nc;
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

/// Where a stream writes, and what it records.
pub(crate) struct Sink<'a> {
    pub file: &'a mut netcdf::FileMut,
    pub partial: &'a Path,
    pub layout: &'a OutputLayout,
    pub record: &'a mut ProgressRecord,
    pub record_path: &'a Path,
}

/// Busy time of each stage.
#[derive(Clone, Copy, Debug, Default)]
pub(crate) struct StageTimes {
    pub read: Duration,
    pub compute: Duration,
    pub write: Duration,
    pub cells: u64,
}

/// Streams `slabs` (the first already read) through the solver into `sink`. Returns the
/// cause when it stops early; finished steps stay durable in the sink whatever happens.
#[allow(clippy::too_many_arguments)]
pub(crate) fn stream(
    run: &Run,
    plan: &SlabPlan,
    fields: &[OutputField],
    options: &JobOptions,
    first: Option<RawSlab>,
    slabs: impl Iterator<Item = (usize, Range<usize>)> + Send,
    sink: Sink<'_>,
    progress: &mut dyn Progress,
) -> Result<StageTimes, PipelineError> {
    let constants = options.constants;
    let stop = &options.stop;
    let mut times = StageTimes::default();
    std::thread::scope(|scope| -> Result<StageTimes, PipelineError> {
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
            let mut busy = Duration::ZERO;
            for item in input_rx {
                let item = item.map(|inputs| {
                    let t = Instant::now();
                    let result = solve_slab(&run.convert_slab(inputs), fields, &constants);
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

        let written = write_results(result_rx, plan, fields, options, sink, progress, &mut times);
        times.read = reader
            .join()
            .map_err(|_| PipelineError::Internal("the reader thread panicked".into()))?;
        times.compute = solver
            .join()
            .map_err(|_| PipelineError::Internal("the solver thread panicked".into()))?;
        written.map(|()| times)
    })
}

/// The writing end of [`stream`], on the calling thread (the output handle never moves).
fn write_results(
    results: impl IntoIterator<Item = Result<SlabResult, GridError>>,
    plan: &SlabPlan,
    fields: &[OutputField],
    options: &JobOptions,
    sink: Sink<'_>,
    progress: &mut dyn Progress,
    times: &mut StageTimes,
) -> Result<(), PipelineError> {
    let Sink {
        file,
        partial,
        layout,
        record,
        record_path,
    } = sink;
    for item in results {
        let result = item?;
        let t = Instant::now();
        write_slab(file, partial, layout, fields, &result)?;
        times.write += t.elapsed();
        let cells = result.flags.len() as u64;
        times.cells += cells;
        record.counts += result.counts;
        progress.advance(cells);
        if result.rows.end == plan.shape[1] {
            // A finished time step: make it durable, then record it.
            let t = Instant::now();
            nc(file.sync(), partial, || {
                format!("flushing time step {}", result.step + 1)
            })?;
            sync_file(partial)?;
            record.finish_steps(result.step + 1);
            record.save(record_path)?;
            times.write += t.elapsed();
            progress.step_finished(record.steps_done, plan.steps);
            if options.stop_after_steps == Some(record.steps_done) && record.steps_done < plan.steps
            {
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
