//! Reads every slab of a run and reports the time spent: a harness for profiling
//! `Run::read_slab` (e.g. under `valgrind --tool=callgrind`).
//!
//! Usage: `read_slabs [--rows N] [--steps N] [--raw] [--default-cache] FILE...` (default: 30
//! rows per slab, all steps; `--raw` reads the values as stored, without widening, masking or
//! converting: the reading stage of `compute` alone; `--default-cache` keeps the library's
//! chunk cache instead of one sized for the slabs).

use acidscape_gridio::{DensityChoice, Run, RunSpec, VariableMapping};
use std::time::Instant;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let mut rows_per_slab = 30usize;
    let mut max_steps = usize::MAX;
    let mut raw_only = false;
    let mut sized_cache = true;
    let mut inputs = Vec::new();
    let mut args = std::env::args().skip(1);
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--rows" => rows_per_slab = args.next().ok_or("--rows needs a number")?.parse()?,
            "--steps" => max_steps = args.next().ok_or("--steps needs a number")?.parse()?,
            "--raw" => raw_only = true,
            "--default-cache" => sized_cache = false,
            _ => inputs.push(arg),
        }
    }
    let spec = RunSpec {
        inputs,
        mapping: VariableMapping::default(),
        density: DensityChoice::InSitu,
        ..Default::default()
    };
    let run = Run::open(&spec)?;
    let shape = run.shape();
    let steps = run.time_steps().min(max_steps);
    if sized_cache {
        run.read_in_slabs_of(Some(rows_per_slab));
        eprintln!(
            "chunk caches: {} MB in all",
            run.read_cache_bytes(rows_per_slab) / 1_000_000
        );
    }
    let start = Instant::now();
    let mut cells = 0usize;
    let mut checksum = 0.0;
    for step in 0..steps {
        let mut row = 0;
        while row < shape.rows {
            let rows = row..(row + rows_per_slab.max(1)).min(shape.rows);
            if raw_only {
                let raw = run.read_raw_slab(step, rows.clone())?;
                cells += raw.rows().len() * shape.levels * shape.cols;
                checksum += raw.step() as f64;
                row = rows.end;
                continue;
            }
            let slab = run.read_slab(step, rows.clone())?;
            cells += slab.temperature_c.len();
            checksum += slab
                .temperature_c
                .iter()
                .chain(&slab.density_kg_m3)
                .chain(&slab.dic)
                .filter(|v| v.is_finite())
                .sum::<f64>();
            row = rows.end;
        }
    }
    let seconds = start.elapsed().as_secs_f64();
    println!(
        "{cells} cells in {steps} steps: {seconds:.3} s, {:.3} us/cell, checksum {checksum:.6e}",
        seconds * 1e6 / cells.max(1) as f64
    );
    Ok(())
}
