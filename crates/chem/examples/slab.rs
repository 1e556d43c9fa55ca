//! One synthetic slab through `solve_cells` the way the pipeline will call it: one time step ×
//! all levels × a block of rows in (level, row, col) order, land as NaN, handed over in blocks
//! of 4096 cells (one rayon task's share) with slices into the slab's own arrays, the five
//! indicators `compute` writes by default requested. Prints the cost per wet cell next to `solve`
//! called cell by cell on the same cells (one thread, best of three passes).
//!
//! `cargo run --release -p acidscape-chem --example slab`
//!
//! The water is invented (the synthetic Varnholm Gulf of sample-grids/README.md: warm surface,
//! thermocline near 150 m, cold deep water, a river plume, a basin down to 4000 m), not data.

use acidscape_chem::{
    solve, solve_cells, CellInputs, CellOutputs, CellStatus, Conditions, ConstantChoice, InputPair,
    Validity,
};
use std::time::Instant;

const LEVELS: usize = 50;
const ROWS: usize = 90;
const COLUMNS: usize = 120;
/// Cells one pipeline task solves.
const BLOCK: usize = 4096;

/// The slab's inputs, one array per quantity, (level, row, col) order.
struct Slab {
    columns: [Vec<f64>; 7],
}

fn level_depth_m(level: usize) -> f64 {
    // 5 m at the top, 4000 m at the bottom, finer near the surface.
    5.0 + 3995.0 * (level as f64 / (LEVELS - 1) as f64).powi(2)
}

/// Synthetic water of the invented gulf: land to the west, north and on an island; the sea
/// floor deepening from the coasts to a 4000 m basin; a fresh river plume on the west coast.
fn synthetic_slab() -> Slab {
    let mut columns: [Vec<f64>; 7] = Default::default();
    for level in 0..LEVELS {
        let depth = level_depth_m(level);
        for row in 0..ROWS {
            for col in 0..COLUMNS {
                let (x, y) = (col as f64 / COLUMNS as f64, row as f64 / ROWS as f64);
                let island = (x - 0.55).powi(2) + (y - 0.45).powi(2) < 0.004;
                let coast_distance = x.min(1.0 - y) - 0.06;
                let floor = 4000.0 * (coast_distance * 4.0).clamp(0.0, 1.0);
                let wet = !island && coast_distance > 0.0 && depth < floor.max(60.0);
                let plume = 2.4 * (-(x / 0.08) - ((y - 0.5) / 0.1).powi(2) - depth / 15.0).exp();
                let deep = 1.0 - (-depth / 150.0).exp();
                let values = [
                    21.0 - 19.0 * deep,
                    35.2 - 0.52 * deep - plume,
                    depth * 1.0, // about 1 dbar per metre (common practice)
                    2020.0 + 255.0 * deep,
                    2305.0 + 65.0 * deep - 40.0 * plume,
                    0.2 + 2.3 * deep,
                    1.5 + 108.5 * deep,
                ];
                for (column, value) in columns.iter_mut().zip(values) {
                    column.push(if wet { value } else { f64::NAN });
                }
            }
        }
    }
    Slab { columns }
}

/// Room for the default indicators of `compute` plus status and validity.
struct Indicators {
    status: Vec<CellStatus>,
    validity: Vec<Validity>,
    values: [Vec<f64>; 5],
}

fn solve_slab_in_blocks(slab: &Slab, out: &mut Indicators, choice: &ConstantChoice) {
    let cells = slab.columns[0].len();
    for first in (0..cells).step_by(BLOCK) {
        let range = first..(first + BLOCK).min(cells);
        let column = |k: usize| &slab.columns[k][range.clone()];
        let inputs = CellInputs {
            temperature_c: column(0),
            salinity: column(1),
            pressure_dbar: column(2),
            dic: column(3),
            alkalinity: column(4),
            phosphate: column(5),
            silicate: column(6),
        };
        let [ph, co3, pco2, omega_a, omega_c] = &mut out.values;
        let mut outputs = CellOutputs::new(
            &mut out.status[range.clone()],
            &mut out.validity[range.clone()],
        );
        outputs.ph_total = Some(&mut ph[range.clone()]);
        outputs.carbonate = Some(&mut co3[range.clone()]);
        outputs.pco2_uatm = Some(&mut pco2[range.clone()]);
        outputs.omega_aragonite = Some(&mut omega_a[range.clone()]);
        outputs.omega_calcite = Some(&mut omega_c[range.clone()]);
        solve_cells(&inputs, choice, &mut outputs).expect("slices of one length");
    }
}

/// The same cells through `solve`, skipping land as the pipeline does; returns a checksum.
fn solve_slab_cell_by_cell(slab: &Slab, choice: &ConstantChoice) -> f64 {
    let [t, s, p, dic, ta, po4, si] = &slab.columns;
    let mut sum = 0.0;
    for i in 0..t.len() {
        if t[i].is_nan() {
            continue;
        }
        let conditions = Conditions {
            temperature_c: t[i],
            salinity: s[i],
            pressure_dbar: p[i],
            phosphate: po4[i],
            silicate: si[i],
        };
        let pair = InputPair::AlkalinityDic {
            alkalinity: ta[i],
            dic: dic[i],
        };
        if let Ok(solution) = solve(pair, &conditions, choice) {
            sum += solution.omega_aragonite;
        }
    }
    sum
}

/// Best of three passes of `run`, in seconds.
fn best_of_three(mut run: impl FnMut()) -> f64 {
    (0..3)
        .map(|_| {
            let start = Instant::now();
            run();
            start.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min)
}

fn main() {
    let slab = synthetic_slab();
    let choice = ConstantChoice::default();
    let cells = slab.columns[0].len();
    let wet = slab.columns[0].iter().filter(|t| !t.is_nan()).count();
    let mut out = Indicators {
        status: vec![CellStatus::MissingInput; cells],
        validity: vec![Validity::default(); cells],
        values: std::array::from_fn(|_| vec![0.0; cells]),
    };
    let batch = best_of_three(|| solve_slab_in_blocks(&slab, &mut out, &choice));
    let mut checksum = 0.0;
    let scalar = best_of_three(|| checksum = solve_slab_cell_by_cell(&slab, &choice));
    let count = |status| out.status.iter().filter(|s| **s == status).count();
    let flagged = out
        .validity
        .iter()
        .zip(&out.status)
        .filter(|(v, s)| **s == CellStatus::Solved && v.is_material())
        .count();
    println!("slab {LEVELS} x {ROWS} x {COLUMNS}: {cells} cells, {wet} wet (synthetic)");
    println!(
        "solved {}, outside a validity range {flagged}, missing input (land) {}, no solution {}",
        count(CellStatus::Solved),
        count(CellStatus::MissingInput),
        count(CellStatus::NoSolution)
    );
    println!(
        "solve_cells, blocks of {BLOCK}: {:.1} ns per wet cell ({:.1} ns per cell, land included)",
        batch * 1e9 / wet as f64,
        batch * 1e9 / cells as f64
    );
    println!(
        "solve, cell by cell:       {:.1} ns per wet cell (checksum {checksum:.3})",
        scalar * 1e9 / wet as f64
    );
}
