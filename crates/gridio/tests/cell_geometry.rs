//! What `Run::cell_geometry` reads: bounds, the run's cell area and sea-floor depth, and the
//! vertical extent of each level, on small SYNTHETIC runs written here and on the bundled
//! sample runs. Expected interfaces of parametric coordinates are evaluated by hand from CF
//! Conventions 1.10 Appendix D.

mod common;

use acidscape_gridio::{CellOutlines, Run};
use common::*;
use std::path::{Path, PathBuf};
use tempfile::tempdir;

/// An `ocean_s_coordinate_g2` run (see `parametric_coords`), optionally with w-level terms
/// `s_w`, `Cs_w` on dimension `lev_w`.
fn s_coordinate_run(dir: &Path, with_w_levels: bool) -> Run {
    let mut coords = parametric_coords(
        "ocean_s_coordinate_g2",
        "s: lev C: Cs eta: zeta depth: h depth_c: hc",
    );
    let mut extra = Vec::new();
    if with_w_levels {
        coords.push(
            Var::new("s_w", &["lev_w"], vec![-1.0, -0.7, -0.3, 0.0])
                .attr("standard_name", "ocean_s_coordinate_g2")
                .attr("positive", "up")
                .attr(
                    "formula_terms",
                    "s: s_w C: Cs_w eta: zeta depth: h depth_c: hc",
                )
                .attr("units", "1"),
        );
        coords.push(Var::new("Cs_w", &["lev_w"], vec![-1.0, -0.55, -0.15, 0.0]));
        extra.push(("lev_w", 4));
    }
    single_file_run(dir, coords, &extra)
}

/// Depths below the sea surface of the level centres of column (row, col) at step 0.
fn centres(run: &Run, row: usize, col: usize) -> Vec<f64> {
    let slab = run.read_slab(0, 0..GRID.rows).unwrap();
    let column = row * GRID.cols + col;
    let eta = slab.surface_height_m[column];
    (0..GRID.levels)
        .map(|k| slab.depth_m[(k * GRID.rows + row) * GRID.cols + col] + eta)
        .collect()
}

#[test]
fn w_level_terms_give_the_interfaces_at_each_step() {
    let dir = tempdir().unwrap();
    let run = s_coordinate_run(dir.path(), true);
    let geometry = run.cell_geometry().unwrap();
    let vertical = &geometry.vertical;
    assert!(vertical.varies_in_time());
    assert!(
        vertical.describe().contains("'s_w'"),
        "{}",
        vertical.describe()
    );
    let floor = geometry.sea_floor.as_ref().unwrap();
    assert_eq!(floor.variable, "h");
    // Column row 2 (h = 200 m), col 2 (eta = 1.0 m). CF Appendix D, ocean_s_coordinate_g2:
    // S = (depth_c s + h C) / (depth_c + h), z = eta + (eta + h) S, and the depth below the
    // free surface is eta - z = -(eta + h) S = -201 S:
    // s = -1, C = -1: 201; s = -0.7, C = -0.55: S = -117/210, 111.985714...;
    // s = -0.3, C = -0.15: S = -33/210, 31.585714...; s = 0, C = 0: 0.
    let column = 2 * GRID.cols + 2;
    let mut out = Vec::new();
    let bounds = vertical.level_bounds(
        &centres(&run, 2, 2),
        1.0,
        Some(floor.values[column]),
        &mut out,
    );
    let want = [201.0, 201.0 * 117.0 / 210.0, 201.0 * 33.0 / 210.0, 0.0];
    assert_eq!(bounds.len(), 3);
    for (k, pair) in bounds.iter().enumerate() {
        assert!((pair[0] - want[k]).abs() < 1e-9, "{bounds:?}");
        assert!((pair[1] - want[k + 1]).abs() < 1e-9, "{bounds:?}");
    }
}

#[test]
fn without_w_levels_interfaces_fall_midway_from_the_free_surface_to_the_floor() {
    let dir = tempdir().unwrap();
    let run = s_coordinate_run(dir.path(), false);
    let geometry = run.cell_geometry().unwrap();
    let vertical = &geometry.vertical;
    assert!(vertical.describe().contains("derived from the centres"));
    assert!(vertical.varies_in_time());
    let c = centres(&run, 2, 2);
    assert!(vertical.needs_centres());
    let mut out = Vec::new();
    let bounds = vertical.level_bounds(&c, 1.0, Some(200.0), &mut out);
    // Level order is bottom first (s increases upwards): the bottom level ends at the sea
    // floor below the free surface (200 m + 1 m), the top level starts at the surface.
    assert_eq!(bounds[0][1], 201.0);
    assert_eq!(bounds[2][0], 0.0);
    assert_eq!(bounds[0][0], 0.5 * (c[0] + c[1]));
    assert_eq!(bounds[1], [0.5 * (c[1] + c[2]), 0.5 * (c[0] + c[1])]);
}

#[test]
fn z_levels_without_bounds_are_derived_from_the_centres_and_said_so() {
    let dir = tempdir().unwrap();
    let coords = coordinates(GRID, &[15.5], "days since 2015-01-01", "noleap");
    let run = single_file_run(dir.path(), coords, &[]);
    let geometry = run.cell_geometry().unwrap();
    assert!(!geometry.vertical.varies_in_time());
    assert!(geometry
        .vertical
        .describe()
        .contains("derived from the centres"));
    let mut out = Vec::new();
    let bounds = geometry
        .vertical
        .level_bounds(&[5.0, 100.0, 1000.0], 0.0, None, &mut out);
    assert_eq!(bounds, [[0.0, 52.5], [52.5, 550.0], [550.0, 1450.0]]);
    // No lat/lon bounds either: 1-D edges midway between centres 10° apart (lat) and 2° (lon).
    let CellOutlines::Rectilinear {
        lon_bounds,
        lat_bounds,
        origin,
    } = &geometry.outlines
    else {
        panic!("{:?}", geometry.outlines);
    };
    assert!(origin.contains("derived from the centres"), "{origin}");
    assert_eq!(lat_bounds[0], [-35.0, -25.0]);
    assert_eq!(lon_bounds[4], [107.0, 109.0]);
    assert!(geometry.cell_area.is_none() && geometry.sea_floor.is_none());
}

#[test]
fn bounds_that_miss_their_centres_are_refused_by_name() {
    let dir = tempdir().unwrap();
    let mut coords = coordinates(GRID, &[15.5], "days since 2015-01-01", "noleap");
    coords[1] = coords[1].clone().attr("bounds", "lev_bnds");
    // Level 2 (centre 100 m) given bounds 200-300 m.
    coords.push(Var::new(
        "lev_bnds",
        &["lev", "bnds"],
        vec![0.0, 10.0, 200.0, 300.0, 300.0, 2000.0],
    ));
    let run = single_file_run(dir.path(), coords, &[("bnds", 2)]);
    let err = run.cell_geometry().unwrap_err().to_string();
    assert!(err.contains("lev_bnds") && err.contains("level 2"), "{err}");
}

fn sample_run(kind: &str) -> Option<Run> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../sample-grids")
        .join(kind)
        .join("pathway-moderate");
    if !dir.is_dir() {
        return None;
    }
    Some(Run::open(&spec(vec![format!("{}/*.nc", dir.display())])).unwrap())
}

#[test]
fn sample_runs_give_their_bounds_areas_and_floors() {
    // sample-grids/README.md: cmip-style has lat/lon/lev bounds, areacello and deptho files;
    // terrain-following has lat/lon bounds and the bathymetry h as its depth term;
    // curvilinear has 4-vertex bounds and in-file areacello and deptho.
    if let Some(run) = sample_run("cmip-style") {
        let g = run.cell_geometry().unwrap();
        assert!(matches!(g.outlines, CellOutlines::Rectilinear { .. }));
        assert_eq!(g.outlines.origin(), "bounds 'lat_bnds' and 'lon_bnds'");
        assert_eq!(g.cell_area.as_ref().unwrap().variable, "areacello");
        assert_eq!(g.sea_floor.as_ref().unwrap().variable, "deptho");
        assert_eq!(g.vertical.describe(), "level bounds 'lev_bnds' of 'lev'");
    }
    if let Some(run) = sample_run("terrain-following") {
        let g = run.cell_geometry().unwrap();
        assert!(g.cell_area.is_none());
        assert_eq!(g.sea_floor.as_ref().unwrap().variable, "h");
        assert!(g.vertical.varies_in_time());
    }
    if let Some(run) = sample_run("curvilinear") {
        let g = run.cell_geometry().unwrap();
        let CellOutlines::Curvilinear { lat_vertices, .. } = &g.outlines else {
            panic!("{:?}", g.outlines.origin());
        };
        let shape = run.shape();
        assert_eq!(lat_vertices.len(), shape.rows * shape.cols);
        assert_eq!(
            g.outlines.origin(),
            "bounds 'lat_vertices' and 'lon_vertices'"
        );
        assert_eq!(g.cell_area.as_ref().unwrap().variable, "areacello");
        // In-file areacello and deptho are masked on land (NaN), positive at sea.
        assert!(g
            .sea_floor
            .as_ref()
            .unwrap()
            .values
            .iter()
            .any(|v| *v > 0.0));
    }
}
