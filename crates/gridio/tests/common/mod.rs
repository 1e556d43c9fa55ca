//! Builders for small NetCDF runs written inside the tests. All data here are
//! synthetic (invented numbers shaped like ocean values), not model output.
#![allow(dead_code)]

use netcdf::AttributeValue;
use std::path::{Path, PathBuf};

/// A variable to write: name, dimension names, attributes, values in file order.
#[derive(Clone)]
pub struct Var {
    pub name: String,
    pub dims: Vec<String>,
    pub attrs: Vec<(String, AttributeValue)>,
    pub values: Vec<f64>,
    pub float32: bool,
    /// Stored as 16-bit integers (packed data: values are the packed integers).
    pub int16: bool,
    /// Chunk lengths in dimension order, stored deflated (NetCDF-4 only); `None`: the
    /// library's choice.
    pub chunks: Option<Vec<usize>>,
}

impl Var {
    pub fn new(name: &str, dims: &[&str], values: Vec<f64>) -> Var {
        Var {
            name: name.to_string(),
            dims: dims.iter().map(|d| d.to_string()).collect(),
            attrs: Vec::new(),
            values,
            float32: false,
            int16: false,
            chunks: None,
        }
    }
    /// Stored in chunks of these lengths, deflated with shuffle.
    pub fn chunked(mut self, chunks: &[usize]) -> Var {
        self.chunks = Some(chunks.to_vec());
        self
    }
    pub fn attr(mut self, key: &str, value: impl Into<AttributeValue>) -> Var {
        self.attrs.push((key.to_string(), value.into()));
        self
    }
    pub fn f32(mut self) -> Var {
        self.float32 = true;
        self
    }
    pub fn i16(mut self) -> Var {
        self.int16 = true;
        self.float32 = false;
        self
    }
    /// Removes an attribute (e.g. to write it again with another value).
    pub fn without(mut self, key: &str) -> Var {
        self.attrs.retain(|(k, _)| k != key);
        self
    }
    /// Replaces an attribute.
    pub fn with(self, key: &str, value: impl Into<AttributeValue>) -> Var {
        self.without(key).attr(key, value)
    }
}

/// Storage format of a written test file.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Format {
    /// NetCDF-4 (HDF5).
    Netcdf4,
    /// NetCDF classic (CDF-1), `time` as the record (unlimited) dimension.
    Classic,
    /// NetCDF 64-bit offset (CDF-2), `time` as the record dimension.
    Offset64,
    /// NetCDF 64-bit data (CDF-5), `time` as the record dimension.
    Data64,
}

pub const ALL_FORMATS: [Format; 4] = [
    Format::Classic,
    Format::Offset64,
    Format::Data64,
    Format::Netcdf4,
];

/// Writes a NetCDF-4 file with the given dimensions and variables.
pub fn write_nc(path: &Path, dims: &[(&str, usize)], vars: &[Var]) {
    write_nc_as(path, Format::Netcdf4, dims, vars)
}

/// Writes a file in `format`; in the classic formats a dimension named `time` or
/// `time_counter` or `ocean_time` is the record dimension.
pub fn write_nc_as(path: &Path, format: Format, dims: &[(&str, usize)], vars: &[Var]) {
    let options = match format {
        Format::Netcdf4 => netcdf::Options::NETCDF4,
        Format::Classic => netcdf::Options::empty(),
        Format::Offset64 => netcdf::Options::_64BIT_OFFSET,
        Format::Data64 => netcdf::Options::_64BIT_DATA,
    };
    let mut f = netcdf::create_with(path, options).unwrap();
    for (name, len) in dims {
        let record =
            format != Format::Netcdf4 && ["time", "time_counter", "ocean_time"].contains(name);
        if record {
            f.add_unlimited_dimension(name).unwrap();
        } else {
            f.add_dimension(name, *len).unwrap();
        }
    }
    // Define everything first, then write (classic files leave define mode once).
    for v in vars {
        let dims: Vec<&str> = v.dims.iter().map(String::as_str).collect();
        if v.int16 {
            f.add_variable::<i16>(&v.name, &dims).unwrap();
        } else if v.float32 {
            f.add_variable::<f32>(&v.name, &dims).unwrap();
        } else {
            f.add_variable::<f64>(&v.name, &dims).unwrap();
        }
        let mut var = f.variable_mut(&v.name).unwrap();
        if let Some(chunks) = &v.chunks {
            var.set_chunking(chunks).unwrap();
            var.set_compression(1, true).unwrap();
        }
        for (k, value) in &v.attrs {
            var.put_attribute(k, value.clone()).unwrap();
        }
    }
    if format != Format::Netcdf4 {
        f.enddef().unwrap();
    }
    let len_of = |d: &str| dims.iter().find(|(n, _)| *n == d).unwrap().1;
    for v in vars.iter().filter(|v| !v.values.is_empty()) {
        let mut var = f.variable_mut(&v.name).unwrap();
        let extents: Vec<netcdf::Extent> = v.dims.iter().map(|d| (0..len_of(d)).into()).collect();
        if v.dims.is_empty() {
            if v.float32 {
                var.put_value(v.values[0] as f32, ()).unwrap();
            } else {
                var.put_value(v.values[0], ()).unwrap();
            }
        } else if v.int16 {
            let values: Vec<i16> = v.values.iter().map(|x| x.round() as i16).collect();
            var.put_values(&values, extents).unwrap();
        } else if v.float32 {
            let values: Vec<f32> = v.values.iter().map(|x| *x as f32).collect();
            var.put_values(&values, extents).unwrap();
        } else {
            var.put_values(&v.values, extents).unwrap();
        }
    }
    f.close().unwrap();
}

/// Grid of the synthetic runs.
#[derive(Clone, Copy)]
pub struct Grid {
    pub levels: usize,
    pub rows: usize,
    pub cols: usize,
}

pub const GRID: Grid = Grid {
    levels: 3,
    rows: 4,
    cols: 5,
};

pub fn lat(j: usize) -> f64 {
    -30.0 + 10.0 * j as f64
}
pub fn lon(i: usize) -> f64 {
    100.0 + 2.0 * i as f64
}
pub fn level_depth(k: usize) -> f64 {
    [5.0, 100.0, 1000.0][k]
}

/// Synthetic values of each input at (time, level, row, col).
pub fn value(name: &str, t: usize, k: usize, j: usize, i: usize) -> f64 {
    let (t, k, j, i) = (t as f64, k as f64, j as f64, i as f64);
    match name {
        "temperature" => 20.0 - 7.0 * k + 0.1 * j + 0.01 * i + 0.5 * t,
        "salinity" => 34.0 + 0.3 * k + 0.01 * i,
        "dic" => 2.05 + 0.05 * k + 0.001 * t + 0.0001 * j,
        "alkalinity" => 2.30 + 0.02 * k + 0.0002 * i,
        "phosphate" => 0.0005 + 0.0005 * k,
        "silicate" => 0.005 + 0.02 * k,
        other => panic!("no synthetic field {other}"),
    }
}

/// Axis letters used to order a data variable's dimensions: t, z, y, x.
pub fn field_values(name: &str, order: &str, steps: std::ops::Range<usize>, g: Grid) -> Vec<f64> {
    let len = |c: char| match c {
        't' => steps.len(),
        'z' => g.levels,
        'y' => g.rows,
        'x' => g.cols,
        _ => unreachable!(),
    };
    let axes: Vec<char> = order.chars().collect();
    let sizes: Vec<usize> = axes.iter().map(|c| len(*c)).collect();
    let total: usize = sizes.iter().product();
    let mut out = Vec::with_capacity(total);
    for flat in 0..total {
        let mut rest = flat;
        let mut idx = [0usize; 4];
        for d in (0..axes.len()).rev() {
            let pos = rest % sizes[d];
            rest /= sizes[d];
            let slot = "tzyx".find(axes[d]).unwrap();
            idx[slot] = pos;
        }
        out.push(value(name, steps.start + idx[0], idx[1], idx[2], idx[3]));
    }
    out
}

/// Dimension names for an axis-letter order.
pub fn dims_of(order: &str) -> Vec<&'static str> {
    order
        .chars()
        .map(|c| match c {
            't' => "time",
            'z' => "lev",
            'y' => "lat",
            'x' => "lon",
            _ => unreachable!(),
        })
        .collect()
}

/// Coordinate variables of a rectilinear z-level grid with a time axis.
pub fn coordinates(g: Grid, times: &[f64], time_units: &str, calendar: &str) -> Vec<Var> {
    vec![
        Var::new("time", &["time"], times.to_vec())
            .attr("units", time_units)
            .attr("calendar", calendar)
            .attr("standard_name", "time")
            .attr("axis", "T"),
        Var::new("lev", &["lev"], (0..g.levels).map(level_depth).collect())
            .attr("units", "m")
            .attr("positive", "down")
            .attr("axis", "Z")
            .attr("standard_name", "depth"),
        Var::new("lat", &["lat"], (0..g.rows).map(lat).collect())
            .attr("units", "degrees_north")
            .attr("standard_name", "latitude"),
        Var::new("lon", &["lon"], (0..g.cols).map(lon).collect())
            .attr("units", "degrees_east")
            .attr("standard_name", "longitude"),
    ]
}

/// A data variable of the synthetic run in the given dimension order.
pub fn data_var(
    var_name: &str,
    field: &str,
    standard_name: &str,
    units: &str,
    order: &str,
    steps: std::ops::Range<usize>,
    g: Grid,
) -> Var {
    let mut v = Var::new(
        var_name,
        &dims_of(order),
        field_values(field, order, steps, g),
    )
    .attr("units", units)
    .attr("_FillValue", 1e20_f32)
    .f32();
    if !standard_name.is_empty() {
        v = v.attr("standard_name", standard_name);
    }
    v
}

pub fn dims(g: Grid, steps: usize) -> Vec<(&'static str, usize)> {
    vec![
        ("time", steps),
        ("lev", g.levels),
        ("lat", g.rows),
        ("lon", g.cols),
    ]
}

/// Synthetic field, CF standard name and units of each CMIP/OMIP-named test variable.
pub fn cmip_meta(var: &str) -> (&'static str, &'static str, &'static str) {
    match var {
        "dissic" => (
            "dic",
            "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
            "mol m-3",
        ),
        "talk" => (
            "alkalinity",
            "sea_water_alkalinity_expressed_as_mole_equivalent",
            "mol m-3",
        ),
        "thetao" => ("temperature", "sea_water_potential_temperature", "degC"),
        "so" => ("salinity", "sea_water_salinity", "0.001"),
        "po4" => (
            "phosphate",
            "mole_concentration_of_phosphate_in_sea_water",
            "mol m-3",
        ),
        "si" => (
            "silicate",
            "mole_concentration_of_silicate_in_sea_water",
            "mol m-3",
        ),
        other => panic!("unknown CMIP var {other}"),
    }
}

/// The CMIP/OMIP variables every run needs.
pub const REQUIRED: [&str; 4] = ["dissic", "talk", "thetao", "so"];

/// A CMIP-named data variable of the synthetic run.
pub fn cmip_var(var: &str, order: &str, steps: std::ops::Range<usize>, g: Grid) -> Var {
    let (field, standard, units) = cmip_meta(var);
    data_var(var, field, standard, units, order, steps, g)
}

/// The four required data variables in one dimension order.
pub fn required_vars(order: &str, steps: std::ops::Range<usize>, g: Grid) -> Vec<Var> {
    REQUIRED
        .iter()
        .map(|v| cmip_var(v, order, steps.clone(), g))
        .collect()
}

/// One file per variable, CMIP style (`<var>_<tag>.nc`), for steps `steps`.
pub fn cmip_file(
    dir: &Path,
    var: &str,
    tag: &str,
    steps: std::ops::Range<usize>,
    times: &[f64],
    calendar: &str,
) -> PathBuf {
    cmip_file_with(
        dir,
        var,
        tag,
        steps,
        times,
        "days since 2015-01-01",
        calendar,
    )
}

/// Like [`cmip_file`] with explicit time units.
pub fn cmip_file_with(
    dir: &Path,
    var: &str,
    tag: &str,
    steps: std::ops::Range<usize>,
    times: &[f64],
    time_units: &str,
    calendar: &str,
) -> PathBuf {
    let path = dir.join(format!("{var}_{tag}.nc"));
    let mut vars = coordinates(GRID, times, time_units, calendar);
    vars.push(cmip_var(var, "tzyx", steps.clone(), GRID));
    write_nc(&path, &dims(GRID, steps.len()), &vars);
    path
}

/// Writes dissic, thetao and so (one step each) and returns the month times, so a
/// test can add its own, possibly broken, alkalinity file.
pub fn three_of_four(dir: &Path) -> Vec<f64> {
    let times = noleap_months(1);
    for var in ["dissic", "thetao", "so"] {
        cmip_file(dir, var, "a", 0..1, &times, "noleap");
    }
    times
}

/// Monthly mid-points of the noleap calendar, days since 2015-01-01, for `n` months.
pub fn noleap_months(n: usize) -> Vec<f64> {
    const LENGTHS: [f64; 12] = [31., 28., 31., 30., 31., 30., 31., 31., 30., 31., 30., 31.];
    let mut start = 0.0;
    (0..n)
        .map(|m| {
            let len = LENGTHS[m % 12];
            let mid = start + len / 2.0;
            start += len;
            mid
        })
        .collect()
}

/// Bounds (start, end of each month) of [`noleap_months`], days since 2015-01-01.
pub fn noleap_month_bounds(n: usize) -> Vec<f64> {
    const LENGTHS: [f64; 12] = [31., 28., 31., 30., 31., 30., 31., 31., 30., 31., 30., 31.];
    let mut start = 0.0;
    let mut out = Vec::with_capacity(2 * n);
    for m in 0..n {
        out.extend([start, start + LENGTHS[m % 12]]);
        start += LENGTHS[m % 12];
    }
    out
}

pub fn spec(inputs: Vec<String>) -> acidscape_gridio::RunSpec {
    acidscape_gridio::RunSpec {
        inputs,
        mapping: Default::default(),
        density: acidscape_gridio::DensityChoice::Reference(1025.0),
        ..Default::default()
    }
}

/// Writes the four required CMIP variables over `n` steps into two files each.
pub fn cmip_run(dir: &Path, n: usize, calendar: &str) -> Vec<PathBuf> {
    let times = noleap_months(n);
    let half = n / 2;
    let mut out = Vec::new();
    for var in REQUIRED {
        out.push(cmip_file(dir, var, "a", 0..half, &times[..half], calendar));
        out.push(cmip_file(dir, var, "b", half..n, &times[half..], calendar));
    }
    out
}

/// A run of `steps` monthly steps, two files per variable (`<var>_a.nc`, `<var>_b.nc`, the
/// second from step 2); `alter` may rewrite each second file's variable.
pub fn split_run(dir: &Path, variables: &[&str], steps: usize, alter: &dyn Fn(&str, Var) -> Var) {
    let times = noleap_months(steps);
    for var in variables {
        for (tag, range) in [("a", 0..2), ("b", 2..steps)] {
            let mut vars = coordinates(
                GRID,
                &times[range.clone()],
                "days since 2015-01-01",
                "noleap",
            );
            let mut data = cmip_var(var, "tzyx", range.clone(), GRID);
            if tag == "b" {
                data = alter(var, data);
            }
            vars.push(data);
            write_nc(
                &dir.join(format!("{var}_{tag}.nc")),
                &dims(GRID, range.len()),
                &vars,
            );
        }
    }
}

/// An `alter` for [`split_run`] that rewrites only variable `name`.
pub fn only<'a>(name: &'a str, rewrite: &'a dyn Fn(Var) -> Var) -> impl Fn(&str, Var) -> Var + 'a {
    move |var, v| if var == name { rewrite(v) } else { v }
}

/// A variable with every value mapped by `f`.
pub fn map_values(v: Var, f: impl Fn(f64) -> f64) -> Var {
    let mut v = v;
    v.values.iter_mut().for_each(|x| *x = f(*x));
    v
}

/// Opens every `.nc` file of `dir` with the given accepted checks; the error as text.
pub fn open_dir(
    dir: &Path,
    checks: acidscape_gridio::InputChecks,
) -> Result<acidscape_gridio::Run, String> {
    let spec = acidscape_gridio::RunSpec {
        checks,
        ..spec(vec![format!("{}/*.nc", dir.display())])
    };
    acidscape_gridio::Run::open(&spec).map_err(|e| e.to_string())
}

/// A one-step run in one file `run.nc`: `coords` plus the four required variables.
pub fn single_file_run(
    dir: &Path,
    coords: Vec<Var>,
    extra_dims: &[(&'static str, usize)],
) -> acidscape_gridio::Run {
    let mut vars = coords;
    vars.extend(required_vars("tzyx", 0..1, GRID));
    let mut all_dims = dims(GRID, 1);
    all_dims.extend_from_slice(extra_dims);
    let path = dir.join("run.nc");
    write_nc(&path, &all_dims, &vars);
    acidscape_gridio::Run::open(&spec(vec![path.display().to_string()])).unwrap()
}

/// Coordinates of a one-step parametric run: levels -0.9, -0.5, -0.1 (sigma: -0.75, -0.25,
/// -0.05), C = Cs, depth_c = hc = 10 m, bathymetry h = 100 m + 50 m per row, free surface
/// zeta = 0.5 m + 0.25 m per column (synthetic).
pub fn parametric_coords(standard_name: &str, formula_terms: &str) -> Vec<Var> {
    let g = GRID;
    let mut coords = coordinates(g, &[15.5], "days since 2015-01-01", "noleap");
    let levels = match standard_name {
        "ocean_sigma_coordinate" => vec![-0.75, -0.25, -0.05],
        _ => vec![-0.9, -0.5, -0.1],
    };
    coords[1] = Var::new("lev", &["lev"], levels)
        .attr("standard_name", standard_name)
        .attr("positive", "up")
        .attr("formula_terms", formula_terms)
        .attr("units", "1");
    coords.push(Var::new("Cs", &["lev"], vec![-0.8, -0.3, -0.05]));
    coords.push(Var::new("hc", &[], vec![10.0]).attr("units", "m"));
    // Bathymetry 100 m + 50 m per row; free surface 0.5 m + 0.25 m per column (synthetic).
    let h: Vec<f64> = (0..g.rows)
        .flat_map(|j| (0..g.cols).map(move |_| 100.0 + 50.0 * j as f64))
        .collect();
    coords.push(
        Var::new("h", &["lat", "lon"], h)
            .attr("units", "m")
            .attr("standard_name", "sea_floor_depth_below_geoid"),
    );
    let zeta: Vec<f64> = (0..g.rows)
        .flat_map(|_| (0..g.cols).map(|i| 0.5 + 0.25 * i as f64))
        .collect();
    coords.push(
        Var::new("zeta", &["time", "lat", "lon"], zeta)
            .attr("units", "m")
            .attr("standard_name", "sea_surface_height_above_geoid"),
    );
    coords
}
