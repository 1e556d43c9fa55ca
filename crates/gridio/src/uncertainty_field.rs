//! An input's standard uncertainty given as a NetCDF variable on the run's grid (e.g. a
//! model-minus-observation misfit map), checked against the run and converted per cell to the
//! chemistry's units as the run's own variable for that role is.
//!
//! A field holds the run's (z, y, x) cells, with or without the run's time steps. Its `units`
//! are read as a difference: kelvin and °C are the same (no 273.15 offset), a pressure keeps
//! no atmosphere; `%` (or `percent`) means a percentage of each cell's value. A negative value
//! is refused, naming the cell; a missing one leaves that cell without an uncertainty.

use crate::axes::{axis_of_coordinate, classify_dims, Axis};
use crate::catalog::{attr_text, dim_lens, dim_names, open_paths, read_all, InputFile};
use crate::error::{GridError, Result};
use crate::roles::Role;
use crate::run::Run;
use crate::seawater;
use crate::source::VarSource;
use crate::timeline::{file_time, TimeSpan};
use crate::units::{self, Concentration, SalinityUnits};
use crate::SlabInputs;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// The inputs a field may give the uncertainty of (the chemistry's inputs of a grid).
const FIELD_ROLES: [Role; 7] = [
    Role::Dic,
    Role::Alkalinity,
    Role::Temperature,
    Role::Salinity,
    Role::Pressure,
    Role::Phosphate,
    Role::Silicate,
];

/// How a field's numbers become standard uncertainties in the chemistry's units.
#[derive(Clone, Copy, Debug, PartialEq)]
enum FieldScale {
    /// A percentage of each cell's value.
    Percent,
    /// A concentration, per volume converted through each cell's density.
    Concentration(Concentration),
    /// Absolute salinity to practical (Millero et al. 2008 reference composition).
    AbsoluteSalinity { to_g_per_kg: f64 },
    /// A plain factor to the chemistry's units (°C, practical salinity, dbar).
    Factor(f64),
}

/// A standard-uncertainty field of one input, opened and checked against a run.
#[derive(Clone, Debug)]
pub struct UncertaintyField {
    role: Role,
    path: PathBuf,
    units: String,
    scale: FieldScale,
    source: VarSource,
}

/// Reads `%` and `percent` as relative; anything else by the role's own units parser.
fn field_scale(role: Role, units: &str) -> std::result::Result<FieldScale, units::UnitsError> {
    if matches!(units.trim(), "%" | "percent") {
        return Ok(FieldScale::Percent);
    }
    Ok(match role {
        Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate => {
            FieldScale::Concentration(units::parse_concentration(units)?)
        }
        // A difference of 1 K is a difference of 1 °C.
        Role::Temperature => units::parse_temperature(units).map(|_| FieldScale::Factor(1.0))?,
        Role::Salinity => match units::parse_salinity(units)? {
            SalinityUnits::Practical => FieldScale::Factor(1.0),
            SalinityUnits::Absolute { to_g_per_kg } => FieldScale::AbsoluteSalinity { to_g_per_kg },
        },
        Role::Pressure => FieldScale::Factor(units::parse_pressure(units)?.to_dbar),
        Role::CellArea | Role::SeaFloorDepth => FieldScale::Factor(f64::NAN),
    })
}

impl UncertaintyField {
    /// Opens `variable` of `path` as the standard uncertainty of the input `role` (a key such
    /// as "dic") of `run`, checking its grid, time steps and units against the run's.
    pub fn open(run: &Run, role: &str, path: &Path, variable: &str) -> Result<UncertaintyField> {
        crate::catalog::prepare_hdf5();
        let role = (FIELD_ROLES.iter().copied())
            .find(|r| r.key() == role)
            .ok_or_else(|| GridError::Mapping {
                source_name: "uncertainty field".into(),
                message: format!(
                    "'{role}' is not an input with an uncertainty; expected one of {}",
                    FIELD_ROLES.map(Role::key).join(", ")
                ),
            })?;
        if !path.exists() {
            return Err(GridError::FileNotFound {
                path: path.to_path_buf(),
            });
        }
        let files = open_paths(&[path.to_path_buf()])?;
        let file = &files[0];
        let var = file.nc.variable(variable).ok_or_else(|| GridError::Metadata {
            file: path.to_path_buf(),
            variable: variable.to_string(),
            message: format!(
                "no such variable; expected the standard uncertainty of {} here. Variables present: {}",
                role.key(),
                file.nc.variables().map(|v| v.name()).collect::<Vec<_>>().join(", ")
            ),
        })?;
        let fail = |message: String| GridError::Mismatch {
            file: path.to_path_buf(),
            variable: variable.to_string(),
            message,
        };
        let (units, scale) = units_of(role, path, &var)?;
        let axes = classify_dims(file, &var)?;
        check_shape(run, &var, &axes).map_err(fail)?;
        let has_time = axes.contains(&Axis::T);
        let span = TimeSpan {
            file: 0,
            first_step: 0,
            steps: if has_time { run.time_steps() } else { 1 },
        };
        if has_time {
            check_time(run, file).map_err(fail)?;
        }
        check_coordinates(run, file, &var, &axes)?;
        let source = VarSource::new(variable, &[span], &files)?;
        let field = UncertaintyField {
            role,
            path: path.to_path_buf(),
            units,
            scale,
            source,
        };
        // A field the same at every step is read whole once here, so a negative value is
        // refused before any work (a field with time steps: when its step is read).
        if !has_time {
            field.read(0, 0..run.shape().rows)?;
        }
        Ok(field)
    }

    /// The input's key (e.g. "dic").
    pub fn role(&self) -> &'static str {
        self.role.key()
    }

    /// The file the field is read from.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Whether the values are fractions of each cell's value (units `%`).
    pub fn is_relative(&self) -> bool {
        self.scale == FieldScale::Percent
    }

    /// Whether the field has one value per time step (else the same at every step).
    pub fn has_time(&self) -> bool {
        self.source.has_time()
    }

    /// File, variable and units, for the outputs' comments and the resume check.
    pub fn describe(&self) -> String {
        format!(
            "{} from variable '{}' of {} (units \"{}\"{})",
            self.role.key(),
            self.source.name,
            self.path.display(),
            self.units,
            if self.has_time() {
                ", one value per cell and time step"
            } else {
                ", the same at every time step"
            }
        )
    }

    /// The field's values for time step `step`, rows `rows` (all levels and columns, in
    /// canonical order), masked to NaN; a negative value is refused naming its cell.
    pub fn read(&self, step: usize, rows: Range<usize>) -> Result<Vec<f64>> {
        crate::catalog::prepare_hdf5();
        let values = self
            .source
            .read(std::slice::from_ref(&self.path), step, &rows)?;
        if let Some(at) = values.iter().position(|v| *v < 0.0) {
            let cols = self.source.len_of(Axis::X).unwrap_or(1);
            let per_level = rows.len() * cols;
            let (level, row, col) = (
                at / per_level,
                rows.start + at % per_level / cols,
                at % cols,
            );
            return Err(GridError::Implausible {
                message: format!(
                    "file {}, variable '{}': value {} at time step {}, level {}, row {}, column {} (counting from 1) is negative; a standard uncertainty is at least 0 (leave a cell without one as missing)",
                    self.path.display(),
                    self.source.name,
                    values[at],
                    step + 1,
                    level + 1,
                    row + 1,
                    col + 1
                ),
            });
        }
        Ok(values)
    }

    /// Converts `values` (from [`UncertaintyField::read`] for the slab of `inputs`) in place to
    /// the chemistry's units, or to fractions when relative; a per-volume concentration goes
    /// through each cell's density as the run's own variable does (NaN where it has none).
    pub fn convert(&self, values: &mut [f64], inputs: &SlabInputs) {
        convert_values(self.scale, values, &inputs.density_kg_m3);
    }
}

/// Converts a field's values in place by `scale`, per-volume ones through `density_kg_m3`.
fn convert_values(scale: FieldScale, values: &mut [f64], density_kg_m3: &[f64]) {
    match scale {
        // As `--uncertainty dic=5%` reads: the percentage divided by 100.
        FieldScale::Percent => values.iter_mut().for_each(|v| *v /= 100.0),
        FieldScale::Factor(f) => values.iter_mut().for_each(|v| *v *= f),
        FieldScale::Concentration(c) => {
            for (v, rho) in values.iter_mut().zip(density_kg_m3) {
                *v = c.to_umol_per_kg(*v, *rho);
            }
        }
        FieldScale::AbsoluteSalinity { to_g_per_kg } => values
            .iter_mut()
            .for_each(|v| *v = seawater::practical_from_absolute(*v * to_g_per_kg)),
    }
}

/// The field's `units` and what they mean for `role`.
fn units_of(role: Role, path: &Path, var: &netcdf::Variable) -> Result<(String, FieldScale)> {
    let refuse = |message: String| GridError::Units {
        file: path.to_path_buf(),
        variable: var.name(),
        message,
    };
    let units = attr_text(var, "units").ok_or_else(|| {
        refuse(format!(
            "no `units` attribute; expected the units of {} (e.g. {}) or % for a percentage of each cell's value",
            role.key(),
            role.example_units()
        ))
    })?;
    let scale = field_scale(role, &units)
        .map_err(|e| refuse(format!("{e}; or % for a percentage of each cell's value")))?;
    if role == Role::Temperature && scale == FieldScale::Percent {
        return Err(refuse(
            "a relative uncertainty of temperature has no meaning; expected K or degC".into(),
        ));
    }
    Ok((units, scale))
}

/// The run's (z, y, x) cells, with or without time; a field without the run's levels is
/// refused (it would have to be taken as the same at every depth).
fn check_shape(
    run: &Run,
    var: &netcdf::Variable,
    axes: &[Axis],
) -> std::result::Result<(), String> {
    let shape = run.shape();
    let lens = dim_lens(var);
    let len = |axis: Axis| axes.iter().position(|a| *a == axis).map(|i| lens[i]);
    let found = dim_names(var)
        .iter()
        .zip(&lens)
        .map(|(d, l)| format!("{d}={l}"))
        .collect::<Vec<_>>()
        .join(", ");
    let levels = run.z_dim.is_some();
    let expected = format!(
        "expected the run's cells ({}{} rows x {} columns), with or without its {} time step(s)",
        if levels {
            format!("{} levels x ", shape.levels)
        } else {
            String::new()
        },
        shape.rows,
        shape.cols,
        run.time_steps()
    );
    let z_ok = match len(Axis::Z) {
        Some(l) => levels && l == shape.levels,
        None => !levels,
    };
    let t_ok = len(Axis::T).is_none_or(|l| l == run.time_steps() && run.time.is_some());
    let ok = z_ok && t_ok && len(Axis::Y) == Some(shape.rows) && len(Axis::X) == Some(shape.cols);
    if ok {
        return Ok(());
    }
    let hint = if levels && len(Axis::Z).is_none() {
        "; a field without levels is not taken as the same at every depth: write it on every level"
    } else {
        ""
    };
    Err(format!("dimensions ({found}); {expected}{hint}"))
}

/// The field's time coordinate, when it has one, names the run's dates.
fn check_time(run: &Run, file: &InputFile) -> std::result::Result<(), String> {
    let (Ok(Some(theirs)), Some(ours)) = (file_time(file), run.time.as_ref()) else {
        return Ok(());
    };
    let date = |axis: &crate::calendar::TimeAxis, v: f64| axis.to_datetime(v).ok();
    for (step, (a, b)) in theirs.values.iter().zip(&ours.values).enumerate() {
        let (mine, run_date) = (date(&theirs.axis, *a), date(&ours.axis, *b));
        if mine.is_none() || mine != run_date {
            return Err(format!(
                "time step {} is {} but the run's is {}; expected the run's time steps",
                step + 1,
                mine.map_or("unreadable".into(), |d| d.to_string()),
                run_date.map_or("unreadable".into(), |d| d.to_string())
            ));
        }
    }
    Ok(())
}

/// Each 1-D coordinate of the field's Z, Y and X dimensions, where both files have one, holds
/// the run's values.
fn check_coordinates(
    run: &Run,
    file: &InputFile,
    var: &netcdf::Variable,
    axes: &[Axis],
) -> Result<()> {
    let grid = open_paths(&[run.paths[run.grid_file].clone()])?;
    let grid = &grid[0];
    let run_dims = [
        (Axis::Z, run.z_dim.clone()),
        (Axis::Y, Some(run.horizontal.y_dim.clone())),
        (Axis::X, Some(run.horizontal.x_dim.clone())),
    ];
    for (name, axis) in dim_names(var).iter().zip(axes) {
        let Some(Some(run_dim)) = run_dims.iter().find(|(a, _)| a == axis).map(|(_, d)| d) else {
            continue;
        };
        let (Some(theirs), Some(ours)) = (coordinate(file, name), coordinate(grid, run_dim)) else {
            continue;
        };
        let (a, b) = (read_all(&file.path, &theirs)?, read_all(&grid.path, &ours)?);
        let close = |x: f64, y: f64| (x - y).abs() <= 1e-6 * x.abs().max(y.abs()).max(1.0);
        if a.len() != b.len() || a.iter().zip(&b).any(|(x, y)| !close(*x, *y)) {
            return Err(GridError::Mismatch {
                file: file.path.clone(),
                variable: name.clone(),
                message: format!(
                    "coordinate values differ from '{run_dim}' in {}; expected the uncertainty field on the run's grid",
                    grid.path.display()
                ),
            });
        }
    }
    Ok(())
}

/// The 1-D coordinate variable of dimension `dim` in `file`, if it has one.
fn coordinate<'f>(file: &'f InputFile, dim: &str) -> Option<netcdf::Variable<'f>> {
    (file.nc.variable(dim)).filter(|v| v.dimensions().len() == 1 && axis_of_coordinate(v).is_some())
}

#[cfg(test)]
mod tests {
    use super::*;

    // A temperature difference has the same number in K and °C (SI brochure, 9th edition,
    // section 2.3.1: the degree Celsius is equal in magnitude to the kelvin).
    #[test]
    fn units_read_as_differences() {
        for units in ["K", "kelvin", "degC", "degree_Celsius"] {
            assert_eq!(
                field_scale(Role::Temperature, units),
                Ok(FieldScale::Factor(1.0)),
                "{units}"
            );
        }
        // 1 bar = 10 dbar; no atmosphere is subtracted from a difference of pressures.
        assert_eq!(
            field_scale(Role::Pressure, "bar"),
            Ok(FieldScale::Factor(10.0))
        );
        assert_eq!(
            field_scale(Role::Salinity, "1"),
            Ok(FieldScale::Factor(1.0))
        );
        assert_eq!(field_scale(Role::Dic, "%"), Ok(FieldScale::Percent));
        assert_eq!(
            field_scale(Role::Salinity, "percent"),
            Ok(FieldScale::Percent)
        );
        assert!(field_scale(Role::Dic, "1").is_err());
        assert!(field_scale(Role::Alkalinity, "furlongs").is_err());
    }

    #[test]
    fn conversions_to_the_chemistry_units() {
        let convert = |units: &str, role: Role, value: f64| {
            let mut values = [value, f64::NAN];
            convert_values(
                field_scale(role, units).unwrap(),
                &mut values,
                &[1025.0, 1025.0],
            );
            assert!(values[1].is_nan(), "{units}: a missing value stays missing");
            values[0]
        };
        // 0.002 mol m-3 in water of 1025 kg m-3 is 2000/1025 µmol kg-1.
        let per_volume = convert("mol m-3", Role::Dic, 0.002);
        assert!((per_volume - 2000.0 / 1025.0).abs() < 1e-12, "{per_volume}");
        assert_eq!(
            convert("mmol m-3", Role::Alkalinity, 2.05),
            2.05 * 1e3 / 1025.0
        );
        assert_eq!(convert("umol kg-1", Role::Phosphate, 0.03), 0.03);
        assert_eq!(convert("%", Role::Silicate, 5.0), 0.05);
        // Reference-composition salinity: SP = SR × 35/35.16504 (Millero et al. 2008).
        let practical = convert("g kg-1", Role::Salinity, 0.01);
        assert!(
            (practical - 0.01 * 35.0 / 35.16504).abs() < 1e-15,
            "{practical}"
        );
        assert_eq!(convert("dbar", Role::Pressure, 3.0), 3.0);
        assert_eq!(convert("K", Role::Temperature, 0.1), 0.1);
    }
}
