//! Rendering a map of a 1° global field (360 × 180 cells, SYNTHETIC pattern with invented
//! land), at the default page (6.5 in, 300 dpi) and at 150 dpi, plus PNG encoding.
//!
//! cargo bench -p acidscape-figures --bench render_map

use std::hint::black_box;

use acidscape_figures::{render_map, Captions, ContourLevel, MapGrid, MapSpec, PageSize};
use criterion::{criterion_group, criterion_main, Criterion};

fn global_field() -> (MapGrid, Vec<f64>) {
    let lons: Vec<f64> = (0..360).map(|i| i as f64 + 0.5).collect();
    let lats: Vec<f64> = (0..180).map(|j| j as f64 - 89.5).collect();
    let grid = MapGrid::rectilinear_from_centres(&lons, &lats).expect("valid grid");
    let mut values = Vec::with_capacity(360 * 180);
    for &lat in &lats {
        for &lon in &lons {
            let (x, y) = (f64::to_radians(lon), f64::to_radians(lat));
            let land = (2.0 * x).sin() * (3.0 * y).cos() > 0.55 || lat < -78.0;
            let value = 3.2 * y.cos().powi(2) + 0.2 * (5.0 * x).sin() * (4.0 * y).cos();
            values.push(if land { f64::NAN } else { value });
        }
    }
    (grid, values)
}

fn bench_map(c: &mut Criterion) {
    let (grid, values) = global_field();
    let text = Captions::new("global 1° field · synthetic", "Ω aragonite", "1");
    let mut spec = MapSpec::new(text);
    spec.contour = Some(ContourLevel {
        level: 1.0,
        label: "Ω aragonite = 1".into(),
    });
    let mut group = c.benchmark_group("map");
    group.sample_size(20);
    group.bench_function("global_1deg_300dpi", |b| {
        b.iter(|| render_map(&grid, black_box(&values), &spec).expect("renders"))
    });
    let mut low = spec.clone();
    low.page = PageSize::new(6.5, 150.0).expect("valid page");
    group.bench_function("global_1deg_150dpi", |b| {
        b.iter(|| render_map(&grid, black_box(&values), &low).expect("renders"))
    });
    let figure = render_map(&grid, &values, &spec).expect("renders");
    group.bench_function("encode_png_300dpi", |b| {
        b.iter(|| black_box(&figure).encode_png().expect("encodes"))
    });
    group.finish();
}

criterion_group!(benches, bench_map);
criterion_main!(benches);
