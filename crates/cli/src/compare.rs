//! `compare`: runs side by side over windows of years, by region, with time of emergence.

use crate::compute::command_line;
#[cfg(not(feature = "mpi"))]
use acidscape_comparison::run_comparison;
use acidscape_comparison::{ComparisonPlan, ComparisonRequest, ComparisonSummary};
use acidscape_pipeline::output::utc_timestamp;
use acidscape_pipeline::parse_memory_size;
use clap::Args;
use std::error::Error;
use std::io::Write;
#[cfg(feature = "mpi")]
use std::path::Path;
use std::path::PathBuf;

/// Cautions particular to comparisons, printed with `compare --help`.
pub const COMPARE_CAUTIONS: &str = "\
Comparison cautions: differences between runs are differences between model-derived \
estimates and inherit both runs' biases; a difference smaller than the year-to-year \
variability (compare the min and max statistics) says little. A year of emergence depends on \
the rule, the threshold or band and the reference window chosen; 'not emerged' means not by \
the end of the run, not never. Regions hold the cells whose centres they contain; layers \
hold the cells whose centres lie in them. Weights are the runs' own cell_area and \
cell_thickness when the outputs have them, otherwise computed from the coordinate bounds \
(the output's weights attribute says which).";

/// Environment variable setting the target size of the output's chunks in bytes (used by the
/// tests of the MPI build, to have a sample grid in several chunks shared by the ranks).
pub const CHUNK_BYTES_ENV: &str = "ACIDSCAPE_COMPARE_CHUNK_BYTES";

#[derive(Args, Debug)]
pub struct CompareArgs {
    /// Runs to compare, as LABEL=FILE (outputs of `acidscape compute`, e.g.
    /// moderate=out/moderate.nc steep=out/steep.nc); the first is the baseline that the others
    /// are compared with. Labels hold letters, digits and '_' and name output variables
    #[arg(value_name = "LABEL=FILE", required = true)]
    pub runs: Vec<String>,

    /// A window of whole years, NAME=FIRST-LAST (e.g. reference=2015-2034); repeat the option
    /// or give a list (reference=2015-2034,late=2081-2100). Years are counted in each run's own
    /// calendar
    #[arg(long = "window", value_name = "NAME=FIRST-LAST", required = true)]
    pub windows: Vec<String>,

    /// The window that changes are measured from and that emergence bands use (default: the
    /// first window)
    #[arg(long, value_name = "NAME")]
    pub reference_window: Option<String>,

    /// NetCDF output: window statistics, changes, differences, time of emergence; written as
    /// .NAME.partial beside it and renamed when complete
    #[arg(short, long, value_name = "FILE")]
    pub output: PathBuf,

    /// Regional CSV (default: the output with extension .csv)
    #[arg(long, value_name = "FILE")]
    pub table: Option<PathBuf>,

    /// Fields to compare, comma-separated (default: every indicator and horizon depth of the
    /// first run, e.g. ph,omega_aragonite,horizon_depth_aragonite)
    #[arg(long, value_name = "LIST")]
    pub fields: Option<String>,

    /// Per-cell statistics of the annual means over each window: mean, min, max, pN (a
    /// percentile, e.g. p90); the mean is always written
    #[arg(long, value_name = "LIST", default_value = "mean")]
    pub statistics: String,

    /// Regions: a region file (.toml: boxes, polygons, whole_domain, and optional layers) or an
    /// integer mask in a NetCDF file (FILE or FILE:VARIABLE; names from flag_values and
    /// flag_meanings). Default: the whole domain
    #[arg(long, value_name = "FILE")]
    pub regions: Option<String>,

    /// Depth layers, comma-separated: surface (the top wet cell), column (every wet cell),
    /// TOP-BOTTOM or TOP- in metres (e.g. surface,0-200,200-1000,1000-). Default: the region
    /// file's layers, else surface,column
    #[arg(long, value_name = "LIST")]
    pub layers: Option<String>,

    /// Time of emergence rule, on a field's surface cell (or a 2-D field): FIELD<VALUE or
    /// FIELD>VALUE (stays beyond a threshold, e.g. omega_aragonite<1, ph<7.95, pco2>600), or
    /// FIELD:range[:SIDE] or FIELD:Ksd[:SIDE] (stays outside the reference window's range of
    /// annual means, or its mean ± K standard deviations; SIDE below, above or either)
    #[arg(long, value_name = "RULE")]
    pub emergence: Option<String>,

    /// Ω thresholds for the fractions of area and volume below them (default: 1 and the
    /// thresholds of the runs' extra horizons)
    #[arg(long, value_name = "LIST")]
    pub omega_thresholds: Option<String>,

    /// Memory the per-cell accumulators may use; the grid is processed in blocks of rows to fit
    #[arg(long, value_name = "SIZE", default_value = "2GiB")]
    pub memory_budget: String,

    /// Replace existing outputs
    #[arg(long)]
    pub overwrite: bool,
}

pub fn run(args: &CompareArgs) -> Result<(), Box<dyn Error>> {
    // Stage 1: the options as given; stage 2: every file opened and checked, nothing written.
    let request = ComparisonRequest {
        runs: args.runs.clone(),
        windows: args.windows.clone(),
        reference_window: args.reference_window.clone(),
        fields: args.fields.clone(),
        statistics: Some(args.statistics.clone()),
        regions: args.regions.clone(),
        layers: args.layers.clone(),
        emergence: args.emergence.clone(),
        omega_thresholds: args.omega_thresholds.clone(),
        output: args.output.clone(),
        table: args.table.clone(),
        overwrite: args.overwrite,
        memory_budget_bytes: usize::try_from(parse_memory_size(&args.memory_budget)?)
            .unwrap_or(usize::MAX),
        chunk_bytes: chunk_bytes()?,
        history: format!("{}: {}", utc_timestamp(), command_line()),
    };
    #[cfg(feature = "mpi")]
    return on_ranks(request);
    #[cfg(not(feature = "mpi"))]
    {
        let plan = ComparisonPlan::new(&request)?;
        let mut progress = |line: &str| eprintln!("acidscape: {line}");
        let summary = run_comparison(&plan, &mut progress)?;
        report(&summary);
        Ok(())
    }
}

/// The output's chunk size: [`CHUNK_BYTES_ENV`] when set, else the usual.
fn chunk_bytes() -> Result<usize, Box<dyn Error>> {
    match std::env::var(CHUNK_BYTES_ENV) {
        Err(_) => Ok(acidscape_comparison::CHUNK_BYTES),
        Ok(text) => match text.trim().parse::<usize>() {
            Ok(bytes) if bytes > 0 => Ok(bytes),
            _ => Err(
                format!("{CHUNK_BYTES_ENV}={text}: expected a whole number of bytes above 0")
                    .into(),
            ),
        },
    }
}

fn report(summary: &ComparisonSummary) {
    let mut out = std::io::stdout();
    let _ = writeln!(
        out,
        "Wrote {} and {}",
        summary.output.display(),
        summary.table.display()
    );
    let _ = write!(out, "{}", summary.text);
}

/// The comparison shared by the ranks of an MPI job (see `acidscape_comparison::share`):
/// rank 0 reports progress and the summary; an error every rank has is reported once by rank
/// 0, any other ends every rank.
#[cfg(feature = "mpi")]
fn on_ranks(mut request: ComparisonRequest) -> Result<(), Box<dyn Error>> {
    use acidscape_comparison::{run_comparison_shared, share::agree, ComparisonError};
    use acidscape_pipeline::Ranks;
    let ranks = Ranks::init()?;
    let team = RankTeam(&ranks);
    // The history attribute must be the same on every rank: rank 0's.
    let told = ranks.exchange(request.history.as_bytes());
    request.history = String::from_utf8_lossy(&told[0]).into_owned();
    let mut report_line = |line: &str| eprintln!("acidscape: {line}");
    let mut quiet = |_: &str| {};
    let progress: &mut dyn FnMut(&str) = if ranks.rank() == 0 {
        &mut report_line
    } else {
        &mut quiet
    };
    let outcome = agree(&team, ComparisonPlan::new(&request))
        .and_then(|plan| run_comparison_shared(&plan, progress, &team));
    match outcome {
        Ok(summary) => {
            if ranks.rank() == 0 {
                report(&summary);
            }
            Ok(())
        }
        Err(error) if ranks.size() == 1 => Err(error.into()),
        Err(error) => {
            let every_rank = matches!(error, ComparisonError::Together { .. });
            crate::compute::end_ranks(ranks, &error, every_rank, 1)
        }
    }
}

/// The ranks of an MPI job as the comparison's team.
#[cfg(feature = "mpi")]
struct RankTeam<'a>(&'a acidscape_pipeline::Ranks);

#[cfg(feature = "mpi")]
impl acidscape_comparison::Team for RankTeam<'_> {
    fn rank(&self) -> usize {
        self.0.rank()
    }

    fn size(&self) -> usize {
        self.0.size()
    }

    fn create(&self, path: &Path) -> Result<acidscape_comparison::share::FileMut, String> {
        self.0.create_shared_file(path).map_err(|e| e.to_string())
    }

    fn write_together(
        &self,
        file: &acidscape_comparison::share::FileMut,
        path: &Path,
    ) -> Result<(), String> {
        self.0
            .write_collectively(file, path)
            .map_err(|e| e.to_string())
    }

    fn exchange(&self, bytes: &[u8]) -> Vec<Vec<u8>> {
        self.0.exchange(bytes)
    }
}
