//! Full speciation from (TA, DIC) with pressure corrections, over varied ocean cells (synthetic inputs).

use acidscape_chem::{equilibrium_constants, solve, Conditions, ConstantChoice, InputPair};
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
    group.finish();
}

criterion_group!(benches, bench_solve);
criterion_main!(benches);
