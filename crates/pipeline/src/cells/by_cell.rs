//! The reference path: [`acidscape_chem::solve`] once per cell.

use super::{assessed_ranges, ranges, unsolvable, write_solved, Block, BlockSolver, SlabJob};
use crate::flags::{error_flag, Flag};
use crate::indicators::OutputField;
use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair, Output};
use acidscape_gridio::SlabInputs;

/// The scalar solver, one cell after another.
pub(super) struct ByCell;

impl BlockSolver for ByCell {
    fn solve_block(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>) {
        for offset in 0..block.flags.len() {
            let mut omega = None;
            let outs = &mut block.fields;
            block.flags[offset] = solve_cell(
                job.inputs,
                block.start + offset,
                job.fields,
                job.choice,
                |k, v| outs[k][offset] = v,
                |aragonite, calcite| omega = Some([aragonite, calcite]),
            );
            if let Some(values) = omega {
                block.put_omega(offset, values);
            }
        }
    }
}

/// Solves one cell; calls `put(field index, value)` for each field and `put_omega(Ω
/// aragonite, Ω calcite)` when solved, and returns the flag (or [`crate::flags::FLAG_FILL`] for land: every
/// primary input missing).
pub fn solve_cell(
    inputs: &SlabInputs,
    cell: usize,
    fields: &[OutputField],
    choice: &ConstantChoice,
    put: impl FnMut(usize, f32),
    mut put_omega: impl FnMut(f64, f64),
) -> Flag {
    let needs_density = fields.iter().any(OutputField::needs_density);
    if let Some(flag) = unsolvable(inputs, cell, needs_density, choice) {
        return flag;
    }
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
    let solution = match solve(pair, &conditions, choice) {
        Ok(solution) => solution,
        Err(error) => return error_flag(&error) | assessed_ranges(inputs, cell, choice),
    };
    write_solved(
        fields,
        inputs.density_kg_m3[cell],
        ranges(solution.validity, inputs, cell),
        |k| fields[k].output().value(&solution),
        put,
        || {
            put_omega(
                Output::OmegaAragonite.value(&solution),
                Output::OmegaCalcite.value(&solution),
            )
        },
    )
}
