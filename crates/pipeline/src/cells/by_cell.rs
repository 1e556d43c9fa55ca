//! The reference path: [`acidscape_chem::solve`] once per cell.

use super::{assessed_ranges, ranges, unsolvable, write_solved, Block, BlockSolver, SlabJob};
use crate::cells_uncertainty::{solve_cell_with_uncertainty, SlabUncertainty};
use crate::flags::{error_flag, Flag};
use crate::indicators::{CellUncertainty, OutputField};
use acidscape_chem::{solve, ChemError, Conditions, ConstantChoice, InputPair, Output, Solution};
use acidscape_gridio::SlabInputs;

/// The scalar solver, one cell after another; with an uncertainty request, each cell through
/// [`solve_cell_with_uncertainty`] (the kernel has no derivatives).
pub(super) struct ByCell<'a> {
    pub(super) uncertainty: Option<SlabUncertainty<'a>>,
}

impl BlockSolver for ByCell<'_> {
    fn solve_block(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>) {
        let (inputs, fields, choice) = (job.inputs, job.fields, job.choice);
        for offset in 0..block.flags.len() {
            let cell = block.start + offset;
            let mut omega = None;
            let outs = &mut block.fields;
            let put = |k: usize, v: f32| outs[k][offset] = v;
            let put_omega = |aragonite, calcite| omega = Some([aragonite, calcite]);
            block.flags[offset] = match self.uncertainty {
                None => solve_cell(inputs, cell, fields, choice, put, put_omega),
                Some(uncertainty) => solve_cell_with_uncertainty(
                    inputs,
                    cell,
                    fields,
                    choice,
                    uncertainty,
                    put,
                    put_omega,
                ),
            };
            if let Some(values) = omega {
                block.put_omega(offset, values);
            }
        }
    }
}

/// Solves one cell; calls `put(field index, value)` for each field and `put_omega(Ω
/// aragonite, Ω calcite)` when solved, and returns the flag (or [`crate::flags::FLAG_FILL`] for
/// land: every primary input missing).
pub fn solve_cell(
    inputs: &SlabInputs,
    cell: usize,
    fields: &[OutputField],
    choice: &ConstantChoice,
    put: impl FnMut(usize, f32),
    put_omega: impl FnMut(f64, f64),
) -> Flag {
    let solve = |pair, conditions: &Conditions| Ok((solve(pair, conditions, choice)?, None));
    solve_cell_by(inputs, cell, fields, choice, put, put_omega, solve)
}

/// What a cell's solver gives: the solution, and the uncertainties of its outputs when they
/// are asked for.
pub(crate) type CellSolved = Result<(Solution, Option<CellUncertainty>), ChemError>;

/// As [`solve_cell`], solving the cell's checked inputs with `solve`.
pub(crate) fn solve_cell_by(
    inputs: &SlabInputs,
    cell: usize,
    fields: &[OutputField],
    choice: &ConstantChoice,
    put: impl FnMut(usize, f32),
    mut put_omega: impl FnMut(f64, f64),
    solve: impl FnOnce(InputPair, &Conditions) -> CellSolved,
) -> Flag {
    let needs_density = fields.iter().any(OutputField::needs_density);
    if let Some(flag) = unsolvable(inputs, cell, needs_density, choice) {
        return flag;
    }
    let (pair, conditions) = cell_sample(inputs, cell);
    let (solution, uncertainty) = match solve(pair, &conditions) {
        Ok(solved) => solved,
        Err(error) => return error_flag(&error) | assessed_ranges(inputs, cell, choice),
    };
    let density = inputs.density_kg_m3[cell];
    write_solved(
        fields,
        ranges(solution.validity, inputs, cell),
        |k| fields[k].cell_value(&solution, uncertainty.as_ref(), density),
        put,
        || {
            put_omega(
                Output::OmegaAragonite.value(&solution),
                Output::OmegaCalcite.value(&solution),
            )
        },
    )
}

/// Cell `cell` of a slab as the chemistry takes it: the alkalinity–DIC pair and its
/// in-situ conditions.
pub fn cell_sample(inputs: &SlabInputs, cell: usize) -> (InputPair, Conditions) {
    let conditions = Conditions {
        temperature_c: inputs.temperature_c[cell],
        salinity: inputs.salinity[cell],
        pressure_dbar: inputs.pressure_dbar[cell],
        phosphate: inputs.phosphate[cell],
        silicate: inputs.silicate[cell],
    };
    let pair = InputPair::AlkalinityDic {
        alkalinity: inputs.alkalinity[cell],
        dic: inputs.dic[cell],
    };
    (pair, conditions)
}
