//! `compute`: indicator fields for a whole run, written as CF NetCDF-4.

use crate::grid_uncertainty::GridUncertaintyOptions;
use crate::progress::{format_rate, BarProgress, LogProgress};
use crate::run_options::{ConstantOptions, RunOptions};
use acidscape_chem::ConstantChoice;
use acidscape_gridio::Run;
#[cfg(not(feature = "mpi"))]
use acidscape_pipeline::run_job;
use acidscape_pipeline::{
    format_bytes, parse_list, parse_memory_size, HorizonChoice, IndicatorChoice, JobOptions,
    JobSummary, Progress, StopRequest, FLAG_BITS,
};
use clap::Args;
use std::error::Error;
use std::io::{IsTerminal, Write};
use std::path::PathBuf;
use std::time::Duration;

/// Environment variable that stops a job after N finished time steps, as if it had been
/// interrupted (used by the tests of `--resume`).
pub const STOP_AFTER_STEPS_ENV: &str = "ACIDSCAPE_STOP_AFTER_STEPS";

#[derive(Args, Debug)]
pub struct ComputeArgs {
    #[command(flatten)]
    pub run: RunOptions,

    #[command(flatten)]
    pub constants: ConstantOptions,

    /// Output file (CF NetCDF-4); written as .NAME.partial beside it and renamed when complete
    #[arg(short, long, value_name = "FILE")]
    pub output: PathBuf,

    /// Indicators to compute, comma-separated, from: ph, co3, hco3, co2 (CO2*), pco2, fco2,
    /// omega-aragonite, omega-calcite, revelle
    #[arg(
        long,
        value_name = "LIST",
        default_value = "ph,co3,pco2,omega-aragonite,omega-calcite"
    )]
    pub indicators: String,

    /// pH scales to write when ph is chosen, comma-separated: total, seawater, free
    #[arg(long, value_name = "LIST", default_value = "total")]
    pub ph_scales: String,

    /// Units of CO3--, HCO3- and CO2*: mol-m3 (per volume, using the run's density) or umol-kg
    #[arg(long, value_name = "UNIT", default_value = "mol-m3")]
    pub concentration_units: String,

    /// Do not compute saturation horizons and the extent of corrosive water (computed by
    /// default whenever omega-aragonite or omega-calcite is)
    #[arg(long)]
    pub no_horizons: bool,

    /// Extra saturation thresholds besides 1 for one mineral, e.g. aragonite=1.5,3 (repeat the
    /// option for the other mineral); each gives its own horizon depths and extent
    #[arg(
        long = "omega-thresholds",
        value_name = "MINERAL=LIST",
        conflicts_with = "no_horizons"
    )]
    pub omega_thresholds: Vec<String>,

    #[command(flatten)]
    pub uncertainty: GridUncertaintyOptions,

    /// Memory the job may use; slabs are sized to fit (e.g. 512MiB, 2GiB)
    #[arg(long, value_name = "SIZE", default_value = "2GiB")]
    pub memory_budget: String,

    /// Deflate level of the output variables, 0 (none) to 9: 1 is the fastest, 2 about 11 %
    /// smaller for more time (chunks are deflated on the threads below)
    #[arg(long, value_name = "LEVEL", default_value_t = 1)]
    pub deflate_level: i32,

    /// Threads that solve, and that deflate output chunks (default: all cores)
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,

    /// Replace an existing output (or start over after an interrupted run)
    #[arg(long, conflicts_with = "resume")]
    pub overwrite: bool,

    /// Continue an interrupted run (killed, stopped by SIGTERM at the wall-time limit, or ended
    /// by a read or write error) from its last finished time step, with the same options; inputs
    /// are recognised by content, so a copied or touched run still resumes. A build with the
    /// `mpi` feature resumes under mpirun or srun on any number of ranks, whatever the number
    /// that stopped
    #[arg(long)]
    pub resume: bool,
}

pub fn run(args: &ComputeArgs) -> Result<(), Box<dyn Error>> {
    // Every option is checked before the run is opened or any output touched.
    let indicators = IndicatorChoice {
        indicators: parse_list(&args.indicators)?,
        ph_scales: parse_list(&args.ph_scales)?,
        concentration_unit: args.concentration_units.parse()?,
    };
    indicators.fields()?;
    let mut horizons = HorizonChoice {
        enabled: !args.no_horizons,
        ..HorizonChoice::default()
    };
    for text in &args.omega_thresholds {
        horizons.add_thresholds(text)?;
    }
    horizons.plan(&indicators)?;
    let uncertainty = args.uncertainty.request()?;
    let memory_budget_bytes = parse_memory_size(&args.memory_budget)?;
    let constants = args.constants.choice()?;
    let stop_after_steps = match std::env::var(STOP_AFTER_STEPS_ENV) {
        Ok(text) => Some(text.trim().parse::<usize>().map_err(|_| {
            format!("{STOP_AFTER_STEPS_ENV}={text}: expected a number of time steps")
        })?),
        Err(_) => None,
    };
    if let Some(threads) = args.threads {
        if threads == 0 {
            return Err("--threads: expected at least 1".into());
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build_global()
            .map_err(|e| format!("--threads: {e}"))?;
    }

    // From here on SIGINT and SIGTERM stop the job cleanly (see stop_on_signals).
    let stop = stop_on_signals()?;
    let run = Run::open(&args.run.spec()?)?;
    let options = JobOptions {
        output: args.output.clone(),
        overwrite: args.overwrite,
        resume: args.resume,
        memory_budget_bytes,
        constants,
        indicators,
        command_line: command_line(),
        deflate_level: args.deflate_level,
        stop_after_steps,
        max_rows_per_slab: None,
        horizons,
        uncertainty,
        stop,
    };
    let progress: Box<dyn Progress> = if std::io::stderr().is_terminal() {
        Box::new(BarProgress::default())
    } else {
        Box::new(LogProgress::default())
    };
    #[cfg(feature = "mpi")]
    return on_ranks(&run, &options, progress, &constants);
    #[cfg(not(feature = "mpi"))]
    {
        let mut progress = progress;
        let summary = run_job(&run, &options, progress.as_mut())?;
        // The output is complete; a closed stdout (e.g. piped into head) is not an error.
        let _ = writeln!(std::io::stdout(), "{}", summary_text(&summary, &constants));
        Ok(())
    }
}

/// The job shared by the ranks of an MPI job (one rank: the single-process job). Rank 0
/// reports; a rank that fails ends every rank, as the others would wait for it forever.
#[cfg(feature = "mpi")]
fn on_ranks(
    run: &Run,
    options: &JobOptions,
    progress: Box<dyn Progress>,
    constants: &ConstantChoice,
) -> Result<(), Box<dyn Error>> {
    use acidscape_pipeline::{run_job_on_ranks, NoProgress, PipelineError, Ranks};
    let ranks = Ranks::init()?;
    let mut progress = if ranks.rank() == 0 {
        progress
    } else {
        Box::new(NoProgress)
    };
    match run_job_on_ranks(run, options, progress.as_mut(), &ranks) {
        Ok(summary) => {
            if ranks.rank() == 0 {
                let _ = writeln!(std::io::stdout(), "{}", summary_text(&summary, constants));
            }
            Ok(())
        }
        Err(error) if ranks.size() == 1 => Err(error.into()),
        Err(error) => {
            let every_rank = matches!(error, PipelineError::AllRanks { .. });
            end_ranks(ranks, &error, every_rank, exit_status(&error))
        }
    }
}

/// Ends this rank after `error`. An error `every_rank` has: rank 0 reports it as one process
/// would, the others end quietly once it has (mpirun may end the job when the first rank
/// exits). Any other: this rank reports it and ends every rank, as the others would wait for
/// it forever.
#[cfg(feature = "mpi")]
pub(crate) fn end_ranks(
    ranks: acidscape_pipeline::Ranks,
    error: &dyn std::fmt::Display,
    every_rank: bool,
    status: i32,
) -> ! {
    if every_rank {
        if ranks.rank() == 0 {
            let _ = writeln!(std::io::stderr(), "acidscape: error: {error}");
        }
        ranks.wait_for_all();
        drop(ranks);
        signal_hook::low_level::exit(status)
    }
    let (rank, size) = (ranks.rank(), ranks.size());
    // One write, so that the ranks' messages do not interleave.
    let text = format!(
        "acidscape: error on rank {rank} of {size}: {error}\nacidscape: rank {rank} ends all {size} ranks of the job (MPI_Abort)\n"
    );
    let _ = std::io::stderr().write_all(text.as_bytes());
    ranks.abort(status)
}

/// A rank's exit status after `error`: 128 + the signal that stopped the job, else 1.
#[cfg(feature = "mpi")]
fn exit_status(error: &acidscape_pipeline::PipelineError) -> i32 {
    error
        .signal()
        .and_then(|s| i32::try_from(128 + s).ok())
        .unwrap_or(1)
}

/// SIGINT and SIGTERM (a scheduler's wall-time signal) ask the job to stop after the slab in
/// hand; the handlers only store into atomics (async-signal-safe). A second one of either
/// ends the process at once with 128 + its number, for a user who will not wait.
fn stop_on_signals() -> Result<StopRequest, Box<dyn Error>> {
    use signal_hook::consts::{SIGINT, SIGTERM};
    let stop = StopRequest::new();
    let armed = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    for signal in [SIGINT, SIGTERM] {
        let register = || -> std::io::Result<()> {
            // The shutdown goes first, so the first signal only arms it.
            signal_hook::flag::register_conditional_shutdown(signal, 128 + signal, armed.clone())?;
            signal_hook::flag::register(signal, armed.clone())?;
            signal_hook::flag::register_usize(signal, stop.flag(), signal as usize)?;
            Ok(())
        };
        register().map_err(|e| format!("cannot set up the handling of signal {signal}: {e}"))?;
    }
    Ok(stop)
}

/// The command line as typed, quoted where needed, for the history attribute.
pub(crate) fn command_line() -> String {
    std::env::args()
        .map(|arg| {
            if arg.is_empty() || arg.contains(|c: char| c.is_whitespace() || "'\"$*?".contains(c)) {
                format!("'{}'", arg.replace('\'', r"'\''"))
            } else {
                arg
            }
        })
        .collect::<Vec<_>>()
        .join(" ")
}

/// A one-screen account of the job.
fn summary_text(summary: &JobSummary, constants: &ConstantChoice) -> String {
    let seconds = summary.wall.as_secs_f64().max(1e-9);
    let output = summary.output.display();
    let resumed = if summary.first_step > 0 {
        format!(" (resumed at time step {})", summary.first_step + 1)
    } else {
        String::new()
    };
    format!(
        "Wrote {output}\n\
         cells: {} processed{resumed}, grid {} x {} x {} over {} time step(s), {} slab(s) per step\n\
         wall time: {:.2} s; throughput {}\n\
         stage time (stages overlap): read {:.2} s, convert+solve {:.2} s (of which horizons and volumes {:.2} s), write {:.2} s; serial netCDF {:.2} s\n\
         {}\
         {}\n\
         {}\
         peak memory estimate: {}\n\
         open it with: ncdump -h {output}   or   python3 -c \"import xarray; print(xarray.open_dataset('{output}'))\"",
        summary.cells_processed,
        summary.plan.shape[0],
        summary.plan.shape[1],
        summary.plan.shape[2],
        summary.plan.steps,
        summary.plan.slabs_per_step(),
        seconds,
        format_rate(summary.cells_processed as f64 / seconds),
        summary.read.as_secs_f64(),
        summary.compute.as_secs_f64(),
        summary.columns.as_secs_f64(),
        summary.write.as_secs_f64(),
        summary.serial_netcdf.as_secs_f64(),
        serial_note(summary.serial_netcdf, summary.wall),
        flag_summary(summary, constants),
        summary
            .extent
            .as_ref()
            .map_or(String::new(), |e| format!("{e}horizon depths per step: the horizon_depth_* and horizon_status_* variables\n")),
        format_bytes(summary.plan.estimated_peak_bytes()),
    )
}

/// Share of the wall time in serial netCDF calls from which more threads would not help: the
/// rest, spread over any number of threads, could shorten the run by at most a fifth.
const SERIAL_SHARE_LIMIT: f64 = 0.8;

/// One line, ending in a newline, when serial netCDF time is close to the wall time; else none.
fn serial_note(serial_netcdf: Duration, wall: Duration) -> String {
    let wall = wall.as_secs_f64();
    if wall > 0.0 && serial_netcdf.as_secs_f64() >= SERIAL_SHARE_LIMIT * wall {
        format!(
            "more threads would not help: {:.0} % of the wall time went to netCDF reads and writes, \
             which one process makes one at a time; more processes would (MPI ranks: a build with \
             the `mpi` feature under mpirun or srun, see the README)\n",
            100.0 * serial_netcdf.as_secs_f64() / wall
        )
    } else {
        String::new()
    }
}

/// The quality flag's counts over all steps: one line per bit, with the limits behind it.
fn flag_summary(summary: &JobSummary, constants: &ConstantChoice) -> String {
    let counts = summary.counts;
    let mut lines = vec![format!(
        "quality_flag (cells, all steps): land {}; wet {}, of which {} with values and {} with no flag set",
        counts.land,
        counts.wet,
        counts.with_values(),
        counts.no_flag
    )];
    if summary.uncertainty {
        lines.push(format!(
            "  wet cells with indicators but no standard uncertainty (an uncertainty field missing there, or none could be propagated): {}",
            counts.without_uncertainty
        ));
    }
    for bit in FLAG_BITS {
        let limits = bit.limits(constants);
        let why = if limits.is_empty() {
            String::new()
        } else {
            format!(" ({limits})")
        };
        lines.push(format!(
            "  {:>3} {:<34} {}{why}",
            bit.mask,
            bit.meaning,
            counts.of(bit.mask)
        ));
    }
    lines.join("\n")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_note_on_threads_comes_only_when_netcdf_takes_most_of_the_wall_time() {
        let secs = Duration::from_secs_f64;
        assert_eq!(serial_note(secs(7.0), secs(10.0)), "");
        let note = serial_note(secs(8.5), secs(10.0));
        assert!(
            note.starts_with("more threads would not help: 85 %"),
            "{note}"
        );
        assert!(note.contains("more processes would") && note.ends_with('\n'));
        assert!(!serial_note(secs(8.0), secs(10.0)).is_empty());
        assert_eq!(serial_note(secs(0.0), secs(0.0)), "");
    }
}
