//! The CF NetCDF output: the runs' coordinates, a climatological time axis with one step per
//! window (CF Conventions 1.10 section 7.4), and per run the window statistics, changes from
//! the reference window, differences from the baseline run and the time of emergence (names in
//! [`crate::names`]). Written as `.NAME.partial` beside its final name and renamed when
//! complete; a failed comparison removes it.

mod describe;

pub use describe::windows_words;

use crate::consistency::FieldPlan;
use crate::error::{ComparisonError, Result};
use crate::names;
use crate::options::Statistic;
use crate::plan::ComparisonPlan;
use crate::share::Team;
use acidscape_analysis::emergence::Emergence;
use acidscape_gridio::calendar::{DateTime, TimeAxis};
use netcdf::{Extent, FileMut};
use std::collections::BTreeSet;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Fill value of the float variables (as `compute` writes).
pub const FILL: f32 = 1e20;
/// Fill value of the emergence years.
pub const YEAR_FILL: i32 = -2_147_483_647;
const TIME: &str = "time";
const BOUNDS_DIM: &str = "bnds";
const CLIMATOLOGY: &str = "climatology_bounds";
/// Target size of one chunk of one variable \[bytes\] (see [`crate::ComparisonRequest`]).
pub const CHUNK_BYTES: usize = 4 << 20;

/// Dimensions of the output's grid.
#[derive(Clone, Debug)]
struct Layout {
    z_dim: Option<String>,
    y_dim: String,
    x_dim: String,
    levels: usize,
    rows: usize,
    cols: usize,
    chunk_bytes: usize,
    coordinates: Option<String>,
    grid_mapping: Option<String>,
    free_surface: Option<String>,
}

/// The output being written.
pub struct Output {
    path: PathBuf,
    partial: PathBuf,
    nc: Option<FileMut>,
    layout: Layout,
    finished: bool,
    /// Whether this process removes the partial file on failure and places the finished one
    /// (process 0 of a team).
    places: bool,
}

/// `.NAME.partial` beside `path`.
pub fn partial_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.partial"))
}

impl Drop for Output {
    fn drop(&mut self) {
        if !self.finished {
            drop(self.nc.take());
            if self.places {
                let _ = std::fs::remove_file(&self.partial);
            }
        }
    }
}

/// What a variable holds, for its definition.
struct Definition {
    name: String,
    has_levels: bool,
    long_name: String,
    units: String,
    standard_name: Option<String>,
    cell_methods: Option<String>,
    comment: String,
}

impl Output {
    /// Creates the partial output on every process of `team` and defines every variable.
    pub fn create(
        plan: &ComparisonPlan,
        geometry: &str,
        emergence: Option<&str>,
        team: &dyn Team,
    ) -> Result<Output> {
        acidscape_gridio::prepare_hdf5();
        let path = plan.output.clone();
        let partial = partial_path(&path);
        let nc = team.create(&partial).map_err(|e| ComparisonError::Output {
            path: path.clone(),
            message: format!("cannot create {}: {e}", partial.display()),
        })?;
        let first = &plan.baseline().file;
        let mut output = Output {
            layout: Layout {
                z_dim: None,
                y_dim: String::new(),
                x_dim: String::new(),
                levels: first.levels(),
                rows: first.grid().rows,
                cols: first.grid().cols,
                chunk_bytes: plan.chunk_bytes,
                coordinates: None,
                grid_mapping: None,
                free_surface: None,
            },
            path,
            partial,
            nc: Some(nc),
            finished: false,
            places: team.rank() == 0,
        };
        let copied = first.copy_coordinates(output.file()?)?;
        output.layout.z_dim = copied.z_dim;
        output.layout.y_dim = copied.y_dim;
        output.layout.x_dim = copied.x_dim;
        output.layout.coordinates = copied.coordinates_attr;
        output.layout.grid_mapping = copied.grid_mapping;
        output.layout.free_surface = copied.free_surface;
        output.define_time(plan)?;
        output.define_free_surface()?;
        let definitions = definitions(plan)?;
        for d in &definitions {
            output.define_field(d)?;
        }
        if let Some(rule) = emergence {
            for run in &plan.runs {
                output.define_emergence(&run.label, rule, plan)?;
            }
        }
        let nc = output.file()?;
        for (name, value) in describe::global_attributes(plan, geometry, emergence) {
            nc.add_attribute(name, value)
                .map_err(|e| ComparisonError::Output {
                    path: plan.output.clone(),
                    message: format!("global attribute {name}: {e}"),
                })?;
        }
        let partial = output.partial.clone();
        team.write_together(output.file()?, &partial)
            .map_err(|message| ComparisonError::Output {
                path: plan.output.clone(),
                message,
            })?;
        Ok(output)
    }

    fn file(&mut self) -> Result<&mut FileMut> {
        let path = self.path.clone();
        self.nc.as_mut().ok_or(ComparisonError::Output {
            path,
            message: "the output is already closed".into(),
        })
    }

    fn error(&self, variable: &str, e: impl std::fmt::Display) -> ComparisonError {
        ComparisonError::Output {
            path: self.path.clone(),
            message: format!("variable '{variable}': {e}"),
        }
    }

    fn put_texts(&mut self, name: &str, attributes: &[(&str, String)]) -> Result<()> {
        let mut failed = None;
        {
            let nc = self.file()?;
            let mut var = nc
                .variable_mut(name)
                .ok_or_else(|| ComparisonError::Output {
                    path: PathBuf::new(),
                    message: format!("variable '{name}' vanished"),
                })?;
            for (key, value) in attributes {
                if let Err(e) = var.put_attribute(key, value.as_str()) {
                    failed = Some(e);
                    break;
                }
            }
        }
        match failed {
            Some(e) => Err(self.error(name, e)),
            None => Ok(()),
        }
    }

    /// The window axis: `time` with `climatology` bounds from 1 January of each window's first
    /// year to 1 January after its last, in the baseline run's calendar; the value is the
    /// middle of the window.
    fn define_time(&mut self, plan: &ComparisonPlan) -> Result<()> {
        let calendar = plan.baseline().file.time().map(|t| t.calendar());
        let calendar_name = calendar.map_or("standard", |c| c.cf_name());
        let earliest = plan.windows.iter().map(|w| w.first_year).min().unwrap_or(0);
        let units = format!("days since {earliest:04}-01-01 00:00:00");
        let axis = TimeAxis::parse(&units, Some(calendar_name)).map_err(|e| self.error(TIME, e))?;
        let mut bounds = Vec::with_capacity(2 * plan.windows.len());
        let mut middle = Vec::with_capacity(plan.windows.len());
        for w in &plan.windows {
            let start = axis
                .from_datetime(&DateTime::date(w.first_year, 1, 1))
                .map_err(|e| self.error(TIME, e))?;
            let end = axis
                .from_datetime(&DateTime::date(w.last_year + 1, 1, 1))
                .map_err(|e| self.error(TIME, e))?;
            bounds.extend([start, end]);
            middle.push(0.5 * (start + end));
        }
        let windows = plan.windows.len();
        let nc = self.file()?;
        let result = (|| -> std::result::Result<(), netcdf::Error> {
            nc.add_dimension(TIME, windows)?;
            if nc.dimension(BOUNDS_DIM).is_none() {
                nc.add_dimension(BOUNDS_DIM, 2)?;
            }
            nc.add_variable::<f64>(TIME, &[TIME])?
                .put_values(&middle, ..)?;
            nc.add_variable::<f64>(CLIMATOLOGY, &[TIME, BOUNDS_DIM])?
                .put_values(&bounds, ..)?;
            Ok(())
        })();
        result.map_err(|e| self.error(TIME, e))?;
        let comment = format!(
            "One step per time window: {}. The value is the middle of the window; climatology_bounds give its first and last day.",
            describe::windows_words(plan)
        );
        self.put_texts(
            TIME,
            &[
                ("standard_name", "time".into()),
                ("long_name", "time window".into()),
                ("axis", "T".into()),
                ("units", units),
                ("calendar", calendar_name.into()),
                ("climatology", CLIMATOLOGY.into()),
                ("comment", comment),
            ],
        )
    }

    /// The parametric coordinate's free surface on the window axis (its window means are
    /// written by the pass over the baseline run).
    fn define_free_surface(&mut self) -> Result<()> {
        let Some(eta) = self.layout.free_surface.clone() else {
            return Ok(());
        };
        let (y, x) = (self.layout.y_dim.clone(), self.layout.x_dim.clone());
        let nc = self.file()?;
        let defined = nc
            .add_variable::<f32>(&eta, &[TIME, &y, &x])
            .and_then(|mut v| v.set_fill_value(FILL));
        defined.map_err(|e| self.error(&eta, e))?;
        self.put_texts(
            &eta,
            &[
                ("standard_name", "sea_surface_height_above_geoid".into()),
                (
                    "long_name",
                    "free surface of the baseline run, mean over the time window".into(),
                ),
                ("units", "m".into()),
                (
                    "cell_methods",
                    "time: mean within years time: mean over years".into(),
                ),
            ],
        )
    }

    fn dims(&self, has_levels: bool, window_axis: bool) -> Vec<String> {
        let mut dims = Vec::with_capacity(4);
        if window_axis {
            dims.push(TIME.to_string());
        }
        if has_levels {
            dims.extend(self.layout.z_dim.iter().cloned());
        }
        dims.push(self.layout.y_dim.clone());
        dims.push(self.layout.x_dim.clone());
        dims
    }

    /// Rows in one chunk of a variable with or without levels.
    fn chunk_rows(&self, has_levels: bool) -> usize {
        let levels = if has_levels { self.layout.levels } else { 1 };
        let row_bytes = levels * self.layout.cols * 4;
        (self.layout.chunk_bytes / row_bytes.max(1)).clamp(1, self.layout.rows)
    }

    /// Rows of a band that starts a chunk of every chunked variable (a common multiple of
    /// their chunks' rows, at most the grid's rows).
    pub fn rows_per_chunk(&self) -> usize {
        let (a, b) = (self.chunk_rows(true), self.chunk_rows(false));
        let gcd = |mut x: usize, mut y: usize| {
            while y != 0 {
                (x, y) = (y, x % y);
            }
            x
        };
        (a / gcd(a, b)).saturating_mul(b).min(self.layout.rows)
    }

    fn chunk(&self, has_levels: bool, window_axis: bool) -> Vec<usize> {
        let levels = if has_levels { self.layout.levels } else { 1 };
        let rows = self.chunk_rows(has_levels);
        let mut chunk = Vec::with_capacity(4);
        if window_axis {
            chunk.push(1);
        }
        if has_levels && self.layout.z_dim.is_some() {
            chunk.push(levels);
        }
        chunk.extend([rows, self.layout.cols]);
        chunk
    }

    fn define_field(&mut self, d: &Definition) -> Result<()> {
        let dims = self.dims(d.has_levels, true);
        let chunk = self.chunk(d.has_levels, true);
        let refs: Vec<&str> = dims.iter().map(String::as_str).collect();
        let nc = self.file()?;
        let defined = (|| -> std::result::Result<(), netcdf::Error> {
            let mut v = nc.add_variable::<f32>(&d.name, &refs)?;
            v.set_chunking(&chunk)?;
            v.set_compression(1, true)?;
            v.set_fill_value(FILL)?;
            v.put_attribute("missing_value", FILL)?;
            Ok(())
        })();
        defined.map_err(|e| self.error(&d.name, e))?;
        let mut attributes = vec![
            ("long_name", d.long_name.clone()),
            ("units", d.units.clone()),
            ("comment", d.comment.clone()),
        ];
        attributes.extend(d.standard_name.clone().map(|s| ("standard_name", s)));
        attributes.extend(d.cell_methods.clone().map(|s| ("cell_methods", s)));
        attributes.extend(self.layout.coordinates.clone().map(|s| ("coordinates", s)));
        attributes.extend(
            self.layout
                .grid_mapping
                .clone()
                .map(|s| ("grid_mapping", s)),
        );
        self.put_texts(&d.name, &attributes)
    }

    fn define_emergence(&mut self, label: &str, rule: &str, plan: &ComparisonPlan) -> Result<()> {
        let (year, status) = (names::emergence_year(label), names::emergence_status(label));
        let dims = self.dims(false, false);
        let refs: Vec<&str> = dims.iter().map(String::as_str).collect();
        let nc = self.file()?;
        let defined = (|| -> std::result::Result<(), netcdf::Error> {
            let mut y = nc.add_variable::<i32>(&year, &refs)?;
            y.set_fill_value(YEAR_FILL)?;
            let mut s = nc.add_variable::<i8>(&status, &refs)?;
            s.put_attribute("flag_values", Emergence::FLAG_VALUES.to_vec())?;
            s.put_attribute("valid_range", vec![0i8, 3])?;
            Ok(())
        })();
        defined.map_err(|e| self.error(&year, e))?;
        let last = plan
            .runs
            .iter()
            .find(|r| r.label == label)
            .and_then(|r| r.file.time())
            .and_then(|t| t.years.last().copied());
        let mut common = Vec::new();
        common.extend(self.layout.coordinates.clone().map(|s| ("coordinates", s)));
        common.extend(
            self.layout
                .grid_mapping
                .clone()
                .map(|s| ("grid_mapping", s)),
        );
        let mut year_attributes = vec![
            ("long_name", format!("year of emergence, run {label}")),
            ("units", "1".to_string()),
            ("comment", format!("Calendar year (in the run's calendar) of the time of emergence: {rule}. Missing where the column has not emerged by the end of the run ({}) or has no data: see {status}.", last.map_or("its last year".into(), |y| y.to_string()))),
            ("ancillary_variables", status.clone()),
        ];
        year_attributes.extend(common.clone());
        self.put_texts(&year, &year_attributes)?;
        let mut status_attributes = vec![
            ("standard_name", "status_flag".to_string()),
            ("long_name", format!("status of the time of emergence, run {label}")),
            ("flag_meanings", Emergence::FLAG_MEANINGS.to_string()),
            ("comment", format!("emerged: from the year in {year}; emerged_from_first_year: already beyond in the run's first year, so the year given is an upper bound; not_emerged_by_end_of_run: not beyond in the last year with a value; no_data: land, or no value (or no reference band) in the column. Rule: {rule}.")),
        ];
        status_attributes.extend(common);
        self.put_texts(&status, &status_attributes)
    }

    fn extents(&self, window: Option<usize>, has_levels: bool, rows: &Range<usize>) -> Vec<Extent> {
        let mut extents = Vec::with_capacity(4);
        if let Some(w) = window {
            extents.push(Extent::from(w..w + 1));
        }
        if has_levels && self.layout.z_dim.is_some() {
            extents.push(Extent::from(0..self.layout.levels));
        }
        extents.push(Extent::from(rows.clone()));
        extents.push(Extent::from(0..self.layout.cols));
        extents
    }

    /// Writes a block of rows of one window of a variable (NaN as fill).
    pub fn write(
        &mut self,
        name: &str,
        window: Option<usize>,
        has_levels: bool,
        rows: Range<usize>,
        values: &[f64],
    ) -> Result<()> {
        let extents = self.extents(window, has_levels, &rows);
        let stored: Vec<f32> = values
            .iter()
            .map(|&v| if v.is_nan() { FILL } else { v as f32 })
            .collect();
        let nc = self.file()?;
        let written = match nc.variable_mut(name) {
            Some(mut v) => v.put_values(&stored, extents),
            None => Err(netcdf::Error::from("not defined")),
        };
        written.map_err(|e| self.error(name, e))
    }

    /// Reads back a block of rows of one window of a variable (fill as NaN).
    pub fn read(
        &mut self,
        name: &str,
        window: usize,
        has_levels: bool,
        rows: Range<usize>,
    ) -> Result<Vec<f64>> {
        let extents = self.extents(Some(window), has_levels, &rows);
        let nc = self.file()?;
        let read = match nc.variable(name) {
            Some(v) => v.get_values::<f32, _>(extents),
            None => Err(netcdf::Error::from("not defined")),
        };
        let stored = read.map_err(|e| self.error(name, e))?;
        Ok(stored
            .into_iter()
            .map(|v| if v == FILL { f64::NAN } else { f64::from(v) })
            .collect())
    }

    /// Writes the time of emergence of a block of rows.
    pub fn write_emergence(
        &mut self,
        label: &str,
        rows: Range<usize>,
        results: &[Emergence],
    ) -> Result<()> {
        let extents = self.extents(None, false, &rows);
        let years: Vec<i32> = results
            .iter()
            .map(|e| {
                e.year()
                    .and_then(|y| i32::try_from(y).ok())
                    .unwrap_or(YEAR_FILL)
            })
            .collect();
        let status: Vec<i8> = results.iter().map(|e| e.flag_value()).collect();
        let (year_name, status_name) =
            (names::emergence_year(label), names::emergence_status(label));
        let nc = self.file()?;
        let written = (|| -> std::result::Result<(), netcdf::Error> {
            nc.variable_mut(&year_name)
                .ok_or("not defined")?
                .put_values(&years, extents.clone())?;
            nc.variable_mut(&status_name)
                .ok_or("not defined")?
                .put_values(&status, extents)?;
            Ok(())
        })();
        written.map_err(|e| self.error(&year_name, e))
    }

    /// The free-surface variable of a parametric coordinate, if any.
    pub fn free_surface(&self) -> Option<&str> {
        self.layout.free_surface.as_deref()
    }

    /// Closes the output (on every process of the team) and gives it its final name (process
    /// 0, once every process has closed it).
    pub fn finish(mut self) -> Result<()> {
        if let Some(nc) = self.nc.take() {
            nc.close().map_err(|e| ComparisonError::Output {
                path: self.path.clone(),
                message: format!("closing failed: {e}"),
            })?;
        }
        if !self.places {
            self.finished = true;
            return Ok(());
        }
        std::fs::rename(&self.partial, &self.path).map_err(|e| ComparisonError::Output {
            path: self.path.clone(),
            message: format!(
                "cannot rename {} to its final name: {e}",
                self.partial.display()
            ),
        })?;
        self.finished = true;
        Ok(())
    }
}

/// Every float variable of the output, checked for clashing names.
fn definitions(plan: &ComparisonPlan) -> Result<Vec<Definition>> {
    let mut out = Vec::new();
    let baseline = &plan.baseline().label;
    for run in &plan.runs {
        for field in &plan.fields {
            for &statistic in &plan.statistics {
                out.push(Definition {
                    name: names::statistic(field, &run.label, statistic),
                    has_levels: field.has_levels,
                    long_name: describe::statistic_long_name(field, &run.label, statistic),
                    units: field.units.clone(),
                    standard_name: field.standard_name.clone(),
                    cell_methods: describe::cell_methods(statistic),
                    comment: describe::statistic_comment(field, statistic),
                });
            }
            if plan.windows.len() > 1 {
                let (long_name, comment) = describe::change_words(field, &run.label, plan);
                out.push(derived(
                    names::change(field, &run.label),
                    field,
                    long_name,
                    comment,
                ));
            }
            if run.label != *baseline {
                let (long_name, comment) = describe::difference_words(field, &run.label, baseline);
                out.push(derived(
                    names::difference(field, &run.label, baseline),
                    field,
                    long_name,
                    comment,
                ));
            }
        }
    }
    let mut seen = BTreeSet::new();
    for d in &out {
        if !seen.insert(d.name.as_str()) {
            return Err(ComparisonError::option(
                "run",
                format!(
                    "the labels give two output variables the name '{}'; choose other labels",
                    d.name
                ),
            ));
        }
    }
    Ok(out)
}

/// A change or difference of window means.
fn derived(name: String, field: &FieldPlan, long_name: String, comment: String) -> Definition {
    Definition {
        name,
        has_levels: field.has_levels,
        long_name,
        units: field.units.clone(),
        standard_name: None,
        cell_methods: describe::cell_methods(Statistic::Mean),
        comment,
    }
}
