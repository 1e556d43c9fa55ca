//! The solver stage of one slab, per wet cell: `cells::solve_slab` with the batch kernel and
//! the default indicators, Ω kept for the column analysis — what `compute`'s pool runs on every
//! converted slab (gathering the solvable cells, the kernel, writing fields and flags).
//!
//! Inputs: the synthetic cmip-style sample run (sample-grids/cmip-style, invented "Varnholm
//! Gulf" values), its first time step as one converted slab, read once; each iteration solves
//! it on a one-thread rayon pool, so the figure is per core.

#[path = "../../gridio/benches/common/mod.rs"]
mod common;

use acidscape_chem::ConstantChoice;
use acidscape_pipeline::cells::{solve_slab, KeepOmega, SaturationStates, SlabSolver};
use acidscape_pipeline::IndicatorChoice;
use common::sample_run;
use criterion::{criterion_group, criterion_main, Criterion, Throughput};

fn bench_solve_slab(c: &mut Criterion) {
    let run = sample_run();
    let rows = run.shape().rows;
    let raw = run.read_raw_slab(0, 0..rows).expect("the first step reads");
    let inputs = run.convert_slab(raw);
    let wet = inputs.dic.iter().filter(|v| v.is_finite()).count();
    let fields = IndicatorChoice::default()
        .fields()
        .expect("the default fields");
    let choice = ConstantChoice::default();
    let keep = KeepOmega {
        aragonite: true,
        calcite: true,
    };
    println!(
        "solve_slab: {} cells, {wet} wet, {} fields, one rayon thread",
        inputs.dic.len(),
        fields.len()
    );
    let one_thread = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("a one-thread pool");
    let mut group = c.benchmark_group("solve_slab");
    group.throughput(Throughput::Elements(wet as u64));
    group.bench_function("wet cells, default indicators, kernel", |b| {
        // The previous iteration's Ω buffers come back, as in `compute`.
        let mut spare = SaturationStates::default();
        b.iter(|| {
            let solved = one_thread.install(|| {
                let kernel = SlabSolver::Kernel;
                solve_slab(
                    kernel,
                    &inputs,
                    &fields,
                    &choice,
                    keep,
                    std::mem::take(&mut spare),
                    None,
                )
            });
            spare = solved.omega;
        })
    });
    group.finish();
}

criterion_group!(benches, bench_solve_slab);
criterion_main!(benches);
