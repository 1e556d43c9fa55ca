//! An opened, validated run: discovery of inputs, what each file of each input holds, grid,
//! vertical coordinate and time. Reading slabs is in `slab.rs`, the checks of values in
//! `plausibility.rs`, the accounts of the run in `report.rs`.

use crate::axes::{classify_dims, Axis};
use crate::calendar::TimeAxis;
use crate::catalog::{open_inputs, InputFile};
use crate::conversion::{meanings, FileMeaning};
use crate::discovery::{catalogue, discover, Found};
use crate::error::{GridError, Result};
use crate::grid::{check_on_grid, check_same_horizontal, horizontal_grid, GridLengths};
use crate::plausibility::ValueCheck;
use crate::roles::Role;
use crate::sampling::SamplingCheck;
use crate::source::VarSource;
use crate::timeline::{check_gaps, file_time, join_variable, FileTime, TimeSpan};
use crate::vertical::{vertical_from, Vertical};
use crate::{DensityChoice, GridShape, InputChecks, OutputAxes, RunSpec};
use std::ops::Range;
use std::path::PathBuf;

/// One input found in the run.
#[derive(Clone, Debug)]
pub(crate) struct Input {
    pub role: Role,
    pub name: String,
    pub found_by: String,
    /// What each file holds, one per piece of `source` (same order).
    pub meanings: Vec<FileMeaning>,
    pub source: VarSource,
}

impl Input {
    /// The meaning of the file holding `step`.
    pub fn meaning_at(&self, step: usize) -> &FileMeaning {
        self.source
            .piece_index(step)
            .and_then(|i| self.meanings.get(i))
            .unwrap_or(&self.meanings[0])
    }

    /// Whether every file says the same (units, standard name, conversion).
    pub fn uniform(&self) -> bool {
        let first = &self.meanings[0];
        self.meanings.iter().all(|m| {
            m.units == first.units
                && m.standard_name == first.standard_name
                && m.conversion == first.conversion
                && m.salinity_scale == first.salinity_scale
        })
    }
}

/// The joined time axis of the run.
pub(crate) struct RunTime {
    pub var_name: String,
    pub dim_name: String,
    pub axis: TimeAxis,
    pub values: Vec<f64>,
    pub bounds: Option<(String, Vec<f64>)>,
    /// File whose time variable's attributes are copied to outputs.
    pub file: usize,
    /// The sampling inferred from the steps (or bounds), and its breaks if accepted.
    pub sampling: SamplingCheck,
}

/// The horizontal grid.
pub(crate) struct Horizontal {
    pub curvilinear: bool,
    pub y_dim: String,
    pub x_dim: String,
    pub lat_name: Option<String>,
    pub lon_name: Option<String>,
    pub latitude: Option<VarSource>,
    pub grid_mapping: Option<String>,
}

/// An opened and validated run: all files, joined along time.
pub struct Run {
    /// Input files, in the order opened. No handle stays open between calls: each
    /// variable reads through its own (see `source::DataHandle`), metadata is reopened.
    pub(crate) paths: Vec<PathBuf>,
    /// Storage format of each file (same order as `paths`).
    pub(crate) formats: Vec<crate::integrity::Format>,
    pub(crate) inputs: Vec<Input>,
    pub(crate) density: DensityChoice,
    pub(crate) shape: GridShape,
    pub(crate) time: Option<RunTime>,
    pub(crate) horizontal: Horizontal,
    pub(crate) vertical: Vertical,
    pub(crate) z_dim: Option<String>,
    /// File holding the reference variable (DIC): its coordinates are the run's.
    pub(crate) grid_file: usize,
    pub(crate) wet_cells: u64,
    pub(crate) checks: InputChecks,
    /// Results of the value checks (see `plausibility.rs`).
    pub(crate) value_checks: Vec<ValueCheck>,
    /// Time steps whose values were checked.
    pub(crate) sampled_steps: Vec<usize>,
}

/// Axes of the reference variable (DIC), which fix the run's grid and time.
struct Reference {
    name: String,
    file: usize,
    y_dim: String,
    x_dim: String,
    z_dim: Option<String>,
    rows: usize,
    cols: usize,
    levels: Option<usize>,
    /// Time axis of the reference file, when the reference varies in time.
    time_axis: Option<TimeAxis>,
}

fn reference_axes(
    files: &[InputFile],
    times: &[Option<FileTime>],
    found: &Found,
) -> Result<Reference> {
    let file = found.holders[0];
    let var = crate::catalog::require_var(&files[file], &found.name, "the run")?;
    let axes = classify_dims(&files[file], &var)?;
    let dims = crate::catalog::dim_names(&var);
    let lens = crate::catalog::dim_lens(&var);
    let at = |axis: Axis| axes.iter().position(|a| *a == axis);
    let (Some(y), Some(x)) = (at(Axis::Y), at(Axis::X)) else {
        return Err(GridError::Metadata {
            file: files[file].path.clone(),
            variable: found.name.clone(),
            message: format!(
                "expected horizontal Y and X dimensions; found dimensions ({})",
                dims.join(", ")
            ),
        });
    };
    let time_axis = match (at(Axis::T), &times[file]) {
        (None, _) => None,
        (Some(_), Some(t)) => Some(t.axis),
        (Some(_), None) => {
            return Err(GridError::Metadata {
                file: files[file].path.clone(),
                variable: found.name.clone(),
                message: "has a time dimension but the file has no time coordinate (a variable named after the dimension with units \"... since ...\")".to_string(),
            })
        }
    };
    Ok(Reference {
        name: found.name.clone(),
        file,
        y_dim: dims[y].clone(),
        x_dim: dims[x].clone(),
        z_dim: at(Axis::Z).map(|z| dims[z].clone()),
        rows: lens[y],
        cols: lens[x],
        levels: at(Axis::Z).map(|z| lens[z]),
        time_axis,
    })
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-6 * a.abs().max(b.abs()).max(1.0)
}

/// Everything the inputs' files say about time, joined.
struct TimeContext<'a> {
    files: &'a [InputFile],
    times: &'a [Option<FileTime>],
    reference: &'a Reference,
    checks: InputChecks,
}

impl TimeContext<'_> {
    /// The time spans of `name` over its `holders`: joined along time and compared with
    /// the run's time (set from the first variable joined, whose gaps are checked).
    fn spans(
        &self,
        name: &str,
        holders: &[usize],
        time: &mut Option<RunTime>,
    ) -> Result<Vec<TimeSpan>> {
        let first = &self.files[holders[0]];
        let var = crate::catalog::require_var(first, name, "the run")?;
        if !classify_dims(first, &var)?.contains(&Axis::T) {
            return Ok(vec![TimeSpan {
                file: holders[0],
                first_step: 0,
                steps: 1,
            }]);
        }
        let axis = self.reference.time_axis.as_ref().ok_or_else(|| GridError::Mismatch {
            file: first.path.clone(),
            variable: name.to_string(),
            message: format!(
                "varies in time but the DIC variable '{}' has no time axis; expected both with or both without time",
                self.reference.name
            ),
        })?;
        let joined = join_variable(name, holders, self.files, self.times, axis)?;
        match time {
            None => {
                let sampling =
                    check_gaps(name, &joined, self.files, axis, self.checks.irregular_time)?;
                let t = self.times[joined.spans[0].file].as_ref();
                *time = Some(RunTime {
                    var_name: t.map(|t| t.var_name.clone()).unwrap_or_default(),
                    dim_name: t.map(|t| t.dim_name.clone()).unwrap_or_default(),
                    axis: *axis,
                    values: joined.values.clone(),
                    bounds: t
                        .and_then(|t| t.bounds.as_ref().map(|(n, _)| n.clone()))
                        .zip(joined.bounds.clone()),
                    file: joined.spans[0].file,
                    sampling,
                });
            }
            Some(run_time) => {
                let same = run_time.values.len() == joined.values.len()
                    && run_time
                        .values
                        .iter()
                        .zip(&joined.values)
                        .all(|(a, b)| close(*a, *b));
                if !same {
                    let span = |v: &[f64]| {
                        let d = |x: Option<&f64>| {
                            x.and_then(|x| axis.to_datetime(*x).ok())
                                .map(|d| d.to_string())
                                .unwrap_or_else(|| "?".to_string())
                        };
                        format!("{} steps, {} to {}", v.len(), d(v.first()), d(v.last()))
                    };
                    return Err(GridError::Mismatch {
                        file: first.path.clone(),
                        variable: name.to_string(),
                        message: format!(
                            "time axis ({}) differs from that of DIC '{}' ({}); every input must cover the same time steps",
                            span(&joined.values),
                            self.reference.name,
                            span(&run_time.values)
                        ),
                    });
                }
            }
        }
        Ok(joined.spans)
    }
}

impl Run {
    /// Opens and validates a run: checks every file against its header, finds every input,
    /// reads what every file of every input holds, checks grids and time, and checks a
    /// sample of the values (refused when implausible unless `spec.checks` accepts them).
    pub fn open(spec: &RunSpec) -> Result<Run> {
        crate::catalog::prepare_hdf5();
        if let DensityChoice::Reference(rho) = spec.density {
            if !(rho.is_finite() && rho > 0.0) {
                return Err(GridError::Mapping {
                    source_name: "density choice".to_string(),
                    message: format!("reference density {rho} kg m-3 is not a positive number"),
                });
            }
        }
        let files = open_inputs(&spec.inputs)?;
        let times: Vec<Option<FileTime>> = files.iter().map(file_time).collect::<Result<_>>()?;
        let catalog = catalogue(&files);

        // 1. Which variable is what; the reference variable (DIC) fixes grid and time.
        let found = discover(spec, &catalog, &files)?;
        let reference = reference_axes(&files, &times, &found[0].1)?;

        // 2. Every input: its time spans, its files and what each file holds.
        let context = TimeContext {
            files: &files,
            times: &times,
            reference: &reference,
            checks: spec.checks,
        };
        let mut time: Option<RunTime> = None;
        let inputs = locate_inputs(spec, &found, &context, &mut time)?;

        // 3. Grid: every input on the reference grid, with the same coordinates.
        let grid = GridLengths {
            rows: reference.rows,
            cols: reference.cols,
            levels: reference.levels,
            ref_name: &reference.name,
            ref_file: &files[reference.file].path,
        };
        check_on_grid(&files, &inputs, &grid)?;
        let horizontal = horizontal_grid(
            &files,
            reference.file,
            &reference.name,
            &reference.y_dim,
            &reference.x_dim,
        )?;
        check_same_horizontal(&files, &inputs, reference.file, &horizontal)?;

        // 4. Vertical coordinate.
        let vertical = vertical_of(&files, &context, &reference, &mut time)?;
        let has_pressure_input = inputs.iter().any(|i| i.role == Role::Pressure);
        let needs_latitude = !has_pressure_input && !matches!(vertical, Vertical::Surface);
        if needs_latitude && horizontal.latitude.is_none() {
            return Err(GridError::Metadata {
                file: files[reference.file].path.clone(),
                variable: reference.name.clone(),
                message: "no latitude found (1-D coordinate with units degrees_north, or 2-D latitude named in `coordinates`); it is needed to compute sea pressure from depth (TEOS-10)".to_string(),
            });
        }

        let shape = GridShape {
            levels: vertical.levels(),
            rows: reference.rows,
            cols: reference.cols,
        };
        let mut run = Run {
            formats: files.iter().map(|f| f.expected.format).collect(),
            // Closes the metadata handles before any data are read (see `paths`).
            paths: files.into_iter().map(|f| f.path).collect(),
            inputs,
            density: spec.density,
            shape,
            time,
            horizontal,
            vertical,
            z_dim: reference.z_dim,
            grid_file: reference.file,
            wet_cells: 0,
            checks: spec.checks,
            value_checks: Vec::new(),
            sampled_steps: Vec::new(),
        };
        // 5. Values: wet cells, salinity scale, plausibility (before any long work).
        run.inspect_values()?;
        Ok(run)
    }

    pub(crate) fn input(&self, role: Role) -> Option<&Input> {
        self.inputs.iter().find(|i| i.role == role)
    }

    pub(crate) fn required(&self, role: Role) -> &Input {
        // Required roles are guaranteed by `open`.
        self.input(role).unwrap_or(&self.inputs[0])
    }

    /// Grid size of one time step.
    pub fn shape(&self) -> GridShape {
        self.shape
    }

    /// Steps along the joined time axis (1 for a run without time).
    pub fn time_steps(&self) -> usize {
        self.time.as_ref().map_or(1, |t| t.values.len())
    }

    /// Cells where every required input is present, at the first time step.
    pub fn wet_cells_per_step(&self) -> u64 {
        self.wet_cells
    }

    /// Every input file, in the order opened.
    pub fn input_files(&self) -> Vec<PathBuf> {
        self.paths.clone()
    }

    /// The inferred time sampling in words (e.g. "monthly"), when the run has time.
    pub fn time_sampling(&self) -> Option<String> {
        self.time.as_ref().map(|t| t.sampling.sampling.to_string())
    }

    /// Messages of the value checks that failed (empty when every sampled input looks
    /// plausible). A run opened with `InputChecks::accept_implausible` keeps them here.
    pub fn implausible_inputs(&self) -> Vec<String> {
        self.value_checks
            .iter()
            .filter_map(|c| c.refusal.clone())
            .collect()
    }

    /// Time span as (first, last) dates, when the run has time.
    pub(crate) fn time_span(&self) -> Option<(String, String)> {
        let t = self.time.as_ref()?;
        let date = |v: Option<&f64>| {
            v.and_then(|v| t.axis.to_datetime(*v).ok())
                .map_or_else(|| "?".to_string(), |d| d.to_string())
        };
        Some((date(t.values.first()), date(t.values.last())))
    }

    /// The time of every step in the run's calendar as ISO 8601 text: the date alone
    /// ("2015-01-16") when every step falls at midnight, else date and time
    /// ("2015-01-16T12:00:00"). One empty string for a run without time.
    pub fn step_dates(&self) -> Vec<String> {
        let Some(t) = &self.time else {
            return vec![String::new()];
        };
        let dates: Vec<Option<crate::calendar::DateTime>> = t
            .values
            .iter()
            .map(|v| t.axis.to_datetime(*v).ok())
            .collect();
        let midnight = dates
            .iter()
            .flatten()
            .all(|d| d.hour == 0 && d.minute == 0 && d.second == 0.0);
        dates
            .iter()
            .map(|d| match d {
                None => String::new(),
                Some(d) if midnight => format!("{:04}-{:02}-{:02}", d.year, d.month, d.day),
                Some(d) => format!(
                    "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}",
                    d.year,
                    d.month,
                    d.day,
                    d.hour,
                    d.minute,
                    d.second.floor() as u32
                ),
            })
            .collect()
    }

    /// Conversions applied, checks accepted and approximations made, for output metadata.
    pub fn provenance(&self) -> Vec<(String, String)> {
        crate::report::provenance(self)
    }

    /// A human-readable account of the run.
    pub fn report(&self) -> String {
        crate::report::report(self)
    }

    /// Copies the run's coordinates into an output file (see [`crate::OutputAxes`]).
    pub fn write_coordinates(
        &self,
        out: &mut netcdf::FileMut,
        steps: Range<usize>,
    ) -> Result<OutputAxes> {
        crate::catalog::prepare_hdf5();
        let files = crate::catalog::open_paths(&self.paths)?;
        crate::output::write_coordinates(self, &files, out, steps)
    }
}

/// Every input's time spans, files and what each file holds.
fn locate_inputs(
    spec: &RunSpec,
    found: &[(Role, Found)],
    context: &TimeContext,
    time: &mut Option<RunTime>,
) -> Result<Vec<Input>> {
    let files = context.files;
    let mut inputs = Vec::with_capacity(found.len());
    for (role, hit) in found {
        let spans = context.spans(&hit.name, &hit.holders, time)?;
        let source = VarSource::new(&hit.name, &spans, files)?;
        let files_of: Vec<&InputFile> = source.pieces.iter().map(|p| &files[p.file]).collect();
        let meanings = meanings(*role, &hit.name, spec.mapping.get(role.key()), &files_of)?;
        inputs.push(Input {
            role: *role,
            name: hit.name.clone(),
            found_by: hit.found_by.clone(),
            meanings,
            source,
        });
    }
    Ok(inputs)
}

/// The vertical coordinate of the reference variable; parametric terms are located in
/// any input file.
fn vertical_of(
    files: &[InputFile],
    context: &TimeContext,
    reference: &Reference,
    time: &mut Option<RunTime>,
) -> Result<Vertical> {
    let (rows, cols) = (reference.rows, reference.cols);
    let time = std::cell::RefCell::new(time);
    let locate = |name: &str| -> Result<VarSource> {
        let holders: Vec<usize> = files
            .iter()
            .enumerate()
            .filter(|(_, f)| f.nc.variable(name).is_some())
            .map(|(i, _)| i)
            .collect();
        if holders.is_empty() {
            return Err(GridError::Metadata {
                file: files[reference.file].path.clone(),
                variable: name.to_string(),
                message: "named in formula_terms, but no input file has this variable".to_string(),
            });
        }
        let mut guard = time.borrow_mut();
        let spans = context.spans(name, &holders, &mut guard)?;
        let source = VarSource::new(name, &spans, files)?;
        if source.len_of(Axis::Y) != Some(rows) || source.len_of(Axis::X) != Some(cols) {
            return Err(GridError::Mismatch {
                file: files[holders[0]].path.clone(),
                variable: name.to_string(),
                message: format!(
                    "expected a ({rows} rows × {cols} columns) field on the run's grid"
                ),
            });
        }
        Ok(source)
    };
    let vertical = match &reference.z_dim {
        None => Vertical::Surface,
        Some(z) => vertical_from(files, reference.file, z, &locate)?,
    };
    if let Some(levels) = reference.levels {
        if vertical.levels() != levels {
            return Err(GridError::Mismatch {
                file: files[reference.file].path.clone(),
                variable: reference.z_dim.clone().unwrap_or_default(),
                message: format!(
                    "vertical coordinate has {} values but the data have {levels} levels",
                    vertical.levels()
                ),
            });
        }
    }
    Ok(vertical)
}
