#![warn(missing_docs)]
//! Pathways side by side: reads the outputs of `acidscape compute` for one or more runs
//! (labelled, e.g. `moderate` and `steep`, or a run and its control) and compares them over
//! named windows of years.
//!
//! - Per cell, per window: mean (and optionally minimum, maximum, a percentile) of the annual
//!   means of each field, written as CF NetCDF on a climatological time axis (CF Conventions
//!   1.10 section 7.4); changes from the reference window and differences from the baseline
//!   run, horizon shoaling in metres (positive = shallower).
//! - Per region and depth layer, per time step and window: area- or volume-weighted means,
//!   fractions below Ω thresholds, mean horizon depth, as one tidy CSV.
//! - Time of emergence per column and per region, by a threshold or a reference-window rule.
//!
//! Work goes in two stages, as on the command line: a [`ComparisonRequest`] (the options as
//! given) becomes a [`ComparisonPlan`] (every file opened, every option checked) before
//! [`run_comparison`] writes anything. Each run is read once, a time step at a time, in
//! blocks of rows sized to the memory budget; the pure work (windows, regions, emergence,
//! geometry) is the `acidscape-analysis` crate's.

mod accumulate;
mod consistency;
mod differences;
mod error;
mod geometry;
pub mod names;
mod options;
mod output;
mod plan;
mod regions_input;
pub mod share;
mod stream;
mod summary;
mod table;

pub use consistency::{FieldPlan, HORIZON_PREFIX};
pub use error::{ComparisonError, Result};
pub use geometry::Geometry;
pub use options::{
    parse_emergence, parse_layers, parse_numbers, parse_run, parse_statistics, EmergenceSpec,
    RunInput, Statistic,
};
pub use output::{partial_path, CHUNK_BYTES, FILL, YEAR_FILL};
pub use plan::{ComparisonPlan, ComparisonRequest, PlannedRun};
pub use regions_input::{load_regions, Regions, WHOLE_DOMAIN};
pub use share::{OneProcess, Team};
pub use table::{TableRow, COLUMNS};

use acidscape_analysis::regions::Membership;
use output::Output;
use std::path::PathBuf;

/// What a finished comparison wrote.
#[derive(Clone, Debug)]
pub struct ComparisonSummary {
    /// The NetCDF output.
    pub output: PathBuf,
    /// The regional CSV.
    pub table: PathBuf,
    /// The rows of the regional CSV.
    pub rows: Vec<TableRow>,
    /// A compact summary for the terminal.
    pub text: String,
}

/// Which regions hold each column of the runs' grid.
fn membership(plan: &ComparisonPlan) -> Result<Membership> {
    let grid = plan.baseline().file.grid();
    let (lon, lat) = grid.column_centres();
    plan.regions
        .set
        .membership(&lon, &lat, plan.regions.mask.as_deref())
        .map_err(|e| ComparisonError::option("--regions", e.to_string()))
}

/// The emergence rule in words, for the output's attributes.
fn emergence_words(plan: &ComparisonPlan) -> Option<String> {
    plan.emergence.as_ref().map(|spec| {
        let units = plan
            .fields
            .iter()
            .find(|f| f.name == spec.field)
            .map_or("1", |f| f.units.as_str());
        let surface = if plan
            .fields
            .iter()
            .any(|f| f.name == spec.field && f.has_levels)
        {
            "the surface cell's "
        } else {
            ""
        };
        format!("{surface}{}", spec.rule.description(&spec.field, units))
    })
}

/// Closes the output on every process; process 0 writes the table beside it and gives both
/// their final names, or removes the table's partial file when that fails.
fn place(plan: &ComparisonPlan, output: Output, rows: &[TableRow], team: &dyn Team) -> Result<()> {
    if team.rank() != 0 {
        return output.finish();
    }
    let partial_table = match table::write_partial(&plan.table, rows) {
        Ok(partial) => partial,
        Err(e) => {
            // Every process takes part in closing the output; rank 0 then removes it.
            drop(output);
            return Err(e);
        }
    };
    let written = output
        .finish()
        .and_then(|()| table::commit(&partial_table, &plan.table));
    if written.is_err() {
        let _ = std::fs::remove_file(&partial_table);
    }
    written
}

/// Runs a validated comparison: one pass over each run, then the changes and differences,
/// then the regional table; both outputs appear under their final names only when complete.
/// `progress` receives plain progress lines.
pub fn run_comparison(
    plan: &ComparisonPlan,
    progress: &mut dyn FnMut(&str),
) -> Result<ComparisonSummary> {
    run_comparison_shared(plan, progress, &OneProcess)
}

/// [`run_comparison`] shared by the processes of `team` (see [`share`]): each reads and
/// computes its band of rows of every run, all write the one NetCDF output together, the
/// regional sums are merged exactly, and process 0 writes the table and places both outputs;
/// every process returns the same summary. An error found by every process at once (in the
/// setting up, or in placing the outputs) comes back on every process as
/// [`ComparisonError::Together`]; any other error is this process's alone, and the caller
/// must end the others (they would wait for it in the next write).
pub fn run_comparison_shared(
    plan: &ComparisonPlan,
    progress: &mut dyn FnMut(&str),
    team: &dyn Team,
) -> Result<ComparisonSummary> {
    let set_up = (|| {
        let geometries = plan
            .runs
            .iter()
            .map(|r| Geometry::new(&r.file))
            .collect::<Result<Vec<_>>>()?;
        Ok((geometries, membership(plan)?))
    })();
    let (geometries, membership) = share::agree(team, set_up)?;
    let emergence = emergence_words(plan);
    let created = Output::create(plan, &geometries[0].description, emergence.as_deref(), team);
    let mut output = share::agree(team, created)?;
    let rows = plan.baseline().file.grid().rows;
    let rows_per_block = stream::rows_per_block(plan, &plan.baseline().file);
    let unit = output.rows_per_chunk();
    let turns = share::turns(rows, unit, rows_per_block, team.rank(), team.size());
    let mut per_run = Vec::with_capacity(plan.runs.len());
    for (index, geometry) in geometries.iter().enumerate() {
        let pass = stream::Pass {
            plan,
            run: &plan.runs[index],
            index,
            geometry,
            membership: &membership,
        };
        per_run.push(pass.run(&mut output, &turns, team, progress)?);
    }
    differences::write_changes_and_differences(plan, &mut output, &turns)?;
    let rows = table::build(plan, &per_run)?;
    let placed = place(plan, output, &rows, team);
    share::agree(team, placed)?;
    Ok(ComparisonSummary {
        output: plan.output.clone(),
        table: plan.table.clone(),
        text: summary::text(plan, &rows),
        rows,
    })
}
