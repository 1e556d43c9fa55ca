//! The batch kernel's variants (widths, instruction sets, iteration budgets) against the scalar
//! solver, on synthetic cells.

use super::common::{cell_from, CellBlock, Results};
use super::*;

/// Synthetic cells: ocean water from the surface to the deep, and cells that are missing,
/// invalid or have no solution, in an order that splits lanes.
fn cells() -> Vec<(Conditions, InputPair)> {
    (0..203)
        .map(|i| {
            let f = i as f64 / 203.0;
            let mut cell = [
                28.0 - 30.0 * f,
                34.0 + f,
                6000.0 * f,
                1950.0 + 300.0 * f,
                2300.0 + 80.0 * f,
                2.5 * f,
                140.0 * f,
            ];
            match i % 17 {
                3 => cell[1] = 2.0,
                5 => cell[3] = f64::NAN,
                7 => cell[0] = 70.0,
                11 => (cell[3], cell[4]) = (10.0, 45_000.0),
                _ => {}
            }
            cell_from(cell)
        })
        .collect()
}

type Outcome = (CellStatus, Validity, [f64; QUANTITIES]);

/// Every cell's outcome when `run` solves them as one block.
fn run(
    cells: &[(Conditions, InputPair)],
    run: impl Fn(&CellInputs<'_>, &mut CellOutputs<'_>),
) -> Vec<Outcome> {
    let block = CellBlock::new(cells);
    let mut results = Results::new(cells.len());
    run(&block.inputs(), &mut results.every_quantity());
    (0..cells.len()).map(|i| results.cell(i)).collect()
}

fn in_groups<const N: usize, const FUSED: bool>(
    budget: u32,
) -> impl Fn(&CellInputs<'_>, &mut CellOutputs<'_>) {
    move |inputs, outputs| {
        let cells = inputs.temperature_c.len();
        for first in (0..cells).step_by(N) {
            let count = (cells - first).min(N);
            let choice = ConstantChoice::default();
            solve_group::<N, FUSED>(inputs, &choice, outputs, first, count, budget);
        }
    }
}

/// The scalar path cell by cell: the same screening, then `solve`.
fn scalar_reference(cells: &[(Conditions, InputPair)]) -> Vec<Outcome> {
    run(cells, |inputs, outputs| {
        let choice = ConstantChoice::default();
        for cell in 0..inputs.temperature_c.len() {
            let (c, alkalinity, dic) = inputs.cell(cell);
            match screen(&c, alkalinity, dic) {
                Some(status) => outputs.put_failure(cell, status, Validity::default()),
                None => {
                    let (t, s, p) = (c.temperature_c, c.salinity, c.pressure_dbar);
                    let validity = Validity::assess(t, s, p, &choice);
                    solve_alone(inputs, &choice, outputs, cell, validity)
                }
            }
        }
    })
}

fn assert_close(got: &[Outcome], want: &[Outcome], tolerance: f64) {
    for (i, (g, w)) in got.iter().zip(want).enumerate() {
        assert_eq!((g.0, g.1), (w.0, w.1), "cell {i}");
        for (a, b) in g.2.iter().zip(&w.2) {
            let close = a == b || (a.is_nan() && b.is_nan()) || ((a - b) / b).abs() <= tolerance;
            assert!(close, "cell {i}: {a} vs {b}");
        }
    }
}

/// With no iterations to spare every solved cell goes to the scalar solver: bitwise equal.
#[test]
fn cells_a_lane_cannot_finish_get_exactly_the_scalar_result() {
    let cells = cells();
    let reference = scalar_reference(&cells);
    assert_close(&run(&cells, in_groups::<4, false>(1)), &reference, 0.0);
    assert_close(&run(&cells, in_groups::<8, true>(1)), &reference, 0.0);
    // Some lanes converge in two iterations, others fall back.
    assert_close(&run(&cells, in_groups::<4, true>(2)), &reference, 1e-10);
}

/// Every compiled variant (baseline and fused, any width) against the scalar solver.
#[test]
fn every_variant_matches_the_scalar_solver() {
    let cells = cells();
    let reference = scalar_reference(&cells);
    for status in [
        CellStatus::NoSolution,
        CellStatus::MissingInput,
        CellStatus::InvalidInput,
    ] {
        assert!(
            reference.iter().any(|r| r.0 == status),
            "no {status:?} cell"
        );
    }
    let budget = LANE_ITERATION_BUDGET;
    assert_close(
        &run(&cells, in_groups::<2, false>(budget)),
        &reference,
        1e-10,
    );
    assert_close(
        &run(&cells, in_groups::<4, false>(budget)),
        &reference,
        1e-10,
    );
    assert_close(
        &run(&cells, in_groups::<8, true>(budget)),
        &reference,
        1e-10,
    );
    let baseline = |inputs: &CellInputs<'_>, outputs: &mut CellOutputs<'_>| {
        dispatch::solve_lanes_baseline(inputs, &ConstantChoice::default(), outputs)
    };
    assert_close(&run(&cells, baseline), &reference, 1e-10);
}

/// The copies for wider instruction sets, on a CPU that has them.
#[cfg(target_arch = "x86_64")]
#[test]
fn every_instruction_set_this_cpu_has_matches_the_scalar_solver() {
    use std::arch::is_x86_feature_detected as has;
    let cells = cells();
    let reference = scalar_reference(&cells);
    let choice = ConstantChoice::default();
    if has!("avx2") && has!("fma") {
        // SAFETY: the CPU has AVX2 and FMA, checked just above.
        let avx2 = |i: &CellInputs<'_>, o: &mut CellOutputs<'_>| unsafe {
            dispatch::solve_lanes_avx2(i, &choice, o)
        };
        assert_close(&run(&cells, avx2), &reference, 1e-10);
    }
    if has!("avx512f") {
        // SAFETY: the CPU has AVX-512F, checked just above.
        let avx512 = |i: &CellInputs<'_>, o: &mut CellOutputs<'_>| unsafe {
            dispatch::solve_lanes_avx512(i, &choice, o)
        };
        assert_close(&run(&cells, avx512), &reference, 1e-10);
    }
}

/// `request` places each reported output where the solution's own field is (Output::value).
#[test]
fn each_output_asked_by_name_holds_that_output() {
    let cells = cells();
    let block = CellBlock::new(&cells);
    let choice = ConstantChoice::default();
    for output in Output::ALL {
        let (mut status, mut validity) = (vec![CellStatus::Solved; cells.len()], vec![]);
        validity.resize(cells.len(), Validity::default());
        let mut values = vec![0.0; cells.len()];
        let mut outputs = CellOutputs::new(&mut status, &mut validity);
        let reported = outputs.request(output, &mut values);
        let unreported = [Output::Hydrogen, Output::Dic, Output::Alkalinity];
        assert_eq!(reported, !unreported.contains(&output), "{output:?}");
        solve_cells(&block.inputs(), &choice, &mut outputs).unwrap();
        if !reported {
            continue;
        }
        for (i, (conditions, pair)) in cells.iter().enumerate() {
            if status[i] != CellStatus::Solved {
                assert!(values[i].is_nan(), "{output:?} cell {i}");
                continue;
            }
            let want = output.value(&solve(*pair, conditions, &choice).unwrap());
            let close = values[i] == want || ((values[i] - want) / want).abs() <= 1e-10;
            assert!(close, "{output:?} cell {i}: {} vs {want}", values[i]);
        }
    }
}
