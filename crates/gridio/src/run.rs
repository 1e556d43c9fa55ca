//! An opened, validated run: discovery of inputs, grid, vertical coordinate and time,
//! and the reading of converted slabs.

use crate::axes::{auxiliary_coordinates, axis_of_coordinate, classify_dims, Axis};
use crate::calendar::TimeAxis;
use crate::catalog::{attr_text, open_inputs, read_all, InputFile};
use crate::error::{GridError, Result};
use crate::mapping::{SalinityKind, TemperatureKind};
use crate::roles::{Role, ALL_ROLES};
use crate::seawater;
use crate::source::VarSource;
use crate::timeline::{file_time, join_variable, FileTime, TimeSpan};
use crate::units::{self, Concentration, SalinityUnits, TemperatureUnits};
use crate::vertical::{vertical_from, Vertical};
use crate::{DensityChoice, GridShape, OutputAxes, RunSpec, SlabInputs};
use rayon::prelude::*;
use std::ops::Range;
use std::path::PathBuf;

/// How the values of one input become what the chemistry wants.
#[derive(Clone, Debug)]
pub(crate) enum Conversion {
    Concentration(Concentration),
    Temperature(TemperatureUnits, TemperatureKind),
    Salinity(SalinityKind, SalinityUnits),
    /// Factor to dbar and the atmospheric pressure to subtract [dbar].
    Pressure(f64, f64),
    Area(f64),
    Length(f64),
}

/// One input found in the run.
#[derive(Clone, Debug)]
pub(crate) struct Input {
    pub role: Role,
    pub name: String,
    pub found_by: &'static str,
    pub standard_name: Option<String>,
    pub units: String,
    pub conversion: Conversion,
    pub source: VarSource,
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
    /// Factor applied to practical salinity values (1000 for mass-fraction files, else 1).
    pub(crate) salinity_scale: f64,
}

/// Variables of all files: (name, standard_name, file index), coordinate variables excluded.
fn catalogue(files: &[InputFile]) -> Vec<(String, Option<String>, usize)> {
    let mut out = Vec::new();
    for (f, file) in files.iter().enumerate() {
        for var in file.nc.variables() {
            let dims = var.dimensions();
            let is_coordinate = dims.len() == 1 && dims[0].name() == var.name();
            if !is_coordinate {
                out.push((var.name(), attr_text(&var, "standard_name"), f));
            }
        }
    }
    out
}

fn present_list(catalog: &[(String, Option<String>, usize)]) -> String {
    let mut names: Vec<String> = Vec::new();
    for (name, standard, _) in catalog {
        let label = match standard {
            Some(s) => format!("{name} ({s})"),
            None => name.clone(),
        };
        if !names.contains(&label) {
            names.push(label);
        }
    }
    if names.is_empty() {
        "none".to_string()
    } else {
        names.join(", ")
    }
}

/// Finds the variable for a role: mapping, then standard name, then CMIP/OMIP name.
fn find_role(
    role: Role,
    spec: &RunSpec,
    catalog: &[(String, Option<String>, usize)],
) -> Result<Option<(String, &'static str, Vec<usize>)>> {
    let holders = |name: &str| -> Vec<usize> {
        let mut files: Vec<usize> = catalog
            .iter()
            .filter(|(n, _, _)| n == name)
            .map(|(_, _, f)| *f)
            .collect();
        files.dedup();
        files
    };
    if let Some(mapped) = spec.mapping.get(role.key()) {
        let found = holders(&mapped.name);
        if found.is_empty() {
            return Err(GridError::MappedVariableAbsent {
                role: role.key().to_string(),
                name: mapped.name.clone(),
                present: present_list(catalog),
            });
        }
        return Ok(Some((mapped.name.clone(), "user mapping", found)));
    }
    for standard in role.standard_names() {
        if let Some((name, _, _)) = catalog
            .iter()
            .find(|(_, s, _)| s.as_deref() == Some(*standard))
        {
            return Ok(Some((name.clone(), "CF standard_name", holders(name))));
        }
    }
    for cmip in role.cmip_names() {
        let found = holders(cmip);
        if !found.is_empty() {
            return Ok(Some((cmip.to_string(), "CMIP/OMIP name", found)));
        }
    }
    Ok(None)
}

fn units_error(file: &InputFile, variable: &str, message: String) -> GridError {
    GridError::Units {
        file: file.path.clone(),
        variable: variable.to_string(),
        message,
    }
}

/// How an input's values are converted, from its units, standard name and the mapping.
fn conversion_for(
    role: Role,
    name: &str,
    standard_name: Option<&str>,
    units_text: &str,
    kind_override: Option<&str>,
    file: &InputFile,
) -> Result<Conversion> {
    let err = |e: units::UnitsError| units_error(file, name, e.to_string());
    Ok(match role {
        Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate => {
            Conversion::Concentration(units::parse_concentration(units_text).map_err(err)?)
        }
        Role::Temperature => {
            let scale = units::parse_temperature(units_text).map_err(err)?;
            let kind = match kind_override.and_then(TemperatureKind::parse) {
                Some(kind) => kind,
                None => match (standard_name, name) {
                    (Some("sea_water_potential_temperature"), _) | (None, "thetao") => TemperatureKind::Potential,
                    (Some("sea_water_conservative_temperature"), _) | (None, "bigthetao") => TemperatureKind::Conservative,
                    (Some("sea_water_temperature"), _) => TemperatureKind::InSitu,
                    _ => {
                        return Err(GridError::Metadata {
                            file: file.path.clone(),
                            variable: name.to_string(),
                            message: "cannot tell whether this temperature is potential, conservative or in-situ (no recognised standard_name); set it in the mapping: temperature = { name = \"...\", kind = \"potential\" } or --variable temperature.kind=potential".to_string(),
                        })
                    }
                },
            };
            Conversion::Temperature(scale, kind)
        }
        Role::Salinity => {
            let parsed = units::parse_salinity(units_text).map_err(err)?;
            let kind = match kind_override.and_then(SalinityKind::parse) {
                Some(kind) => kind,
                None => match (standard_name, parsed) {
                    (Some("sea_water_absolute_salinity"), _)
                    | (_, SalinityUnits::Absolute { .. }) => SalinityKind::Absolute,
                    _ => SalinityKind::Practical,
                },
            };
            let parsed = match (kind, parsed) {
                // Absolute salinity labelled "1"/"psu"-like: take the numbers as g kg-1.
                (SalinityKind::Absolute, SalinityUnits::Practical) => {
                    SalinityUnits::Absolute { to_g_per_kg: 1.0 }
                }
                (_, p) => p,
            };
            Conversion::Salinity(kind, parsed)
        }
        Role::Pressure => {
            let p = units::parse_pressure(units_text).map_err(err)?;
            // `sea_water_pressure` includes the atmosphere: subtract one standard atmosphere, 10.1325 dbar (common practice).
            let atmosphere = if standard_name == Some("sea_water_pressure") {
                10.1325
            } else {
                0.0
            };
            Conversion::Pressure(p.to_dbar, atmosphere)
        }
        Role::CellArea => Conversion::Area(units::parse_area(units_text).map_err(err)?.to_m2),
        Role::SeaFloorDepth => {
            Conversion::Length(units::parse_length(units_text).map_err(err)?.to_m)
        }
    })
}

impl Conversion {
    /// Plain description of what will be applied, for reports and provenance.
    pub fn describe(&self, density: DensityChoice) -> String {
        match self {
            Conversion::Concentration(c) => match c.basis {
                units::ConcentrationBasis::PerMass => format!("{} -> µmol kg-1", c.describe()),
                units::ConcentrationBasis::PerVolume => format!(
                    "{} -> µmol kg-1 dividing by {}",
                    c.describe(),
                    density_label(density)
                ),
            },
            Conversion::Temperature(scale, kind) => format!(
                "{}{} temperature -> in-situ °C{}",
                if *scale == TemperatureUnits::Kelvin { "kelvin -> °C; " } else { "" },
                kind.label(),
                match kind {
                    TemperatureKind::InSitu => " (as is)",
                    TemperatureKind::Potential => " (Fofonoff & Millard 1983)",
                    TemperatureKind::Conservative => " (TEOS-10 CT -> potential, then Fofonoff & Millard 1983)",
                }
            ),
            Conversion::Salinity(SalinityKind::Practical, _) => "practical salinity (as is)".to_string(),
            Conversion::Salinity(SalinityKind::Absolute, _) => {
                "absolute salinity -> practical, SP = SA × 35/35.16504 (reference-composition, Millero et al. 2008)".to_string()
            }
            Conversion::Pressure(f, atm) => format!(
                "× {f} -> dbar{}",
                if *atm > 0.0 { ", minus 10.1325 dbar atmosphere -> sea pressure" } else { "" }
            ),
            Conversion::Area(f) => format!("× {f} -> m2"),
            Conversion::Length(f) => format!("× {f} -> m"),
        }
    }
}

fn density_label(density: DensityChoice) -> String {
    match density {
        DensityChoice::InSitu => "in-situ density (TEOS-10 75-term, gsw)".to_string(),
        DensityChoice::Reference(rho) => format!("the reference density {rho} kg m-3 (Boussinesq)"),
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-6 * a.abs().max(b.abs()).max(1.0)
}

impl Run {
    /// Opens and validates a run: finds every input, checks units, grids and time.
    pub fn open(spec: &RunSpec) -> Result<Run> {
        crate::catalog::silence_hdf5_diagnostics();
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

        // 1. Which variable is what.
        let mut found = Vec::new();
        for role in ALL_ROLES {
            match find_role(role, spec, &catalog)? {
                Some(hit) => found.push((role, hit)),
                None if role.required() => {
                    let looked: Vec<String> = role
                        .standard_names()
                        .iter()
                        .map(|s| format!("standard_name {s}"))
                        .chain(role.cmip_names().iter().map(|c| format!("name {c}")))
                        .collect();
                    return Err(GridError::MissingVariable {
                        role: role.key().to_string(),
                        looked_for: looked.join(", "),
                        present: present_list(&catalog),
                    });
                }
                None => {}
            }
        }

        // 2. The reference variable (DIC) fixes grid file, axes and time.
        let (_, (ref_name, _, ref_holders)) = &found[0];
        let grid_file = ref_holders[0];
        let ref_var = crate::catalog::require_var(&files[grid_file], ref_name, "the run")?;
        let ref_axes = classify_dims(&files[grid_file], &ref_var)?;
        let ref_dims = crate::catalog::dim_names(&ref_var);
        let dim_of = |axis: Axis| {
            ref_axes
                .iter()
                .position(|a| *a == axis)
                .map(|i| ref_dims[i].clone())
        };
        let (y_dim, x_dim) = match (dim_of(Axis::Y), dim_of(Axis::X)) {
            (Some(y), Some(x)) => (y, x),
            _ => {
                return Err(GridError::Metadata {
                    file: files[grid_file].path.clone(),
                    variable: ref_name.clone(),
                    message: format!(
                        "expected horizontal Y and X dimensions; found dimensions ({})",
                        ref_dims.join(", ")
                    ),
                })
            }
        };
        let z_dim = dim_of(Axis::Z);
        let ref_has_time = ref_axes.contains(&Axis::T);

        // 3. Time: join the reference variable, then every other input must match it.
        let reference_axis = if ref_has_time {
            match &times[grid_file] {
                Some(t) => Some(t.axis),
                None => {
                    return Err(GridError::Metadata {
                        file: files[grid_file].path.clone(),
                        variable: ref_name.clone(),
                        message: "has a time dimension but the file has no time coordinate (a variable named after the dimension with units \"... since ...\")".to_string(),
                    })
                }
            }
        } else {
            None
        };
        let mut time: Option<RunTime> = None;
        let mut inputs: Vec<Input> = Vec::new();
        for (role, (name, found_by, holders)) in &found {
            let first = &files[holders[0]];
            let var = crate::catalog::require_var(first, name, "the run")?;
            let has_time = classify_dims(first, &var)?.contains(&Axis::T);
            let spans = if has_time {
                let axis = reference_axis.as_ref().ok_or_else(|| GridError::Mismatch {
                    file: first.path.clone(),
                    variable: name.clone(),
                    message: format!("varies in time but the DIC variable '{ref_name}' has no time axis; expected both with or both without time"),
                })?;
                let joined = join_variable(name, holders, &files, &times, axis)?;
                match &time {
                    None => {
                        let t = times[joined.spans[0].file].as_ref();
                        time = Some(RunTime {
                            var_name: t.map(|t| t.var_name.clone()).unwrap_or_default(),
                            dim_name: t.map(|t| t.dim_name.clone()).unwrap_or_default(),
                            axis: *axis,
                            values: joined.values.clone(),
                            bounds: t
                                .and_then(|t| t.bounds.as_ref().map(|(n, _)| n.clone()))
                                .zip(joined.bounds.clone()),
                            file: joined.spans[0].file,
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
                                variable: name.clone(),
                                message: format!(
                                    "time axis ({}) differs from that of DIC '{ref_name}' ({}); every input must cover the same time steps",
                                    span(&joined.values),
                                    span(&run_time.values)
                                ),
                            });
                        }
                    }
                }
                joined.spans
            } else {
                vec![TimeSpan {
                    file: holders[0],
                    first_step: 0,
                    steps: 1,
                }]
            };
            let source = VarSource::new(name, &spans, &files)?;
            let mapped = spec.mapping.get(role.key());
            let standard_name = attr_text(&var, "standard_name");
            let units_text = match mapped.and_then(|m| m.units.clone()).or_else(|| attr_text(&var, "units")) {
                Some(u) => u,
                None => {
                    return Err(units_error(
                        first,
                        name,
                        format!("no `units` attribute; expected one (e.g. mol m-3), or give units in the mapping: {}.units", role.key()),
                    ))
                }
            };
            let conversion = conversion_for(
                *role,
                name,
                standard_name.as_deref(),
                &units_text,
                mapped.and_then(|m| m.kind.as_deref()),
                first,
            )?;
            inputs.push(Input {
                role: *role,
                name: name.clone(),
                found_by,
                standard_name,
                units: units_text,
                conversion,
                source,
            });
        }

        // 4. Grid: every input on the reference grid.
        let len_in_ref = |axis: Axis| {
            ref_axes
                .iter()
                .position(|a| *a == axis)
                .map(|i| ref_var.dimensions()[i].len())
        };
        let rows = len_in_ref(Axis::Y).unwrap_or(1);
        let cols = len_in_ref(Axis::X).unwrap_or(1);
        let levels_in_data = len_in_ref(Axis::Z);
        for input in &inputs {
            let file = &files[input.source.pieces[0].file];
            let expect = |axis: Axis, want: Option<usize>, label: &str| -> Result<()> {
                let have = input.source.len_of(axis);
                let ok = match (have, want) {
                    (Some(h), Some(w)) => h == w,
                    (None, _) => {
                        axis != Axis::Y
                            && axis != Axis::X
                            && !(input.role.per_cell() && want.is_some_and(|w| w > 1))
                    }
                    (Some(h), None) => h == 1,
                };
                if ok {
                    Ok(())
                } else {
                    Err(GridError::Mismatch {
                        file: file.path.clone(),
                        variable: input.name.clone(),
                        message: format!(
                            "{label} length is {} but DIC '{ref_name}' in {} has {}; expected all inputs on one grid",
                            have.map_or("absent".to_string(), |h| h.to_string()),
                            files[grid_file].path.display(),
                            want.map_or("none".to_string(), |w| w.to_string())
                        ),
                    })
                }
            };
            expect(Axis::Y, Some(rows), "Y (rows)")?;
            expect(Axis::X, Some(cols), "X (columns)")?;
            if input.role.per_cell() {
                expect(Axis::Z, levels_in_data, "vertical")?;
            }
        }

        // 5. Horizontal coordinates (latitude for pressure) and grid mapping.
        let horizontal = horizontal_grid(&files, grid_file, ref_name, &y_dim, &x_dim)?;
        check_same_horizontal(&files, &inputs, grid_file, &horizontal)?;

        // 6. Vertical coordinate.
        let locate = |name: &str| -> Result<VarSource> {
            let holders: Vec<usize> = files
                .iter()
                .enumerate()
                .filter(|(_, f)| f.nc.variable(name).is_some())
                .map(|(i, _)| i)
                .collect();
            if holders.is_empty() {
                return Err(GridError::Metadata {
                    file: files[grid_file].path.clone(),
                    variable: name.to_string(),
                    message: "named in formula_terms, but no input file has this variable"
                        .to_string(),
                });
            }
            let first = &files[holders[0]];
            let var = crate::catalog::require_var(first, name, "formula_terms")?;
            let spans = if classify_dims(first, &var)?.contains(&Axis::T) {
                let axis = reference_axis.as_ref().ok_or_else(|| GridError::Mismatch {
                    file: first.path.clone(),
                    variable: name.to_string(),
                    message: "varies in time but the run has no time axis".to_string(),
                })?;
                join_variable(name, &holders, &files, &times, axis)?.spans
            } else {
                vec![TimeSpan {
                    file: holders[0],
                    first_step: 0,
                    steps: 1,
                }]
            };
            let source = VarSource::new(name, &spans, &files)?;
            if source.len_of(Axis::Y) != Some(rows) || source.len_of(Axis::X) != Some(cols) {
                return Err(GridError::Mismatch {
                    file: first.path.clone(),
                    variable: name.to_string(),
                    message: format!(
                        "expected a ({rows} rows × {cols} columns) field on the run's grid"
                    ),
                });
            }
            Ok(source)
        };
        let vertical = match &z_dim {
            None => Vertical::Surface,
            Some(z) => vertical_from(&files, grid_file, z, &locate)?,
        };
        if let Some(levels) = levels_in_data {
            if vertical.levels() != levels {
                return Err(GridError::Mismatch {
                    file: files[grid_file].path.clone(),
                    variable: z_dim.clone().unwrap_or_default(),
                    message: format!(
                        "vertical coordinate has {} values but the data have {levels} levels",
                        vertical.levels()
                    ),
                });
            }
        }
        let has_pressure_input = inputs.iter().any(|i| i.role == Role::Pressure);
        let needs_latitude = !has_pressure_input && !matches!(vertical, Vertical::Surface);
        if needs_latitude && horizontal.latitude.is_none() {
            return Err(GridError::Metadata {
                file: files[grid_file].path.clone(),
                variable: ref_name.clone(),
                message: "no latitude found (1-D coordinate with units degrees_north, or 2-D latitude named in `coordinates`); it is needed to compute sea pressure from depth (TEOS-10)".to_string(),
            });
        }

        let shape = GridShape {
            levels: vertical.levels(),
            rows,
            cols,
        };
        let mut run = Run {
            // Closes the metadata handles before any data are read (see `paths`).
            paths: files.into_iter().map(|f| f.path).collect(),
            inputs,
            density: spec.density,
            shape,
            time,
            horizontal,
            vertical,
            z_dim,
            grid_file,
            wet_cells: 0,
            salinity_scale: 1.0,
        };
        run.count_wet_cells()?;
        Ok(run)
    }

    pub(crate) fn input(&self, role: Role) -> Option<&Input> {
        self.inputs.iter().find(|i| i.role == role)
    }

    fn required(&self, role: Role) -> &Input {
        // Required roles are guaranteed by `open`.
        self.input(role).unwrap_or(&self.inputs[0])
    }

    /// Counts wet cells (all required inputs present) at the first time step, in blocks
    /// of rows, and decides the salinity scale from the typical salinity value.
    fn count_wet_cells(&mut self) -> Result<()> {
        let block = (1_000_000 / (self.shape.levels * self.shape.cols).max(1)).max(1);
        let mut wet = 0u64;
        let mut salinity_sum = 0.0;
        let mut row = 0;
        while row < self.shape.rows {
            let rows = row..(row + block).min(self.shape.rows);
            let read = |role: Role| self.required(role).source.read(&self.paths, 0, &rows);
            let t = read(Role::Temperature)?;
            let s = read(Role::Salinity)?;
            let d = read(Role::Dic)?;
            let a = read(Role::Alkalinity)?;
            for i in 0..t.len() {
                if t[i].is_finite() && s[i].is_finite() && d[i].is_finite() && a[i].is_finite() {
                    wet += 1;
                    salinity_sum += s[i];
                }
            }
            row = rows.end;
        }
        self.wet_cells = wet;
        if wet > 0 {
            if let Conversion::Salinity(SalinityKind::Practical, _) =
                self.required(Role::Salinity).conversion
            {
                self.salinity_scale = units::practical_salinity_scale(salinity_sum / wet as f64);
            }
        }
        Ok(())
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

    /// Reads and converts one slab: time step `step`, all levels, rows `rows`, all columns.
    pub fn read_slab(&self, step: usize, rows: Range<usize>) -> Result<SlabInputs> {
        let raw = self.read_raw_slab(step, rows)?;
        Ok(self.convert_slab(raw))
    }

    /// The file-reading half of [`Run::read_slab`]: every value the slab needs, masked and
    /// unpacked but not converted. Reading is serialised by libnetcdf; converting
    /// ([`Run::convert_slab`]) is pure computation, so a pipeline can convert one slab on
    /// its worker threads while its reader thread reads the next.
    pub fn read_raw_slab(&self, step: usize, rows: Range<usize>) -> Result<RawSlab> {
        crate::catalog::silence_hdf5_diagnostics();
        if step >= self.time_steps() || rows.start >= rows.end || rows.end > self.shape.rows {
            return Err(GridError::OutOfRange {
                message: format!(
                    "asked for step {step}, rows {}..{}; the run has {} steps and {} rows",
                    rows.start,
                    rows.end,
                    self.time_steps(),
                    self.shape.rows
                ),
            });
        }
        let read = |role: Role| self.required(role).source.read(&self.paths, step, &rows);
        let temperature_raw = read(Role::Temperature)?;
        let salinity_raw = read(Role::Salinity)?;
        let dic_raw = read(Role::Dic)?;
        let alkalinity_raw = read(Role::Alkalinity)?;
        let optional = |role: Role| -> Result<Option<Vec<f64>>> {
            self.input(role)
                .map(|i| i.source.read(&self.paths, step, &rows))
                .transpose()
        };
        let phosphate_raw = optional(Role::Phosphate)?;
        let silicate_raw = optional(Role::Silicate)?;
        let pressure_raw = optional(Role::Pressure)?;
        let latitude = self.latitude_per_column(&rows)?;
        // Heights change per cell and step only without fixed levels (free surface,
        // terrain-following levels); fixed levels need none.
        let heights = match self.vertical {
            Vertical::Surface | Vertical::Parametric(_) => {
                Some(
                    self.vertical
                        .heights(&self.paths, step, &rows, self.shape.cols)?,
                )
            }
            Vertical::Depths { .. } | Vertical::Pressures { .. } => None,
        };
        Ok(RawSlab {
            step,
            rows,
            temperature_raw,
            salinity_raw,
            dic_raw,
            alkalinity_raw,
            phosphate_raw,
            silicate_raw,
            pressure_raw,
            latitude,
            heights,
        })
    }

    /// The converting half of [`Run::read_slab`]: units, TEOS-10 and EOS-80 conversions,
    /// in parallel on the current rayon pool. Never fails: what cannot be converted is NaN.
    /// `raw` must come from this run's [`Run::read_raw_slab`].
    pub fn convert_slab(&self, raw: RawSlab) -> SlabInputs {
        let cols = self.shape.cols;
        let cells = self.shape.levels * raw.rows.len() * cols;

        // Depth and sea pressure per cell.
        let (depth_m, mut pressure_dbar) =
            self.depth_and_pressure(&raw.rows, &raw.latitude, raw.heights);
        if let (Some(given), Some(input)) = (&raw.pressure_raw, self.input(Role::Pressure)) {
            if let Conversion::Pressure(to_dbar, atmosphere) = input.conversion {
                for (p, r) in pressure_dbar.iter_mut().zip(given) {
                    *p = r * to_dbar - atmosphere;
                }
            }
        }

        // Temperature, salinity, density, concentrations: converted in place.
        let (t_scale, t_kind) = match self.required(Role::Temperature).conversion {
            Conversion::Temperature(scale, kind) => (scale, kind),
            _ => (TemperatureUnits::Celsius, TemperatureKind::InSitu),
        };
        let salinity_conversion = match &self.required(Role::Salinity).conversion {
            Conversion::Salinity(kind, units) => (*kind, *units),
            _ => (SalinityKind::Practical, SalinityUnits::Practical),
        };
        let concentration = |role: Role| match self.input(role).map(|i| &i.conversion) {
            Some(Conversion::Concentration(c)) => Some(*c),
            _ => None,
        };
        let (dic_units, alk_units) = (concentration(Role::Dic), concentration(Role::Alkalinity));
        let (po4_units, si_units) = (
            concentration(Role::Phosphate),
            concentration(Role::Silicate),
        );
        let mut temperature_c = raw.temperature_raw;
        let mut salinity = raw.salinity_raw;
        let mut dic = raw.dic_raw;
        let mut alkalinity = raw.alkalinity_raw;
        // Absent nutrients are 0 µmol kg-1 and stay so (their units are None).
        let mut phosphate = raw.phosphate_raw.unwrap_or_else(|| vec![0.0; cells]);
        let mut silicate = raw.silicate_raw.unwrap_or_else(|| vec![0.0; cells]);
        let mut density_kg_m3 = vec![0.0; cells];
        (
            (
                temperature_c.par_iter_mut(),
                salinity.par_iter_mut(),
                density_kg_m3.par_iter_mut(),
                pressure_dbar.par_iter(),
            ),
            (
                dic.par_iter_mut(),
                alkalinity.par_iter_mut(),
                phosphate.par_iter_mut(),
                silicate.par_iter_mut(),
            ),
        )
            .into_par_iter()
            .with_min_len(256)
            .for_each(|((t, s, rho, p), (dic, alk, po4, si))| {
                let p = *p;
                let sp = match salinity_conversion {
                    (SalinityKind::Practical, _) => *s * self.salinity_scale,
                    (SalinityKind::Absolute, SalinityUnits::Absolute { to_g_per_kg }) => {
                        seawater::practical_from_absolute(*s * to_g_per_kg)
                    }
                    (SalinityKind::Absolute, SalinityUnits::Practical) => {
                        seawater::practical_from_absolute(*s)
                    }
                };
                let t_file = t_scale.to_celsius(*t);
                let (t_situ, density) = if t_file.is_finite() && sp.is_finite() && p.is_finite() {
                    in_situ_temperature_and_density(self.density, t_kind, t_file, sp, p)
                } else {
                    let reference = match self.density {
                        DensityChoice::Reference(rho) => rho,
                        DensityChoice::InSitu => f64::NAN,
                    };
                    (f64::NAN, reference)
                };
                *s = sp;
                *t = t_situ;
                *rho = density;
                let convert = |units: Option<Concentration>, v: f64| {
                    units.map_or(f64::NAN, |u| u.to_umol_per_kg(v, density))
                };
                *dic = convert(dic_units, *dic);
                *alk = convert(alk_units, *alk);
                if po4_units.is_some() {
                    *po4 = convert(po4_units, *po4);
                }
                if si_units.is_some() {
                    *si = convert(si_units, *si);
                }
            });
        SlabInputs {
            step: raw.step,
            shape: [self.shape.levels, raw.rows.len(), cols],
            rows: raw.rows,
            salinity,
            temperature_c,
            density_kg_m3,
            dic,
            alkalinity,
            phosphate,
            silicate,
            pressure_dbar,
            depth_m,
        }
    }

    /// Depth [m, positive down] and sea pressure [dbar] of every cell of a slab. On fixed
    /// levels (depth or pressure) both depend on level and latitude only: they are computed
    /// once per level and run of equal latitudes (once per row on a rectilinear grid).
    fn depth_and_pressure(
        &self,
        rows: &Range<usize>,
        latitude: &Option<Vec<f64>>,
        heights: Option<(Vec<f64>, Vec<f64>)>,
    ) -> (Vec<f64>, Vec<f64>) {
        let columns = rows.len() * self.shape.cols;
        let cells = self.shape.levels * columns;
        let lat_of = |column: usize| latitude.as_ref().map_or(0.0, |l| l[column]);
        let per_level = |at: &(dyn Fn(usize, f64) -> (f64, f64) + Sync)| {
            let mut depth = vec![0.0; cells];
            let mut pressure = vec![0.0; cells];
            depth
                .par_chunks_mut(columns.max(1))
                .zip(pressure.par_chunks_mut(columns.max(1)))
                .enumerate()
                .for_each(|(level, (depth, pressure))| {
                    let mut last: Option<(f64, (f64, f64))> = None;
                    for column in 0..columns {
                        let lat = lat_of(column);
                        let value = match last {
                            Some((l, v)) if l == lat => v,
                            _ => at(level, lat),
                        };
                        last = Some((lat, value));
                        (depth[column], pressure[column]) = value;
                    }
                });
            (depth, pressure)
        };
        let from_depth = |depth: f64, lat: f64| {
            let p = if depth.is_finite() {
                seawater::sea_pressure_from_depth(depth.max(0.0), lat).unwrap_or(f64::NAN)
            } else {
                f64::NAN
            };
            (depth, p)
        };
        match (&self.vertical, heights) {
            (Vertical::Pressures { dbar, .. }, _) => per_level(&|level, lat| {
                let p = dbar[level];
                (seawater::depth_from_sea_pressure(p, lat), p)
            }),
            (Vertical::Depths { depth_m, .. }, _) => {
                per_level(&|level, lat| from_depth(depth_m[level], lat))
            }
            (_, Some((z, eta))) => (0..cells)
                .into_par_iter()
                .map(|c| {
                    let column = c % columns;
                    let (_, p) = from_depth(eta[column] - z[c], lat_of(column));
                    (-z[c], p)
                })
                .unzip(),
            // read_raw_slab reads heights for every other vertical coordinate.
            (_, None) => (vec![f64::NAN; cells], vec![f64::NAN; cells]),
        }
    }

    /// Latitude [°N] per column of the rows, when the run has latitude.
    fn latitude_per_column(&self, rows: &Range<usize>) -> Result<Option<Vec<f64>>> {
        let Some(source) = &self.horizontal.latitude else {
            return Ok(None);
        };
        let values = source.read(&self.paths, 0, rows)?;
        if source.len_of(Axis::X).is_some() {
            return Ok(Some(values));
        }
        let cols = self.shape.cols;
        Ok(Some(
            values
                .iter()
                .flat_map(|v| std::iter::repeat_n(*v, cols))
                .collect(),
        ))
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

    /// Conversions applied and approximations made, for output metadata.
    pub fn provenance(&self) -> Vec<(String, String)> {
        let mut out = Vec::new();
        for input in &self.inputs {
            out.push((
                format!("{}_input", input.role.key()),
                format!(
                    "variable '{}' ({}; units \"{}\"): {}",
                    input.name,
                    input.standard_name.as_deref().unwrap_or("no standard_name"),
                    input.units,
                    input.conversion.describe(self.density)
                ),
            ));
        }
        out.push(("density".to_string(), density_label(self.density)));
        out.push(("vertical_coordinate".to_string(), self.vertical.describe()));
        let pressure = if self.input(Role::Pressure).is_some() {
            "from the run's pressure variable".to_string()
        } else {
            match self.vertical {
                Vertical::Pressures { .. } => "from the pressure vertical coordinate".to_string(),
                Vertical::Surface => "0 dbar (surface values)".to_string(),
                _ => "sea pressure from depth below the sea surface and latitude, TEOS-10 p_from_z (gsw)".to_string(),
            }
        };
        out.push(("pressure".to_string(), pressure));
        if self.salinity_scale != 1.0 {
            out.push((
                "salinity_scale".to_string(),
                format!(
                    "salinity values look like mass fractions; multiplied by {}",
                    self.salinity_scale
                ),
            ));
        }
        for (key, text) in seawater::PROVENANCE_NOTES {
            out.push((key.to_string(), text.to_string()));
        }
        out
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
        crate::catalog::silence_hdf5_diagnostics();
        let files = crate::catalog::open_paths(&self.paths)?;
        crate::output::write_coordinates(self, &files, out, steps)
    }
}

/// One slab's values as read from the files (masked and unpacked, in canonical order), before
/// conversion: the output of [`Run::read_raw_slab`], the input of [`Run::convert_slab`].
#[derive(Clone, Debug)]
pub struct RawSlab {
    step: usize,
    rows: Range<usize>,
    temperature_raw: Vec<f64>,
    salinity_raw: Vec<f64>,
    dic_raw: Vec<f64>,
    alkalinity_raw: Vec<f64>,
    phosphate_raw: Option<Vec<f64>>,
    silicate_raw: Option<Vec<f64>>,
    pressure_raw: Option<Vec<f64>>,
    /// Latitude per column of the slab, when the run has one.
    latitude: Option<Vec<f64>>,
    /// Height per cell and free-surface height per column, when levels are not fixed.
    heights: Option<(Vec<f64>, Vec<f64>)>,
}

impl RawSlab {
    /// Time step of the slab.
    pub fn step(&self) -> usize {
        self.step
    }

    /// Rows of the slab.
    pub fn rows(&self) -> Range<usize> {
        self.rows.clone()
    }
}

/// In-situ temperature [°C] and the density for per-volume concentrations [kg m-3] of one
/// wet cell; NaN for what cannot be computed.
fn in_situ_temperature_and_density(
    density: DensityChoice,
    kind: TemperatureKind,
    temperature: f64,
    practical: f64,
    p: f64,
) -> (f64, f64) {
    let in_situ_only = || seawater::in_situ_temperature(kind, temperature, practical, p);
    match density {
        DensityChoice::Reference(rho) => (in_situ_only().unwrap_or(f64::NAN), rho),
        // One pass gives both (saves a potential-temperature evaluation per cell).
        DensityChoice::InSitu => match seawater::in_situ_state(kind, temperature, practical, p) {
            Ok(state) => (state.temperature_c, state.density_kg_m3),
            Err(_) => (in_situ_only().unwrap_or(f64::NAN), f64::NAN),
        },
    }
}

/// Horizontal grid of the reference file: rectilinear when the Y/X dimensions have 1-D
/// latitude/longitude coordinate variables, curvilinear with 2-D ones in `coordinates`.
fn horizontal_grid(
    files: &[InputFile],
    grid_file: usize,
    ref_name: &str,
    y_dim: &str,
    x_dim: &str,
) -> Result<Horizontal> {
    let file = &files[grid_file];
    let var = crate::catalog::require_var(file, ref_name, "the run")?;
    let is_lat = |v: &netcdf::Variable| {
        let sn = attr_text(v, "standard_name").unwrap_or_default();
        sn == "latitude"
            || (sn.is_empty()
                && axis_of_coordinate(v) == Some(Axis::Y)
                && attr_text(v, "units").is_some_and(|u| u.to_ascii_lowercase().contains("north")))
    };
    let is_lon = |v: &netcdf::Variable| {
        let sn = attr_text(v, "standard_name").unwrap_or_default();
        sn == "longitude"
            || (sn.is_empty()
                && axis_of_coordinate(v) == Some(Axis::X)
                && attr_text(v, "units").is_some_and(|u| u.to_ascii_lowercase().contains("east")))
    };
    let mut horizontal = Horizontal {
        curvilinear: false,
        y_dim: y_dim.to_string(),
        x_dim: x_dim.to_string(),
        lat_name: None,
        lon_name: None,
        latitude: None,
        grid_mapping: attr_text(&var, "grid_mapping").filter(|g| file.nc.variable(g).is_some()),
    };
    let one_d_lat = file.nc.variable(y_dim).filter(|v| is_lat(v));
    let one_d_lon = file.nc.variable(x_dim).filter(|v| is_lon(v));
    if one_d_lat.is_some() {
        horizontal.lat_name = Some(y_dim.to_string());
        horizontal.lon_name = one_d_lon.map(|_| x_dim.to_string());
    } else {
        for aux in auxiliary_coordinates(file, &var) {
            let Some(v) = file.nc.variable(&aux) else {
                continue;
            };
            let dims = crate::catalog::dim_names(&v);
            let on_grid = dims.len() == 2
                && dims.contains(&y_dim.to_string())
                && dims.contains(&x_dim.to_string());
            if on_grid && is_lat(&v) {
                horizontal.lat_name = Some(aux.clone());
                horizontal.curvilinear = true;
            } else if on_grid && is_lon(&v) {
                horizontal.lon_name = Some(aux.clone());
            }
        }
    }
    if let Some(lat) = &horizontal.lat_name {
        let lat_var = crate::catalog::require_var(file, lat, "the grid")?;
        // Latitude's dimensions are the run's Y (and X) dimensions.
        let axes = crate::catalog::dim_names(&lat_var)
            .iter()
            .map(|d| if d == y_dim { Axis::Y } else { Axis::X })
            .collect();
        let source = VarSource {
            name: lat.clone(),
            axes,
            lens: crate::catalog::dim_lens(&lat_var),
            pieces: vec![crate::source::Piece {
                file: grid_file,
                first_step: 0,
                steps: 1,
                mask: crate::catalog::MaskRule::of(&lat_var),
            }],
            data: Default::default(),
        };
        horizontal.latitude = Some(source);
    }
    Ok(horizontal)
}

/// Every file holding an input must carry the same latitude/longitude values as the grid file.
fn check_same_horizontal(
    files: &[InputFile],
    inputs: &[Input],
    grid_file: usize,
    horizontal: &Horizontal,
) -> Result<()> {
    let names: Vec<&String> = horizontal
        .lat_name
        .iter()
        .chain(horizontal.lon_name.iter())
        .collect();
    let mut reference = Vec::new();
    for name in &names {
        let var = crate::catalog::require_var(&files[grid_file], name, "the grid")?;
        reference.push(read_all(&files[grid_file].path, &var)?);
    }
    let mut checked = vec![false; files.len()];
    checked[grid_file] = true;
    for input in inputs {
        for piece in &input.source.pieces {
            if std::mem::replace(&mut checked[piece.file], true) {
                continue;
            }
            let file = &files[piece.file];
            for (name, want) in names.iter().zip(&reference) {
                let Some(var) = file.nc.variable(name) else {
                    continue;
                };
                let have = read_all(&file.path, &var)?;
                let same = have.len() == want.len()
                    && have
                        .iter()
                        .zip(want)
                        .all(|(a, b)| close(*a, *b) || (a.is_nan() && b.is_nan()));
                if !same {
                    return Err(GridError::Mismatch {
                        file: file.path.clone(),
                        variable: name.to_string(),
                        message: format!(
                            "coordinate values differ from those in {}; expected all files on one grid",
                            files[grid_file].path.display()
                        ),
                    });
                }
            }
        }
    }
    Ok(())
}
