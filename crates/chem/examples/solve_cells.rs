//! Solves N synthetic ocean cells (TA, DIC, with pressure) and prints the time per cell; used to
//! profile the hot path (e.g. under `valgrind --tool=callgrind`). Inputs are synthetic.

use acidscape_chem::{solve, ConstantChoice};
use std::time::Instant;

#[path = "../benches/common/mod.rs"]
mod common;

fn main() {
    let count: usize = std::env::args()
        .nth(1)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(1_000_000);
    let choice = ConstantChoice::default();
    let start = Instant::now();
    let (mut sum, mut iterations, mut failures) = (0.0, 0u64, 0usize);
    for i in 0..count {
        let (conditions, pair) = common::synthetic_cell(i);
        match solve(pair, &conditions, &choice) {
            Ok(s) => {
                sum += s.omega_aragonite;
                iterations += u64::from(s.iterations);
            }
            Err(_) => failures += 1,
        }
    }
    let elapsed = start.elapsed();
    println!(
        "{count} cells: {:.1} ns/cell, mean iterations {:.2}, failures {failures}, checksum {sum:.6}",
        elapsed.as_nanos() as f64 / count as f64,
        iterations as f64 / count as f64
    );
}
