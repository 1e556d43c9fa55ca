//! Solving every cell of a slab in parallel, with a quality flag per cell.

use crate::cells_uncertainty::{solve_cell_with_uncertainty, UncertaintyRequest};
use crate::flags::{
    error_flag, range_flag, Flag, FlagCounts, FLAG_FILL, MISSING_INPUT, NO_PHYSICAL_SOLUTION,
};
use crate::indicators::{CellUncertainty, OutputField};
use acidscape_chem::{solve, ChemError, Conditions, ConstantChoice, InputPair};
use acidscape_chem::{Solution, Validity};
use acidscape_gridio::SlabInputs;
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

/// One rayon task's share: first cell index, its piece of every field, its flags, its piece
/// of each kept saturation state.
type Block<'a> = (
    usize,
    Vec<&'a mut [f32]>,
    &'a mut [Flag],
    [Option<&'a mut [f64]>; 2],
);

/// Cells handed to one rayon task: large enough to amortise scheduling.
const CELLS_PER_TASK: usize = 4096;

/// Solves every cell of `inputs` and fills the requested fields, the flags and the kept
/// saturation states (in `spare`'s buffers, which may hold a previous slab's values); with
/// `uncertainty`, every cell takes the uncertainty path (see [`crate::cells_uncertainty`]).
pub fn solve_slab(
    inputs: &SlabInputs,
    fields: &[OutputField],
    choice: &ConstantChoice,
    keep: KeepOmega,
    spare: SaturationStates,
    uncertainty: Option<&UncertaintyRequest>,
) -> SlabResult {
    let cells = inputs.shape.iter().product::<usize>();
    let mut values: Vec<Vec<f32>> = fields.iter().map(|_| vec![VALUE_FILL; cells]).collect();
    let mut flags = vec![FLAG_FILL; cells];
    // The kept states reuse `spare` (the previous slab's) as they are: every cell is written
    // once below, on the rayon pool, so no pass over the slab precedes the solve.
    let kept = |on: bool, mut buffer: Vec<f64>| {
        if on {
            buffer.resize(cells, 0.0);
            buffer
        } else {
            Vec::new()
        }
    };
    let mut omega = [
        kept(keep.aragonite, spare.aragonite),
        kept(keep.calcite, spare.calcite),
    ];

    // Split every field and the flags into the same blocks, then hand blocks to rayon.
    let mut blocks: Vec<Block<'_>> = flags
        .chunks_mut(CELLS_PER_TASK)
        .enumerate()
        .map(|(i, f)| {
            let start = i * CELLS_PER_TASK;
            (start, Vec::with_capacity(fields.len()), f, [None, None])
        })
        .collect();
    for field in values.iter_mut() {
        for (block, chunk) in blocks.iter_mut().zip(field.chunks_mut(CELLS_PER_TASK)) {
            block.1.push(chunk);
        }
    }
    for (m, states) in omega.iter_mut().enumerate() {
        for (block, chunk) in blocks.iter_mut().zip(states.chunks_mut(CELLS_PER_TASK)) {
            block.3[m] = Some(chunk);
        }
    }
    let counts = blocks
        .into_par_iter()
        .map(|(start, mut outs, flag_block, mut states)| {
            let mut counts = FlagCounts::default();
            for (offset, flag) in flag_block.iter_mut().enumerate() {
                let cell = start + offset;
                let put = |k: usize, v: f32| outs[k][offset] = v;
                let mut omega = [f64::NAN; 2];
                let put_omega = |aragonite: f64, calcite: f64| omega = [aragonite, calcite];
                *flag = match uncertainty {
                    None => solve_cell(inputs, cell, fields, choice, put, put_omega),
                    Some(request) => solve_cell_with_uncertainty(
                        inputs, cell, fields, choice, request, put, put_omega,
                    ),
                };
                for (state, value) in states.iter_mut().zip(omega) {
                    if let Some(state) = state {
                        state[offset] = value;
                    }
                }
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
        omega: SaturationStates {
            aragonite: std::mem::take(&mut omega[0]),
            calcite: std::mem::take(&mut omega[1]),
        },
    }
}

/// Solves one cell; calls `put(field index, value)` for each field and `put_omega(Ω
/// aragonite, Ω calcite)` when solved, and returns the flag (or [`FLAG_FILL`] for land: every
/// primary input missing).
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
    mut put: impl FnMut(usize, f32),
    mut put_omega: impl FnMut(f64, f64),
    solve: impl FnOnce(InputPair, &Conditions) -> CellSolved,
) -> Flag {
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
    // Range bits for a cell that was not solved: from its conditions, when they are known.
    let ranges = |validity: Validity| {
        range_flag(validity.out_of_range(temperature_c, salinity, conditions.pressure_dbar))
    };
    let assessed = || {
        let known = [temperature_c, salinity, conditions.pressure_dbar]
            .iter()
            .all(|v| v.is_finite());
        if known {
            ranges(Validity::assess(
                temperature_c,
                salinity,
                conditions.pressure_dbar,
                choice,
            ))
        } else {
            0
        }
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
        return MISSING_INPUT | assessed();
    }
    let (solution, uncertainties) =
        match solve(InputPair::AlkalinityDic { alkalinity, dic }, &conditions) {
            Ok(solved) => solved,
            Err(error) => return error_flag(&error) | assessed(),
        };
    let mut all_finite = true;
    for (k, field) in fields.iter().enumerate() {
        let value = field.cell_value(&solution, uncertainties.as_ref(), density);
        if field.uncertainty.is_some() && !value.is_finite() {
            // An uncertainty that cannot be propagated leaves the indicators standing.
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
        return NO_PHYSICAL_SOLUTION | ranges(solution.validity);
    }
    put_omega(solution.omega_aragonite, solution.omega_calcite);
    // Only breaches that can move an indicator count (KF's range does not: Validity::MATERIAL).
    ranges(solution.validity)
}
