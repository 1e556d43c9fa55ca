//! The synthetic cmip-style sample run (sample-grids/cmip-style, invented "Varnholm Gulf"
//! values) opened for the benches, here and in the pipeline's (included there by path).

use acidscape_gridio::{DensityChoice, Run, RunSpec, VariableMapping};
use std::path::Path;

/// The sample run's moderate pathway, every file of it, densities in situ.
pub fn sample_run() -> Run {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../sample-grids/cmip-style/pathway-moderate");
    let mut inputs: Vec<String> = std::fs::read_dir(&dir)
        .expect("the sample run is in the repository")
        .map(|entry| {
            entry
                .expect("a readable folder")
                .path()
                .display()
                .to_string()
        })
        .filter(|path| path.ends_with(".nc"))
        .collect();
    inputs.sort();
    let spec = RunSpec {
        inputs,
        mapping: VariableMapping::default(),
        density: DensityChoice::InSitu,
        ..Default::default()
    };
    Run::open(&spec).expect("the sample run opens")
}
