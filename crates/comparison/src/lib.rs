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
pub use output::{partial_path, FILL, YEAR_FILL};
pub use plan::{ComparisonPlan, ComparisonRequest, PlannedRun};
pub use regions_input::{load_regions, Regions, WHOLE_DOMAIN};
pub use table::{TableRow, COLUMNS};

use acidscape_analysis::regions::Membership;
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

/// Runs a validated comparison: one pass over each run, then the changes and differences,
/// then the regional table; both outputs appear under their final names only when complete.
/// `progress` receives plain progress lines.
pub fn run_comparison(
    plan: &ComparisonPlan,
    progress: &mut dyn FnMut(&str),
) -> Result<ComparisonSummary> {
    let geometries = plan
        .runs
        .iter()
        .map(|r| Geometry::new(&r.file))
        .collect::<Result<Vec<_>>>()?;
    let membership = membership(plan)?;
    let emergence = plan.emergence.as_ref().map(|spec| {
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
    });
    let mut output =
        output::Output::create(plan, &geometries[0].description, emergence.as_deref())?;
    let mut per_run = Vec::with_capacity(plan.runs.len());
    for (index, geometry) in geometries.iter().enumerate() {
        per_run.push(stream::run_pass(
            plan,
            index,
            geometry,
            &membership,
            &mut output,
            progress,
        )?);
    }
    let rows_per_block = stream::rows_per_block(plan, &plan.baseline().file);
    differences::write_changes_and_differences(plan, &mut output, rows_per_block)?;
    let rows = table::build(plan, &per_run)?;
    let partial_table = table::write_partial(&plan.table, &rows)?;
    let written = output
        .finish()
        .and_then(|()| table::commit(&partial_table, &plan.table));
    if written.is_err() {
        let _ = std::fs::remove_file(&partial_table);
    }
    written?;
    Ok(ComparisonSummary {
        output: plan.output.clone(),
        table: plan.table.clone(),
        text: summary::text(plan, &rows),
        rows,
    })
}
