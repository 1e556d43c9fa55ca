//! A small CMIP-style run written by the tests themselves (SYNTHETIC data, invented
//! values; layout and attributes follow the CF conventions and CMIP/OMIP variable names).

#![allow(dead_code)]

pub mod analytic;

use acidscape_chem::ConstantChoice;
use acidscape_gridio::{DensityChoice, Run, RunSpec, VariableMapping};
use acidscape_pipeline::{
    ConcentrationUnit, HorizonChoice, Indicator, IndicatorChoice, JobOptions, PhScale, StopRequest,
};
use std::path::{Path, PathBuf};

pub fn open_run(paths: &[PathBuf]) -> Run {
    Run::open(&RunSpec {
        inputs: paths.iter().map(|p| p.display().to_string()).collect(),
        mapping: VariableMapping::default(),
        density: DensityChoice::InSitu,
        ..Default::default()
    })
    .unwrap()
}

pub fn options(output: &Path, indicators: IndicatorChoice) -> JobOptions {
    JobOptions {
        output: output.to_path_buf(),
        overwrite: false,
        resume: false,
        memory_budget_bytes: 1 << 30,
        constants: ConstantChoice::default(),
        indicators,
        command_line: "acidscape compute (test)".into(),
        deflate_level: 4,
        stop_after_steps: None,
        max_rows_per_slab: None,
        horizons: HorizonChoice::default(),
        uncertainty: None,
        stop: StopRequest::new(),
    }
}

pub fn every_indicator() -> IndicatorChoice {
    IndicatorChoice {
        indicators: Indicator::ALL.to_vec(),
        ph_scales: vec![PhScale::Total, PhScale::Free],
        concentration_unit: ConcentrationUnit::MolPerCubicMetre,
    }
}

/// Every value of every variable, bit for bit (indicators, flag, horizons, geometry, extent
/// time series, coordinates), and the extent tables beside the files byte for byte.
pub fn assert_same_output(expected: &Path, actual: &Path) {
    let (a, b) = (
        netcdf::open(expected).unwrap(),
        netcdf::open(actual).unwrap(),
    );
    let names = |f: &netcdf::File| -> Vec<String> { f.variables().map(|v| v.name()).collect() };
    assert_eq!(names(&a), names(&b));
    for name in names(&a) {
        let bits = |f: &netcdf::File| -> Vec<u64> {
            let var = f.variable(&name).unwrap();
            let values: Vec<f64> = if var.dimensions().is_empty() {
                vec![var.get_value::<f64, _>(()).unwrap()]
            } else {
                var.get_values::<f64, _>(..).unwrap()
            };
            values.iter().map(|v| v.to_bits()).collect()
        };
        assert_eq!(bits(&a), bits(&b), "{name} differs");
    }
    let table = |p: &Path| std::fs::read(acidscape_pipeline::extent_table_path(p)).ok();
    assert_eq!(table(expected), table(actual), "the extent tables differ");
}

pub const LEVELS: usize = 4;
pub const ROWS: usize = 4;
pub const COLS: usize = 5;
pub const FILL: f32 = 1.0e20;
/// Density used to write per-mass values as mol m-3 (synthetic choice).
pub const DENSITY: f32 = 1025.0;

/// Cells pushed out of range on purpose: (level, row, col).
pub const LAND_COLUMN: (usize, usize) = (0, 0);
pub const HOT_CELL: (usize, usize, usize) = (0, 1, 1); // 40 °C
pub const SALTY_CELL: (usize, usize, usize) = (0, 1, 2); // S = 50
pub const NEGATIVE_ALKALINITY_CELL: (usize, usize, usize) = (1, 2, 1);
pub const MISSING_DIC_CELL: (usize, usize, usize) = (1, 2, 2);
/// TA 49000 µmol kg-1 with almost no DIC: pH above 12, no physical solution.
pub const NO_SOLUTION_CELL: (usize, usize, usize) = (1, 3, 3);
/// The one wet column of the deepest level (10500 m): a trench, beyond the pressure
/// corrections' 1000 bar. Every other cell of that level is rock (fill).
pub const TRENCH_COLUMN: (usize, usize) = (2, 4);
/// Depths of the level centres [m].
pub const DEPTHS: [f64; LEVELS] = [5.0, 100.0, 1000.0, 10_500.0];

pub fn index(level: usize, row: usize, col: usize) -> usize {
    (level * ROWS + row) * COLS + col
}

/// Writes the run as `files` files split along time (SYNTHETIC data), returns their paths.
pub fn write_cmip_style_run(dir: &Path, steps: usize, files: usize) -> Vec<PathBuf> {
    write_run(dir, steps, files, false)
}

/// As [`write_cmip_style_run`], with every data variable deflated in chunks of one time step
/// (no shuffle), as models write compressed output: see [`corrupt_step`].
pub fn write_compressed_run(dir: &Path, steps: usize, files: usize) -> Vec<PathBuf> {
    write_run(dir, steps, files, true)
}

fn write_run(dir: &Path, steps: usize, files: usize, compressed: bool) -> Vec<PathBuf> {
    let per_file = steps.div_ceil(files);
    let mut paths = Vec::new();
    for (part, first) in (0..steps).step_by(per_file).enumerate() {
        let last = (first + per_file).min(steps);
        let path = dir.join(format!("synthetic_run_part{part}.nc"));
        write_file(&path, first..last, compressed);
        paths.push(path);
    }
    paths
}

/// Writes the file of `steps` again at `path` (e.g. a good copy over a damaged one).
pub fn rewrite_file(path: &Path, steps: std::ops::Range<usize>, compressed: bool) {
    std::fs::remove_file(path).unwrap();
    write_file(path, steps, compressed);
}

/// The little-endian bytes of `name` at `step`, as stored in one uncompressed chunk.
fn step_bytes(name: &str, step: usize) -> Vec<u8> {
    (0..LEVELS * ROWS * COLS)
        .flat_map(|cell| value(name, step, cell).to_le_bytes())
        .collect()
}

/// Damages the deflated chunk that holds `name` at run step `step` in `path` (a file of
/// [`write_compressed_run`]): the file still opens, but reading that step fails. The chunk is
/// found by inflating every zlib stream in the file (RFC 1950 header: CMF 0x78 and a check
/// byte) until one gives exactly that step's bytes.
pub fn corrupt_step(path: &Path, name: &str, step: usize) {
    use std::io::Read;
    let mut bytes = std::fs::read(path).unwrap();
    let wanted = step_bytes(name, step);
    let start = (0..bytes.len() - 2)
        .find(|&at| {
            if bytes[at] != 0x78 || (0x78u32 * 256 + u32::from(bytes[at + 1])) % 31 != 0 {
                return false;
            }
            let mut inflated = Vec::new();
            let decoder = flate2::read::ZlibDecoder::new(&bytes[at..]);
            let complete = decoder
                .take(wanted.len() as u64 + 1)
                .read_to_end(&mut inflated)
                .is_ok();
            complete && inflated == wanted
        })
        .unwrap_or_else(|| panic!("no chunk of {name} at step {step} in {}", path.display()));
    // The first deflate block header: BTYPE 11 is reserved, an error for every inflater.
    bytes[start + 2] |= 0b110;
    bytes[start + 3] ^= 0xff;
    std::fs::write(path, bytes).unwrap();
}

fn write_file(path: &Path, steps: std::ops::Range<usize>, compressed: bool) {
    let mut file = netcdf::create(path).unwrap();
    file.add_attribute("Conventions", "CF-1.10").unwrap();
    file.add_attribute("comment", "SYNTHETIC test data (invented values)")
        .unwrap();
    file.add_unlimited_dimension("time").unwrap();
    file.add_dimension("lev", LEVELS).unwrap();
    file.add_dimension("lat", ROWS).unwrap();
    file.add_dimension("lon", COLS).unwrap();
    file.add_dimension("bnds", 2).unwrap();

    let times: Vec<f64> = steps.clone().map(|s| 15.5 + 30.0 * s as f64).collect();
    let bounds: Vec<f64> = steps
        .clone()
        .flat_map(|s| [30.0 * s as f64, 30.0 * (s + 1) as f64])
        .collect();
    {
        let mut v = file.add_variable::<f64>("time", &["time"]).unwrap();
        v.put_attribute("standard_name", "time").unwrap();
        v.put_attribute("axis", "T").unwrap();
        v.put_attribute("units", "days since 2015-01-01 00:00:00")
            .unwrap();
        v.put_attribute("calendar", "360_day").unwrap();
        v.put_attribute("bounds", "time_bnds").unwrap();
        v.put_values(&times, 0..times.len()).unwrap();
    }
    {
        let mut v = file
            .add_variable::<f64>("time_bnds", &["time", "bnds"])
            .unwrap();
        v.put_values(&bounds, (0..times.len(), 0..2)).unwrap();
    }
    write_depth_levels(
        &mut file,
        &DEPTHS,
        &[
            [0.0, 10.0],
            [10.0, 200.0],
            [200.0, 2000.0],
            [10_000.0, 11_000.0],
        ],
    );
    write_lat_lon(
        &mut file,
        &[-30.0, -10.0, 10.0, 30.0],
        &[10.0, 30.0, 50.0, 70.0, 90.0],
        10.0,
    );

    let variables = [
        ("thetao", "sea_water_potential_temperature", "degC"),
        ("so", "sea_water_salinity", "0.001"),
        (
            "dissic",
            "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
            "mol m-3",
        ),
        (
            "talk",
            "sea_water_alkalinity_expressed_as_mole_equivalent",
            "mol m-3",
        ),
    ];
    for (name, standard, units) in variables {
        let mut v = file
            .add_variable::<f32>(name, &["time", "lev", "lat", "lon"])
            .unwrap();
        if compressed {
            v.set_chunking(&[1, LEVELS, ROWS, COLS]).unwrap();
            v.set_compression(4, false).unwrap();
        }
        v.set_fill_value(FILL).unwrap();
        v.put_attribute("standard_name", standard).unwrap();
        v.put_attribute("units", units).unwrap();
        v.put_attribute("missing_value", FILL).unwrap();
        v.put_attribute("cell_methods", "area: mean where sea time: mean")
            .unwrap();
        for (local, step) in steps.clone().enumerate() {
            let values: Vec<f32> = (0..LEVELS * ROWS * COLS)
                .map(|cell| value(name, step, cell))
                .collect();
            v.put_values(&values, (local..local + 1, 0..LEVELS, 0..ROWS, 0..COLS))
                .unwrap();
        }
    }
}

/// The synthetic value of `name` at `step` and flat cell index (level, row, col order). Every
/// variable changes a little from step to step, so no two chunks of a variable are alike.
pub fn value(name: &str, step: usize, cell: usize) -> f32 {
    let level = cell / (ROWS * COLS);
    let row = (cell / COLS) % ROWS;
    let col = cell % COLS;
    if (row, col) == LAND_COLUMN || (level == 3 && (row, col) != TRENCH_COLUMN) {
        return FILL;
    }
    let trend = step as f32;
    let position = (row * COLS + col) as f32;
    let per_volume = |micromol_per_kg: f32| micromol_per_kg * 1e-6 * DENSITY;
    match name {
        "thetao" if (level, row, col) == HOT_CELL => 40.0,
        // Cold deep water: 3.0 to 1.1 °C at 1000 m, 1.5 °C in the trench.
        "thetao" => {
            [24.0, 12.0, 3.0, 1.5][level] - [0.3, 0.3, 0.1, 0.0][level] * position + 0.01 * trend
        }
        "so" if (level, row, col) == SALTY_CELL => 50.0,
        "so" => 34.5 + 0.05 * position + 0.001 * trend,
        "dissic" if (level, row, col) == MISSING_DIC_CELL => FILL,
        "dissic" if (level, row, col) == NO_SOLUTION_CELL => per_volume(1e-3),
        "dissic" => per_volume([1950.0, 2100.0, 2250.0, 2260.0][level] + 2.0 * trend + position),
        "talk" if (level, row, col) == NEGATIVE_ALKALINITY_CELL => -0.5,
        "talk" if (level, row, col) == NO_SOLUTION_CELL => per_volume(49_000.0),
        "talk" => {
            per_volume([2300.0, 2330.0, 2360.0, 2365.0][level] + 0.5 * position + 0.1 * trend)
        }
        _ => panic!("no synthetic variable {name}"),
    }
}

/// Reads a whole variable of an output file.
pub fn read_f32(path: &Path, name: &str) -> Vec<f32> {
    let file = netcdf::open(path).unwrap();
    let var = file
        .variable(name)
        .unwrap_or_else(|| panic!("no variable {name}"));
    var.get_values::<f32, _>(..).unwrap()
}

pub fn read_i16(path: &Path, name: &str) -> Vec<i16> {
    let file = netcdf::open(path).unwrap();
    let var = file
        .variable(name)
        .unwrap_or_else(|| panic!("no variable {name}"));
    var.get_values::<i16, _>(..).unwrap()
}

/// 1-D latitude and longitude with CF bounds `half_width` degrees either side of each centre
/// (dimensions `lat`, `lon`, `bnds` must exist).
pub fn write_lat_lon(file: &mut netcdf::FileMut, lat: &[f64], lon: &[f64], half_width: f64) {
    for (name, axis, units, standard, centres) in [
        ("lat", "Y", "degrees_north", "latitude", lat),
        ("lon", "X", "degrees_east", "longitude", lon),
    ] {
        let n = centres.len();
        let bounds: Vec<f64> = centres
            .iter()
            .flat_map(|c| [c - half_width, c + half_width])
            .collect();
        let mut v = file.add_variable::<f64>(name, &[name]).unwrap();
        v.put_attribute("standard_name", standard).unwrap();
        v.put_attribute("units", units).unwrap();
        v.put_attribute("axis", axis).unwrap();
        v.put_attribute("bounds", format!("{name}_bnds")).unwrap();
        v.put_values(centres, 0..n).unwrap();
        let mut b = file
            .add_variable::<f64>(&format!("{name}_bnds"), &[name, "bnds"])
            .unwrap();
        b.put_values(&bounds, (0..n, 0..2)).unwrap();
    }
}

/// Depth levels `lev` (positive down) with CF bounds `lev_bnds` (dimensions `lev`, `bnds`).
pub fn write_depth_levels(file: &mut netcdf::FileMut, centres: &[f64], bounds: &[[f64; 2]]) {
    let n = centres.len();
    let mut v = file.add_variable::<f64>("lev", &["lev"]).unwrap();
    v.put_attribute("standard_name", "depth").unwrap();
    v.put_attribute("units", "m").unwrap();
    v.put_attribute("positive", "down").unwrap();
    v.put_attribute("axis", "Z").unwrap();
    v.put_attribute("bounds", "lev_bnds").unwrap();
    v.put_values(centres, 0..n).unwrap();
    let flat: Vec<f64> = bounds.iter().flatten().copied().collect();
    let mut b = file
        .add_variable::<f64>("lev_bnds", &["lev", "bnds"])
        .unwrap();
    b.put_values(&flat, (0..n, 0..2)).unwrap();
}
