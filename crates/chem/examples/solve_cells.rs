//! Solves N synthetic ocean cells (TA, DIC, with pressure) and prints the time per cell; used to
//! profile the hot path (e.g. under `valgrind --tool=callgrind`). Inputs are synthetic.
//!
//! `cargo run --release -p acidscape-chem --example solve_cells -- [COUNT] [scalar|batch|uncertainty]`:
//! `scalar` calls `solve` once per cell; `batch` hands all cells to `solve_cells` in blocks of
//! 4096 (what one pipeline task holds) with every quantity requested; `uncertainty` solves each
//! cell and propagates the uncertainty of every source of the `uncertainty` benchmark.

use acidscape_chem::{
    equilibrium_constants, solve, solve_cells, solve_with_constants, standard_uncertainties,
    CellStatus, ConstantChoice, Output, SolvedSample,
};
use std::time::Instant;

#[path = "../benches/common/mod.rs"]
mod common;

fn main() {
    let mut args = std::env::args().skip(1);
    let count: usize = args
        .next()
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(1_000_000);
    let mode = args.next().unwrap_or_else(|| "scalar".to_string());
    let choice = ConstantChoice::default();
    let cells: Vec<_> = (0..count).map(common::synthetic_cell).collect();
    let start = Instant::now();
    let (mut sum, mut failures) = (0.0, 0usize);
    match mode.as_str() {
        "batch" => {
            for block in cells.chunks(4096) {
                let inputs = common::CellBlock::new(block);
                let mut results = common::Results::new(block.len());
                solve_cells(&inputs.inputs(), &choice, &mut results.every_quantity())
                    .expect("slices of one length");
                sum += results
                    .omega_aragonite()
                    .iter()
                    .filter(|v| v.is_finite())
                    .sum::<f64>();
                failures += results
                    .status
                    .iter()
                    .filter(|s| **s != CellStatus::Solved)
                    .count();
            }
        }
        "uncertainty" => {
            for (conditions, pair) in &cells {
                let solved = equilibrium_constants(conditions, &choice)
                    .and_then(|k| Ok((solve_with_constants(*pair, conditions, &k)?, k)));
                let Ok((s, k)) = solved else {
                    failures += 1;
                    continue;
                };
                let sample = SolvedSample {
                    pair,
                    conditions,
                    choice: &choice,
                    constants: &k,
                    solution: &s,
                };
                let combined = standard_uncertainties(&sample, &common::every_source(conditions));
                sum += s.omega_aragonite + combined.get(Output::OmegaAragonite);
            }
        }
        _ => {
            for (conditions, pair) in &cells {
                match solve(*pair, conditions, &choice) {
                    Ok(s) => sum += s.omega_aragonite,
                    Err(_) => failures += 1,
                }
            }
        }
    }
    let elapsed = start.elapsed();
    println!(
        "{count} cells ({mode}): {:.1} ns/cell, failures {failures}, checksum {sum:.6}",
        elapsed.as_nanos() as f64 / count as f64,
    );
}
