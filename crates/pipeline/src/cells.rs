//! Solving every cell of a slab in parallel, with a quality flag per cell.
//!
//! [`solve_slab`] with [`SlabSolver::Kernel`] gathers each task's solvable cells into the batch
//! kernel's layout ([`acidscape_chem::solve_cells`], cells in SIMD lanes) and scatters its results;
//! [`SlabSolver::ByCell`] calls [`acidscape_chem::solve`] cell by cell, the reference the kernel
//! path is tested against. Both give every cell the same values and flag.

mod by_cell;
mod gathered;
#[cfg(test)]
mod tests;

pub use by_cell::{cell_sample, solve_cell};
pub(crate) use by_cell::{solve_cell_by, CellSolved};

use crate::cells_uncertainty::SlabUncertainty;
use crate::flags::WITHOUT_VALUES;
use crate::flags::{range_flag, Flag, FlagCounts, FLAG_FILL, MISSING_INPUT, NO_PHYSICAL_SOLUTION};
use crate::indicators::OutputField;
use acidscape_chem::{ConstantChoice, Validity};
use acidscape_gridio::{filled_on_pool, SlabInputs};
use by_cell::ByCell;
use gathered::Gathered;
use rayon::prelude::*;
use std::ops::Range;

/// Fill value of the indicator variables (as CMIP model output).
pub const VALUE_FILL: f32 = 1.0e20;

/// Indicators of one slab, one vector per output field, in (level, row, col) order.
#[derive(Debug)]
pub struct SlabResult {
    pub step: usize,
    pub rows: Range<usize>,
    pub shape: [usize; 3],
    pub fields: Vec<Vec<f32>>,
    pub flags: Vec<Flag>,
    pub counts: FlagCounts,
    /// Ω as solved, in f64, for the column analysis (horizons, corrosive extent); empty
    /// unless asked for with [`KeepOmega`].
    pub omega: SaturationStates,
}

/// Ω aragonite and Ω calcite per cell of a slab in f64 (NaN where a cell has no value).
#[derive(Debug, Default)]
pub struct SaturationStates {
    pub aragonite: Vec<f64>,
    pub calcite: Vec<f64>,
}

/// Which saturation states [`solve_slab`] keeps in f64 besides the output fields.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct KeepOmega {
    pub aragonite: bool,
    pub calcite: bool,
}

/// One rayon task's share of a slab: its first cell, its piece of every field, its flags, its
/// piece of each kept saturation state.
struct Block<'a> {
    start: usize,
    fields: Vec<&'a mut [f32]>,
    flags: &'a mut [Flag],
    omega: [Option<&'a mut [f64]>; 2],
}

impl Block<'_> {
    /// Keeps a solved cell's Ω aragonite and Ω calcite where they are kept.
    fn put_omega(&mut self, offset: usize, values: [f64; 2]) {
        for (state, value) in self.omega.iter_mut().zip(values) {
            if let Some(state) = state {
                state[offset] = value;
            }
        }
    }
}

/// Cells handed to one rayon task: large enough to amortise scheduling and the kernel's
/// gathering.
const CELLS_PER_TASK: usize = 4096;

/// How a slab's cells are solved.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum SlabSolver {
    /// The batch kernel, [`acidscape_chem::solve_cells`], on each task's solvable cells.
    #[default]
    Kernel,
    /// [`acidscape_chem::solve`] cell by cell: the same values and flags, several times slower;
    /// the reference in tests.
    ByCell,
}

/// Solves every cell of `inputs` with `solver` and fills the requested fields, the flags and the
/// kept saturation states (in `spare`'s buffers, which may hold a previous slab's values); with
/// `uncertainty`, every cell takes the scalar uncertainty path whatever `solver` says (the
/// kernel gives no derivatives; see [`crate::cells_uncertainty`]).
pub fn solve_slab(
    solver: SlabSolver,
    inputs: &SlabInputs,
    fields: &[OutputField],
    choice: &ConstantChoice,
    keep: KeepOmega,
    spare: SaturationStates,
    uncertainty: Option<SlabUncertainty<'_>>,
) -> SlabResult {
    let job = SlabJob {
        inputs,
        fields,
        choice,
        keep,
    };
    match (uncertainty, solver) {
        (None, SlabSolver::Kernel) => job.solve(spare, || Gathered::new(fields, keep)),
        _ => job.solve(spare, || ByCell { uncertainty }),
    }
}

/// Solves the cells of one block, with what it keeps from block to block.
trait BlockSolver {
    fn solve_block(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>);
}

/// What every block of a slab is solved with.
struct SlabJob<'a> {
    inputs: &'a SlabInputs,
    fields: &'a [OutputField],
    choice: &'a ConstantChoice,
    keep: KeepOmega,
}

impl SlabJob<'_> {
    /// Splits the slab's outputs into blocks and hands them to rayon, each task solving its
    /// blocks with a solver made by `init` (one per task split, kept across its blocks).
    fn solve<S: BlockSolver>(
        &self,
        spare: SaturationStates,
        init: impl Fn() -> S + Sync + Send,
    ) -> SlabResult {
        let inputs = self.inputs;
        let field_count = self.fields.len();
        let cells = inputs.shape.iter().product::<usize>();
        let mut values: Vec<Vec<f32>> = (0..field_count)
            .map(|_| filled_on_pool(VALUE_FILL, cells))
            .collect();
        let mut flags = filled_on_pool(FLAG_FILL, cells);
        // The kept states reuse `spare` (the previous slab's) as they are: every cell is written
        // once, on the rayon pool, so no pass over the slab precedes the solve.
        let kept = |on: bool, mut buffer: Vec<f64>| {
            if on {
                buffer.resize(cells, 0.0);
                buffer
            } else {
                Vec::new()
            }
        };
        let mut omega = [
            kept(self.keep.aragonite, spare.aragonite),
            kept(self.keep.calcite, spare.calcite),
        ];

        let mut blocks: Vec<Block<'_>> = flags
            .chunks_mut(CELLS_PER_TASK)
            .enumerate()
            .map(|(i, flags)| Block {
                start: i * CELLS_PER_TASK,
                fields: Vec::with_capacity(field_count),
                flags,
                omega: [None, None],
            })
            .collect();
        for field in values.iter_mut() {
            for (block, chunk) in blocks.iter_mut().zip(field.chunks_mut(CELLS_PER_TASK)) {
                block.fields.push(chunk);
            }
        }
        for (m, states) in omega.iter_mut().enumerate() {
            for (block, chunk) in blocks.iter_mut().zip(states.chunks_mut(CELLS_PER_TASK)) {
                block.omega[m] = Some(chunk);
            }
        }
        // The first standard-uncertainty field stands for all: they are missing together.
        let uncertainty = (self.fields.iter()).position(|f| f.combined_uncertainty_of().is_some());
        let counts = blocks
            .into_par_iter()
            .map_init(init, |solver, mut block| {
                for states in block.omega.iter_mut().flatten() {
                    states.fill(f64::NAN);
                }
                solver.solve_block(self, &mut block);
                let mut counts = FlagCounts::default();
                for (offset, flag) in block.flags.iter().enumerate() {
                    counts.record(*flag);
                    let solved = *flag != FLAG_FILL && *flag & WITHOUT_VALUES == 0;
                    if uncertainty.is_some_and(|k| solved && block.fields[k][offset] == VALUE_FILL)
                    {
                        counts.without_uncertainty += 1;
                    }
                }
                counts
            })
            .reduce(FlagCounts::default, |mut a, b| {
                a += b;
                a
            });
        SlabResult {
            step: inputs.step,
            rows: inputs.rows.clone(),
            shape: inputs.shape,
            fields: values,
            flags,
            counts,
            omega: SaturationStates {
                aragonite: std::mem::take(&mut omega[0]),
                calcite: std::mem::take(&mut omega[1]),
            },
        }
    }
}

/// The flag of a cell that cannot be solved whatever the chemistry says: [`FLAG_FILL`] for land
/// (every primary input missing), [`MISSING_INPUT`] (with its range bits) for a wet cell with an
/// input missing or not finite, or without a usable density when a field needs one.
fn unsolvable(
    inputs: &SlabInputs,
    cell: usize,
    needs_density: bool,
    choice: &ConstantChoice,
) -> Option<Flag> {
    let primary = [
        inputs.temperature_c[cell],
        inputs.salinity[cell],
        inputs.dic[cell],
        inputs.alkalinity[cell],
    ];
    if primary.iter().all(|v| v.is_nan()) {
        return Some(FLAG_FILL);
    }
    let others = [
        inputs.pressure_dbar[cell],
        inputs.phosphate[cell],
        inputs.silicate[cell],
    ];
    let inputs_finite = primary.iter().chain(&others).all(|v| v.is_finite());
    let density = inputs.density_kg_m3[cell];
    let density_usable = density.is_finite() && density > 0.0;
    if !inputs_finite || (needs_density && !density_usable) {
        return Some(MISSING_INPUT | assessed_ranges(inputs, cell, choice));
    }
    None
}

/// Range bits of a cell that was not solved: from its conditions, when they are known.
fn assessed_ranges(inputs: &SlabInputs, cell: usize, choice: &ConstantChoice) -> Flag {
    let (t, s, p) = conditions(inputs, cell);
    if [t, s, p].iter().all(|v| v.is_finite()) {
        ranges(Validity::assess(t, s, p, choice), inputs, cell)
    } else {
        0
    }
}

/// The range bits of `validity` at the cell's conditions. Only breaches that can move an
/// indicator count (KF's range does not: `Validity::MATERIAL`).
fn ranges(validity: Validity, inputs: &SlabInputs, cell: usize) -> Flag {
    let (t, s, p) = conditions(inputs, cell);
    range_flag(validity.out_of_range(t, s, p))
}

/// Temperature, salinity and pressure of a cell.
fn conditions(inputs: &SlabInputs, cell: usize) -> (f64, f64, f64) {
    (
        inputs.temperature_c[cell],
        inputs.salinity[cell],
        inputs.pressure_dbar[cell],
    )
}

/// Writes a solved cell: every field from `value(field index)` (in the field's units), and Ω
/// (aragonite, calcite) through `put_omega`; or, when an indicator is not finite, the fill in
/// every field and [`NO_PHYSICAL_SOLUTION`]. An uncertainty that cannot be propagated is fill
/// on its own and leaves the indicators standing. Returns the flag, given the range bits.
fn write_solved(
    fields: &[OutputField],
    range_bits: Flag,
    value: impl Fn(usize) -> f64,
    mut put: impl FnMut(usize, f32),
    put_omega: impl FnOnce(),
) -> Flag {
    let mut all_finite = true;
    for (k, field) in fields.iter().enumerate() {
        let value = value(k);
        if field.uncertainty.is_some() && !value.is_finite() {
            put(k, VALUE_FILL);
            continue;
        }
        all_finite &= value.is_finite();
        put(k, value as f32);
    }
    if !all_finite {
        for k in 0..fields.len() {
            put(k, VALUE_FILL);
        }
        return NO_PHYSICAL_SOLUTION | range_bits;
    }
    put_omega();
    range_bits
}
