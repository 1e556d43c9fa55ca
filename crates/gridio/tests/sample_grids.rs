//! The repository's synthetic sample runs (sample-grids/, made by scripts/make_sample_grids.py)
//! open, and their reports name the expected variables. Skipped quietly while the
//! sample grids are absent; the core behaviour is tested on files built in the tests.

use acidscape_gridio::{DensityChoice, Run, RunSpec};
use std::path::PathBuf;

fn sample_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../sample-grids")
}

fn runs() -> Vec<PathBuf> {
    let mut out = Vec::new();
    let Ok(kinds) = std::fs::read_dir(sample_root()) else {
        return out;
    };
    for kind in kinds.flatten().filter(|e| e.path().is_dir()) {
        if let Ok(pathways) = std::fs::read_dir(kind.path()) {
            out.extend(pathways.flatten().map(|e| e.path()).filter(|p| p.is_dir()));
        }
    }
    out.sort();
    out
}

#[test]
fn every_sample_run_opens_and_reports_its_inputs() {
    for dir in runs() {
        let spec = RunSpec {
            inputs: vec![format!("{}/*.nc", dir.display())],
            mapping: Default::default(),
            density: DensityChoice::InSitu,
            ..Default::default()
        };
        let run = Run::open(&spec).unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        let report = run.report();
        for role in ["dic", "alkalinity", "temperature", "salinity"] {
            assert!(
                report.contains(role),
                "{}: report lacks {role}\n{report}",
                dir.display()
            );
        }
        assert!(run.wet_cells_per_step() > 0, "{}", dir.display());
        // Every sample run carries phosphate and silicate (sample-grids/README.md).
        assert!(
            !report.contains("not in the run"),
            "{}: nutrients not found\n{report}",
            dir.display()
        );
        let shape = run.shape();
        let slab = run
            .read_slab(run.time_steps() - 1, 0..shape.rows.min(3))
            .unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        let wet = slab.dic.iter().filter(|v| v.is_finite()).count();
        // Wet cells hold oceanic values after conversion (ranges: common practice).
        for c in 0..slab.dic.len() {
            if slab.dic[c].is_finite() && slab.temperature_c[c].is_finite() {
                assert!(
                    (1500.0..2600.0).contains(&slab.dic[c]),
                    "{}: DIC {}",
                    dir.display(),
                    slab.dic[c]
                );
                assert!(
                    (-3.0..35.0).contains(&slab.temperature_c[c]),
                    "{}: T {}",
                    dir.display(),
                    slab.temperature_c[c]
                );
                assert!(
                    (20.0..42.0).contains(&slab.salinity[c]),
                    "{}: S {}",
                    dir.display(),
                    slab.salinity[c]
                );
            }
        }
        println!(
            "{}: {} wet cells in the first rows\n{report}",
            dir.display(),
            wet
        );
        // Coordinates copy into an output that netCDF readers can open again.
        let out_dir = tempfile::tempdir().unwrap();
        let out_path = out_dir.path().join("coords.nc");
        let mut out = netcdf::create(&out_path).unwrap();
        let steps = run.time_steps();
        let axes = run
            .write_coordinates(&mut out, 0..steps)
            .unwrap_or_else(|e| panic!("{}: {e}", dir.display()));
        out.close().unwrap();
        let copy = netcdf::open(&out_path).unwrap();
        for dim in &axes.dims {
            assert!(
                copy.dimension(dim).is_some(),
                "{}: output lacks dimension {dim}",
                dir.display()
            );
        }
        for name in axes
            .coordinates_attr
            .iter()
            .flat_map(|c| c.split_whitespace())
        {
            assert!(
                copy.variable(name).is_some(),
                "{}: output lacks {name}",
                dir.display()
            );
        }
        if let Some(keep_dir) = std::env::var_os("ACIDSCAPE_KEEP_COORDS") {
            let kind = dir.parent().and_then(|p| p.file_name()).unwrap_or_default();
            let name = format!(
                "coords_{}_{}.nc",
                kind.to_string_lossy(),
                dir.file_name().unwrap_or_default().to_string_lossy()
            );
            std::fs::copy(&out_path, PathBuf::from(keep_dir).join(name)).unwrap();
        }
    }
}
