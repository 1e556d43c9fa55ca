//! The kernel path: a block's solvable cells gathered into the batch kernel's layout, solved
//! together, and their results scattered back.

use super::{
    assessed_ranges, ranges, unsolvable, write_solved, Block, BlockSolver, KeepOmega, SlabJob,
};
use crate::flags::outcome_flag;
use crate::indicators::OutputField;
use acidscape_chem::{
    solve_cells, CellInputs, CellOutputs, CellStatus, ConstantChoice, Output, Validity,
};
use acidscape_gridio::SlabInputs;

/// One rayon task's buffers for the kernel, reused from block to block.
pub(super) struct Gathered {
    /// Offset in the block of each gathered cell.
    offsets: Vec<usize>,
    /// Temperature, salinity, pressure, DIC, alkalinity, phosphate, silicate.
    columns: [Vec<f64>; 7],
    density: Vec<f64>,
    status: Vec<CellStatus>,
    validity: Vec<Validity>,
    /// The chemistry's outputs wanted (each once) and their values.
    outputs: Vec<(Output, Vec<f64>)>,
    /// For each field, its output's index in `outputs`.
    field_outputs: Vec<usize>,
    /// Ω aragonite's and Ω calcite's indices in `outputs`, when kept.
    omega_outputs: [Option<usize>; 2],
    needs_density: bool,
}

impl Gathered {
    pub(super) fn new(fields: &[OutputField], keep: KeepOmega) -> Self {
        let mut outputs: Vec<(Output, Vec<f64>)> = Vec::new();
        let mut index_of = |output: Output| match outputs.iter().position(|(o, _)| *o == output) {
            Some(i) => i,
            None => {
                outputs.push((output, Vec::new()));
                outputs.len() - 1
            }
        };
        let field_outputs = fields.iter().map(|f| index_of(f.output())).collect();
        let omega_outputs = [
            keep.aragonite.then(|| index_of(Output::OmegaAragonite)),
            keep.calcite.then(|| index_of(Output::OmegaCalcite)),
        ];
        Gathered {
            offsets: Vec::new(),
            columns: Default::default(),
            density: Vec::new(),
            status: Vec::new(),
            validity: Vec::new(),
            outputs,
            field_outputs,
            omega_outputs,
            needs_density: fields.iter().any(OutputField::needs_density),
        }
    }
}

impl BlockSolver for Gathered {
    /// Flags the block's unsolvable cells at once and solves the others through the kernel.
    fn solve_block(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>) {
        let SlabJob {
            inputs,
            fields,
            choice,
            ..
        } = *job;
        self.gather(inputs, choice, block);
        self.run_kernel(choice);
        for (i, &offset) in self.offsets.iter().enumerate() {
            let cell = block.start + offset;
            block.flags[offset] = match self.status[i] {
                CellStatus::Solved => {
                    let outs = &mut block.fields;
                    let mut omega = None;
                    let density = self.density[i];
                    let flag = write_solved(
                        fields,
                        ranges(self.validity[i], inputs, cell),
                        |k| {
                            let output = self.outputs[self.field_outputs[k]].1[i];
                            fields[k].value_of_output(output, density)
                        },
                        |k, v| outs[k][offset] = v,
                        || omega = Some(self.omega_outputs.map(|o| self.value(o, i))),
                    );
                    if let Some(values) = omega {
                        block.put_omega(offset, values);
                    }
                    flag
                }
                failed => outcome_flag(failed) | assessed_ranges(inputs, cell, choice),
            };
        }
    }
}

impl Gathered {
    /// Flags the block's unsolvable cells and copies the others' inputs into the columns.
    fn gather(&mut self, inputs: &SlabInputs, choice: &ConstantChoice, block: &mut Block<'_>) {
        self.offsets.clear();
        self.density.clear();
        for column in &mut self.columns {
            column.clear();
        }
        let sources = [
            &inputs.temperature_c,
            &inputs.salinity,
            &inputs.pressure_dbar,
            &inputs.dic,
            &inputs.alkalinity,
            &inputs.phosphate,
            &inputs.silicate,
        ];
        for (offset, flag) in block.flags.iter_mut().enumerate() {
            let cell = block.start + offset;
            if let Some(unsolved) = unsolvable(inputs, cell, self.needs_density, choice) {
                *flag = unsolved;
                continue;
            }
            self.offsets.push(offset);
            self.density.push(inputs.density_kg_m3[cell]);
            for (column, source) in self.columns.iter_mut().zip(sources) {
                column.push(source[cell]);
            }
        }
    }

    /// Runs the kernel over the gathered cells.
    fn run_kernel(&mut self, choice: &ConstantChoice) {
        let cells = self.offsets.len();
        self.status.resize(cells, CellStatus::default());
        self.validity.resize(cells, Validity::default());
        let [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate] =
            &self.columns;
        let cell_inputs = CellInputs {
            temperature_c,
            salinity,
            pressure_dbar,
            dic,
            alkalinity,
            phosphate,
            silicate,
        };
        let mut cell_outputs = CellOutputs::new(&mut self.status, &mut self.validity);
        for (output, values) in &mut self.outputs {
            values.resize(cells, 0.0);
            cell_outputs.request(*output, values);
        }
        solve_cells(&cell_inputs, choice, &mut cell_outputs)
            .expect("every gathered slice holds one value per gathered cell");
    }

    /// The value of the output at `index` (NaN when not kept) for gathered cell `i`.
    fn value(&self, index: Option<usize>, i: usize) -> f64 {
        index.map_or(f64::NAN, |o| self.outputs[o].1[i])
    }
}
