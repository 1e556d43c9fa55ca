//! Runs whose Ω aragonite follows a profile chosen by the test (SYNTHETIC data): the run is
//! written once with a placeholder DIC, opened to learn the in-situ temperature, salinity and
//! pressure of every cell as the job will see them, and written again with the DIC that gives
//! the wanted Ω at each cell (bisection on `acidscape_chem::solve`). Alkalinity 2350 µmol kg-1,
//! no nutrients, in-situ temperature 12 °C falling 1 °C per 250 m to 2 °C, salinity 35.

use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair};
use acidscape_gridio::{DensityChoice, Run, RunSpec, VariableMapping};
use std::path::{Path, PathBuf};

pub const ALKALINITY: f64 = 2350.0;
const FILL: f64 = 1.0e20;

/// What a cell holds.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Target {
    /// Ω aragonite wanted.
    Omega(f64),
    /// Water whose DIC is missing (a wet cell without indicators).
    MissingDic,
    /// No water (every input missing).
    Land,
}

/// A cell of the run, as the target function sees it.
#[derive(Clone, Copy, Debug)]
pub struct Cell {
    pub step: usize,
    pub level: usize,
    pub row: usize,
    pub col: usize,
    /// Depth of the centre below the sea surface [m], as the test computes it.
    pub depth_m: f64,
}

/// The vertical coordinate of an analytic run.
#[derive(Clone, Debug)]
pub enum Levels {
    /// Depth levels (positive down) with bounds, and the sea floor `deptho` per column
    /// (rows × cols; NaN: land).
    Depths {
        centres: Vec<f64>,
        bounds: Vec<[f64; 2]>,
        deptho: Vec<f64>,
    },
    /// CF `ocean_s_coordinate_g2` stored bottom first, with w-level terms: s at the centres
    /// and at the interfaces, C = -s² at both, depth_c, the bathymetry `h` per column and the
    /// free surface `zeta` per step and column.
    STerrain {
        s: Vec<f64>,
        s_w: Vec<f64>,
        depth_c: f64,
        h: Vec<f64>,
        zeta: Vec<Vec<f64>>,
    },
}

/// Stretching function of the terrain-following runs: C(s) = -s² (C(-1) = -1, C(0) = 0).
pub fn stretching(s: f64) -> f64 {
    -s * s
}

/// Depth below the free surface of a terrain-following level (CF Conventions Appendix D,
/// ocean_s_coordinate_g2: S = (depth_c s + h C) / (depth_c + h), z = eta + (eta + h) S, so
/// the depth below the free surface is eta - z = -(eta + h) S).
pub fn s_depth_below_surface(s: f64, depth_c: f64, h: f64, eta: f64) -> f64 {
    let stretched = (depth_c * s + h * stretching(s)) / (depth_c + h);
    -(eta + h) * stretched
}

/// An analytic run: grid, levels, time steps.
#[derive(Clone, Debug)]
pub struct AnalyticRun {
    pub rows: usize,
    pub cols: usize,
    pub steps: usize,
    pub levels: Levels,
}

impl AnalyticRun {
    pub fn level_count(&self) -> usize {
        match &self.levels {
            Levels::Depths { centres, .. } => centres.len(),
            Levels::STerrain { s, .. } => s.len(),
        }
    }

    /// Latitude of row `j` and longitude of column `i` (cell centres, 2° apart; synthetic).
    pub fn lat(&self, j: usize) -> f64 {
        30.0 + 2.0 * j as f64
    }
    pub fn lon(&self, i: usize) -> f64 {
        200.0 + 2.0 * i as f64
    }

    /// Depth below the sea surface of a cell's centre, by hand.
    pub fn depth(&self, step: usize, level: usize, column: usize) -> f64 {
        match &self.levels {
            Levels::Depths { centres, .. } => centres[level],
            Levels::STerrain {
                s,
                depth_c,
                h,
                zeta,
                ..
            } => s_depth_below_surface(s[level], *depth_c, h[column], zeta[step][column]),
        }
    }

    /// Writes the run into `dir` with Ω aragonite as `target` says; returns the files.
    pub fn write(&self, dir: &Path, target: impl Fn(Cell) -> Target) -> Vec<PathBuf> {
        let path = dir.join("analytic_run.nc");
        let levels = self.level_count();
        let cells = levels * self.rows * self.cols;
        let targets: Vec<Target> = (0..self.steps * cells)
            .map(|at| {
                let (step, cell) = (at / cells, at % cells);
                let (level, column) = (
                    cell / (self.rows * self.cols),
                    cell % (self.rows * self.cols),
                );
                target(Cell {
                    step,
                    level,
                    row: column / self.cols,
                    col: column % self.cols,
                    depth_m: self.depth(step, level, column),
                })
            })
            .collect();
        let placeholder: Vec<f64> = targets
            .iter()
            .map(|t| if *t == Target::Land { FILL } else { 2000.0 })
            .collect();
        self.write_file(&path, &targets, &placeholder);
        let run = Run::open(&RunSpec {
            inputs: vec![path.display().to_string()],
            mapping: VariableMapping::default(),
            density: DensityChoice::InSitu,
            ..Default::default()
        })
        .unwrap();
        let mut dic = placeholder;
        for step in 0..self.steps {
            let slab = run.read_slab(step, 0..self.rows).unwrap();
            for cell in 0..cells {
                let at = step * cells + cell;
                dic[at] = match targets[at] {
                    Target::Omega(omega) => {
                        dic_for_omega(omega, &acidscape_pipeline::cell_sample(&slab, cell).1)
                    }
                    Target::MissingDic | Target::Land => FILL,
                };
            }
        }
        drop(run);
        std::fs::remove_file(&path).unwrap();
        self.write_file(&path, &targets, &dic);
        vec![path]
    }

    fn write_file(&self, path: &Path, targets: &[Target], dic: &[f64]) {
        let mut file = netcdf::create(path).unwrap();
        file.add_attribute("Conventions", "CF-1.10").unwrap();
        file.add_attribute("comment", "SYNTHETIC test data (invented values)")
            .unwrap();
        let levels = self.level_count();
        file.add_unlimited_dimension("time").unwrap();
        file.add_dimension("lev", levels).unwrap();
        file.add_dimension("lat", self.rows).unwrap();
        file.add_dimension("lon", self.cols).unwrap();
        file.add_dimension("bnds", 2).unwrap();
        self.write_time(&mut file);
        self.write_horizontal(&mut file);
        self.write_levels(&mut file);
        let wet = |t: &Target| *t != Target::Land;
        let land_or = |value: &dyn Fn(usize) -> f64| -> Vec<f64> {
            targets
                .iter()
                .enumerate()
                .map(|(at, t)| if wet(t) { value(at) } else { FILL })
                .collect()
        };
        let cells = levels * self.rows * self.cols;
        let columns = self.rows * self.cols;
        let depth_of = |at: usize| {
            let cell = at % cells;
            self.depth(at / cells, cell / columns, cell % columns)
        };
        let fields = [
            (
                "temperature",
                "sea_water_temperature",
                "degC",
                land_or(&|at| (12.0 - depth_of(at) / 250.0).max(2.0)),
            ),
            (
                "salinity",
                "sea_water_practical_salinity",
                "1",
                land_or(&|_| 35.0),
            ),
            (
                "alkalinity",
                "sea_water_alkalinity_per_unit_mass_expressed_as_mole_equivalent",
                "umol kg-1",
                land_or(&|_| ALKALINITY),
            ),
            (
                "dic",
                "moles_of_dissolved_inorganic_carbon_per_unit_mass_in_sea_water",
                "umol kg-1",
                dic.to_vec(),
            ),
        ];
        for (name, standard, units, values) in fields {
            let mut v = file
                .add_variable::<f64>(name, &["time", "lev", "lat", "lon"])
                .unwrap();
            v.set_fill_value(FILL).unwrap();
            v.put_attribute("standard_name", standard).unwrap();
            v.put_attribute("units", units).unwrap();
            v.put_values(
                &values,
                (0..self.steps, 0..levels, 0..self.rows, 0..self.cols),
            )
            .unwrap();
        }
    }

    fn write_time(&self, file: &mut netcdf::FileMut) {
        let times: Vec<f64> = (0..self.steps).map(|s| 15.0 + 30.0 * s as f64).collect();
        let bounds: Vec<f64> = (0..self.steps)
            .flat_map(|s| [30.0 * s as f64, 30.0 * (s + 1) as f64])
            .collect();
        let mut t = file.add_variable::<f64>("time", &["time"]).unwrap();
        t.put_attribute("standard_name", "time").unwrap();
        t.put_attribute("units", "days since 2030-01-01").unwrap();
        t.put_attribute("calendar", "360_day").unwrap();
        t.put_attribute("bounds", "time_bnds").unwrap();
        t.put_values(&times, 0..self.steps).unwrap();
        let mut b = file
            .add_variable::<f64>("time_bnds", &["time", "bnds"])
            .unwrap();
        b.put_values(&bounds, (0..self.steps, 0..2)).unwrap();
    }

    fn write_horizontal(&self, file: &mut netcdf::FileMut) {
        let lat: Vec<f64> = (0..self.rows).map(|j| self.lat(j)).collect();
        let lon: Vec<f64> = (0..self.cols).map(|i| self.lon(i)).collect();
        super::write_lat_lon(file, &lat, &lon, 1.0);
    }

    fn write_levels(&self, file: &mut netcdf::FileMut) {
        let (rows, cols) = (self.rows, self.cols);
        let column_field = |file: &mut netcdf::FileMut, name: &str, values: &[f64]| {
            let mut v = file.add_variable::<f64>(name, &["lat", "lon"]).unwrap();
            v.set_fill_value(FILL).unwrap();
            v.put_attribute("standard_name", "sea_floor_depth_below_geoid")
                .unwrap();
            v.put_attribute("units", "m").unwrap();
            let values: Vec<f64> = values
                .iter()
                .map(|d| if d.is_finite() { *d } else { FILL })
                .collect();
            v.put_values(&values, (0..rows, 0..cols)).unwrap();
        };
        match &self.levels {
            Levels::Depths {
                centres,
                bounds,
                deptho,
            } => {
                super::write_depth_levels(file, centres, bounds);
                column_field(file, "deptho", deptho);
            }
            Levels::STerrain {
                s,
                s_w,
                depth_c,
                h,
                zeta,
            } => {
                file.add_dimension("lev_w", s_w.len()).unwrap();
                for (name, dim, values, terms) in [
                    (
                        "lev",
                        "lev",
                        s,
                        "s: lev C: Cs eta: zeta depth: h depth_c: hc",
                    ),
                    (
                        "s_w",
                        "lev_w",
                        s_w,
                        "s: s_w C: Cs_w eta: zeta depth: h depth_c: hc",
                    ),
                ] {
                    let mut v = file.add_variable::<f64>(name, &[dim]).unwrap();
                    v.put_attribute("standard_name", "ocean_s_coordinate_g2")
                        .unwrap();
                    v.put_attribute("units", "1").unwrap();
                    v.put_attribute("positive", "up").unwrap();
                    v.put_attribute("formula_terms", terms).unwrap();
                    v.put_values(values, 0..values.len()).unwrap();
                }
                for (name, dim, values) in [("Cs", "lev", s), ("Cs_w", "lev_w", s_w)] {
                    let c: Vec<f64> = values.iter().map(|v| stretching(*v)).collect();
                    let mut v = file.add_variable::<f64>(name, &[dim]).unwrap();
                    v.put_values(&c, 0..c.len()).unwrap();
                }
                let mut hc = file.add_variable::<f64>("hc", &[]).unwrap();
                hc.put_attribute("units", "m").unwrap();
                hc.put_value(*depth_c, ()).unwrap();
                column_field(file, "h", h);
                let flat: Vec<f64> = zeta.iter().flatten().copied().collect();
                let mut z = file
                    .add_variable::<f64>("zeta", &["time", "lat", "lon"])
                    .unwrap();
                z.put_attribute("standard_name", "sea_surface_height_above_geoid")
                    .unwrap();
                z.put_attribute("units", "m").unwrap();
                z.put_values(&flat, (0..self.steps, 0..rows, 0..cols))
                    .unwrap();
            }
        }
    }
}

/// The DIC [µmol kg-1] that gives Ω aragonite = `omega` with alkalinity [`ALKALINITY`] under
/// `conditions`: bisection where Ω falls as DIC rises (above half the alkalinity).
pub fn dic_for_omega(omega: f64, conditions: &Conditions) -> f64 {
    let omega_at = |dic: f64| {
        solve(
            InputPair::AlkalinityDic {
                alkalinity: ALKALINITY,
                dic,
            },
            conditions,
            &ConstantChoice::default(),
        )
        .unwrap()
        .omega_aragonite
    };
    let (mut low, mut high) = (1400.0, 3400.0);
    assert!(
        omega_at(low) > omega && omega_at(high) < omega,
        "omega {omega} out of reach under {conditions:?}"
    );
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if omega_at(mid) > omega {
            low = mid;
        } else {
            high = mid;
        }
    }
    0.5 * (low + high)
}
