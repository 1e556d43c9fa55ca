//! Full speciation from (TA, DIC) with pressure corrections, over varied ocean cells (synthetic
//! inputs): one cell at a time through `solve`, and the same cells as one block through
//! `solve_cells` with every quantity requested.

use acidscape_chem::{
    equilibrium_constants, solve, solve_cells, Conditions, ConstantChoice, InputPair,
};
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;

mod common;

fn synthetic_cells(count: usize) -> Vec<(Conditions, InputPair)> {
    (0..count).map(common::synthetic_cell).collect()
}

fn bench_solve(c: &mut Criterion) {
    let cells = synthetic_cells(1024);
    let choice = ConstantChoice::default();
    let mut group = c.benchmark_group("chem");
    group.throughput(Throughput::Elements(cells.len() as u64));
    group.bench_function("solve_ta_dic_1024_cells", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            for (conditions, pair) in &cells {
                if let Ok(s) = solve(black_box(*pair), black_box(conditions), &choice) {
                    sum += s.omega_aragonite;
                }
            }
            sum
        })
    });
    group.bench_function("constants_only_1024_cells", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            for (conditions, _) in &cells {
                if let Ok(k) = equilibrium_constants(black_box(conditions), &choice) {
                    sum += k.k1;
                }
            }
            sum
        })
    });
    let block = common::CellBlock::new(&cells);
    let mut results = common::Results::new(cells.len());
    group.bench_function("solve_cells_ta_dic_1024_cells", |b| {
        b.iter(|| {
            let mut outputs = results.every_quantity();
            solve_cells(black_box(&block.inputs()), &choice, &mut outputs).unwrap();
            results.omega_aragonite()[0]
        })
    });
    group.finish();
}

criterion_group!(benches, bench_solve);
criterion_main!(benches);
