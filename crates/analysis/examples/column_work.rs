//! A small harness for profiling the per-column work `compute` adds (saturation horizons and
//! the corrosive-water accumulation) under callgrind, where instruction counts do not depend on
//! the load of a shared machine:
//! `valgrind --tool=callgrind target/release/examples/column_work horizons|extent|none`;
//! subtract the count of `none` (which only builds the synthetic 50-level columns) and divide
//! by the 10,000 columns.

#[path = "../benches/common/mod.rs"]
mod common;

use common::Synthetic;
use std::hint::black_box;

const COLUMNS: usize = 10_000;

fn main() {
    let s = Synthetic::new(COLUMNS);
    match std::env::args().nth(1).as_deref() {
        Some("horizons") => println!("{}", black_box(s.horizons(COLUMNS))),
        Some("extent") => println!("{}", black_box(s.extent(COLUMNS)).summary().wet_volume_m3),
        Some("none") => {}
        _ => eprintln!("usage: column_work horizons|extent|none"),
    }
}
