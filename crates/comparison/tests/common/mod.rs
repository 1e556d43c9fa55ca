//! Small synthetic "compute outputs" written with the netcdf crate (invented values for tests,
//! in the layout `acidscape compute` writes, with or without the geometry and horizon
//! variables it gains), and helpers to run a comparison on them.
#![allow(dead_code)]

use acidscape_comparison::{run_comparison, ComparisonPlan, ComparisonRequest, ComparisonSummary};
use netcdf::FileMut;
use std::path::{Path, PathBuf};

pub const FILL: f32 = 1e20;

/// The horizontal grid of a synthetic output.
#[derive(Clone, Debug)]
pub enum Grid {
    /// 1-D longitudes and latitudes (centres) with bounds half-way between them.
    Rectilinear { lon: Vec<f64>, lat: Vec<f64> },
    /// 2-D centres (rows × cols, row-major) with 4-vertex bounds ±0.5° around each centre.
    Curvilinear {
        lon: Vec<f64>,
        lat: Vec<f64>,
        rows: usize,
        cols: usize,
    },
}

impl Grid {
    pub fn rows(&self) -> usize {
        match self {
            Grid::Rectilinear { lat, .. } => lat.len(),
            Grid::Curvilinear { rows, .. } => *rows,
        }
    }
    pub fn cols(&self) -> usize {
        match self {
            Grid::Rectilinear { lon, .. } => lon.len(),
            Grid::Curvilinear { cols, .. } => *cols,
        }
    }
    pub fn columns(&self) -> usize {
        self.rows() * self.cols()
    }
}

/// A field's values: f(step, level, row, col), NaN for missing.
pub type Values = Box<dyn Fn(usize, usize, usize, usize) -> f64>;

pub struct Field {
    pub name: String,
    pub units: String,
    pub has_levels: bool,
    pub values: Values,
}

impl Field {
    pub fn cells(
        name: &str,
        units: &str,
        values: impl Fn(usize, usize, usize, usize) -> f64 + 'static,
    ) -> Field {
        Field {
            name: name.into(),
            units: units.into(),
            has_levels: true,
            values: Box::new(values),
        }
    }
    pub fn columns(
        name: &str,
        units: &str,
        values: impl Fn(usize, usize, usize) -> f64 + 'static,
    ) -> Field {
        Field {
            name: name.into(),
            units: units.into(),
            has_levels: false,
            values: Box::new(move |s, _, j, i| values(s, j, i)),
        }
    }
}

/// A 2-D field `marker` = 10 row + col, the same at every step.
pub fn marker() -> Field {
    Field::columns("marker", "1", |_, j, i| (10 * j + i) as f64)
}

/// Time steps: `steps_per_year` equal parts of each year (1 or 12 months) in `calendar`.
#[derive(Clone, Debug)]
pub struct Time {
    pub first_year: i64,
    pub years: usize,
    pub steps_per_year: usize,
    pub calendar: &'static str,
}

fn month_days(calendar: &str, year: i64) -> [f64; 12] {
    let leap = (year % 4 == 0 && year % 100 != 0) || year % 400 == 0;
    match calendar {
        "360_day" => [30.0; 12],
        "noleap" | "365_day" => [
            31.0, 28.0, 31.0, 30.0, 31.0, 30.0, 31.0, 31.0, 30.0, 31.0, 30.0, 31.0,
        ],
        _ => [
            31.0,
            if leap { 29.0 } else { 28.0 },
            31.0,
            30.0,
            31.0,
            30.0,
            31.0,
            31.0,
            30.0,
            31.0,
            30.0,
            31.0,
        ],
    }
}

impl Time {
    pub fn annual(first_year: i64, years: usize) -> Time {
        Time {
            first_year,
            years,
            steps_per_year: 1,
            calendar: "noleap",
        }
    }
    pub fn steps(&self) -> usize {
        self.years * self.steps_per_year
    }
    pub fn year_of(&self, step: usize) -> i64 {
        self.first_year + (step / self.steps_per_year) as i64
    }
    /// Bounds in days since first_year-01-01, one pair per step.
    pub fn bounds(&self) -> Vec<[f64; 2]> {
        let mut out = Vec::new();
        let mut start = 0.0;
        for y in 0..self.years {
            let months = month_days(self.calendar, self.first_year + y as i64);
            if self.steps_per_year == 1 {
                let len: f64 = months.iter().sum();
                out.push([start, start + len]);
                start += len;
            } else {
                for m in months {
                    out.push([start, start + m]);
                    start += m;
                }
            }
        }
        out
    }
}

/// A synthetic compute output.
pub struct Synthetic {
    pub grid: Grid,
    /// Depths of the level centres (m, positive down) and their bounds; empty for none.
    pub depths: Vec<f64>,
    pub depth_bounds: Vec<[f64; 2]>,
    pub time: Time,
    pub fields: Vec<Field>,
    /// Land columns (row, col): fill in every field and the quality flag.
    pub land: Vec<(usize, usize)>,
    /// `cell_area` per column, if written.
    pub cell_area: Option<Vec<f64>>,
    /// `cell_thickness` per level (static), if written.
    pub cell_thickness: Option<Vec<f64>>,
    pub quality_flag: bool,
    /// 2-D status flag variables (time, y, x) to write, all 0 (e.g. horizon statuses).
    pub status_flags: Vec<String>,
}

impl Synthetic {
    /// A rectilinear grid of `cols × rows` 1° cells from (west, south), `levels` levels of
    /// 10, 20, 30 ... m, annual steps in noleap from `first_year`.
    pub fn new(
        west: f64,
        south: f64,
        cols: usize,
        rows: usize,
        levels: usize,
        time: Time,
    ) -> Synthetic {
        let lon = (0..cols).map(|i| west + 0.5 + i as f64).collect();
        let lat = (0..rows).map(|j| south + 0.5 + j as f64).collect();
        let mut depth_bounds = Vec::new();
        let mut top = 0.0;
        for k in 0..levels {
            let thick = 10.0 * (k + 1) as f64;
            depth_bounds.push([top, top + thick]);
            top += thick;
        }
        Synthetic {
            grid: Grid::Rectilinear { lon, lat },
            depths: depth_bounds.iter().map(|b| 0.5 * (b[0] + b[1])).collect(),
            depth_bounds,
            time,
            fields: Vec::new(),
            land: Vec::new(),
            cell_area: None,
            cell_thickness: None,
            quality_flag: true,
            status_flags: Vec::new(),
        }
    }

    pub fn with(mut self, field: Field) -> Synthetic {
        self.fields.push(field);
        self
    }

    fn is_land(&self, row: usize, col: usize) -> bool {
        self.land.contains(&(row, col))
    }

    /// Writes the file.
    pub fn write(&self, path: &Path) {
        let mut f = netcdf::create(path).unwrap();
        let (rows, cols, levels) = (self.grid.rows(), self.grid.cols(), self.depths.len());
        f.add_dimension("time", self.time.steps()).unwrap();
        f.add_dimension("bnds", 2).unwrap();
        let bounds = self.time.bounds();
        let mids: Vec<f64> = bounds.iter().map(|b| 0.5 * (b[0] + b[1])).collect();
        let units = format!("days since {:04}-01-01 00:00:00", self.time.first_year);
        coordinate(
            &mut f,
            "time",
            &["time"],
            &mids,
            &[
                ("units", &units),
                ("calendar", self.time.calendar),
                ("axis", "T"),
                ("standard_name", "time"),
                ("bounds", "time_bnds"),
            ],
        );
        let flat: Vec<f64> = bounds.iter().flatten().copied().collect();
        coordinate(&mut f, "time_bnds", &["time", "bnds"], &flat, &[]);
        let mut dims3: Vec<&str> = vec!["time"];
        if levels > 0 {
            f.add_dimension("lev", levels).unwrap();
            coordinate(
                &mut f,
                "lev",
                &["lev"],
                &self.depths,
                &[
                    ("units", "m"),
                    ("positive", "down"),
                    ("axis", "Z"),
                    ("standard_name", "depth"),
                    ("bounds", "lev_bnds"),
                ],
            );
            let flat: Vec<f64> = self.depth_bounds.iter().flatten().copied().collect();
            coordinate(&mut f, "lev_bnds", &["lev", "bnds"], &flat, &[]);
            dims3.push("lev");
        }
        let (ydim, xdim) = self.write_grid(&mut f);
        dims3.extend([ydim, xdim]);
        let dims2 = ["time", ydim, xdim];
        let coordinates = matches!(self.grid, Grid::Curvilinear { .. }).then_some("lat lon");
        for field in &self.fields {
            let dims: &[&str] = if field.has_levels { &dims3 } else { &dims2 };
            let nk = if field.has_levels { levels.max(1) } else { 1 };
            let mut values = Vec::with_capacity(self.time.steps() * nk * rows * cols);
            for s in 0..self.time.steps() {
                for k in 0..nk {
                    for j in 0..rows {
                        for i in 0..cols {
                            let v = (field.values)(s, k, j, i);
                            values.push(if self.is_land(j, i) || v.is_nan() {
                                FILL
                            } else {
                                v as f32
                            });
                        }
                    }
                }
            }
            let mut var = f.add_variable::<f32>(&field.name, dims).unwrap();
            var.set_fill_value(FILL).unwrap();
            var.put_attribute("units", field.units.as_str()).unwrap();
            var.put_attribute("long_name", format!("synthetic {}", field.name))
                .unwrap();
            var.put_attribute("cell_methods", "area: mean where sea time: mean")
                .unwrap();
            if let Some(c) = coordinates {
                var.put_attribute("coordinates", c).unwrap();
            }
            var.put_values(&values, ..).unwrap();
        }
        if self.quality_flag {
            let nk = levels.max(1);
            let mut flags = Vec::new();
            for _ in 0..self.time.steps() {
                for _ in 0..nk {
                    for j in 0..rows {
                        for i in 0..cols {
                            flags.push(if self.is_land(j, i) { -1i16 } else { 0 });
                        }
                    }
                }
            }
            let mut var = f.add_variable::<i16>("quality_flag", &dims3).unwrap();
            var.set_fill_value(-1i16).unwrap();
            var.put_attribute("flag_masks", vec![1i16, 2]).unwrap();
            var.put_attribute("flag_meanings", "a b").unwrap();
            var.put_values(&flags, ..).unwrap();
        }
        for name in &self.status_flags {
            let mut var = f.add_variable::<i8>(name, &dims2).unwrap();
            var.put_attribute("flag_values", vec![0i8, 1]).unwrap();
            var.put_attribute("flag_meanings", "one other").unwrap();
            var.put_values(&vec![0i8; self.time.steps() * rows * cols], ..)
                .unwrap();
        }
        if let Some(area) = &self.cell_area {
            coordinate(
                &mut f,
                "cell_area",
                &[ydim, xdim],
                area,
                &[("units", "m2"), ("standard_name", "cell_area")],
            );
        }
        if let Some(thickness) = &self.cell_thickness {
            let per_cell: Vec<f64> = thickness
                .iter()
                .flat_map(|&h| std::iter::repeat_n(h, rows * cols))
                .collect();
            coordinate(
                &mut f,
                "cell_thickness",
                &["lev", ydim, xdim],
                &per_cell,
                &[("units", "m"), ("standard_name", "cell_thickness")],
            );
        }
        f.add_attribute("acidscape_version", "0.1.0").unwrap();
        f.add_attribute("Conventions", "CF-1.10").unwrap();
    }

    fn write_grid(&self, f: &mut FileMut) -> (&'static str, &'static str) {
        match &self.grid {
            Grid::Rectilinear { lon, lat } => {
                f.add_dimension("lat", lat.len()).unwrap();
                f.add_dimension("lon", lon.len()).unwrap();
                coordinate(
                    f,
                    "lat",
                    &["lat"],
                    lat,
                    &[
                        ("units", "degrees_north"),
                        ("standard_name", "latitude"),
                        ("axis", "Y"),
                        ("bounds", "lat_bnds"),
                    ],
                );
                coordinate(f, "lat_bnds", &["lat", "bnds"], &halfway(lat), &[]);
                coordinate(
                    f,
                    "lon",
                    &["lon"],
                    lon,
                    &[
                        ("units", "degrees_east"),
                        ("standard_name", "longitude"),
                        ("axis", "X"),
                        ("bounds", "lon_bnds"),
                    ],
                );
                coordinate(f, "lon_bnds", &["lon", "bnds"], &halfway(lon), &[]);
                ("lat", "lon")
            }
            Grid::Curvilinear {
                lon,
                lat,
                rows,
                cols,
            } => {
                f.add_dimension("j", *rows).unwrap();
                f.add_dimension("i", *cols).unwrap();
                f.add_dimension("vertices", 4).unwrap();
                let lat_v: Vec<f64> = lat
                    .iter()
                    .flat_map(|&y| [y - 0.5, y - 0.5, y + 0.5, y + 0.5])
                    .collect();
                let lon_v: Vec<f64> = lon
                    .iter()
                    .flat_map(|&x| [x - 0.5, x + 0.5, x + 0.5, x - 0.5])
                    .collect();
                coordinate(
                    f,
                    "lat",
                    &["j", "i"],
                    lat,
                    &[
                        ("units", "degrees_north"),
                        ("standard_name", "latitude"),
                        ("bounds", "lat_vertices"),
                    ],
                );
                coordinate(f, "lat_vertices", &["j", "i", "vertices"], &lat_v, &[]);
                coordinate(
                    f,
                    "lon",
                    &["j", "i"],
                    lon,
                    &[
                        ("units", "degrees_east"),
                        ("standard_name", "longitude"),
                        ("bounds", "lon_vertices"),
                    ],
                );
                coordinate(f, "lon_vertices", &["j", "i", "vertices"], &lon_v, &[]);
                ("j", "i")
            }
        }
    }
}

/// Bounds half-way between centres (1-D, as (n, 2)).
fn halfway(c: &[f64]) -> Vec<f64> {
    let n = c.len();
    let step = if n > 1 { c[1] - c[0] } else { 1.0 };
    c.iter()
        .flat_map(|&x| [x - 0.5 * step, x + 0.5 * step])
        .collect()
}

fn coordinate(f: &mut FileMut, name: &str, dims: &[&str], values: &[f64], attrs: &[(&str, &str)]) {
    let mut v = f.add_variable::<f64>(name, dims).unwrap();
    for (k, a) in attrs {
        v.put_attribute(k, *a).unwrap();
    }
    v.put_values(values, ..).unwrap();
}

/// A scratch folder and the path of a run in it.
pub fn scratch() -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("run.nc");
    (dir, run)
}

/// Writes a region file into `dir` and gives its path for `--regions`.
pub fn region_file(dir: &Path, text: &str) -> String {
    let path = dir.join("regions.toml");
    std::fs::write(&path, text).unwrap();
    path.display().to_string()
}

/// A request with windows and runs; the output in `dir`.
pub fn request(dir: &Path, runs: &[(&str, &Path)], windows: &[&str]) -> ComparisonRequest {
    ComparisonRequest {
        runs: runs
            .iter()
            .map(|(l, p)| format!("{l}={}", p.display()))
            .collect(),
        windows: windows.iter().map(|w| w.to_string()).collect(),
        output: dir.join("compare.nc"),
        memory_budget_bytes: 1 << 30,
        chunk_bytes: acidscape_comparison::CHUNK_BYTES,
        history: "test".into(),
        ..Default::default()
    }
}

pub fn compare(request: &ComparisonRequest) -> ComparisonSummary {
    let plan = ComparisonPlan::new(request).unwrap();
    run_comparison(&plan, &mut |_| {}).unwrap()
}

/// A variable of the output as f64 (fill as NaN).
pub fn read(path: &PathBuf, name: &str) -> Vec<f64> {
    let f = netcdf::open(path).unwrap();
    let v = f
        .variable(name)
        .unwrap_or_else(|| panic!("no variable {name}"));
    v.get_values::<f64, _>(..)
        .unwrap()
        .into_iter()
        .map(|x| {
            if x == f64::from(FILL) || x == -2_147_483_647.0 {
                f64::NAN
            } else {
                x
            }
        })
        .collect()
}

pub fn text_attribute(path: &PathBuf, variable: Option<&str>, name: &str) -> String {
    let f = netcdf::open(path).unwrap();
    let value = match variable {
        Some(v) => f
            .variable(v)
            .unwrap()
            .attribute_value(name)
            .unwrap()
            .unwrap(),
        None => f.attribute(name).unwrap().value().unwrap(),
    };
    match value {
        netcdf::AttributeValue::Str(s) => s,
        other => panic!("{other:?}"),
    }
}

/// The value of the single table row `run/region/layer/when/quantity/statistic[/threshold]`,
/// `when` a year (a time-step row) or a window name; an empty layer for 2-D fields.
pub fn pick(summary: &ComparisonSummary, key: &str) -> Option<f64> {
    let parts: Vec<&str> = key.split('/').collect();
    let threshold = parts.get(6).map(|t| t.parse::<f64>().unwrap());
    let year = parts[3].parse::<i64>().ok();
    let matches: Vec<_> = summary
        .rows
        .iter()
        .filter(|r| {
            [r.run.as_str(), &r.region, &r.layer] == parts[..3]
                && r.quantity == parts[4]
                && r.statistic == parts[5]
                && r.threshold == threshold
                && match year {
                    Some(y) => r.period == "time_step" && r.year == Some(y),
                    None => r.period == "window" && r.window == parts[3],
                }
        })
        .collect();
    assert_eq!(matches.len(), 1, "rows for {key}");
    matches[0].value
}
