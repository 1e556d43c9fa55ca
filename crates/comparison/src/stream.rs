//! One pass over one run: every field is read once, one time step at a time, for a block of
//! rows sized to the memory budget (usually the whole grid), feeding the per-cell window
//! accumulators, the columns' emergence trackers and the per-step regional statistics.

use crate::accumulate::{EmergenceColumns, FieldWindows};
use crate::consistency::FieldPlan;
use crate::error::{ComparisonError, Result};
use crate::geometry::Geometry;
use crate::names;
use crate::output::Output;
use crate::plan::{ComparisonPlan, PlannedRun};
use crate::share::{merge_regional, Team};
use acidscape_analysis::column::{ColumnCells, SlabShape};
use acidscape_analysis::geometry::cell_volumes;
use acidscape_analysis::regions::{
    FieldSpec, Membership, RegionColumn, RegionRow, RegionStatistics,
};
use acidscape_analysis::windows::{AnnualMean, AnnualMeans};
use acidscape_gridio::{IndicatorFile, TimeSteps};
use std::ops::Range;

/// Name of the quality flag `compute` writes (its fill marks land).
const QUALITY_FLAG: &str = "quality_flag";

/// The regional statistics of every time step of a run, as rows.
pub type StepRows = Vec<Vec<RegionRow>>;

/// Wet cells of a block of rows (levels × block rows × cols): where the quality flag is not
/// its fill value, or, in outputs without one, where any compared 3-D field has a value at the
/// first step.
fn wet_cells(file: &IndicatorFile, fields: &[FieldPlan], rows: Range<usize>) -> Result<Vec<bool>> {
    let flag_per_cell = file
        .variable(QUALITY_FLAG)
        .is_ok_and(|q| q.has_levels || file.levels() == 1);
    if flag_per_cell {
        return Ok(file
            .read_rows(QUALITY_FLAG, 0, rows)?
            .iter()
            .map(|f| !f.is_nan())
            .collect());
    }
    let cells = file.levels() * rows.len() * file.grid().cols;
    let mut wet = vec![false; cells];
    for field in fields.iter().filter(|f| f.has_levels || file.levels() == 1) {
        for (w, v) in wet
            .iter_mut()
            .zip(file.read_rows(&field.name, 0, rows.clone())?)
        {
            *w |= !v.is_nan();
        }
    }
    Ok(wet)
}

/// Rows per block so that the accumulators fit the memory budget (at least one row).
pub fn rows_per_block(plan: &ComparisonPlan, file: &IndicatorFile) -> usize {
    let levels = file.levels();
    let per_cell = FieldWindows::bytes_per_cell(&plan.windows, &plan.statistics);
    let per_column: usize = plan
        .fields
        .iter()
        .map(|f| if f.has_levels { levels } else { 1 } * per_cell)
        .sum::<usize>()
        + levels * (8 + 8 + 1 + 8);
    let per_row = per_column * file.grid().cols;
    (plan.memory_budget_bytes / per_row.max(1)).clamp(1, file.grid().rows)
}

/// Blocks of `size` rows covering `rows` rows.
pub fn blocks(rows: usize, size: usize) -> impl Iterator<Item = Range<usize>> {
    (0..rows)
        .step_by(size.max(1))
        .map(move |start| start..(start + size).min(rows))
}

fn time_of(run: &PlannedRun) -> Result<&TimeSteps> {
    run.file
        .time()
        .ok_or_else(|| ComparisonError::file(run.file.path(), "has no time axis"))
}

/// The specs of the 3-D and 2-D fields for regional statistics.
fn field_specs(fields: &[FieldPlan]) -> (Vec<FieldSpec>, Vec<FieldSpec>) {
    let spec = |f: &FieldPlan| FieldSpec {
        name: f.name.clone(),
        units: f.units.clone(),
        thresholds: f.thresholds.clone(),
    };
    let cells = fields.iter().filter(|f| f.has_levels).map(spec).collect();
    let columns = fields.iter().filter(|f| !f.has_levels).map(spec).collect();
    (cells, columns)
}

/// What a pass over a run works with.
pub struct Pass<'a> {
    pub plan: &'a ComparisonPlan,
    pub run: &'a PlannedRun,
    /// The run's place in the plan (0: the baseline).
    pub index: usize,
    pub geometry: &'a Geometry,
    pub membership: &'a Membership,
}

/// Everything one block of one run accumulates.
struct Block {
    rows: Range<usize>,
    fields: Vec<FieldWindows>,
    emergence: Option<(usize, EmergenceColumns)>,
    free_surface: Option<FieldWindows>,
}

impl Pass<'_> {
    /// The pass over the run: writes its window statistics and time of emergence for this
    /// process's blocks of rows (`turns`, see [`crate::share::turns`]) into the output and
    /// returns the regional statistics of each step over the whole grid (every process's
    /// exact sums merged).
    pub fn run(
        &self,
        output: &mut Output,
        turns: &[Range<usize>],
        team: &dyn Team,
        progress: &mut dyn FnMut(&str),
    ) -> Result<StepRows> {
        let (plan, run) = (self.plan, self.run);
        let file = &run.file;
        let (cell_specs, column_specs) = field_specs(&plan.fields);
        let mut regional: Vec<RegionStatistics> = (0..file.steps())
            .map(|_| {
                RegionStatistics::new(
                    &plan.regions.set,
                    &plan.layers,
                    cell_specs.clone(),
                    column_specs.clone(),
                )
            })
            .collect();
        let count = turns.iter().filter(|rows| !rows.is_empty()).count();
        for (b, rows) in turns.iter().enumerate() {
            if count > 1 && !rows.is_empty() {
                progress(&format!(
                    "run {}: rows {}..{} ({} of {count} blocks)",
                    run.label,
                    rows.start,
                    rows.end,
                    b + 1
                ));
            }
            let mut block = new_block(plan, run, self.index, output, rows.clone())?;
            if !rows.is_empty() {
                self.stream_block(&mut block, &mut regional, progress)?;
            }
            write_block(plan, run, output, &block)?;
        }
        merge_regional(team, &mut regional)?;
        Ok(regional.iter().map(RegionStatistics::rows).collect())
    }
}

fn new_block(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    index: usize,
    output: &Output,
    rows: Range<usize>,
) -> Result<Block> {
    let file = &run.file;
    let columns = rows.len() * file.grid().cols;
    let cells = |f: &FieldPlan| if f.has_levels { file.levels() } else { 1 } * columns;
    let fields = plan
        .fields
        .iter()
        .map(|f| FieldWindows::new(cells(f), &plan.windows, &plan.statistics))
        .collect();
    let emergence = match &plan.emergence {
        None => None,
        Some(spec) => {
            let f = plan
                .fields
                .iter()
                .position(|f| f.name == spec.field)
                .ok_or_else(|| {
                    ComparisonError::option(
                        "--emergence",
                        format!("'{}' is not compared", spec.field),
                    )
                })?;
            let level = if plan.fields[f].has_levels {
                file.vertical().surface_level()
            } else {
                0
            };
            let reference = reference_means(plan, run, &spec.field, level, &rows)?;
            Some((
                f,
                EmergenceColumns::new(&spec.rule, &reference, columns, level * columns)?,
            ))
        }
    };
    let free_surface = (index == 0 && output.free_surface().is_some())
        .then(|| FieldWindows::new(columns, &plan.windows, &plan.statistics[..1]));
    Ok(Block {
        rows,
        fields,
        emergence,
        free_surface,
    })
}

/// Annual means of the field's surface values over the reference window's complete years,
/// for the reference-window rule (a read of the window's steps at one level).
fn reference_means(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    field: &str,
    level: usize,
    rows: &Range<usize>,
) -> Result<Vec<Vec<f64>>> {
    let needs = matches!(
        plan.emergence.as_ref().map(|e| &e.rule),
        Some(acidscape_analysis::emergence::EmergenceRule::Reference { .. })
    );
    if !needs || rows.is_empty() {
        return Ok(Vec::new());
    }
    let time = time_of(run)?;
    let columns = rows.len() * run.file.grid().cols;
    let mut annual = AnnualMeans::new(columns);
    let mut years: Vec<AnnualMean> = Vec::new();
    for &step in &run.window_steps[plan.reference] {
        let values = run.file.read_level_rows(field, step, level, rows.clone())?;
        let finished = annual
            .add_step(time.years[step], &values, time.lengths_days[step])
            .map_err(|e| ComparisonError::file(run.file.path(), e.to_string()))?;
        years.extend(finished);
    }
    years.extend(annual.finish());
    Ok(years
        .into_iter()
        .filter(|y| run.is_complete(y.year))
        .map(|y| y.means)
        .collect())
}

/// Hands a finished year to the window statistics and, for the emergence field, the trackers.
fn take_year(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    block: &mut Block,
    f: usize,
    year: &AnnualMean,
) -> Result<()> {
    block.fields[f].add_year(year, &plan.windows, run)?;
    if let Some((e, trackers)) = &mut block.emergence {
        if *e == f {
            trackers.observe(year, run)?;
        }
    }
    Ok(())
}

/// One step's values of every field to the block's accumulators (and the free surface).
fn feed_fields(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    block: &mut Block,
    step: usize,
    values: &[Vec<f64>],
) -> Result<()> {
    let time = time_of(run)?;
    let (year, length) = (time.years[step], time.lengths_days[step]);
    for (f, v) in values.iter().enumerate() {
        if let Some(finished) = block.fields[f].add_step(year, v, length)? {
            take_year(plan, run, block, f, &finished)?;
        }
    }
    if let Some(eta) = &mut block.free_surface {
        let surface = run
            .file
            .parametric_columns(step, block.rows.clone())?
            .map(|p| p.free_surface_m)
            .unwrap_or_default();
        if let Some(finished) = eta.add_step(year, &surface, length)? {
            eta.add_year(&finished, &plan.windows, run)?;
        }
    }
    Ok(())
}

/// The last year of every accumulator of a block.
fn finish_block(plan: &ComparisonPlan, run: &PlannedRun, block: &mut Block) -> Result<()> {
    for f in 0..block.fields.len() {
        if let Some(finished) = block.fields[f].finish() {
            take_year(plan, run, block, f, &finished)?;
        }
    }
    if let Some(eta) = &mut block.free_surface {
        if let Some(finished) = eta.finish() {
            eta.add_year(&finished, &plan.windows, run)?;
        }
    }
    Ok(())
}

impl Pass<'_> {
    /// Streams every step of a block: reads each field once, feeds the accumulators and the
    /// step's regional statistics.
    fn stream_block(
        &self,
        block: &mut Block,
        regional: &mut [RegionStatistics],
        progress: &mut dyn FnMut(&str),
    ) -> Result<()> {
        let (plan, file) = (self.plan, &self.run.file);
        let rows = block.rows.clone();
        let shape = SlabShape {
            levels: file.levels(),
            rows: rows.len(),
            cols: file.grid().cols,
        };
        let first = rows.start * shape.cols;
        let wet = wet_cells(file, &plan.fields, rows.clone())?;
        let varies = self.geometry.varies_in_time(file);
        let mut thickness = self.geometry.thickness(file, 0, rows.clone())?;
        let mut depths = file.centre_depths(0, rows.clone())?;
        let mut cells = ColumnCells::new();
        let report_every = (file.steps() / 10).max(1);
        for (step, stats) in regional.iter_mut().enumerate() {
            if varies && step > 0 {
                thickness = self.geometry.thickness(file, step, rows.clone())?;
                depths = file.centre_depths(step, rows.clone())?;
            }
            let values: Vec<Vec<f64>> = plan
                .fields
                .iter()
                .map(|f| file.read_rows(&f.name, step, rows.clone()))
                .collect::<std::result::Result<_, _>>()?;
            feed_fields(plan, self.run, block, step, &values)?;
            let of_kind = |levels: bool| -> Vec<&[f64]> {
                plan.fields
                    .iter()
                    .zip(&values)
                    .filter(|(f, _)| f.has_levels == levels)
                    .map(|(_, v)| v.as_slice())
                    .collect()
            };
            let (cell_values, column_values) = (of_kind(true), of_kind(false));
            let inputs = ColumnInputs {
                shape,
                first,
                areas: &self.geometry.areas_m2,
                depths: &depths,
                thickness: &thickness,
                wet: &wet,
                cell_values: &cell_values,
                column_values: &column_values,
            };
            add_columns(stats, self.membership, &inputs, &mut cells)?;
            if (step + 1) % report_every == 0 || step + 1 == file.steps() {
                progress(&format!(
                    "run {}: {} of {} time steps",
                    self.run.label,
                    step + 1,
                    file.steps()
                ));
            }
        }
        finish_block(plan, self.run, block)
    }
}

/// One step of a block, as the regional statistics need it.
struct ColumnInputs<'a> {
    shape: SlabShape,
    /// Index of the block's first column in the whole grid.
    first: usize,
    areas: &'a [f64],
    depths: &'a [f64],
    thickness: &'a [f64],
    wet: &'a [bool],
    cell_values: &'a [&'a [f64]],
    column_values: &'a [&'a [f64]],
}

/// Adds every column of a block that lies in some region: its wet cells from the surface down,
/// their volumes (area × thickness), and its values.
fn add_columns(
    stats: &mut RegionStatistics,
    membership: &Membership,
    inputs: &ColumnInputs,
    cells: &mut ColumnCells,
) -> Result<()> {
    let mut gathered: Vec<&[f64]> = Vec::with_capacity(inputs.cell_values.len() + 1);
    gathered.push(inputs.thickness);
    gathered.extend_from_slice(inputs.cell_values);
    let mut column_values = vec![0.0; inputs.column_values.len()];
    for c in 0..inputs.shape.columns() {
        let global = inputs.first + c;
        if membership.of(global).is_empty() {
            continue;
        }
        cells.gather(inputs.shape, c, inputs.depths, |i| inputs.wet[i], &gathered);
        let area = inputs.areas[global];
        let volumes = cell_volumes(area, &cells.fields[0]);
        let values: Vec<&[f64]> = cells.fields[1..].iter().map(Vec::as_slice).collect();
        for (out, field) in column_values.iter_mut().zip(inputs.column_values) {
            *out = field[c];
        }
        let column = RegionColumn {
            area_m2: area,
            depth_m: &cells.depth_m,
            volume_m3: &volumes,
            cell_values: &values,
            column_values: &column_values,
        };
        stats
            .add_column(membership, global, &column)
            .map_err(|e| ComparisonError::option("regions", e.to_string()))?;
    }
    Ok(())
}

/// Writes a block's window statistics, time of emergence and free surface.
fn write_block(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    output: &mut Output,
    block: &Block,
) -> Result<()> {
    for (field, acc) in plan.fields.iter().zip(&block.fields) {
        for &statistic in &plan.statistics {
            let name = names::statistic(field, &run.label, statistic);
            for w in 0..plan.windows.len() {
                let values = acc.result(statistic, w)?;
                output.write(
                    &name,
                    Some(w),
                    field.has_levels,
                    block.rows.clone(),
                    &values,
                )?;
            }
        }
    }
    if let Some((_, trackers)) = &block.emergence {
        output.write_emergence(&run.label, block.rows.clone(), &trackers.results())?;
    }
    if let (Some(eta), Some(name)) = (
        &block.free_surface,
        output.free_surface().map(str::to_string),
    ) {
        for w in 0..plan.windows.len() {
            let values = eta.result(crate::options::Statistic::Mean, w)?;
            output.write(&name, Some(w), false, block.rows.clone(), &values)?;
        }
    }
    Ok(())
}
