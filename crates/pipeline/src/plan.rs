//! How a run is split into slabs (one time step × all levels × a block of rows) so that
//! the memory held at once stays under a budget, whatever the number of time steps.
//!
//! Memory model (bytes), the sum of what is alive at the busiest moment:
//! - inputs: a slab of inputs holds 9 f64 arrays (temperature, salinity, pressure, DIC,
//!   alkalinity, phosphate, silicate, density, depth) = 72 B per cell, plus an allowance
//!   of 72 B per cell for the reader's own scratch while it converts units; up to
//!   [`INPUT_SLABS_IN_FLIGHT`] slabs exist at once (one being read, one queued, one being solved);
//! - standard-uncertainty fields of inputs (`--uncertainty-field`): per field, 8 B per cell of
//!   converted values plus 8 B of the reader's scratch, in each of the
//!   [`INPUT_SLABS_IN_FLIGHT`] input slabs;
//! - outputs: 4 B per cell per indicator (f32) + 2 B quality flag (i16); up to
//!   [`OUTPUT_SLABS_IN_FLIGHT`] at once (one being filled, one queued, one being written);
//! - saturation horizons and corrosive extent (when computed, see [`ColumnLoad`]): Ω in f64
//!   for each mineral with horizons, 8 B per cell, one slab's worth (filled by the solve, read
//!   by the column analysis, then reused by the next slab's solve); the cell thickness, 4 B
//!   per cell (f32), up to [`OUTPUT_SLABS_IN_FLIGHT`] slabs; per column of a slab, 4 B depth
//!   and 1 B status per horizon and 4 B sea-floor depth, up to [`OUTPUT_SLABS_IN_FLIGHT`]
//!   slabs; and for the whole job 16 B per column of the grid (cell area and sea-floor
//!   depth, f64);
//! - a fixed [`FIXED_OVERHEAD_BYTES`] for the libraries, HDF5 chunk caches and threads.

use crate::memory::format_bytes;
use crate::PipelineError;
use acidscape_gridio::least_common_multiple as lcm;
use std::fmt;
use std::ops::Range;

/// Bytes per cell of one slab of converted inputs (9 f64 arrays).
pub const INPUT_BYTES_PER_CELL: u64 = 9 * 8;
/// Allowance per cell for the reader's scratch while it reads and converts.
pub const READ_SCRATCH_BYTES_PER_CELL: u64 = 9 * 8;
/// Bytes per cell of one input's standard-uncertainty field in one slab (values and scratch).
pub const UNCERTAINTY_FIELD_BYTES_PER_CELL: u64 = 2 * 8;
/// Slabs of inputs alive at once: being read, queued, being solved.
pub const INPUT_SLABS_IN_FLIGHT: u64 = 3;
/// Slabs of outputs alive at once: being filled, queued, being written.
pub const OUTPUT_SLABS_IN_FLIGHT: u64 = 3;
/// Libraries, HDF5 chunk caches, thread stacks: a fixed allowance.
pub const FIXED_OVERHEAD_BYTES: u64 = 128 * 1024 * 1024;
/// Target size of one output chunk of one variable (f32), so readers of the output can
/// fetch small regions without decompressing whole time steps.
pub const CHUNK_TARGET_BYTES: u64 = 4 * 1024 * 1024;

/// What the column analysis (horizons, corrosive extent) adds to a job, for the memory model.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct ColumnLoad {
    /// Minerals whose Ω is kept in f64 for horizons (0: no column analysis).
    pub minerals: usize,
    /// Horizon fields (one per mineral and threshold).
    pub horizons: usize,
}

/// Bytes per cell of Ω kept in f64, per mineral.
pub const OMEGA_BYTES_PER_CELL: u64 = 8;
/// Bytes per cell of the cell-thickness output (f32).
pub const THICKNESS_BYTES_PER_CELL: u64 = 4;
/// Bytes per grid column held for the whole job: cell area and sea-floor depth (f64).
pub const GEOMETRY_BYTES_PER_COLUMN: u64 = 16;

impl ColumnLoad {
    /// Bytes per cell of a slab across everything in flight.
    fn bytes_per_cell(&self) -> u64 {
        if self.minerals == 0 {
            return 0;
        }
        OMEGA_BYTES_PER_CELL * self.minerals as u64
            + OUTPUT_SLABS_IN_FLIGHT * THICKNESS_BYTES_PER_CELL
    }

    /// Bytes per column of a slab across everything in flight.
    fn bytes_per_column(&self) -> u64 {
        if self.minerals == 0 {
            return 0;
        }
        OUTPUT_SLABS_IN_FLIGHT * (5 * self.horizons as u64 + 4)
    }

    /// Bytes held for the whole job for a grid of `columns` columns.
    fn fixed_bytes(&self, columns: u64) -> u64 {
        if self.minerals == 0 {
            0
        } else {
            GEOMETRY_BYTES_PER_COLUMN * columns
        }
    }
}

/// The split of a run into slabs, and the chunk shape of the output variables.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SlabPlan {
    /// Grid shape [levels, rows, cols].
    pub shape: [usize; 3],
    /// Time steps in the run.
    pub steps: usize,
    /// Rows of the grid in one slab (the last slab of a step may hold fewer).
    pub rows_per_slab: usize,
    /// Output chunk shape [levels, rows, cols] for one time step.
    pub chunk: [usize; 3],
    /// Output variables (indicators) per cell, not counting the quality flag.
    pub output_fields: usize,
    /// Inputs' standard-uncertainty fields read beside the inputs.
    pub uncertainty_fields: usize,
    /// What the column analysis adds.
    pub columns: ColumnLoad,
    /// The budget the plan was made for, in bytes.
    pub budget_bytes: u64,
    /// Chunk cache held for reading the inputs, so each stored chunk is inflated once
    /// (see [`SlabPlan::fit_input_chunks`]).
    pub read_cache_bytes: u64,
    /// The cache that would have been needed when the budget could not hold it: each input
    /// chunk taller than a slab, or spanning several steps, is then inflated more than once.
    pub read_cache_shortfall: u64,
}

impl SlabPlan {
    /// Slabs in one time step.
    pub fn slabs_per_step(&self) -> usize {
        self.shape[1].div_ceil(self.rows_per_slab)
    }

    /// Cells in one grid row (all levels × all columns).
    pub fn cells_per_row(&self) -> u64 {
        (self.shape[0] * self.shape[2]) as u64
    }

    /// Cells in one time step.
    pub fn cells_per_step(&self) -> u64 {
        self.cells_per_row() * self.shape[1] as u64
    }

    /// Bytes per cell of a slab across everything in flight (see the module notes).
    pub fn bytes_per_cell(&self) -> u64 {
        bytes_per_cell(self.output_fields, self.uncertainty_fields, self.columns)
    }

    /// Bytes held whatever the slab size: the fixed allowance and the per-column geometry.
    pub fn fixed_bytes(&self) -> u64 {
        FIXED_OVERHEAD_BYTES
            + self
                .columns
                .fixed_bytes((self.shape[1] * self.shape[2]) as u64)
    }

    /// Estimated peak memory of a compute job with this plan.
    pub fn estimated_peak_bytes(&self) -> u64 {
        self.fixed_bytes() + self.read_cache_bytes + self.rows_per_slab as u64 * self.row_bytes()
    }

    /// Bytes of one grid row of slab across everything in flight.
    fn row_bytes(&self) -> u64 {
        row_bytes(
            self.shape,
            self.output_fields,
            self.uncertainty_fields,
            self.columns,
        )
    }

    /// Fits the slabs to the inputs' chunks (`chunk_rows`: rows of one stored chunk, where
    /// the inputs are chunked by rows): slabs of whole chunks where a slab holds at least one
    /// (also whole output chunks), then the chunk cache `cache_for(rows)` that lets slabs of
    /// `rows` rows inflate every chunk once, when the budget holds it beside the slabs.
    pub fn fit_input_chunks(
        &mut self,
        chunk_rows: Option<usize>,
        cache_for: impl Fn(usize) -> u64,
    ) {
        if let Some(chunk_rows) = chunk_rows.filter(|_| self.rows_per_slab < self.shape[1]) {
            let whole = lcm(chunk_rows, self.chunk[1]);
            if whole <= self.rows_per_slab {
                self.rows_per_slab -= self.rows_per_slab % whole;
            }
        }
        self.read_cache_bytes = 0;
        self.read_cache_shortfall = 0;
        // Smaller slabs beside the cache, rather than chunks inflated again for every slab.
        let row_bytes = self.row_bytes();
        let fits = |rows: usize| {
            self.fixed_bytes() + rows as u64 * row_bytes + cache_for(rows) <= self.budget_bytes
        };
        match (1..=self.rows_per_slab).rev().find(|&rows| fits(rows)) {
            Some(rows) => {
                self.limit_rows_per_slab(rows);
                self.read_cache_bytes = cache_for(self.rows_per_slab);
            }
            None => self.read_cache_shortfall = cache_for(self.rows_per_slab),
        }
    }

    /// Makes slabs at most `limit` rows (at least one), with chunks no taller than a slab.
    pub fn limit_rows_per_slab(&mut self, limit: usize) {
        self.rows_per_slab = self.rows_per_slab.min(limit.max(1));
        self.chunk[1] = self.chunk[1].min(self.rows_per_slab);
        self.rows_per_slab -= self.rows_per_slab % self.chunk[1];
    }

    /// Every slab from `first_step` on, in order: (time step, rows).
    pub fn slabs(&self, first_step: usize) -> impl Iterator<Item = (usize, Range<usize>)> + '_ {
        let rows = self.shape[1];
        let per = self.rows_per_slab;
        (first_step..self.steps).flat_map(move |step| {
            (0..rows)
                .step_by(per)
                .map(move |start| (step, start..(start + per).min(rows)))
        })
    }
}

impl fmt::Display for SlabPlan {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let [levels, rows, cols] = self.shape;
        writeln!(
            f,
            "Grid {levels} levels x {rows} rows x {cols} columns, {} time step(s).",
            self.steps
        )?;
        writeln!(
            f,
            "Under a memory budget of {}: slabs of 1 time step x {levels} levels x {} rows x {cols} columns ({} cells),",
            format_bytes(self.budget_bytes),
            self.rows_per_slab,
            self.rows_per_slab as u64 * self.cells_per_row()
        )?;
        writeln!(
            f,
            "{} slab(s) per time step, {} in all; estimated peak memory {} ({} B per cell in flight for {} output field(s){}, plus {} fixed).",
            self.slabs_per_step(),
            self.slabs_per_step() * self.steps,
            format_bytes(self.estimated_peak_bytes()),
            self.bytes_per_cell(),
            self.output_fields,
            match self.uncertainty_fields {
                0 => String::new(),
                n => format!(" and {n} input uncertainty field(s) read"),
            },
            format_bytes(self.fixed_bytes())
        )?;
        write!(
            f,
            "Output chunks: 1 time step x {} levels x {} rows x {} columns.",
            self.chunk[0], self.chunk[1], self.chunk[2]
        )?;
        if self.read_cache_bytes > 0 {
            write!(
                f,
                "\nInput chunks span more rows than a slab, or several time steps: {} of chunk cache (in the estimate) inflates each once.",
                format_bytes(self.read_cache_bytes)
            )?;
        }
        if self.read_cache_shortfall > 0 {
            write!(
                f,
                "\nInput chunks span more rows than a slab, or several time steps, and the budget cannot also hold the {} of chunk cache that would inflate each once: chunks will be inflated again for each slab that reads them (slower, not wrong); a budget of {} avoids it.",
                format_bytes(self.read_cache_shortfall),
                format_bytes(self.estimated_peak_bytes() + self.read_cache_shortfall)
            )?;
        }
        Ok(())
    }
}

fn bytes_per_cell(output_fields: usize, uncertainty_fields: usize, columns: ColumnLoad) -> u64 {
    INPUT_SLABS_IN_FLIGHT
        * (INPUT_BYTES_PER_CELL
            + READ_SCRATCH_BYTES_PER_CELL
            + UNCERTAINTY_FIELD_BYTES_PER_CELL * uncertainty_fields as u64)
        + OUTPUT_SLABS_IN_FLIGHT
            * (4 * output_fields as u64 + std::mem::size_of::<crate::flags::Flag>() as u64)
        + columns.bytes_per_cell()
}

/// Bytes of one grid row of slab (all levels × all columns) across everything in flight.
fn row_bytes(
    shape: [usize; 3],
    output_fields: usize,
    uncertainty_fields: usize,
    columns: ColumnLoad,
) -> u64 {
    let [levels, _, cols] = shape;
    (levels * cols) as u64 * bytes_per_cell(output_fields, uncertainty_fields, columns)
        + cols as u64 * columns.bytes_per_column()
}

/// Splits a run of `shape` = [levels, rows, cols] and `steps` time steps into slabs that
/// fit `budget_bytes`, for `output_fields` indicators and the column analysis `columns`.
/// Fails when even one row does not fit.
pub fn plan_slabs(
    shape: [usize; 3],
    steps: usize,
    output_fields: usize,
    columns: ColumnLoad,
    budget_bytes: u64,
) -> Result<SlabPlan, PipelineError> {
    plan_slabs_reading(shape, steps, output_fields, 0, columns, budget_bytes)
}

/// As [`plan_slabs`], with `uncertainty_fields` inputs' standard-uncertainty fields read beside
/// the inputs.
pub fn plan_slabs_reading(
    shape: [usize; 3],
    steps: usize,
    output_fields: usize,
    uncertainty_fields: usize,
    columns: ColumnLoad,
    budget_bytes: u64,
) -> Result<SlabPlan, PipelineError> {
    let [levels, rows, cols] = shape;
    if levels == 0 || rows == 0 || cols == 0 || steps == 0 {
        return Err(PipelineError::Option {
            option: "run".into(),
            message: format!(
                "the grid has no cells ({levels} levels x {rows} rows x {cols} columns, {steps} steps)"
            ),
        });
    }
    let row_bytes = row_bytes(shape, output_fields, uncertainty_fields, columns);
    let fixed = FIXED_OVERHEAD_BYTES + columns.fixed_bytes((rows * cols) as u64);
    let minimum = fixed + row_bytes;
    if budget_bytes < minimum {
        return Err(PipelineError::Option {
            option: "--memory-budget".into(),
            message: format!(
                "{} is too small for this grid: one row of slab ({} levels x {cols} columns) needs {} plus {} fixed; give at least {}",
                format_bytes(budget_bytes),
                levels,
                format_bytes(row_bytes),
                format_bytes(fixed),
                format_bytes(minimum)
            ),
        });
    }
    let fitting_rows = ((budget_bytes - fixed) / row_bytes).min(rows as u64) as usize;

    // Chunks: whole rows of all levels when a row is small, else one row split by levels.
    let chunk_row_bytes = (levels * cols * 4) as u64;
    let chunk = if chunk_row_bytes > CHUNK_TARGET_BYTES {
        let levels_fit = (CHUNK_TARGET_BYTES / (cols as u64 * 4)).max(1) as usize;
        [levels_fit.min(levels), 1, cols]
    } else {
        // Even chunks: rows split into as few pieces as the target allows.
        let rows_fit = ((CHUNK_TARGET_BYTES / chunk_row_bytes) as usize)
            .min(fitting_rows)
            .max(1);
        let pieces = rows.div_ceil(rows_fit);
        [levels, rows.div_ceil(pieces), cols]
    };
    // Slab boundaries fall on chunk boundaries, so no chunk is written twice.
    let rows_per_slab = if fitting_rows >= rows {
        rows
    } else {
        ((fitting_rows / chunk[1]) * chunk[1]).max(chunk[1])
    };
    Ok(SlabPlan {
        shape,
        steps,
        rows_per_slab,
        chunk,
        output_fields,
        uncertainty_fields,
        columns,
        budget_bytes,
        read_cache_bytes: 0,
        read_cache_shortfall: 0,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GIB: u64 = 1024 * 1024 * 1024;
    const MIB: u64 = 1024 * 1024;
    /// Both minerals, Ω = 1 only (the default indicators).
    const HORIZONS: ColumnLoad = ColumnLoad {
        minerals: 2,
        horizons: 2,
    };

    #[test]
    fn respects_the_budget_and_covers_every_row_once() {
        // 1/4° global-like grid: 75 levels x 720 rows x 1440 columns (synthetic sizes).
        for budget in [256 * MIB, 512 * MIB, GIB, 2 * GIB, 16 * GIB] {
            let plan = plan_slabs([75, 720, 1440], 3, 5, HORIZONS, budget).unwrap();
            assert!(plan.estimated_peak_bytes() <= budget, "{plan}");
            assert!(plan.rows_per_slab >= 1);
            assert_eq!(plan.rows_per_slab % plan.chunk[1], 0);
            let mut seen = vec![0u32; 720 * 3];
            for (step, rows) in plan.slabs(0) {
                assert!(rows.len() <= plan.rows_per_slab);
                for row in rows {
                    seen[step * 720 + row] += 1;
                }
            }
            assert!(seen.iter().all(|&n| n == 1));
        }
    }

    #[test]
    fn a_larger_budget_gives_larger_slabs_until_one_step_fits() {
        let small = plan_slabs([50, 180, 360], 12, 5, HORIZONS, 256 * MIB).unwrap();
        let large = plan_slabs([50, 180, 360], 12, 5, HORIZONS, 8 * GIB).unwrap();
        assert!(small.rows_per_slab < large.rows_per_slab);
        assert_eq!(large.rows_per_slab, 180);
        assert_eq!(large.slabs_per_step(), 1);
    }

    #[test]
    fn peak_does_not_depend_on_time_steps() {
        let few = plan_slabs([50, 180, 360], 12, 5, HORIZONS, GIB).unwrap();
        let many = plan_slabs([50, 180, 360], 1200, 5, HORIZONS, GIB).unwrap();
        assert_eq!(few.estimated_peak_bytes(), many.estimated_peak_bytes());
    }

    #[test]
    fn refuses_a_budget_below_one_row() {
        let err = plan_slabs([75, 720, 1440], 1, 5, ColumnLoad::default(), 130 * MIB)
            .unwrap_err()
            .to_string();
        assert!(err.contains("too small"), "{err}");
        assert!(err.contains("at least"), "{err}");
    }

    #[test]
    fn horizons_shrink_slabs_but_stay_inside_the_budget() {
        let plain = plan_slabs([50, 180, 360], 12, 5, ColumnLoad::default(), 512 * MIB).unwrap();
        let with = plan_slabs([50, 180, 360], 12, 5, HORIZONS, 512 * MIB).unwrap();
        assert!(with.bytes_per_cell() > plain.bytes_per_cell());
        assert!(with.estimated_peak_bytes() <= 512 * MIB, "{with}");
        assert!(with.fixed_bytes() == plain.fixed_bytes() + 16 * 180 * 360);
    }

    #[test]
    fn chunks_stay_near_the_target_for_wide_rows() {
        // 100 levels x 40000 columns x 4 B = 16 MB per row: chunks split levels.
        let plan = plan_slabs([100, 10, 40000], 1, 1, ColumnLoad::default(), 64 * GIB).unwrap();
        assert_eq!(plan.chunk[1], 1);
        assert!((plan.chunk[0] * plan.chunk[2] * 4) as u64 <= CHUNK_TARGET_BYTES);
    }

    #[test]
    fn resumes_from_a_later_step() {
        let plan = plan_slabs([2, 10, 4], 3, 1, ColumnLoad::default(), GIB).unwrap();
        let slabs: Vec<_> = plan.slabs(2).collect();
        assert_eq!(slabs, vec![(2, 0..10)]);
    }

    /// A cache model like the reader's: none for slabs of whole input chunks of `chunk_rows`
    /// rows, else two bands of chunks of `band_bytes` each.
    fn cache_model(chunk_rows: usize, band_bytes: u64) -> impl Fn(usize) -> u64 {
        move |rows| {
            if rows % chunk_rows == 0 {
                0
            } else {
                2 * band_bytes
            }
        }
    }

    #[test]
    fn slabs_take_whole_input_chunks_where_they_can() {
        // Output chunks of 9 rows (4 MiB), input chunks of 18: slabs of a multiple of 18.
        let mut plan = plan_slabs([75, 720, 1440], 3, 5, HORIZONS, 3584 * MIB).unwrap();
        let before = plan.rows_per_slab;
        assert_eq!(plan.chunk[1], 9);
        assert_ne!(before % 18, 0, "{plan}");
        plan.fit_input_chunks(Some(18), cache_model(18, 10 * MIB));
        assert_eq!(plan.rows_per_slab % 18, 0, "{plan}");
        assert!(plan.rows_per_slab <= before && plan.rows_per_slab + 18 > before);
        assert_eq!((plan.read_cache_bytes, plan.read_cache_shortfall), (0, 0));
        assert!(plan.estimated_peak_bytes() <= 3584 * MIB);
    }

    #[test]
    fn slabs_shrink_to_hold_the_cache_that_inflates_each_chunk_once() {
        // Chunks of all 720 rows (a whole step per chunk): no slab takes whole chunks.
        let whole = plan_slabs([75, 720, 1440], 3, 5, HORIZONS, 2 * GIB).unwrap();
        let mut plan = whole.clone();
        plan.fit_input_chunks(Some(720), cache_model(720, 300 * MIB));
        assert_eq!(plan.read_cache_bytes, 600 * MIB, "{plan}");
        assert!(plan.rows_per_slab < whole.rows_per_slab, "{plan}");
        assert!(plan.estimated_peak_bytes() <= 2 * GIB, "{plan}");
        assert!(plan.to_string().contains("inflates each once"), "{plan}");
        let mut seen = vec![0u32; 720 * 3];
        for (step, rows) in plan.slabs(0) {
            assert_eq!(rows.start % plan.chunk[1], 0);
            rows.for_each(|row| seen[step * 720 + row] += 1);
        }
        assert!(seen.iter().all(|&n| n == 1));
    }

    #[test]
    fn a_cache_the_budget_cannot_hold_is_reported_not_taken() {
        let mut plan = plan_slabs([75, 720, 1440], 3, 5, HORIZONS, GIB).unwrap();
        let before = plan.clone();
        plan.fit_input_chunks(Some(720), cache_model(720, 2 * GIB));
        assert_eq!(plan.read_cache_bytes, 0);
        assert_eq!(plan.read_cache_shortfall, 4 * GIB);
        assert_eq!(plan.rows_per_slab, before.rows_per_slab);
        assert_eq!(plan.estimated_peak_bytes(), before.estimated_peak_bytes());
        assert!(plan.to_string().contains("inflated again"), "{plan}");
    }
}
