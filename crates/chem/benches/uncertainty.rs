//! Cost per cell of the propagated uncertainties against the solve alone, over the varied ocean
//! cells of the `solve` benchmark (synthetic inputs).

use acidscape_chem::{
    equilibrium_constants, solve_with_constants, standard_uncertainties, Conditions,
    ConstantChoice, ConstantUncertainties, InputPair, InputUncertainties, Output, SolvedSample,
    Uncertainties,
};
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;

mod common;

/// Only the carbonate inputs and the constants: no temperature or salinity slopes.
fn carbon_and_constants() -> Uncertainties {
    Uncertainties {
        inputs: InputUncertainties {
            alkalinity: 2.0,
            dic: 2.0,
            ..Default::default()
        },
        constants: ConstantUncertainties::ORR_2018,
    }
}

fn bench_uncertainty(c: &mut Criterion) {
    let cells: Vec<(Conditions, InputPair)> = (0..1024).map(common::synthetic_cell).collect();
    let choice = ConstantChoice::default();
    let mut group = c.benchmark_group("uncertainty");
    group.throughput(Throughput::Elements(cells.len() as u64));
    group.bench_function("solve_only_1024_cells", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            for (conditions, pair) in &cells {
                let conditions = black_box(conditions);
                let Ok(k) = equilibrium_constants(conditions, &choice) else {
                    continue;
                };
                if let Ok(s) = solve_with_constants(black_box(*pair), conditions, &k) {
                    sum += s.omega_aragonite;
                }
            }
            sum
        })
    });
    let with = |u_of: fn(&Conditions) -> Uncertainties| {
        let cells = &cells;
        let choice = &choice;
        move |b: &mut criterion::Bencher| {
            b.iter(|| {
                let mut sum = 0.0;
                for (conditions, pair) in cells {
                    let conditions = black_box(conditions);
                    let Ok(k) = equilibrium_constants(conditions, choice) else {
                        continue;
                    };
                    let pair = black_box(*pair);
                    if let Ok(s) = solve_with_constants(pair, conditions, &k) {
                        let u = u_of(conditions);
                        let combined = standard_uncertainties(
                            &SolvedSample {
                                pair: &pair,
                                conditions,
                                choice,
                                constants: &k,
                                solution: &s,
                            },
                            &u,
                        );
                        sum += s.omega_aragonite + combined.get(Output::OmegaAragonite);
                    }
                }
                sum
            })
        }
    };
    group.bench_function(
        "solve_and_uncertainty_every_source_1024_cells",
        with(common::every_source),
    );
    group.bench_function(
        "solve_and_uncertainty_carbon_and_constants_1024_cells",
        with(|_| carbon_and_constants()),
    );
    group.finish();
}

criterion_group!(benches, bench_uncertainty);
criterion_main!(benches);
