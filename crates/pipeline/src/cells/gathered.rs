//! The kernel path: a block's solvable cells gathered into the batch kernel's layout, solved
//! together, and their results scattered back.

use super::{
    assessed_ranges, ranges, unsolvable, Block, BlockSolver, KeepOmega, SlabJob, VALUE_FILL,
};
use crate::flags::{outcome_flag, NO_PHYSICAL_SOLUTION};
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
    /// Whether every indicator of each gathered cell is finite.
    all_finite: Vec<bool>,
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
            all_finite: Vec::new(),
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
    /// Flags the block's unsolvable cells at once, solves the others through the kernel and
    /// scatters their values field by field.
    fn solve_block(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>) {
        self.gather(job.inputs, job.choice, block);
        self.run_kernel(job.choice);
        self.scatter(job, block);
    }
}

impl Gathered {
    /// Flags the block's unsolvable cells and copies the others' inputs into the columns.
    fn gather(&mut self, inputs: &SlabInputs, choice: &ConstantChoice, block: &mut Block<'_>) {
        self.offsets.clear();
        for (offset, flag) in block.flags.iter_mut().enumerate() {
            let cell = block.start + offset;
            // Every input finite (and a usable density): solvable, without unsolvable's checks.
            let finite = [
                inputs.temperature_c[cell],
                inputs.salinity[cell],
                inputs.pressure_dbar[cell],
                inputs.dic[cell],
                inputs.alkalinity[cell],
                inputs.phosphate[cell],
                inputs.silicate[cell],
            ]
            .iter()
            .fold(true, |all, v| all & v.is_finite());
            let density = inputs.density_kg_m3[cell];
            let density_usable = !self.needs_density | (density.is_finite() & (density > 0.0));
            let unsolved = if finite & density_usable {
                None
            } else {
                unsolvable(inputs, cell, self.needs_density, choice)
            };
            match unsolved {
                Some(unsolved) => *flag = unsolved,
                None => self.offsets.push(offset),
            }
        }
        let sources = [
            &inputs.temperature_c,
            &inputs.salinity,
            &inputs.pressure_dbar,
            &inputs.dic,
            &inputs.alkalinity,
            &inputs.phosphate,
            &inputs.silicate,
            &inputs.density_kg_m3,
        ];
        let block_sources = sources.map(|source| &source[block.start..][..block.flags.len()]);
        let targets = self.columns.iter_mut().chain([&mut self.density]);
        for (column, source) in targets.zip(block_sources) {
            column.clear();
            column.extend(self.offsets.iter().map(|&offset| source[offset]));
        }
    }

    /// Writes the solved cells' fields, one field at a time, then every gathered cell's flag:
    /// [`super::write_solved`]'s rules (fill and [`NO_PHYSICAL_SOLUTION`] when an indicator is not
    /// finite; an uncertainty that is not finite is fill on its own).
    fn scatter(&mut self, job: &SlabJob<'_>, block: &mut Block<'_>) {
        let SlabJob {
            inputs,
            fields,
            choice,
            ..
        } = *job;
        let cells = self.offsets.len();
        self.all_finite.clear();
        self.all_finite.resize(cells, true);
        for (k, field) in fields.iter().enumerate() {
            let out = &mut *block.fields[k];
            let (offsets, all_finite) = (&self.offsets, &mut self.all_finite);
            let optional = field.uncertainty.is_some();
            let outputs = &self.outputs[self.field_outputs[k]].1;
            field.each_value_of_output(outputs, &self.density, |i, value| {
                let finite = value.is_finite();
                all_finite[i] &= finite | optional;
                out[offsets[i]] = if finite | !optional {
                    value as f32
                } else {
                    VALUE_FILL
                };
            });
        }
        for (i, &offset) in self.offsets.iter().enumerate() {
            let cell = block.start + offset;
            let solved = self.status[i] == CellStatus::Solved;
            if solved && self.all_finite[i] {
                block.flags[offset] = ranges(self.validity[i], inputs, cell);
                block.put_omega(offset, self.omega_outputs.map(|o| self.value(o, i)));
                continue;
            }
            for out in block.fields.iter_mut() {
                out[offset] = VALUE_FILL;
            }
            block.flags[offset] = if solved {
                NO_PHYSICAL_SOLUTION | ranges(self.validity[i], inputs, cell)
            } else {
                outcome_flag(self.status[i]) | assessed_ranges(inputs, cell, choice)
            };
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
