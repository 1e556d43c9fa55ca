//! One compute job shared by the ranks of an MPI job (feature `mpi`): the time steps, or
//! blocks of rows of the last steps, are dealt out in rounds (see [`crate::deal`]), each rank
//! reads and solves its own, and all ranks write the one output collectively through parallel
//! netCDF-4/HDF5, with the chunking and compression of a single-process output.
//!
//! Every collective write needs every rank, so a rank with nothing left in a round (or in a
//! split step's turn) computes and writes the round's first step (the turn's first block)
//! again, the same values to the same place; its flag counts are left out. A step split
//! among the ranks has its extent summed over them (exactly) before it is written.

use crate::columns::ColumnWork;
use crate::deal::{Deal, StepRows, Unit};
use crate::error::nc;
use crate::flags::{FlagCounts, FLAG_COUNT_FIELDS};
use crate::job::{
    column_work, place_output, plan_job, run_job, setup_failure, Ending, JobOptions, JobPlan,
    JobSummary, OutputSetup, Progress,
};
use crate::leftovers::remove_leftovers;
use crate::output::{partial_path, progress_path, utc_timestamp, OutputLayout};
use crate::resume::{sync_parent, ProgressRecord};
use crate::shared_file::{open_for_collective_writing, write_collectively};
use crate::start::{continue_partial, decide_start, Start};
use crate::stream::{stream, Ledger, Sink};
use crate::{extent_table::write_extent_table, PipelineError};
use acidscape_analysis::extent::CorrosiveExtent;
use acidscape_gridio::Run;
use mpi::environment::Universe;
use mpi::topology::SimpleCommunicator;
use mpi::traits::*;
use std::fs;
use std::path::Path;
use std::time::Instant;

/// The processes of an MPI job, from `MPI_Init` to `MPI_Finalize` (when dropped).
pub struct Ranks {
    world: SimpleCommunicator,
    // Dropped last: finalises MPI.
    _universe: Universe,
}

impl Ranks {
    /// Starts MPI. Only the calling thread makes MPI calls (the output is written there).
    pub fn init() -> Result<Ranks, PipelineError> {
        let (universe, threading) = mpi::initialize_with_threading(mpi::Threading::Funneled)
            .ok_or_else(|| PipelineError::Internal("MPI was started twice".into()))?;
        if threading < mpi::Threading::Funneled {
            return Err(PipelineError::Internal(
                "this MPI library cannot be called from the main thread of a threaded process (MPI_THREAD_FUNNELED)".into(),
            ));
        }
        Ok(Ranks {
            world: universe.world(),
            _universe: universe,
        })
    }

    /// This process's rank, 0 to `size() - 1`.
    pub fn rank(&self) -> usize {
        self.world.rank() as usize
    }

    /// Ranks in the job.
    pub fn size(&self) -> usize {
        self.world.size() as usize
    }

    /// Ends every rank of the job at once (`MPI_Abort`), with `code` as the exit status.
    pub fn abort(&self, code: i32) -> ! {
        self.world.abort(code)
    }

    /// Returns once every rank has called it.
    pub fn wait_for_all(&self) {
        self.world.barrier();
    }

    /// Every rank's `values` (as many on every rank), in rank order, on every rank.
    fn gather<T: Equivalence + Copy + Default>(&self, values: &[T]) -> Vec<T> {
        let mut all = vec![T::default(); values.len() * self.size()];
        self.world.all_gather_into(values, &mut all[..]);
        all
    }

    /// Every rank's `values` (any number on each), in rank order, on every rank.
    pub fn exchange<T: Equivalence + Copy + Default>(&self, values: &[T]) -> Vec<Vec<T>> {
        let lengths = self.gather(&[values.len() as u64]);
        let longest = lengths.iter().copied().max().unwrap_or(0) as usize;
        if longest == 0 {
            // Nothing to send (MPI refuses a gather of empty buffers).
            return vec![Vec::new(); self.size()];
        }
        let mut padded = values.to_vec();
        padded.resize(longest, T::default());
        let all = self.gather(&padded[..]);
        (lengths.iter().enumerate())
            .map(|(rank, &length)| all[rank * longest..][..length as usize].to_vec())
            .collect()
    }

    /// Creates (replacing) a netCDF-4 file at `path` that every rank writes: a collective
    /// call, as is every definition in it; once defined, see [`Ranks::write_collectively`].
    pub fn create_shared_file(&self, path: &Path) -> Result<netcdf::FileMut, netcdf::Error> {
        let info = unsafe { mpi::ffi::RSMPI_INFO_NULL };
        netcdf::create_par_with(path, self.world.as_raw(), info, netcdf::Options::NETCDF4)
    }

    /// Sets every variable of a shared file (see [`Ranks::create_shared_file`]) to collective
    /// access, as writes of compressed variables by several ranks need.
    pub fn write_collectively(
        &self,
        file: &netcdf::FileMut,
        path: &Path,
    ) -> Result<(), PipelineError> {
        write_collectively(file, path)
    }

    /// Rank 0's text, on every rank.
    fn same_text(&self, text: String) -> String {
        let root = self.world.process_at_rank(0);
        let mut bytes = text.into_bytes();
        let mut len = bytes.len() as u64;
        root.broadcast_into(&mut len);
        bytes.resize(len as usize, 0);
        root.broadcast_into(&mut bytes[..]);
        String::from_utf8_lossy(&bytes).into_owned()
    }
}

/// Runs a compute job on all ranks, writing `options.output`; with one rank, the
/// single-process job. Rank 0 decides where the job starts (from the beginning, or after the
/// finished steps of an interrupted run with `--resume`) and every rank follows; it keeps the
/// progress record and places the finished output. Any rank's error must end the whole job
/// (see [`Ranks::abort`]), the others would wait for it in the next collective call; except
/// [`PipelineError::AllRanks`], which every rank has.
pub fn run_job_on_ranks(
    run: &Run,
    options: &JobOptions,
    progress: &mut dyn Progress,
    ranks: &Ranks,
) -> Result<JobSummary, PipelineError> {
    if ranks.size() == 1 {
        return run_job(run, options, progress);
    }
    let started = Instant::now();
    // Every rank plans (and checks what an earlier run left); rank 0's outcome decides.
    let planned = plan_job(run, options).and_then(|job| {
        let work = column_work(run, &job)?;
        Ok((job, work))
    });
    let start = agree_on_start(run, &planned, options, progress, ranks)?;
    let Start {
        mut record,
        resuming,
    } = start;
    let (job, work) = planned?;
    let plan = &job.slabs;
    let output = options.output.clone();
    let partial = partial_path(&output);
    let record_path = progress_path(&output);
    let first_step = record.steps_done.min(plan.steps);
    let ended = Ending {
        partial: &partial,
        steps_total: plan.steps,
        resuming,
        first_step,
    };
    let setup = OutputSetup {
        run,
        job: &job,
        options,
        work: work.as_ref(),
        partial: &partial,
    };
    let (mut file, layout) = open_shared(&setup, resuming, ranks)?;
    if ranks.rank() == 0 {
        record
            .save(&record_path)
            .map_err(|e| ended.kept(e, first_step))?;
    }
    if options.stop_after_steps == Some(0) {
        return Err(ended.kept(PipelineError::StopHook, first_step));
    }

    let rows = StepRows::of(plan);
    let deal = Deal::new(first_step, plan.steps, ranks.rank(), ranks.size(), rows);
    let units = deal.units();
    // Rank 0 shows its own share: the ranks go round by round together.
    let own_rows: usize = units.iter().map(|unit| unit.rows.len()).sum();
    progress.begin(plan.cells_per_row() * own_rows as u64, 0);
    let slabs: Vec<(usize, std::ops::Range<usize>)> = units
        .iter()
        .map(|unit| (unit.step, unit.rows.clone()))
        .collect();
    let mut ledger = RankLedger {
        ranks,
        record: &mut record,
        path: &record_path,
        deal,
        units,
        counted: 0,
        round: 0,
        pending: FlagCounts::default(),
    };
    let sink = Sink {
        file: &mut file,
        partial: &partial,
        layout: &layout,
        ledger: &mut ledger,
    };
    let (fields, work_ref) = (&job.fields, work.as_ref());
    let read_beside = &job.uncertainty_fields;
    let streamed = stream(
        run,
        plan,
        fields,
        read_beside,
        options,
        work_ref,
        None,
        slabs.into_iter(),
        sink,
        progress,
    );
    progress.finish();
    let times = streamed.map_err(|e| ended.kept(e, record.steps_done))?;
    let closing = Instant::now();
    nc(file.close(), &partial, || "closing the file".into())
        .map_err(|e| ended.kept(e, plan.steps))?;
    let closing = closing.elapsed();
    let extent =
        place_on_rank_zero(&setup, &record, ranks).map_err(|e| ended.kept(e, plan.steps))?;
    Ok(JobSummary {
        output,
        plan: job.slabs.clone(),
        first_step,
        cells_processed: plan.cells_per_step() * (plan.steps - first_step) as u64,
        counts: record.counts,
        wall: started.elapsed(),
        read: times.read,
        compute: times.compute,
        columns: times.columns,
        write: times.write,
        // This rank's own: reading its steps, its share of the collective writes, closing.
        serial_netcdf: times.netcdf + closing,
        extent,
        uncertainty: options.uncertainty.is_some(),
    })
}

/// Rank 0's plan and [`decide_start`], on every rank: where the job starts and the record it
/// keeps, or rank 0's refusal as [`PipelineError::AllRanks`].
fn agree_on_start(
    run: &Run,
    planned: &Result<(JobPlan, Option<ColumnWork>), PipelineError>,
    options: &JobOptions,
    progress: &mut dyn Progress,
    ranks: &Ranks,
) -> Result<Start, PipelineError> {
    const RESUMING: &str = "resuming\n";
    const STARTING: &str = "starting\n";
    const FAILED: &str = "failed ";
    let told = if ranks.rank() == 0 {
        let decided = match planned {
            Ok((job, work)) => decide_start(run, job, options, work.as_ref(), progress),
            Err(error) => Err(PipelineError::AllRanks {
                message: error.to_string(),
                signal: error.signal(),
            }),
        };
        match decided {
            Ok(start) if start.resuming => format!("{RESUMING}{}", start.record.text()),
            Ok(start) => format!("{STARTING}{}", start.record.text()),
            Err(error) => {
                let signal = error.signal().map_or(String::new(), |s| s.to_string());
                format!("{FAILED}{signal}\n{error}")
            }
        }
    } else {
        String::new()
    };
    let told = ranks.same_text(told);
    let record_path = progress_path(&options.output);
    if let Some(record) = told.strip_prefix(RESUMING) {
        return Ok(Start {
            record: ProgressRecord::parse(record, &record_path)?,
            resuming: true,
        });
    }
    if let Some(record) = told.strip_prefix(STARTING) {
        return Ok(Start {
            record: ProgressRecord::parse(record, &record_path)?,
            resuming: false,
        });
    }
    let (signal, message) = told
        .strip_prefix(FAILED)
        .and_then(|rest| rest.split_once('\n'))
        .ok_or_else(|| PipelineError::Internal("rank 0's decision was lost".into()))?;
    Err(PipelineError::AllRanks {
        message: message.to_string(),
        signal: signal.parse().ok(),
    })
}

/// The partial output opened on every rank for collective writing: the interrupted run's,
/// continued, or a new one.
fn open_shared(
    setup: &OutputSetup,
    resuming: bool,
    ranks: &Ranks,
) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
    if !resuming {
        return create_shared(setup, ranks);
    }
    // The history attribute must be the same on every rank.
    let resumed_at = ranks.same_text(utc_timestamp());
    let file = open_for_collective_writing(setup.partial, &ranks.world)?;
    let (plan, command_line) = (&setup.job.slabs, &setup.options.command_line);
    continue_partial(file, setup.partial, plan, &resumed_at, command_line)
}

/// Creates and defines the output on every rank (parallel netCDF-4), after rank 0 removed
/// what an earlier run left; every variable is written collectively.
fn create_shared(
    setup: &OutputSetup,
    ranks: &Ranks,
) -> Result<(netcdf::FileMut, OutputLayout), PipelineError> {
    let (output, partial) = (&setup.options.output, setup.partial);
    // Every rank has looked at the leftovers (in `plan_job`) before rank 0 removes them.
    ranks.wait_for_all();
    if ranks.rank() == 0 {
        remove_leftovers(output)?;
    }
    ranks.wait_for_all();
    // The history attribute must be the same on every rank.
    let created = ranks.same_text(utc_timestamp());
    let defined = setup.define(created, || ranks.create_shared_file(partial));
    let (file, layout) = defined.map_err(|e| setup_failure(partial, e))?;
    write_collectively(&file, partial)?;
    Ok((file, layout))
}

/// Once every rank has closed the output, rank 0 reads the extent table back from it, makes
/// the output durable, renames it into place and removes the progress record; every rank
/// returns when that is done.
fn place_on_rank_zero(
    setup: &OutputSetup,
    record: &ProgressRecord,
    ranks: &Ranks,
) -> Result<Option<crate::ExtentOverview>, PipelineError> {
    ranks.wait_for_all();
    let placed = if ranks.rank() == 0 {
        let (run, work) = (setup.run, setup.work);
        place_output_and_table(run, &setup.job.output, work, record, setup.job.slabs.steps)
    } else {
        Ok(None)
    };
    // Rank 0 ends every rank when it fails (see `run_job_on_ranks`).
    if placed.is_ok() {
        ranks.wait_for_all();
    }
    placed
}

/// The extent table read back from the closed output, then the output placed.
fn place_output_and_table(
    run: &Run,
    output: &Path,
    work: Option<&ColumnWork>,
    record: &ProgressRecord,
    steps: usize,
) -> Result<Option<crate::ExtentOverview>, PipelineError> {
    let partial = partial_path(output);
    if record.steps_done < steps {
        return Err(PipelineError::Internal(format!(
            "only {} of {steps} time steps were written",
            record.steps_done
        )));
    }
    let extent = match work {
        Some(work) => {
            let file = nc(netcdf::open(&partial), &partial, || {
                "reopening the written output".into()
            })?;
            let dates = run.step_dates();
            Some(write_extent_table(&file, &partial, output, &dates, work)?)
        }
        None => None,
    };
    place_output(&partial, output)?;
    let _ = fs::remove_file(progress_path(output));
    sync_parent(output);
    Ok(extent)
}

/// The progress of a job on ranks: each round's flag counts summed over the ranks, and the
/// record saved by rank 0 once every rank has made its share of the round durable.
struct RankLedger<'a> {
    ranks: &'a Ranks,
    record: &'a mut ProgressRecord,
    path: &'a Path,
    deal: Deal,
    /// This rank's slabs, in order.
    units: Vec<Unit>,
    /// Slabs counted so far.
    counted: usize,
    round: usize,
    pending: FlagCounts,
}

impl RankLedger<'_> {
    /// The slab counted last.
    fn last_unit(&self) -> Option<&Unit> {
        self.counted.checked_sub(1).and_then(|i| self.units.get(i))
    }
}

impl Ledger for RankLedger<'_> {
    fn count(&mut self, step: usize, rows: &std::ops::Range<usize>, counts: FlagCounts) -> bool {
        self.counted += 1;
        let unit = self.last_unit();
        // Slabs come back in the order dealt (the stream keeps it).
        let repeat = unit.is_some_and(|u| u.step == step && u.rows == *rows && u.repeat);
        if !repeat {
            self.pending += counts;
        }
        // A repeated whole step carries that step's whole extent (written again, the same);
        // a repeated block of a split step must not add to the step's sum over the ranks.
        !(repeat && self.deal.is_split(self.round))
    }

    fn closes_round(&self, _rows: &std::ops::Range<usize>, _grid_rows: usize) -> bool {
        self.last_unit().is_some_and(|unit| unit.closes_round)
    }

    fn whole_extent(
        &mut self,
        own: Option<CorrosiveExtent>,
    ) -> Result<Option<CorrosiveExtent>, PipelineError> {
        let own = match own {
            Some(own) if self.deal.is_split(self.round) => own,
            whole_or_none => return Ok(whole_or_none),
        };
        // Exact sums: the same bits whatever the ranks and the order of merging.
        let mut whole = CorrosiveExtent::new(own.thresholds().clone());
        for flat in self.ranks.exchange(&own.to_flat()) {
            whole
                .merge_flat(&flat)
                .map_err(|e| PipelineError::Internal(format!("a split step's extent: {e}")))?;
        }
        Ok(Some(whole))
    }

    fn step_durable(&mut self, _step: usize) -> Result<usize, PipelineError> {
        // Also the point where every rank has flushed the round (a collective call). In a
        // round of whole steps rank k wrote step k of the round: recorded step by step, as
        // one process would; a split step is finished by all ranks together.
        let round = self
            .ranks
            .gather(&std::mem::take(&mut self.pending).as_vec());
        let steps = self.deal.round_steps(self.round);
        let done = steps.end;
        let shares = round.chunks(FLAG_COUNT_FIELDS);
        let lost = || PipelineError::Internal("the flag counts of a round were lost".into());
        if self.deal.is_split(self.round) {
            for counts in shares {
                self.record.counts += FlagCounts::from_slice(counts).ok_or_else(lost)?;
            }
            self.record.finish_steps(done);
        } else {
            for (step, counts) in steps.zip(shares) {
                self.record.counts += FlagCounts::from_slice(counts).ok_or_else(lost)?;
                self.record.finish_steps(step + 1);
            }
        }
        self.round += 1;
        if self.ranks.rank() == 0 {
            self.record.save(self.path)?;
        }
        Ok(done)
    }

    fn peers_on_step_zero(&self) -> bool {
        // A resumed job (first round past step 0) has the step-0 geometry in the output.
        self.round == 0 && self.deal.rounds() > 0 && self.deal.round_steps(0).start == 0
    }
}
