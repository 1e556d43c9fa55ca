//! Solving every cell of a slab in parallel, with a quality flag per cell.

use crate::indicators::OutputField;
use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair};
use acidscape_gridio::SlabInputs;
use rayon::prelude::*;
use std::ops::{AddAssign, Range};

/// Value of the quality flag for each outcome (byte variable).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[repr(i8)]
pub enum CellFlag {
    /// Solved, every input inside the constants' validity ranges.
    Computed = 0,
    /// Solved, but some input lies outside a constant's published validity range.
    OutsideValidityRange = 1,
    /// The inputs admit no physical solution (e.g. negative alkalinity); indicators missing.
    NoSolution = 2,
    /// A wet cell with some input missing or not finite; indicators missing.
    MissingInput = 3,
}

/// Flag value for land cells (no input at all): the flag variable's _FillValue.
pub const FLAG_FILL: i8 = -127;
/// Fill value of the indicator variables (as CMIP model output).
pub const VALUE_FILL: f32 = 1.0e20;
/// `flag_values` and `flag_meanings`, in the same order.
pub const FLAG_VALUES: [i8; 4] = [0, 1, 2, 3];
pub const FLAG_MEANINGS: &str = "computed outside_validity_range no_solution missing_input";

/// How many cells ended with each flag.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct FlagCounts {
    pub computed: u64,
    pub outside_validity_range: u64,
    pub no_solution: u64,
    pub missing_input: u64,
    pub land: u64,
}

impl FlagCounts {
    fn record(&mut self, flag: i8) {
        match flag {
            0 => self.computed += 1,
            1 => self.outside_validity_range += 1,
            2 => self.no_solution += 1,
            3 => self.missing_input += 1,
            _ => self.land += 1,
        }
    }

    /// Wet cells (everything but land).
    pub fn wet(&self) -> u64 {
        self.computed + self.outside_validity_range + self.no_solution + self.missing_input
    }

    pub fn as_array(&self) -> [u64; 5] {
        [
            self.computed,
            self.outside_validity_range,
            self.no_solution,
            self.missing_input,
            self.land,
        ]
    }

    pub fn from_array(values: [u64; 5]) -> FlagCounts {
        let [computed, outside_validity_range, no_solution, missing_input, land] = values;
        FlagCounts {
            computed,
            outside_validity_range,
            no_solution,
            missing_input,
            land,
        }
    }
}

impl AddAssign for FlagCounts {
    fn add_assign(&mut self, other: FlagCounts) {
        self.computed += other.computed;
        self.outside_validity_range += other.outside_validity_range;
        self.no_solution += other.no_solution;
        self.missing_input += other.missing_input;
        self.land += other.land;
    }
}

/// Indicators of one slab, one vector per output field, in (level, row, col) order.
#[derive(Debug)]
pub struct SlabResult {
    pub step: usize,
    pub rows: Range<usize>,
    pub shape: [usize; 3],
    pub fields: Vec<Vec<f32>>,
    pub flags: Vec<i8>,
    pub counts: FlagCounts,
}

/// One rayon task's share: first cell index, its piece of every field, its flags.
type Block<'a> = (usize, Vec<&'a mut [f32]>, &'a mut [i8]);

/// Cells handed to one rayon task: large enough to amortise scheduling.
const CELLS_PER_TASK: usize = 4096;

/// Solves every cell of `inputs` and fills the requested fields and the flags.
pub fn solve_slab(
    inputs: &SlabInputs,
    fields: &[OutputField],
    choice: &ConstantChoice,
) -> SlabResult {
    let cells = inputs.shape.iter().product::<usize>();
    let mut values: Vec<Vec<f32>> = fields.iter().map(|_| vec![VALUE_FILL; cells]).collect();
    let mut flags = vec![FLAG_FILL; cells];

    // Split every field and the flags into the same blocks, then hand blocks to rayon.
    let mut blocks: Vec<Block<'_>> = flags
        .chunks_mut(CELLS_PER_TASK)
        .enumerate()
        .map(|(i, f)| (i * CELLS_PER_TASK, Vec::with_capacity(fields.len()), f))
        .collect();
    for field in values.iter_mut() {
        for (block, chunk) in blocks.iter_mut().zip(field.chunks_mut(CELLS_PER_TASK)) {
            block.1.push(chunk);
        }
    }
    let counts = blocks
        .into_par_iter()
        .map(|(start, mut outs, flag_block)| {
            let mut counts = FlagCounts::default();
            for (offset, flag) in flag_block.iter_mut().enumerate() {
                let cell = start + offset;
                *flag = solve_cell(inputs, cell, fields, choice, |k, v| outs[k][offset] = v);
                counts.record(*flag);
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
    }
}

/// Solves one cell; calls `put(field index, value)` for each field when solved and
/// returns the flag (or [`FLAG_FILL`] for land: every primary input missing).
pub fn solve_cell(
    inputs: &SlabInputs,
    cell: usize,
    fields: &[OutputField],
    choice: &ConstantChoice,
    mut put: impl FnMut(usize, f32),
) -> i8 {
    let temperature_c = inputs.temperature_c[cell];
    let salinity = inputs.salinity[cell];
    let dic = inputs.dic[cell];
    let alkalinity = inputs.alkalinity[cell];
    if [temperature_c, salinity, dic, alkalinity]
        .iter()
        .all(|v| v.is_nan())
    {
        return FLAG_FILL;
    }
    let conditions = Conditions {
        temperature_c,
        salinity,
        pressure_dbar: inputs.pressure_dbar[cell],
        phosphate: inputs.phosphate[cell],
        silicate: inputs.silicate[cell],
    };
    let density = inputs.density_kg_m3[cell];
    let inputs_finite = [
        temperature_c,
        salinity,
        dic,
        alkalinity,
        conditions.pressure_dbar,
        conditions.phosphate,
        conditions.silicate,
    ]
    .iter()
    .all(|v| v.is_finite());
    let density_usable = density.is_finite() && density > 0.0;
    if !inputs_finite || (!density_usable && fields.iter().any(|f| f.needs_density())) {
        return CellFlag::MissingInput as i8;
    }
    let solution = match solve(
        InputPair::AlkalinityDic { alkalinity, dic },
        &conditions,
        choice,
    ) {
        Ok(solution) => solution,
        Err(_) => return CellFlag::NoSolution as i8,
    };
    let mut all_finite = true;
    for (k, field) in fields.iter().enumerate() {
        let value = field.value(&solution, density);
        all_finite &= value.is_finite();
        put(k, value as f32);
    }
    if !all_finite {
        for k in 0..fields.len() {
            put(k, VALUE_FILL);
        }
        return CellFlag::NoSolution as i8;
    }
    // Only breaches that can move an indicator count (KF's range does not: Validity::MATERIAL).
    if !solution.validity.is_material() {
        CellFlag::Computed as i8
    } else {
        CellFlag::OutsideValidityRange as i8
    }
}
