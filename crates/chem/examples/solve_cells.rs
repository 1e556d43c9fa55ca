//! Solves N synthetic ocean cells (TA, DIC, with pressure) and prints the time per cell; with
//! `--uncertainty`, also propagates the uncertainty of every source of the `uncertainty`
//! benchmark. Used to profile the hot path (e.g. under `valgrind --tool=callgrind`). Inputs are
//! synthetic.

use acidscape_chem::{
    equilibrium_constants, solve_with_constants, standard_uncertainties, ConstantChoice, Output,
    SolvedSample,
};
use std::time::Instant;

#[path = "../benches/common/mod.rs"]
mod common;

fn main() {
    let count: usize = std::env::args()
        .nth(1)
        .and_then(|arg| arg.parse().ok())
        .unwrap_or(1_000_000);
    let with_uncertainty = std::env::args().any(|arg| arg == "--uncertainty");
    let choice = ConstantChoice::default();
    let start = Instant::now();
    let (mut sum, mut iterations, mut failures) = (0.0, 0u64, 0usize);
    for i in 0..count {
        let (conditions, pair) = common::synthetic_cell(i);
        let solved = equilibrium_constants(&conditions, &choice)
            .and_then(|k| Ok((solve_with_constants(pair, &conditions, &k)?, k)));
        match solved {
            Ok((s, k)) => {
                sum += s.omega_aragonite;
                iterations += u64::from(s.iterations);
                if with_uncertainty {
                    let u = common::every_source(&conditions);
                    let combined = standard_uncertainties(
                        &SolvedSample {
                            pair: &pair,
                            conditions: &conditions,
                            choice: &choice,
                            constants: &k,
                            solution: &s,
                        },
                        &u,
                    );
                    sum += combined.get(Output::OmegaAragonite);
                }
            }
            Err(_) => failures += 1,
        }
    }
    let elapsed = start.elapsed();
    println!(
        "{count} cells{}: {:.1} ns/cell, mean iterations {:.2}, failures {failures}, checksum {sum:.6}",
        if with_uncertainty { " with uncertainties" } else { "" },
        elapsed.as_nanos() as f64 / count as f64,
        iterations as f64 / count as f64
    );
}
