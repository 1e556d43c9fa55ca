//! The kernel path against the cell-by-cell reference on one synthetic slab (invented values,
//! Varnholm Gulf style) holding land, every kind of unsolvable cell and every flag bit.

use super::*;
use crate::flags::{FLAG_BITS, INPUT_OUTSIDE_SEAWATER_LIMITS, MISSING_INPUT};
use crate::indicators::{ConcentrationUnit, Indicator, IndicatorChoice, PhScale};

const SHAPE: [usize; 3] = [5, 31, 43];

/// Synthetic inputs: water from 30 °C at the surface to -1.5 °C at 6000 dbar, brackish to
/// hypersaline, with land columns and one odd cell in every 23.
fn synthetic_slab() -> SlabInputs {
    let cells: usize = SHAPE.iter().product();
    let mut columns: [Vec<f64>; 8] = Default::default();
    for cell in 0..cells {
        let f = ((cell * 7919) % cells) as f64 / cells as f64;
        let level = cell / (SHAPE[1] * SHAPE[2]);
        let mut v = [
            30.0 - 31.5 * f,                   // temperature
            34.0 + 2.0 * f,                    // salinity
            1500.0 * level as f64 + 300.0 * f, // pressure
            1900.0 + 400.0 * f,                // DIC
            2250.0 + 200.0 * f,                // alkalinity
            3.0 * f,                           // phosphate
            150.0 * f,                         // silicate
            1024.0 + 0.45 * level as f64,      // density
        ];
        match cell % 23 {
            0 if cell % 3 == 0 => v[..5].fill(f64::NAN), // land
            1 => v[3] = f64::NAN,                        // missing DIC
            2 => v[5] = f64::NAN,                        // missing phosphate
            3 => v[4] = f64::INFINITY,                   // alkalinity not finite
            4 => v[7] = f64::NAN,                        // no density
            5 => v[7] = 0.0,                             // unusable density
            6 => v[4] = -5.0,                            // negative alkalinity
            7 => v[1] = 70.0,                            // salinity beyond seawater
            8 => v[0] = 70.0,                            // temperature beyond seawater
            9 => (v[3], v[4]) = (10.0, 45_000.0),        // no physical solution
            10 => v[0] = -1.9,                           // below temperature ranges
            11 => v[0] = 39.0,                           // above temperature ranges
            12 => v[1] = 4.0,                            // below salinity ranges
            13 => v[1] = 47.0,                           // above salinity ranges
            14 => v[2] = 12_000.0,                       // above pressure ranges
            15 => (v[0], v[2]) = (f64::NAN, f64::NAN),   // missing conditions
            _ => {}
        }
        for (column, value) in columns.iter_mut().zip(v) {
            column.push(value);
        }
    }
    let [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate, density] =
        columns;
    SlabInputs {
        step: 2,
        rows: 4..4 + SHAPE[1],
        shape: SHAPE,
        temperature_c,
        salinity,
        pressure_dbar,
        dic,
        alkalinity,
        phosphate,
        silicate,
        density_kg_m3: density,
        depth_m: vec![0.0; cells],
        surface_height_m: vec![0.0; SHAPE[1] * SHAPE[2]],
    }
}

fn every_field(unit: ConcentrationUnit) -> Vec<OutputField> {
    IndicatorChoice {
        indicators: Indicator::ALL.to_vec(),
        ph_scales: PhScale::ALL.to_vec(),
        concentration_unit: unit,
    }
    .fields()
    .unwrap()
}

/// Within `tolerance` relative, or both the same non-number.
fn close(a: f64, b: f64, tolerance: f64) -> bool {
    a == b || (a.is_nan() && b.is_nan()) || (a - b).abs() <= tolerance * b.abs()
}

fn assert_same(kernel: &SlabResult, reference: &SlabResult) {
    assert_eq!(kernel.flags, reference.flags);
    assert_eq!(kernel.counts, reference.counts);
    assert_eq!(
        (kernel.step, &kernel.rows),
        (reference.step, &reference.rows)
    );
    for (k, (a, b)) in kernel.fields.iter().zip(&reference.fields).enumerate() {
        // The f64 values agree within 1e-10: rounded to f32 they are equal, or one rounding apart
        // where they straddle a rounding boundary.
        for (cell, (x, y)) in a.iter().zip(b).enumerate() {
            assert!(
                close(f64::from(*x), f64::from(*y), f64::from(f32::EPSILON)),
                "field {k} cell {cell}: {x} vs {y}"
            );
        }
    }
    let omega = |r: &SlabResult| [r.omega.aragonite.clone(), r.omega.calcite.clone()];
    for (a, b) in omega(kernel).iter().zip(&omega(reference)) {
        assert_eq!(a.len(), b.len());
        for (cell, (x, y)) in a.iter().zip(b).enumerate() {
            assert!(close(*x, *y, 1e-10), "Ω at cell {cell}: {x} vs {y}");
        }
    }
}

#[test]
fn the_kernel_gives_every_cell_the_reference_values_and_flag() {
    let inputs = synthetic_slab();
    let choice = ConstantChoice::default();
    let keeps = [
        KeepOmega {
            aragonite: true,
            calcite: true,
        },
        KeepOmega {
            aragonite: false,
            calcite: true,
        },
        KeepOmega::default(),
    ];
    for (unit, keep) in [
        ConcentrationUnit::MolPerCubicMetre,
        ConcentrationUnit::MicromolPerKilogram,
    ]
    .into_iter()
    .zip(keeps)
    {
        let fields = every_field(unit);
        // Stale values in the reused buffers must not survive.
        let stale = || SaturationStates {
            aragonite: vec![7.0; 10],
            calcite: vec![7.0; 10],
        };
        let kernel = solve_slab(
            SlabSolver::Kernel,
            &inputs,
            &fields,
            &choice,
            keep,
            stale(),
            None,
        );
        let by_cell = SlabSolver::ByCell;
        let reference = solve_slab(by_cell, &inputs, &fields, &choice, keep, stale(), None);
        assert_same(&kernel, &reference);
        let cells: usize = SHAPE.iter().product();
        assert_eq!(kernel.omega.calcite.len(), cells);
        assert_eq!(
            kernel.omega.aragonite.len(),
            if keep.aragonite { cells } else { 0 }
        );

        // The slab holds land, solved cells and every bit.
        assert!(kernel.counts.land > 0 && kernel.counts.no_flag > 1000);
        for bit in FLAG_BITS {
            assert!(
                kernel.counts.of(bit.mask) > 0,
                "no cell with {}",
                bit.meaning
            );
        }
        // Per-volume outputs need the density; per-mass ones do not.
        let density_cell = 23 * 10 + 4;
        let want = if unit == ConcentrationUnit::MolPerCubicMetre {
            MISSING_INPUT
        } else {
            0
        };
        assert_eq!(kernel.flags[density_cell] & MISSING_INPUT, want);
        assert_eq!(
            kernel.flags[23 * 10 + 6] & INPUT_OUTSIDE_SEAWATER_LIMITS,
            INPUT_OUTSIDE_SEAWATER_LIMITS
        );
    }
}
