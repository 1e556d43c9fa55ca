//! The `acidscape` command: a thin layer of clap options over the library crates.
//! Each subcommand module exposes its clap `...Args` and `run(&Args) -> Result<(), Box<dyn std::error::Error>>`.

mod compare;
mod compute;
mod describe;
mod draw;
mod grid_uncertainty;
mod progress;
mod run_options;
mod samples;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

/// Cautions printed with `--help`; the README carries the same text.
const CAUTIONS: &str = "\
Cautions: indicators computed from model output are model-derived estimates, not \
measurements. Every set of equilibrium constants has a published validity range \
(temperature, salinity, pressure); values outside it are still computed but flagged with \
the reason. The default constants are fitted to water warmer than most of the deep ocean, \
so deep cells mostly carry the temperature-below bit: weigh deep values accordingly. \
Local decisions (aquaculture siting, monitoring, regulation) should rest on local \
observations, the applicable codes and licensed professional practice.";

#[derive(Parser)]
#[command(
    name = "acidscape",
    version,
    about = "Ocean-acidification indicators (pH, pCO2, carbonate ion, aragonite and calcite saturation) from ocean-model output",
    after_help = CAUTIONS,
    after_long_help = CAUTIONS
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Compute indicators for a table of water samples (CSV in, CSV out)
    #[command(after_help = CAUTIONS)]
    Samples(samples::SamplesArgs),
    /// Explain what acidscape understands of a model run, before any long job
    #[command(after_help = CAUTIONS)]
    Describe(describe::DescribeArgs),
    /// Compute indicator fields for a whole model run and write CF NetCDF
    #[command(after_help = CAUTIONS)]
    Compute(compute::ComputeArgs),
    /// Compare runs (pathways, or a run and its control) over windows of years, by region,
    /// with time of emergence, from outputs of `compute`
    #[command(after_help = format!("{CAUTIONS}\n\n{}", compare::COMPARE_CAUTIONS))]
    Compare(compare::CompareArgs),
    /// Draw PNG figures (maps, sections, regional time series) from outputs of `compute` and
    /// `compare`
    Draw(draw::DrawArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let outcome = match cli.command {
        Command::Samples(args) => samples::run(&args),
        Command::Describe(args) => describe::run(&args),
        Command::Compute(args) => compute::run(&args),
        Command::Compare(args) => compare::run(&args),
        Command::Draw(args) => draw::run(&args),
    };
    match outcome {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("acidscape: error: {error}");
            // A job stopped by a signal exits as the shell reports a signal: 128 + its number.
            let signal = error
                .downcast_ref::<acidscape_pipeline::PipelineError>()
                .and_then(|e| e.signal());
            let code = signal
                .and_then(|s| i32::try_from(128 + s).ok())
                .unwrap_or(1);
            // Leave without running libhdf5's exit handler: after a failed write it can crash
            // closing the output whose close already failed (seen with netCDF-C 4.9.0 and HDF5
            // 1.10.8), turning a clear message into a segmentation fault. Every file is closed
            // by now and every finished step durable; stdout and stderr are flushed first.
            let _ = std::io::Write::flush(&mut std::io::stdout());
            let _ = std::io::Write::flush(&mut std::io::stderr());
            signal_hook::low_level::exit(code)
        }
    }
}
