//! The conversions of one slab, per wet cell: units (mol m-3 -> µmol kg-1 with the in-situ
//! density), potential to in-situ temperature, the in-situ density, sea pressure from depth and
//! latitude — `Run::convert_slab`, what `compute` runs on every slab before the chemistry.
//!
//! Inputs: the synthetic cmip-style sample run (sample-grids/cmip-style, invented "Varnholm
//! Gulf" values: potential temperature, practical salinity, concentrations in mol m-3, depth
//! levels), its first time step as one slab, read once; each iteration converts a copy on a
//! one-thread rayon pool, so the figure is per core.

mod common;

use common::sample_run;
use criterion::{criterion_group, criterion_main, BatchSize, Criterion, Throughput};

fn bench_convert(c: &mut Criterion) {
    let run = sample_run();
    let rows = run.shape().rows;
    let raw = run.read_raw_slab(0, 0..rows).expect("the first step reads");
    let converted = run.convert_slab(raw.clone());
    let wet = converted.dic.iter().filter(|v| v.is_finite()).count();
    println!(
        "convert_slab: {} cells, {wet} wet, one rayon thread",
        converted.dic.len()
    );
    let one_thread = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a one-thread pool");
    let mut group = c.benchmark_group("convert_slab");
    group.throughput(Throughput::Elements(wet as u64));
    group.bench_function("wet cells, potential temperature, in-situ density", |b| {
        b.iter_batched(
            || raw.clone(),
            |raw| one_thread.install(|| run.convert_slab(raw)),
            BatchSize::LargeInput,
        )
    });
    group.finish();
}

criterion_group!(benches, bench_convert);
criterion_main!(benches);
