//! Cost per water column of the work `compute` adds to each slab: saturation horizons for
//! four thresholds and the corrosive-water accumulation, on synthetic 50-level columns; and
//! the cost of one exact addition.

mod common;

use common::Synthetic;
use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

const COLUMNS: usize = 1024;

fn horizons(c: &mut Criterion) {
    let s = Synthetic::new(COLUMNS);
    c.bench_function("horizons: 4 thresholds, 50 levels, per 1024 columns", |b| {
        b.iter(|| black_box(s.horizons(COLUMNS)))
    });
}

fn extent(c: &mut Criterion) {
    let s = Synthetic::new(COLUMNS);
    c.bench_function(
        "extent: 3 + 1 thresholds, 50 levels, per 1024 columns",
        |b| b.iter(|| black_box(s.extent(COLUMNS).summary())),
    );
}

fn exact_sum(c: &mut Criterion) {
    let values: Vec<f64> = (0..1024)
        .map(|i| 1e9 * (1.0 + (i % 37) as f64 / 7.0))
        .collect();
    c.bench_function("exact sum: 1024 adds", |b| {
        b.iter(|| {
            let mut s = acidscape_analysis::ExactSum::new();
            for &v in &values {
                s.add(black_box(v));
            }
            black_box(s.value())
        })
    });
}

criterion_group!(benches, horizons, extent, exact_sum);
criterion_main!(benches);
