//! Many cells at once from alkalinity and DIC: the batch kernel for gridded model output.
//!
//! Cells go through in lanes of 8 or 16: constants, solver iterations and speciation run on
//! all cells of a lane together (the same generic code as [`crate::solve`], over [`Lanes`]), so
//! the compiler emits SIMD instructions. A cell whose iteration has not converged within
//! [`LANE_ITERATION_BUDGET`], or whose result fails a seawater test, is solved again by
//! [`crate::solve`], so its result or error is exactly the scalar one.

mod dispatch;

use crate::constants::{in_situ_constants, validate_conditions, ACCEPTED_CONDITIONS};
use crate::lanes::Lanes;
use crate::real::Real;
use crate::solver::{bracketed_halley, CarbonFixed, Equation, NonCarbonate};
use crate::speciation::{
    check_alkalinity, check_dic, speciation, ACCEPTED_ALKALINITY, ACCEPTED_DIC, MICRO,
};
use crate::{solve, ChemError, Conditions, ConstantChoice, InputPair, Output, Solution, Validity};
use std::fmt;

/// Halley iterations a lane may take before its unconverged cells go to the scalar solver. The
/// scalar solver needs two or three on ocean water, so this is rarely reached.
pub(crate) const LANE_ITERATION_BUDGET: u32 = 6;

/// Inputs of a block of cells, one slice per quantity (structure of arrays), all of one length.
/// NaN marks a missing value.
#[derive(Clone, Copy, Debug)]
pub struct CellInputs<'a> {
    /// In-situ temperature \[°C\].
    pub temperature_c: &'a [f64],
    /// Practical salinity.
    pub salinity: &'a [f64],
    /// Sea pressure \[dbar\], 0 at the surface.
    pub pressure_dbar: &'a [f64],
    /// Dissolved inorganic carbon \[µmol kg-1\].
    pub dic: &'a [f64],
    /// Total alkalinity \[µmol kg-1\].
    pub alkalinity: &'a [f64],
    /// Total phosphate \[µmol kg-1\].
    pub phosphate: &'a [f64],
    /// Total silicate \[µmol kg-1\].
    pub silicate: &'a [f64],
}

/// Outcome of one cell.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum CellStatus {
    /// Solved; every requested output holds a value.
    Solved,
    /// Some input is NaN; outputs NaN.
    #[default]
    MissingInput,
    /// Some input is a number outside what [`crate::solve`] accepts (its `InvalidInput`); outputs NaN.
    InvalidInput,
    /// The inputs admit no seawater solution ([`crate::solve`]'s `NoSolution`); outputs NaN.
    NoSolution,
}

impl CellStatus {
    /// The status the batch gives a cell for which [`crate::solve`] returned this error, when
    /// none of the cell's inputs is NaN (a NaN input always gives [`CellStatus::MissingInput`]).
    pub fn of_error(error: &ChemError) -> Self {
        match error {
            ChemError::InvalidInput { .. } => CellStatus::InvalidInput,
            ChemError::NoSolution { .. } => CellStatus::NoSolution,
        }
    }
}

/// Where the results of a block of cells go: status and validity of every cell, and one slice
/// for each quantity wanted (`None` skips it). Every slice has the inputs' length. Outputs of cells
/// that are not [`CellStatus::Solved`] are NaN.
#[derive(Debug)]
pub struct CellOutputs<'a> {
    /// Outcome of each cell.
    pub status: &'a mut [CellStatus],
    /// Published validity ranges each cell falls outside, by [`Validity::assess`] (also for cells
    /// with no solution); empty for missing or invalid input.
    pub validity: &'a mut [Validity],
    /// pH, total scale.
    pub ph_total: Option<&'a mut [f64]>,
    /// pH, seawater scale.
    pub ph_seawater: Option<&'a mut [f64]>,
    /// pH, free scale.
    pub ph_free: Option<&'a mut [f64]>,
    /// CO2* \[µmol kg-1\].
    pub co2: Option<&'a mut [f64]>,
    /// HCO3- \[µmol kg-1\].
    pub bicarbonate: Option<&'a mut [f64]>,
    /// CO3-- \[µmol kg-1\].
    pub carbonate: Option<&'a mut [f64]>,
    /// pCO2 \[µatm\] at in-situ temperature and 1 atm.
    pub pco2_uatm: Option<&'a mut [f64]>,
    /// fCO2 \[µatm\] at in-situ temperature and 1 atm.
    pub fco2_uatm: Option<&'a mut [f64]>,
    /// Saturation state of aragonite.
    pub omega_aragonite: Option<&'a mut [f64]>,
    /// Saturation state of calcite.
    pub omega_calcite: Option<&'a mut [f64]>,
    /// Revelle factor.
    pub revelle_factor: Option<&'a mut [f64]>,
}

/// Number of quantities a [`CellOutputs`] can hold.
const QUANTITIES: usize = 11;

impl<'a> CellOutputs<'a> {
    /// Status and validity only; set the quantity fields wanted afterwards.
    pub fn new(status: &'a mut [CellStatus], validity: &'a mut [Validity]) -> Self {
        Self {
            status,
            validity,
            ph_total: None,
            ph_seawater: None,
            ph_free: None,
            co2: None,
            bicarbonate: None,
            carbonate: None,
            pco2_uatm: None,
            fco2_uatm: None,
            omega_aragonite: None,
            omega_calcite: None,
            revelle_factor: None,
        }
    }

    /// Asks for `output` in `slice`; false (and nothing asked) for an output the batch does not
    /// report: [`Output::Hydrogen`], [`Output::Dic`] and [`Output::Alkalinity`].
    pub fn request(&mut self, output: Output, slice: &'a mut [f64]) -> bool {
        let place = match output {
            Output::PhTotal => &mut self.ph_total,
            Output::PhSeawater => &mut self.ph_seawater,
            Output::PhFree => &mut self.ph_free,
            Output::Co2 => &mut self.co2,
            Output::Bicarbonate => &mut self.bicarbonate,
            Output::Carbonate => &mut self.carbonate,
            Output::Pco2 => &mut self.pco2_uatm,
            Output::Fco2 => &mut self.fco2_uatm,
            Output::OmegaAragonite => &mut self.omega_aragonite,
            Output::OmegaCalcite => &mut self.omega_calcite,
            Output::RevelleFactor => &mut self.revelle_factor,
            Output::Hydrogen | Output::Dic | Output::Alkalinity => return false,
        };
        *place = Some(slice);
        true
    }

    /// The quantity slices, in the order of [`reported`].
    fn quantities(&mut self) -> [(&'static str, Option<&mut [f64]>); QUANTITIES] {
        [
            ("ph_total", self.ph_total.as_deref_mut()),
            ("ph_seawater", self.ph_seawater.as_deref_mut()),
            ("ph_free", self.ph_free.as_deref_mut()),
            ("co2", self.co2.as_deref_mut()),
            ("bicarbonate", self.bicarbonate.as_deref_mut()),
            ("carbonate", self.carbonate.as_deref_mut()),
            ("pco2_uatm", self.pco2_uatm.as_deref_mut()),
            ("fco2_uatm", self.fco2_uatm.as_deref_mut()),
            ("omega_aragonite", self.omega_aragonite.as_deref_mut()),
            ("omega_calcite", self.omega_calcite.as_deref_mut()),
            ("revelle_factor", self.revelle_factor.as_deref_mut()),
        ]
    }

    /// Writes one cell's outcome.
    fn put(
        &mut self,
        cell: usize,
        status: CellStatus,
        validity: Validity,
        values: [f64; QUANTITIES],
    ) {
        self.status[cell] = status;
        self.validity[cell] = validity;
        for ((_, slice), value) in self.quantities().into_iter().zip(values) {
            if let Some(slice) = slice {
                slice[cell] = value;
            }
        }
    }

    /// Writes N solved cells from `first` at once.
    #[inline(always)]
    fn put_lanes<const N: usize, const FUSED: bool>(
        &mut self,
        first: usize,
        values: &[Lanes<N, FUSED>; QUANTITIES],
        validity: &[Validity; N],
    ) {
        self.status[first..first + N].fill(CellStatus::Solved);
        self.validity[first..first + N].copy_from_slice(validity);
        for ((_, slice), value) in self.quantities().into_iter().zip(values) {
            if let Some(slice) = slice {
                slice[first..first + N].copy_from_slice(&value.0);
            }
        }
    }

    /// Writes the statuses of `count` cells from `first`, none of which has values.
    fn put_failures(
        &mut self,
        first: usize,
        count: usize,
        statuses: impl Iterator<Item = CellStatus>,
    ) {
        let range = first..first + count;
        for (status, failure) in self.status[range.clone()].iter_mut().zip(statuses) {
            *status = failure;
        }
        self.validity[range.clone()].fill(Validity::default());
        for (_, slice) in self.quantities() {
            if let Some(slice) = slice {
                slice[range.clone()].fill(f64::NAN);
            }
        }
    }

    /// Writes an outcome without values (NaN in every quantity).
    fn put_failure(&mut self, cell: usize, status: CellStatus, validity: Validity) {
        self.put(cell, status, validity, [f64::NAN; QUANTITIES]);
    }
}

/// The reported quantities of a speciation or solution, in the order of
/// [`CellOutputs::quantities`].
macro_rules! reported {
    ($s:expr) => {
        [
            $s.ph_total,
            $s.ph_seawater,
            $s.ph_free,
            $s.co2,
            $s.bicarbonate,
            $s.carbonate,
            $s.pco2_uatm,
            $s.fco2_uatm,
            $s.omega_aragonite,
            $s.omega_calcite,
            $s.revelle_factor,
        ]
    };
}

/// A slice whose length differs from the first input's.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LengthMismatch {
    /// Which slice.
    pub field: &'static str,
    /// Its length.
    pub length: usize,
    /// The length of `temperature_c`, which every slice must have.
    pub expected: usize,
}

impl fmt::Display for LengthMismatch {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "slice {} holds {} cells, expected {} (the length of temperature_c)",
            self.field, self.length, self.expected
        )
    }
}

impl std::error::Error for LengthMismatch {}

/// Solves every cell of a block from alkalinity and DIC with the chosen constants, at in-situ
/// temperature, salinity and pressure (Millero 1995 corrections), with phosphate and silicate;
/// the same results as [`crate::solve`] with [`InputPair::AlkalinityDic`] cell by cell, at a
/// fraction of the cost (within 1e-10 relative in every output; identical status).
///
/// Fails only when a slice's length differs from the inputs'; each cell's own problems are its
/// [`CellStatus`].
///
/// ```
/// use acidscape_chem::{solve_cells, CellInputs, CellOutputs, CellStatus, ConstantChoice, Validity};
/// // Two synthetic cells: warm surface water and cold deep water; the third has no DIC.
/// let inputs = CellInputs {
///     temperature_c: &[25.0, 2.0, 10.0],
///     salinity: &[35.0, 34.7, 35.0],
///     pressure_dbar: &[0.0, 4000.0, 0.0],
///     dic: &[2000.0, 2250.0, f64::NAN],
///     alkalinity: &[2300.0, 2350.0, 2300.0],
///     phosphate: &[0.0, 2.5, 0.0],
///     silicate: &[0.0, 120.0, 0.0],
/// };
/// let (mut status, mut validity) = ([CellStatus::Solved; 3], [Validity::default(); 3]);
/// let (mut ph, mut omega) = ([0.0; 3], [0.0; 3]);
/// let mut outputs = CellOutputs::new(&mut status, &mut validity);
/// outputs.ph_total = Some(&mut ph);
/// outputs.omega_aragonite = Some(&mut omega);
/// solve_cells(&inputs, &ConstantChoice::default(), &mut outputs).unwrap();
/// assert_eq!(status, [CellStatus::Solved, CellStatus::Solved, CellStatus::MissingInput]);
/// // Typical warm surface seawater: pH near 8.0-8.1, supersaturated for aragonite (common practice).
/// assert!(ph[0] > 7.95 && ph[0] < 8.15 && omega[0] > 2.5);
/// // Cold deep water at 4000 dbar is undersaturated for aragonite; at 2 °C it lies outside some
/// // constants' published ranges (e.g. Mucci 1983's 5-40 °C), which the validity bits record.
/// assert!(omega[1] < 1.0 && !validity[1].is_within() && validity[0].is_within());
/// assert!(ph[2].is_nan());
/// ```
pub fn solve_cells(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
) -> Result<(), LengthMismatch> {
    let cells = inputs.temperature_c.len();
    let check = |field: &'static str, length: usize| {
        if length == cells {
            Ok(())
        } else {
            Err(LengthMismatch {
                field,
                length,
                expected: cells,
            })
        }
    };
    for (field, slice) in inputs.columns() {
        check(field, slice.len())?;
    }
    check("status", outputs.status.len())?;
    check("validity", outputs.validity.len())?;
    for (field, slice) in outputs.quantities() {
        if let Some(slice) = slice {
            check(field, slice.len())?;
        }
    }
    dispatch::solve_lanes(inputs, choice, outputs);
    Ok(())
}

impl CellInputs<'_> {
    fn columns(&self) -> [(&'static str, &[f64]); 7] {
        [
            ("temperature_c", self.temperature_c),
            ("salinity", self.salinity),
            ("pressure_dbar", self.pressure_dbar),
            ("dic", self.dic),
            ("alkalinity", self.alkalinity),
            ("phosphate", self.phosphate),
            ("silicate", self.silicate),
        ]
    }

    /// One cell's conditions and (alkalinity, DIC).
    fn cell(&self, cell: usize) -> (Conditions, f64, f64) {
        let conditions = Conditions {
            temperature_c: self.temperature_c[cell],
            salinity: self.salinity[cell],
            pressure_dbar: self.pressure_dbar[cell],
            phosphate: self.phosphate[cell],
            silicate: self.silicate[cell],
        };
        (conditions, self.alkalinity[cell], self.dic[cell])
    }
}

/// Why a cell cannot enter a lane, if it cannot: the same checks, in the same order, as
/// [`crate::solve`] makes before solving.
fn screen(conditions: &Conditions, alkalinity: f64, dic: f64) -> Option<CellStatus> {
    let values = [
        conditions.temperature_c,
        conditions.salinity,
        conditions.pressure_dbar,
        conditions.phosphate,
        conditions.silicate,
        alkalinity,
        dic,
    ];
    if values.iter().any(|v| v.is_nan()) {
        return Some(CellStatus::MissingInput);
    }
    let checked = validate_conditions(conditions)
        .and_then(|()| check_alkalinity(alkalinity))
        .and_then(|_| check_dic(dic));
    checked.err().map(|error| CellStatus::of_error(&error))
}

/// A cell that stands in for unusable ones so that their lanes compute something harmless
/// (synthetic: typical surface seawater).
const STAND_IN: (Conditions, f64, f64) = (
    Conditions {
        temperature_c: 15.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.0,
        silicate: 0.0,
    },
    2300.0,
    2000.0,
);

/// Solves `count` (at most N) cells from `first` in one lane group, giving each lane
/// `iteration_budget` iterations before its unconverged cells go to the scalar solver.
#[inline(always)]
pub(crate) fn solve_group<const N: usize, const FUSED: bool>(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
    first: usize,
    count: usize,
    iteration_budget: u32,
) {
    // Whole columns are copied in (vector loads and stores); cells that cannot enter a lane, and
    // the lanes past the end of the block, then get the stand-in's values.
    let mut columns = [[0.0; N]; 7];
    for (column, (_, slice)) in columns.iter_mut().zip(inputs.columns()) {
        column[..count].copy_from_slice(&slice[first..first + count]);
    }
    let problems = screen_group::<N, FUSED>(inputs, first, count, &mut columns);
    if problems.iter().all(Option::is_some) {
        outputs.put_failures(first, count, problems.iter().flatten().copied());
        return;
    }
    let [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate] = columns;
    let [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate] = [
        Lanes::<N, FUSED>(temperature_c),
        Lanes(salinity),
        Lanes(pressure_dbar),
        Lanes(dic),
        Lanes(alkalinity),
        Lanes(phosphate),
        Lanes(silicate),
    ];

    let k = in_situ_constants(temperature_c, salinity, pressure_dbar, choice);
    let others = NonCarbonate::new(&k, phosphate / MICRO, silicate / MICRO);
    let (alkalinity_mol, dic_mol) = (alkalinity / MICRO, dic / MICRO);
    let equation = Equation {
        alkalinity: alkalinity_mol,
        carbon: CarbonFixed::Dic(dic_mol),
        k1: k.k1,
        k2: k.k2,
        others: &others,
    };
    let (low, high, guess) = equation.bracket();
    let ended = bracketed_halley(&equation, low, high, guess, iteration_budget);
    let s = speciation(ended.h, dic_mol, &k, &others);
    let accepted = ended.converged & s.is_seawater();
    let values = reported!(s);

    // Every lane is written at once, then the cells that are not solved lanes are rewritten.
    if count == N {
        outputs.put_lanes(first, &values, &k.validity);
        if <Lanes<N, FUSED> as Real>::all(accepted) && problems.iter().all(Option::is_none) {
            return;
        }
    }
    for (lane, problem) in problems.iter().enumerate().take(count) {
        let cell = first + lane;
        match problem {
            Some(status) => outputs.put_failure(cell, *status, Validity::default()),
            None if !accepted.get(lane) => {
                solve_alone(inputs, choice, outputs, cell, k.validity[lane])
            }
            None if count < N => {
                let mut cell_values = [0.0; QUANTITIES];
                for (value, quantity) in cell_values.iter_mut().zip(&values) {
                    *value = quantity.0[lane];
                }
                outputs.put(cell, CellStatus::Solved, k.validity[lane], cell_values);
            }
            None => {}
        }
    }
}

/// Why each cell of a group cannot enter its lane, if it cannot (lanes past `count` are
/// missing); those lanes get the stand-in's values in `columns`. Most groups are all ocean
/// water: one vector test of what `solve` accepts spares them the cell-by-cell screening.
#[inline(always)]
fn screen_group<const N: usize, const FUSED: bool>(
    inputs: &CellInputs<'_>,
    first: usize,
    count: usize,
    columns: &mut [[f64; N]; 7],
) -> [Option<CellStatus>; N] {
    let mut problems = [None; N];
    if count == N && all_accepted::<N, FUSED>(columns) {
        return problems;
    }
    for (lane, problem) in problems.iter_mut().enumerate() {
        *problem = if lane < count {
            let (conditions, alkalinity, dic) = inputs.cell(first + lane);
            screen(&conditions, alkalinity, dic)
        } else {
            Some(CellStatus::MissingInput)
        };
        if problem.is_some() {
            for (column, value) in columns.iter_mut().zip(column_values(&STAND_IN)) {
                column[lane] = value;
            }
        }
    }
    problems
}

/// Whether every cell of a group passes every check of [`screen`].
#[inline(always)]
fn all_accepted<const N: usize, const FUSED: bool>(columns: &[[f64; N]; 7]) -> bool {
    let [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate] =
        columns.map(Lanes::<N, FUSED>);
    let [t, s, p, po4, si] = &ACCEPTED_CONDITIONS;
    let accepted = t.contains(temperature_c)
        & s.contains(salinity)
        & p.contains(pressure_dbar)
        & po4.contains(phosphate)
        & si.contains(silicate)
        & ACCEPTED_ALKALINITY.contains(alkalinity)
        & ACCEPTED_DIC.contains(dic);
    <Lanes<N, FUSED> as Real>::all(accepted)
}

/// A cell's inputs in the order of [`CellInputs::columns`].
fn column_values((c, alkalinity, dic): &(Conditions, f64, f64)) -> [f64; 7] {
    [
        c.temperature_c,
        c.salinity,
        c.pressure_dbar,
        *dic,
        *alkalinity,
        c.phosphate,
        c.silicate,
    ]
}

/// The scalar solver for a cell its lane could not finish.
#[cold]
#[inline(never)]
fn solve_alone(
    inputs: &CellInputs<'_>,
    choice: &ConstantChoice,
    outputs: &mut CellOutputs<'_>,
    cell: usize,
    validity: Validity,
) {
    let (conditions, alkalinity, dic) = inputs.cell(cell);
    match solve(
        InputPair::AlkalinityDic { alkalinity, dic },
        &conditions,
        choice,
    ) {
        Ok(solution) => outputs.put(
            cell,
            CellStatus::Solved,
            solution.validity,
            of_solution(&solution),
        ),
        Err(error) => outputs.put_failure(cell, CellStatus::of_error(&error), validity),
    }
}

fn of_solution(s: &Solution) -> [f64; QUANTITIES] {
    reported!(s)
}

/// The synthetic cells and result blocks the benches and integration tests use.
#[cfg(test)]
#[path = "../benches/common/mod.rs"]
mod common;

#[cfg(test)]
mod tests;
