//! Which fields are compared, and whether two runs can be compared at all: the same grid,
//! the same depths and the same units, or a message naming both files.

use crate::error::{ComparisonError, Result};
use crate::options::list_items;
use acidscape_gridio::{FieldKind, IndicatorFile, VerticalCoordinate};

/// Prefix of the saturation-horizon depth variables `compute` writes.
pub const HORIZON_PREFIX: &str = "horizon_depth_";

/// One field to compare.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldPlan {
    /// Variable name in the runs.
    pub name: String,
    /// Units (the same in every run).
    pub units: String,
    /// `long_name` (or the name).
    pub long_name: String,
    /// `standard_name`, if any.
    pub standard_name: Option<String>,
    /// `cell_methods` of the run's variable, if any.
    pub cell_methods: Option<String>,
    /// Whether it is 3-D (per cell) rather than 2-D (per column).
    pub has_levels: bool,
    /// Thresholds for the fraction of area or volume below them (Ω fields).
    pub thresholds: Vec<f64>,
}

impl FieldPlan {
    /// Whether the field is a saturation-horizon depth (positive down).
    pub fn is_horizon(&self) -> bool {
        self.name.starts_with(HORIZON_PREFIX)
    }
}

/// The Ω thresholds of a mineral's extra horizons, from their names
/// (`horizon_depth_aragonite_1p5` → 1.5).
fn extra_horizon_thresholds(file: &IndicatorFile, mineral: &str) -> Vec<f64> {
    let prefix = format!("{HORIZON_PREFIX}{mineral}_");
    file.variables()
        .iter()
        .filter_map(|v| v.name.strip_prefix(&prefix))
        .filter_map(|tag| tag.replace('p', ".").parse::<f64>().ok())
        .filter(|t| t.is_finite() && *t > 0.0)
        .collect()
}

/// Thresholds for an Ω field: those given, else 1 and the runs' extra horizon thresholds.
fn thresholds_for(file: &IndicatorFile, name: &str, given: Option<&[f64]>) -> Vec<f64> {
    let Some(mineral) = name.strip_prefix("omega_") else {
        return Vec::new();
    };
    let mut list = match given {
        Some(t) => t.to_vec(),
        None => {
            let mut t = vec![1.0];
            t.extend(extra_horizon_thresholds(file, mineral));
            t
        }
    };
    list.sort_by(f64::total_cmp);
    list.dedup();
    list
}

/// The fields to compare: those named (comma-separated), or every field of the first run that
/// varies in time on the grid (indicators and horizon depths; flags and geometry left out).
pub fn select_fields(
    file: &IndicatorFile,
    names: Option<&str>,
    thresholds: Option<&[f64]>,
) -> Result<Vec<FieldPlan>> {
    let chosen: Vec<&acidscape_gridio::FieldInfo> = match names {
        None => file
            .variables_of(FieldKind::Field)
            .filter(|v| v.has_time)
            .collect(),
        Some(list) => list_items(list)
            .map(|name| {
                let v = file.variable(name)?;
                if v.kind != FieldKind::Field || !v.has_time {
                    return Err(ComparisonError::option(
                        "--fields",
                        format!(
                            "'{name}' in {} is not a field that varies in time on the grid",
                            file.path().display()
                        ),
                    ));
                }
                Ok(v)
            })
            .collect::<Result<_>>()?,
    };
    if chosen.is_empty() {
        return Err(ComparisonError::file(
            file.path(),
            "has no field that varies in time on the grid to compare",
        ));
    }
    Ok(chosen
        .into_iter()
        .map(|v| FieldPlan {
            name: v.name.clone(),
            units: v.units.clone().unwrap_or_else(|| "1".into()),
            long_name: v.long_name.clone().unwrap_or_else(|| v.name.clone()),
            standard_name: v.standard_name.clone(),
            cell_methods: v.cell_methods.clone(),
            has_levels: v.has_levels,
            thresholds: thresholds_for(file, &v.name, thresholds),
        })
        .collect())
}

fn close(a: f64, b: f64, tolerance: f64) -> bool {
    (a - b).abs() <= tolerance * a.abs().max(b.abs()).max(1.0)
}

fn all_close(a: &[f64], b: &[f64], tolerance: f64) -> bool {
    a.len() == b.len()
        && a.iter()
            .zip(b)
            .all(|(x, y)| close(*x, *y, tolerance) || (x.is_nan() && y.is_nan()))
}

/// Refuses runs on different grids, depths, or with different units or shapes of a field.
pub fn check_comparable(
    first: &IndicatorFile,
    other: &IndicatorFile,
    fields: &[FieldPlan],
) -> Result<()> {
    let differ = |message: String| ComparisonError::Mismatch {
        first: first.path().to_path_buf(),
        second: other.path().to_path_buf(),
        message,
    };
    let (a, b) = (first.grid(), other.grid());
    if (a.rows, a.cols) != (b.rows, b.cols) {
        return Err(differ(format!(
            "grids of {} x {} and {} x {} columns",
            a.rows, a.cols, b.rows, b.cols
        )));
    }
    if a.is_curvilinear() != b.is_curvilinear() {
        return Err(differ(
            "one grid is curvilinear, the other rectilinear".into(),
        ));
    }
    let (lon_a, lat_a) = a.column_centres();
    let (lon_b, lat_b) = b.column_centres();
    // Longitudes compared modulo 360 (0..360 and -180..180 conventions are the same grid).
    let same_lon = lon_a.len() == lon_b.len()
        && lon_a.iter().zip(&lon_b).all(|(x, y)| {
            ((x - y + 180.0).rem_euclid(360.0) - 180.0).abs() <= 1e-6 * x.abs().max(1.0)
        });
    if !same_lon || !all_close(&lat_a, &lat_b, 1e-6) {
        return Err(differ(
            "latitudes or longitudes of the cell centres differ".into(),
        ));
    }
    check_same_levels(first, other).map_err(differ)?;
    for field in fields {
        let info = other.variable(&field.name).map_err(|_| {
            differ(format!(
                "the second has no variable '{}' (choose the fields both have with --fields)",
                field.name
            ))
        })?;
        let units = info.units.clone().unwrap_or_else(|| "1".into());
        if units != field.units {
            return Err(differ(format!(
                "'{}' is in units \"{}\" in the first and \"{units}\" in the second",
                field.name, field.units
            )));
        }
        if info.has_levels != field.has_levels || !info.has_time {
            return Err(differ(format!("'{}' has different dimensions", field.name)));
        }
    }
    Ok(())
}

fn check_same_levels(
    first: &IndicatorFile,
    other: &IndicatorFile,
) -> std::result::Result<(), String> {
    let (a, b) = (first.vertical(), other.vertical());
    if a.levels != b.levels {
        return Err(format!("{} and {} vertical levels", a.levels, b.levels));
    }
    match (&a.coordinate, &b.coordinate) {
        (VerticalCoordinate::Surface, VerticalCoordinate::Surface) => Ok(()),
        (
            VerticalCoordinate::Depths { depth_m: x, .. },
            VerticalCoordinate::Depths { depth_m: y, .. },
        ) => {
            if all_close(x, y, 1e-6) {
                Ok(())
            } else {
                Err(format!("level depths differ ({x:?} m and {y:?} m)"))
            }
        }
        (VerticalCoordinate::Pressures { dbar: x }, VerticalCoordinate::Pressures { dbar: y }) => {
            if all_close(x, y, 1e-6) {
                Ok(())
            } else {
                Err("level pressures differ".into())
            }
        }
        (
            VerticalCoordinate::Parametric {
                standard_name: x, ..
            },
            VerticalCoordinate::Parametric {
                standard_name: y, ..
            },
        ) if x == y => {
            let rows = 0..first.grid().rows;
            let floor = |f: &IndicatorFile| {
                f.parametric_columns(0, rows.clone())
                    .map_err(|e| e.to_string())
                    .map(|p| p.map(|p| p.sea_floor_m).unwrap_or_default())
            };
            if all_close(&floor(first)?, &floor(other)?, 1e-6) {
                Ok(())
            } else {
                Err("the sea-floor depths of the terrain-following coordinate differ".into())
            }
        }
        _ => Err("vertical coordinates of different kinds".into()),
    }
}
