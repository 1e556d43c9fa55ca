//! The batch kernel against the scalar solver it must reproduce: `solve_cells` over blocks of
//! cells gives, cell by cell, what `solve` gives for (TA, DIC): every output within 1e-10
//! relative, the same validity bits, and the same status (a NaN input is "missing"; otherwise
//! the class of `solve`'s error). The scalar path is the reference; its own accuracy is checked
//! against published values in check_values.rs and solver.rs. Inputs are synthetic.

use acidscape_chem::{
    solve, solve_cells, BoronTotal, CarbonicSet, CellInputs, CellOutputs, CellStatus,
    ConstantChoice, FluorideSet, LengthMismatch, Validity,
};
use common::{cell_from, quantities_of, CellBlock, Results, QUANTITY_NAMES};
use proptest::prelude::*;

#[path = "../benches/common/mod.rs"]
mod common;

/// One cell's inputs: temperature, salinity, pressure, DIC, alkalinity, phosphate, silicate.
type Cell = [f64; 7];

fn solve_block(cells: &[Cell], choice: &ConstantChoice) -> Results {
    let cells: Vec<_> = cells.iter().map(|&c| cell_from(c)).collect();
    let block = CellBlock::new(&cells);
    let mut results = Results::new(cells.len());
    solve_cells(&block.inputs(), choice, &mut results.every_quantity()).unwrap();
    results
}

fn relative(a: f64, b: f64) -> f64 {
    if a == b {
        0.0
    } else {
        (a - b).abs() / a.abs().max(b.abs())
    }
}

/// Compares a block cell by cell with the scalar solver; returns the largest relative
/// difference of each output over the solved cells.
fn compare(cells: &[Cell], choice: &ConstantChoice) -> Result<[f64; 11], TestCaseError> {
    let batch = solve_block(cells, choice);
    let mut worst = [0.0f64; 11];
    for (i, cell) in cells.iter().enumerate() {
        let (status, validity, values) = batch.cell(i);
        let (conditions, pair) = cell_from(*cell);
        let expected_status = match solve(pair, &conditions, choice) {
            Ok(solution) => {
                prop_assert_eq!(validity, solution.validity, "cell {:?}", cell);
                for (k, (&got, want)) in values.iter().zip(quantities_of(&solution)).enumerate() {
                    let difference = relative(got, want);
                    prop_assert!(
                        difference <= 1e-10,
                        "{}: {} vs scalar {} in cell {:?}",
                        QUANTITY_NAMES[k],
                        got,
                        want,
                        cell
                    );
                    worst[k] = worst[k].max(difference);
                }
                CellStatus::Solved
            }
            Err(_) if cell.iter().any(|v| v.is_nan()) => CellStatus::MissingInput,
            Err(error) => CellStatus::of_error(&error),
        };
        prop_assert_eq!(status, expected_status, "cell {:?}", cell);
        if expected_status != CellStatus::Solved {
            prop_assert!(values.iter().all(|v| v.is_nan()), "cell {:?}", cell);
        }
    }
    Ok(worst)
}

fn any_choice() -> impl Strategy<Value = ConstantChoice> {
    (0..4usize, 0..2usize, 0..2usize).prop_map(|(c, f, b)| ConstantChoice {
        carbonic: CarbonicSet::ALL[c],
        fluoride: FluorideSet::ALL[f],
        boron: BoronTotal::ALL[b],
    })
}

/// Ocean water of every kind: cold deep high-pressure water, warm surface water, low-salinity
/// plumes, and (TA, DIC) from strongly acidic to strongly alkaline.
fn ocean_cell() -> impl Strategy<Value = Cell> {
    (
        prop_oneof![-2.0..4.0f64, -2.0..35.0f64, 25.0..40.0f64],
        prop_oneof![0.5..20.0f64, 20.0..42.0f64, 33.0..36.0f64],
        prop_oneof![0.0..200.0f64, 0.0..6000.0f64, 4000.0..11000.0f64],
        400.0..3500.0f64,
        -600.0..900.0f64,
        0.0..4.0f64,
        0.0..200.0f64,
    )
        .prop_map(|(t, s, p, dic, excess, po4, si)| {
            [t, s, p, dic, (dic + excess).max(100.0), po4, si]
        })
}

/// A value that is sometimes missing, infinite or out of any accepted range.
fn spoiled(value: f64) -> impl Strategy<Value = f64> {
    prop_oneof![
        8 => Just(value),
        1 => Just(f64::NAN),
        1 => prop_oneof![
            Just(f64::INFINITY),
            Just(f64::NEG_INFINITY),
            Just(-1.0),
            Just(1e6),
            Just(0.0),
            Just(-1e-9),
        ],
    ]
}

fn spoiled_cell() -> impl Strategy<Value = Cell> {
    ocean_cell().prop_flat_map(|c| {
        (
            spoiled(c[0]),
            spoiled(c[1]),
            spoiled(c[2]),
            spoiled(c[3]),
            spoiled(c[4]),
            spoiled(c[5]),
            spoiled(c[6]),
        )
            .prop_map(|(a, b, c, d, e, f, g)| [a, b, c, d, e, f, g])
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// Blocks of any length (tails shorter than a lane included).
    #[test]
    fn ocean_cells_match_the_scalar_solver(
        cells in prop::collection::vec(ocean_cell(), 1..40),
        choice in any_choice(),
    ) {
        compare(&cells, &choice)?;
    }

    /// Missing, infinite and out-of-range inputs mixed among good cells.
    #[test]
    fn bad_inputs_get_the_scalar_solver_status(
        cells in prop::collection::vec(spoiled_cell(), 1..40),
        choice in any_choice(),
    ) {
        compare(&cells, &choice)?;
    }
}

/// A deterministic sweep of many ocean cells, printing the largest relative difference of each
/// output from the scalar solver (run with `--nocapture` to see them).
#[test]
fn largest_differences_over_many_ocean_cells() {
    let mut state: u64 = 0x2545_F491_4F6C_DD1D;
    let mut uniform = move |low: f64, high: f64| {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        low + (high - low) * ((state >> 11) as f64 / (1u64 << 53) as f64)
    };
    let cells: Vec<Cell> = (0..200_000)
        .map(|_| {
            let dic = uniform(1500.0, 2500.0);
            [
                uniform(-2.0, 35.0),
                uniform(5.0, 42.0),
                uniform(0.0, 11000.0),
                dic,
                dic + uniform(-100.0, 500.0),
                uniform(0.0, 3.5),
                uniform(0.0, 180.0),
            ]
        })
        .collect();
    let worst = compare(&cells, &ConstantChoice::default()).unwrap();
    for (name, difference) in QUANTITY_NAMES.iter().zip(worst) {
        eprintln!("{name}: largest relative difference from the scalar solver {difference:.1e}");
    }
}

#[test]
fn mismatched_lengths_are_an_error_not_a_panic() {
    let (one, two) = ([1.0], [1.0, 2.0]);
    let inputs = CellInputs {
        temperature_c: &one,
        salinity: &one,
        pressure_dbar: &one,
        dic: &two,
        alkalinity: &one,
        phosphate: &one,
        silicate: &one,
    };
    let (mut status, mut validity) = ([CellStatus::Solved], [Validity::default()]);
    let mut ph = [0.0; 2];
    let mut outputs = CellOutputs::new(&mut status, &mut validity);
    let error = solve_cells(&inputs, &ConstantChoice::default(), &mut outputs).unwrap_err();
    assert_eq!(
        error,
        LengthMismatch {
            field: "dic",
            length: 2,
            expected: 1
        }
    );
    let inputs = CellInputs {
        dic: &one,
        ..inputs
    };
    outputs.ph_total = Some(&mut ph);
    let error = solve_cells(&inputs, &ConstantChoice::default(), &mut outputs).unwrap_err();
    assert_eq!(error.field, "ph_total");
    assert!(error
        .to_string()
        .contains("ph_total holds 2 cells, expected 1"));
}

#[test]
fn an_empty_block_is_fine() {
    let inputs = CellInputs {
        temperature_c: &[],
        salinity: &[],
        pressure_dbar: &[],
        dic: &[],
        alkalinity: &[],
        phosphate: &[],
        silicate: &[],
    };
    let mut outputs = CellOutputs::new(&mut [], &mut []);
    assert!(solve_cells(&inputs, &ConstantChoice::default(), &mut outputs).is_ok());
}
