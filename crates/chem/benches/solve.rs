//! Full speciation from (TA, DIC) with pressure corrections, over varied ocean cells (synthetic inputs).

use acidscape_chem::{equilibrium_constants, solve, Conditions, ConstantChoice, InputPair};
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;

/// Synthetic cells spanning the ocean: surface to 6000 dbar, -1 to 30 °C, S 32-37.
fn synthetic_cells(count: usize) -> Vec<(Conditions, InputPair)> {
    (0..count)
        .map(|i| {
            let f = i as f64 / count as f64;
            let depth_fraction = (i % 37) as f64 / 36.0;
            let conditions = Conditions {
                temperature_c: 30.0 - 31.0 * depth_fraction.sqrt() + f,
                salinity: 32.0 + 5.0 * ((i * 7919) % 101) as f64 / 100.0,
                pressure_dbar: 6000.0 * depth_fraction,
                phosphate: 0.2 + 2.5 * depth_fraction,
                silicate: 2.0 + 140.0 * depth_fraction,
            };
            let pair = InputPair::AlkalinityDic {
                alkalinity: 2280.0 + 100.0 * depth_fraction + 20.0 * f,
                dic: 1950.0 + 330.0 * depth_fraction + 10.0 * f,
            };
            (conditions, pair)
        })
        .collect()
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
