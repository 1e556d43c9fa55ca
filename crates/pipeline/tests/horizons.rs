//! Saturation horizons and the extent of corrosive water through the whole job, on SYNTHETIC
//! runs whose Ω aragonite follows profiles chosen here (tests/common/analytic.rs): exponential
//! profiles, whose crossing is known in closed form (Ω = a exp(-z/L) falls to 1 at L ln a) and
//! which interpolation on ln Ω reproduces exactly, and linear ones, whose expected depth is the
//! interpolation on ln Ω between the two bracketing centres (analysis crate README, Methods).
//! Areas are checked against R² Δλ |sin φ2 − sin φ1| on a sphere of the GRS80 mean radius
//! R1 = (2a + b)/3 = 6371008.7714 m (Moritz 2000), volumes against area × the level bounds
//! clipped to the sea floor.

mod common;

use acidscape_pipeline::{
    extent_table_path, run_job, HorizonChoice, IndicatorChoice, JobSummary, NoProgress,
};
use common::analytic::{AnalyticRun, Levels, Target};
use common::{options, read_f32};
use std::path::{Path, PathBuf};

/// GRS80 mean radius R1 = (2a + b)/3 (Moritz 2000) [m].
const RADIUS_M: f64 = 6_371_008.771_4;
/// The indicators' fill value (CMIP practice).
const FILL: f32 = 1.0e20;

fn run(
    inputs: &[PathBuf],
    output: &Path,
    adjust: impl FnOnce(&mut acidscape_pipeline::JobOptions),
) -> JobSummary {
    let mut job = options(output, IndicatorChoice::default());
    adjust(&mut job);
    run_job(&common::open_run(inputs), &job, &mut NoProgress).unwrap()
}

fn read_f64(path: &Path, name: &str) -> Vec<f64> {
    let file = netcdf::open(path).unwrap();
    let var = file.variable(name).unwrap_or_else(|| panic!("no {name}"));
    var.get_values::<f64, _>(..).unwrap()
}

/// The status words of a status variable, decoded as a reader of the file would (CF 1.10
/// section 3.5: `flag_values` with `flag_meanings`).
fn statuses(path: &Path, name: &str) -> Vec<String> {
    let file = netcdf::open(path).unwrap();
    let var = file.variable(name).unwrap();
    let values = match var.attribute_value("flag_values") {
        Some(Ok(netcdf::AttributeValue::Schars(v))) => v,
        other => panic!("flag_values of {name}: {other:?}"),
    };
    let meanings = match var.attribute_value("flag_meanings") {
        Some(Ok(netcdf::AttributeValue::Str(m))) => m,
        other => panic!("flag_meanings of {name}: {other:?}"),
    };
    let words: Vec<&str> = meanings.split(' ').collect();
    var.get_values::<i8, _>(..)
        .unwrap()
        .iter()
        .map(|v| {
            let k = values.iter().position(|x| x == v).unwrap();
            words[k].to_string()
        })
        .collect()
}

/// Horizon depth between two centres, interpolated linearly in depth on ln Ω (analysis crate
/// README, Methods), written out here independently.
fn ln_interpolated(z: [f64; 2], omega: [f64; 2], threshold: f64) -> f64 {
    z[0] + (z[1] - z[0]) * (threshold.ln() - omega[0].ln()) / (omega[1].ln() - omega[0].ln())
}

/// Area of a cell between longitudes and latitudes [degrees] on the sphere.
fn band_area(lon: [f64; 2], lat: [f64; 2]) -> f64 {
    RADIUS_M
        * RADIUS_M
        * (lon[1] - lon[0]).to_radians()
        * (lat[1].to_radians().sin() - lat[0].to_radians().sin()).abs()
}

// ---------------------------------------------------------------------------------------
// z-levels: one column per horizon status (3 rows × 4 columns).

const CENTRES: [f64; 8] = [5.0, 100.0, 300.0, 700.0, 1000.0, 1300.0, 1800.0, 2500.0];
const BOUNDS: [[f64; 2]; 8] = [
    [0.0, 10.0],
    [10.0, 200.0],
    [200.0, 500.0],
    [500.0, 850.0],
    [850.0, 1150.0],
    [1150.0, 1550.0],
    [1550.0, 2150.0],
    [2150.0, 3000.0],
];
/// Sea floor of every column but the shallow one (column 10) and land (column 9).
const FLOOR: f64 = 2800.0;
const SHALLOW_FLOOR: f64 = 400.0;

fn z_run() -> AnalyticRun {
    let mut deptho = vec![FLOOR; 12];
    deptho[9] = f64::NAN;
    deptho[10] = SHALLOW_FLOOR;
    AnalyticRun {
        rows: 3,
        cols: 4,
        steps: 2,
        levels: Levels::Depths {
            centres: CENTRES.to_vec(),
            bounds: BOUNDS.to_vec(),
            deptho,
        },
    }
}

/// Ω aragonite of each column of the z-level run; step 1 changes only column 0's scale.
fn z_target(step: usize, column: usize, level: usize, z: f64) -> Target {
    use Target::*;
    let per_level = |values: [f64; 8]| Omega(values[level]);
    match column {
        0 => Omega(4.0 * (-z / [800.0, 700.0][step]).exp()),
        1 => Omega((3.0 - z / 550.0).max(0.2)),
        2 => Omega(0.6),
        3 => per_level([0.7, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0]),
        4 => per_level([2.5, 0.7, 0.7, 1.8, 1.8, 1.8, 1.8, 1.8]),
        5 => Omega(3.0),
        6 => per_level([3.0, 3.0, 3.0, 3.0, 2.5, 2.0, 1.3, 1.05]),
        7 if level == 3 => MissingDic,
        7 => per_level([2.0, 1.5, 0.8, 0.0, 0.5, 0.5, 0.5, 0.5]),
        8 if level == 0 => MissingDic,
        8 => Omega(2.0),
        9 => Land,
        10 if z > SHALLOW_FLOOR => Land,
        10 => Omega(1.4 * (-z / 400.0).exp()),
        _ => Omega((6.0 * (-z / 300.0).exp()).max(0.2)),
    }
}

fn write_z_run(dir: &Path) -> Vec<PathBuf> {
    z_run().write(dir, |c| {
        z_target(c.step, c.row * 4 + c.col, c.level, c.depth_m)
    })
}

#[test]
fn every_status_on_z_levels_with_known_depths() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_z_run(dir.path());
    let output = dir.path().join("z.nc");
    run(&inputs, &output, |_| {});
    let depth = read_f32(&output, "horizon_depth_aragonite");
    let status = statuses(&output, "horizon_status_aragonite");
    let omega = |c: usize, k: usize| match z_target(0, c, k, CENTRES[k]) {
        Target::Omega(w) => w,
        other => panic!("{other:?}"),
    };
    let between = |c: usize, k: usize| {
        ln_interpolated(
            [CENTRES[k], CENTRES[k + 1]],
            [omega(c, k), omega(c, k + 1)],
            1.0,
        )
    };
    // Expected (status, depth) per column at step 0; None: missing (fill).
    let expected: [(&str, Option<f64>); 12] = [
        ("single_crossing", Some(800.0 * 4f64.ln())),
        ("single_crossing", Some(between(1, 4))),
        ("undersaturated_at_surface", Some(0.0)),
        ("undersaturated_at_surface_saturated_below", Some(0.0)),
        ("several_crossings", Some(between(4, 0))),
        ("deeper_than_sea_floor", None),
        ("crossing_in_bottom_cell", Some(between(6, 6))),
        ("crossing_above_missing_omega", Some(between(7, 1))),
        ("omega_missing", None),
        ("land", None),
        ("single_crossing", Some(400.0 * 1.4f64.ln())),
        ("single_crossing", Some(300.0 * 6f64.ln())),
    ];
    for (c, (word, want)) in expected.iter().enumerate() {
        assert_eq!(status[c], *word, "column {c}");
        match want {
            None => assert_eq!(depth[c], FILL, "column {c}"),
            // f32 storage: 1e-7 relative.
            Some(z) => assert!(
                (f64::from(depth[c]) - z).abs() <= 1e-3,
                "column {c}: {} vs {z}",
                depth[c]
            ),
        }
    }
    // The bottom-cell crossing lies between the deepest centre and the sea floor.
    assert!(depth[6] > 2500.0 && f64::from(depth[6]) < FLOOR);
    // Step 1: column 0's e-folding depth is 700 m: 700 ln 4.
    assert!((f64::from(depth[12]) - 700.0 * 4f64.ln()).abs() <= 1e-3);
    assert_eq!(status[12..], status[..12]);
    // Calcite has its own horizon (Ω calcite = Ω aragonite × Ksp ratio > Ω aragonite).
    let calcite = read_f32(&output, "horizon_depth_calcite");
    assert!(calcite[0] > depth[0], "{} {}", calcite[0], depth[0]);
}

/// Wet cells of the z-level run (level, column), as the targets say.
fn z_wet(column: usize, level: usize) -> bool {
    z_target(0, column, level, CENTRES[level]) != Target::Land
}

fn z_area(column: usize) -> f64 {
    let run = z_run();
    let (j, i) = (column / 4, column % 4);
    band_area(
        [run.lon(i) - 1.0, run.lon(i) + 1.0],
        [run.lat(j) - 1.0, run.lat(j) + 1.0],
    )
}

fn z_thickness(column: usize, level: usize) -> f64 {
    let floor = if column == 10 { SHALLOW_FLOOR } else { FLOOR };
    let [top, bottom] = BOUNDS[level];
    (bottom.min(floor) - top).max(0.0)
}

#[test]
fn geometry_and_extent_on_z_levels_equal_sums_over_cells() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_z_run(dir.path());
    let output = dir.path().join("z.nc");
    run(&inputs, &output, |_| {});
    let area = read_f64(&output, "cell_area");
    let thickness = read_f32(&output, "cell_thickness");
    let floor = read_f32(&output, "sea_floor_depth");
    let (mut wet, mut corrosive, mut corrosive_surface) = (0.0, 0.0, 0.0);
    for c in 0..12 {
        let want = z_area(c);
        assert_eq!(
            area[c],
            f64::from(want as f32),
            "area {c} (stored as float32)"
        );
        for k in 0..8 {
            let stored = thickness[k * 12 + c];
            if !z_wet(c, k) {
                assert_eq!(stored, FILL);
                continue;
            }
            assert_eq!(stored, z_thickness(c, k) as f32, "thickness {c} {k}");
            let volume = want * z_thickness(c, k);
            wet += volume;
            if matches!(z_target(0, c, k, CENTRES[k]), Target::Omega(w) if w < 1.0) {
                corrosive += volume;
            }
        }
        if matches!(z_target(0, c, 0, CENTRES[0]), Target::Omega(w) if w < 1.0) {
            corrosive_surface += want;
        }
    }
    // The partial bottom cell of the shallow column: 200-500 m clipped at 400 m.
    assert_eq!(thickness[2 * 12 + 10], 200.0);
    assert_eq!(floor[10], SHALLOW_FLOOR as f32);
    assert_eq!(floor[9], FILL);
    let close = |name: &str, want: f64| {
        let got = read_f64(&output, name)[0];
        assert!((got / want - 1.0).abs() < 1e-12, "{name}: {got} vs {want}");
    };
    close("wet_volume", wet);
    close("volume_below_threshold_aragonite", corrosive);
    close("surface_area_below_threshold_aragonite", corrosive_surface);
    close(
        "sea_surface_area",
        (0..12).filter(|c| *c != 9).map(z_area).sum(),
    );
    // The table beside the output holds the same numbers, one row per step and quantity.
    let table = std::fs::read_to_string(extent_table_path(&output)).unwrap();
    assert!(table.starts_with("time,step,quantity,mineral,threshold,value,units\n"));
    let row = format!(
        "2030-01-16,1,wet_volume,,,{},m3",
        read_f64(&output, "wet_volume")[0]
    );
    assert!(table.lines().any(|l| l == row), "{row}\n{table}");
}

#[test]
fn slab_splits_and_extra_thresholds() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_z_run(dir.path());
    let whole = dir.path().join("whole.nc");
    let rows = dir.path().join("rows.nc");
    let extra = |o: &mut acidscape_pipeline::JobOptions| {
        o.horizons.add_thresholds("aragonite=1.5,3").unwrap();
    };
    run(&inputs, &whole, extra);
    run(&inputs, &rows, |o| {
        extra(o);
        o.max_rows_per_slab = Some(1);
    });
    common::assert_same_output(&whole, &rows);
    // Column 0, Ω = 4 exp(-z/800): Ω = 1.5 at 800 ln(4/1.5), Ω = 3 at 800 ln(4/3).
    for (name, want) in [
        ("horizon_depth_aragonite_1p5", 800.0 * (4.0f64 / 1.5).ln()),
        ("horizon_depth_aragonite_3", 800.0 * (4.0f64 / 3.0).ln()),
    ] {
        let got = f64::from(read_f32(&whole, name)[0]);
        assert!((got - want).abs() <= 1e-3, "{name}: {got} vs {want}");
    }
    let fraction = read_f64(&whole, "volume_fraction_below_threshold_aragonite_3")[0];
    let below = read_f64(&whole, "volume_below_threshold_aragonite_3")[0];
    let known = read_f64(&whole, "volume_with_omega_aragonite")[0];
    assert_eq!(fraction, below / known);
}

#[test]
fn omega_below_one_everywhere_makes_all_water_corrosive() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = z_run().write(dir.path(), |c| {
        if c.row * 4 + c.col == 9 {
            Target::Land
        } else {
            Target::Omega(0.5)
        }
    });
    let output = dir.path().join("corrosive.nc");
    run(&inputs, &output, |o| o.max_rows_per_slab = Some(2));
    for step in 0..2 {
        let wet = read_f64(&output, "wet_volume")[step];
        assert!(wet > 0.0);
        // The same terms added in the same order: equal to the bit (analysis README).
        assert_eq!(
            read_f64(&output, "volume_below_threshold_aragonite")[step],
            wet
        );
        assert_eq!(
            read_f64(&output, "volume_fraction_below_threshold_aragonite")[step],
            1.0
        );
        assert_eq!(read_f64(&output, "mean_horizon_depth_aragonite")[step], 0.0);
    }
}

#[test]
fn horizons_can_be_turned_off_and_follow_the_omega_chosen() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_z_run(dir.path());
    let off = dir.path().join("off.nc");
    run(&inputs, &off, |o| {
        o.horizons = HorizonChoice {
            enabled: false,
            ..HorizonChoice::default()
        }
    });
    let file = netcdf::open(&off).unwrap();
    for name in ["horizon_depth_aragonite", "cell_area", "wet_volume"] {
        assert!(file.variable(name).is_none(), "{name}");
    }
    assert!(!extent_table_path(&off).exists());
    // Only Ω aragonite computed: its horizons, none for calcite.
    let aragonite = dir.path().join("aragonite.nc");
    run(&inputs, &aragonite, |o| {
        o.indicators.indicators = vec![acidscape_pipeline::Indicator::OmegaAragonite];
    });
    let file = netcdf::open(&aragonite).unwrap();
    assert!(file.variable("horizon_depth_aragonite").is_some());
    assert!(file.variable("horizon_depth_calcite").is_none());
    assert!(file.variable("volume_with_omega_calcite").is_none());
}

// ---------------------------------------------------------------------------------------
// Terrain-following: ocean_s_coordinate_g2, bottom first, with w-level interfaces and a free
// surface that changes between steps.

const S_LEVELS: usize = 10;
const H: [f64; 4] = [200.0, 400.0, 1500.0, 3000.0];
const ZETA: [[f64; 4]; 2] = [[0.5, 1.5, -0.8, 2.0], [-1.0, 0.3, 1.2, -0.4]];

fn s_run() -> AnalyticRun {
    AnalyticRun {
        rows: 1,
        cols: 4,
        steps: 2,
        levels: Levels::STerrain {
            s: (0..S_LEVELS).map(|k| -0.95 + 0.1 * k as f64).collect(),
            s_w: (0..=S_LEVELS).map(|k| -1.0 + 0.1 * k as f64).collect(),
            depth_c: 20.0,
            h: H.to_vec(),
            zeta: ZETA.iter().map(|z| z.to_vec()).collect(),
        },
    }
}

/// Ω aragonite by depth below the free surface: column 0 saturated to the floor; column 1
/// crosses inside its bottom cell (1.5 exp(-z/950) reaches 1 at 950 ln 1.5 = 385.2 m, below the
/// deepest centre, above the floor at 400 m + zeta); columns 2 and 3: 4 exp(-z/800), 800 ln 4.
fn s_target(column: usize, z: f64) -> f64 {
    match column {
        0 => 4.0 * (-z / 800.0).exp(),
        1 => 1.5 * (-z / 950.0).exp(),
        _ => 4.0 * (-z / 800.0).exp(),
    }
}

#[test]
fn terrain_following_horizons_at_the_actual_depths_below_the_free_surface() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = s_run().write(dir.path(), |c| Target::Omega(s_target(c.col, c.depth_m)));
    let output = dir.path().join("terrain.nc");
    run(&inputs, &output, |_| {});
    let depth = read_f32(&output, "horizon_depth_aragonite");
    let status = statuses(&output, "horizon_status_aragonite");
    for step in 0..2 {
        let at = |c: usize| step * 4 + c;
        assert_eq!(status[at(0)], "deeper_than_sea_floor");
        assert_eq!(depth[at(0)], FILL);
        assert_eq!(status[at(1)], "crossing_in_bottom_cell");
        for (c, want) in [
            (1, 950.0 * 1.5f64.ln()),
            (2, 800.0 * 4f64.ln()),
            (3, 800.0 * 4f64.ln()),
        ] {
            if c > 1 {
                assert_eq!(status[at(c)], "single_crossing");
            }
            let got = f64::from(depth[at(c)]);
            assert!(
                (got - want).abs() <= 1e-3,
                "step {step} column {c}: {got} vs {want}"
            );
        }
    }
    // Thicknesses from the w-level interfaces (CF Appendix D at s_w) add up to the water
    // column below the free surface, h + zeta, at each step; the sea floor is h.
    let thickness = read_f32(&output, "cell_thickness");
    let run = s_run();
    let area: Vec<f64> = (0..4)
        .map(|i| {
            band_area(
                [run.lon(i) - 1.0, run.lon(i) + 1.0],
                [run.lat(0) - 1.0, run.lat(0) + 1.0],
            )
        })
        .collect();
    for step in 0..2 {
        let mut wet = 0.0;
        for c in 0..4 {
            let column: f64 = (0..S_LEVELS)
                .map(|k| f64::from(thickness[(step * S_LEVELS + k) * 4 + c]))
                .sum();
            let want = H[c] + ZETA[step][c];
            assert!(
                (column - want).abs() < 1e-4 * want,
                "step {step} column {c}"
            );
            wet += area[c] * want;
        }
        let got = read_f64(&output, "wet_volume")[step];
        assert!(
            (got / wet - 1.0).abs() < 1e-12,
            "step {step}: {got} vs {wet}"
        );
    }
    let floor = read_f32(&output, "sea_floor_depth");
    assert_eq!(floor, H.map(|h| h as f32).to_vec());
}

// ---------------------------------------------------------------------------------------
// The bundled sample runs (skipped when sample-grids/ is absent).

fn sample_run(kind: &str) -> Option<acidscape_gridio::Run> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../sample-grids")
        .join(kind)
        .join("pathway-moderate");
    dir.is_dir()
        .then(|| common::open_run(&[PathBuf::from(format!("{}/*.nc", dir.display()))]))
}

#[test]
fn areas_from_bounds_agree_with_the_sample_runs_areacello() {
    // sample-grids/README.md and scripts/make_sample_grids.py: the rectilinear runs' areacello
    // is the exact band area on a sphere of radius 6371 km (common practice), stored as float32;
    // from the bounds on the GRS80 mean radius the areas are larger by (R1 / 6371 km)².
    let ratio = (RADIUS_M / 6.371e6).powi(2);
    for kind in ["cmip-style", "century"] {
        let Some(run) = sample_run(kind) else {
            continue;
        };
        let geometry = run.cell_geometry().unwrap();
        let own = geometry.cell_area.unwrap().values;
        let ours = acidscape_pipeline::geometry::areas_from_outlines(&geometry.outlines)
            .unwrap()
            .unwrap();
        let mut compared = 0;
        for (a, b) in own.iter().zip(&ours) {
            if a.is_finite() {
                // float32 storage: 6e-8 relative.
                assert!((b / a - ratio).abs() < 2e-7, "{kind}: {b} vs {a}");
                compared += 1;
            }
        }
        assert!(compared > 100, "{kind}");
    }
    // The curvilinear run's areacello is a tangent-plane (shoelace) approximation of its
    // 4-vertex cells on 6371 km (scripts/make_sample_grids.py): the approximation adds a
    // relative error of the order of the squared cell size in radians ((0.15°)² ≈ 7e-6, from
    // memory), far below it in practice.
    if let Some(run) = sample_run("curvilinear") {
        let geometry = run.cell_geometry().unwrap();
        let own = geometry.cell_area.unwrap().values;
        let ours = acidscape_pipeline::geometry::areas_from_outlines(&geometry.outlines)
            .unwrap()
            .unwrap();
        for (a, b) in own.iter().zip(&ours).filter(|(a, _)| a.is_finite()) {
            assert!((b / a - ratio).abs() < 2e-6, "curvilinear: {b} vs {a}");
        }
    }
}
