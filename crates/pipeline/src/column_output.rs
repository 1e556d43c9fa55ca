//! The column analysis in the CF output: cell geometry (`cell_area`, `sea_floor_depth`,
//! `cell_thickness`), saturation-horizon depths and their status flags per time step, and one
//! time series per corrosive-extent quantity.

use crate::cells::VALUE_FILL;
use crate::columns::{ColumnResult, ColumnWork};
use crate::error::nc;
use crate::geometry::ColumnGeometry;
use crate::horizon_choice::{horizon_depth_name, horizon_status_name, series_name, HorizonPlan};
use crate::indicators::UNCERTAINTY_SUFFIX;
use crate::output::OutputLayout;
use crate::plan::SlabPlan;
use crate::PipelineError;
use acidscape_analysis::extent::{CorrosiveExtent, ExtentRow, ExtentSummary, Mineral};
use acidscape_analysis::horizons::HorizonStatus;
use acidscape_gridio::OutputAxes;
use netcdf::{AttributeValue, FileMut};
use std::path::Path;

/// Name of the cell-area variable every data variable's `cell_measures` points at.
pub const CELL_AREA: &str = "cell_area";
/// Name of the sea-floor depth variable.
pub const SEA_FLOOR_DEPTH: &str = "sea_floor_depth";
/// Name of the cell-thickness variable.
pub const CELL_THICKNESS: &str = "cell_thickness";
/// `cell_measures` of every gridded data variable when the column analysis runs.
pub const CELL_MEASURES: &str = "area: cell_area";
/// Fill value of the status flags (no flag value).
pub const STATUS_FILL: i8 = -1;
/// Fill value of the double-precision time series, as the indicators'.
pub const DOUBLE_FILL: f64 = 1.0e20;

/// The extent quantities a plan writes, as rows of an empty summary (names, units, labels).
pub fn series_rows(plan: &HorizonPlan) -> Vec<ExtentRow> {
    let empty = CorrosiveExtent::new(plan.thresholds.clone()).summary();
    kept_rows(plan, &empty)
}

/// The rows of `summary` for the plan's minerals (grid-wide rows always).
pub fn kept_rows(plan: &HorizonPlan, summary: &ExtentSummary) -> Vec<ExtentRow> {
    summary
        .rows()
        .into_iter()
        .filter(|row| row.mineral.is_none_or(|m| plan.minerals.contains(&m)))
        .collect()
}

/// The variable name of an extent row.
pub fn row_name(row: &ExtentRow) -> String {
    series_name(row.quantity, row.mineral, row.threshold)
}

/// Where and how the column variables are laid out.
pub(crate) struct ColumnDefinition<'a> {
    pub path: &'a Path,
    pub layout: &'a OutputLayout,
    pub axes: &'a OutputAxes,
    pub plan: &'a SlabPlan,
    /// Chunk shape of the 3-D variables (as the indicators).
    pub chunk: &'a [usize],
    pub deflate_level: i32,
}

impl ColumnDefinition<'_> {
    fn add<T: netcdf::NcTypeDescriptor>(
        &self,
        file: &mut FileMut,
        name: &str,
        dims: &[String],
        chunk: Option<&[usize]>,
        attributes: Vec<(&str, AttributeValue)>,
    ) -> Result<(), PipelineError> {
        let refs: Vec<&str> = dims.iter().map(String::as_str).collect();
        let mut var = nc(file.add_variable::<T>(name, &refs), self.path, || {
            format!("defining variable '{name}'")
        })?;
        let what = || format!("setting up variable '{name}'");
        if let Some(chunk) = chunk {
            nc(var.set_chunking(chunk), self.path, what)?;
            if self.deflate_level > 0 {
                nc(
                    var.set_compression(self.deflate_level, true),
                    self.path,
                    what,
                )?;
            }
        }
        for (key, value) in attributes {
            let fill = key == "_FillValue";
            let done = if fill {
                match value {
                    AttributeValue::Float(v) => var.set_fill_value(v),
                    AttributeValue::Double(v) => var.set_fill_value(v),
                    AttributeValue::Schar(v) => var.set_fill_value(v),
                    other => var.put_attribute(key, other).map(|_| ()),
                }
            } else {
                var.put_attribute(key, value).map(|_| ())
            };
            nc(done, self.path, what)?;
        }
        Ok(())
    }

    /// Coordinates and grid mapping, as the indicators carry them.
    fn grid_attributes(&self) -> Vec<(&'static str, AttributeValue)> {
        let mut out = Vec::new();
        if let Some(c) = &self.axes.coordinates_attr {
            out.push(("coordinates", AttributeValue::from(c.as_str())));
        }
        if let Some(g) = &self.axes.grid_mapping {
            out.push(("grid_mapping", AttributeValue::from(g.as_str())));
        }
        out
    }

    fn horizontal_dims(&self) -> Vec<String> {
        let d = &self.layout.dims;
        d[d.len() - 2..].to_vec()
    }

    fn horizontal_chunk(&self) -> Vec<usize> {
        vec![self.plan.chunk[1], self.plan.shape[2]]
    }

    /// Dimensions and chunks of per-step 2-D fields: ([time,] y, x).
    fn step_dims(&self) -> (Vec<String>, Vec<usize>) {
        let mut dims = Vec::new();
        let mut chunk = Vec::new();
        if let Some(t) = self.layout.time_dim() {
            dims.push(t.to_string());
            chunk.push(1);
        }
        dims.extend(self.horizontal_dims());
        chunk.extend(self.horizontal_chunk());
        (dims, chunk)
    }
}

/// Defines the column variables other than `cell_area` (see [`define_cell_area`]).
pub(crate) fn define_column_outputs(
    file: &mut FileMut,
    def: &ColumnDefinition,
    work: &ColumnWork,
) -> Result<(), PipelineError> {
    define_floor_and_thickness(file, def, work.geometry())?;
    for (mineral, threshold) in work.plan().horizons() {
        define_horizon(file, def, mineral, threshold, work.has_depth_uncertainty())?;
    }
    let series_dims: Vec<String> = def
        .layout
        .time_dim()
        .map(String::from)
        .into_iter()
        .collect();
    for row in series_rows(work.plan()) {
        let attributes = vec![
            ("long_name", AttributeValue::from(row.long_name.as_str())),
            ("units", AttributeValue::from(row.units)),
            ("_FillValue", AttributeValue::Double(DOUBLE_FILL)),
            (
                "comment",
                AttributeValue::from(series_comment(&row).as_str()),
            ),
        ];
        def.add::<f64>(file, &row_name(&row), &series_dims, None, attributes)?;
    }
    Ok(())
}

/// Defines `cell_area` and writes it. Called before the data variables whose
/// `cell_measures` name it: CDO takes a cell measure met after them, when it names its
/// coordinates, for a second and inconsistent definition (and warns).
pub(crate) fn define_cell_area(
    file: &mut FileMut,
    def: &ColumnDefinition,
    work: &ColumnWork,
) -> Result<(), PipelineError> {
    // float32, as CMIP stores areacello.
    let area = vec![
        ("standard_name", AttributeValue::from("cell_area")),
        (
            "long_name",
            AttributeValue::from("horizontal area of the grid cell"),
        ),
        ("units", AttributeValue::from("m2")),
        ("_FillValue", AttributeValue::Float(VALUE_FILL)),
        (
            "comment",
            AttributeValue::from(format!("From {}.", work.geometry().area_source).as_str()),
        ),
    ];
    define_horizontal(file, def, CELL_AREA, area)?;

    let mut area = file
        .variable_mut(CELL_AREA)
        .ok_or_else(|| PipelineError::Internal("cell_area vanished".into()))?;
    let values: Vec<f32> = work
        .geometry()
        .area_m2
        .iter()
        .map(|a| if a.is_finite() { *a as f32 } else { VALUE_FILL })
        .collect();
    nc(area.put_values(&values, ..), def.path, || {
        "writing 'cell_area'".into()
    })
}

fn series_comment(row: &ExtentRow) -> String {
    let cells = "Sum over wet cells of cell_area x cell_thickness";
    match row.quantity {
        "wet_volume" => format!("{cells} (every cell with model inputs)."),
        "sea_surface_area" => "Sum of cell_area over the columns with at least one wet cell.".into(),
        "volume_with_omega" => format!("{cells} where omega is known."),
        "volume_below_threshold" => format!("{cells} where omega is below the threshold."),
        "volume_fraction_below_threshold" => {
            "volume_below_threshold / volume_with_omega of the same mineral.".into()
        }
        "surface_area_below_threshold" => {
            "Sum of cell_area over the columns whose top wet cell has omega below the threshold.".into()
        }
        "area_with_horizon" => "Sum of cell_area over the columns with a horizon depth.".into(),
        "mean_horizon_depth" => {
            "Sum of cell_area x horizon depth over the columns with a horizon depth, divided by area_with_horizon; missing when no column has one.".into()
        }
        _ => String::new(),
    }
}

/// A float32 field on the horizontal dimensions, with the grid's coordinates.
fn define_horizontal(
    file: &mut FileMut,
    def: &ColumnDefinition,
    name: &str,
    mut attributes: Vec<(&str, AttributeValue)>,
) -> Result<(), PipelineError> {
    attributes.extend(def.grid_attributes());
    let dims = def.horizontal_dims();
    def.add::<f32>(file, name, &dims, Some(&def.horizontal_chunk()), attributes)
}

fn define_floor_and_thickness(
    file: &mut FileMut,
    def: &ColumnDefinition,
    geometry: &ColumnGeometry,
) -> Result<(), PipelineError> {
    let floor = vec![
        ("standard_name", AttributeValue::from("sea_floor_depth_below_geoid")),
        ("long_name", AttributeValue::from("depth of the sea floor")),
        ("units", AttributeValue::from("m")),
        ("positive", AttributeValue::from("down")),
        ("_FillValue", AttributeValue::Float(VALUE_FILL)),
        ("cell_measures", AttributeValue::from(CELL_MEASURES)),
        (
            "comment",
            AttributeValue::from(
                format!(
                    "From {}. Horizons below the deepest level centre are sought down to this depth (plus the free-surface height on parametric levels).",
                    geometry.sea_floor_source
                )
                .as_str(),
            ),
        ),
    ];
    define_horizontal(file, def, SEA_FLOOR_DEPTH, floor)?;

    let mut dims = Vec::new();
    let mut chunk = def.chunk.to_vec();
    let varies = geometry.vertical.varies_in_time();
    if let Some(t) = def.layout.time_dim() {
        if varies {
            dims.push(t.to_string());
        } else {
            chunk.remove(0);
        }
    }
    dims.extend(
        def.layout
            .dims
            .iter()
            .skip(usize::from(def.layout.time_dim().is_some()))
            .cloned(),
    );
    let mut thickness = vec![
        ("standard_name", AttributeValue::from("cell_thickness")),
        ("long_name", AttributeValue::from("thickness of the wet part of the grid cell")),
        ("units", AttributeValue::from("m")),
        ("_FillValue", AttributeValue::Float(VALUE_FILL)),
        ("missing_value", AttributeValue::Float(VALUE_FILL)),
        ("cell_measures", AttributeValue::from(CELL_MEASURES)),
        (
            "comment",
            AttributeValue::from(
                format!(
                    "Level bounds: {}. Clipped at the sea floor (partial bottom cells): max(0, min(lower bound, sea floor) - upper bound). Wet cells only{}.",
                    geometry.vertical.describe(),
                    if varies { "; per time step, as the levels follow the free surface" } else { "" }
                )
                .as_str(),
            ),
        ),
    ];
    thickness.extend(def.grid_attributes());
    def.add::<f32>(file, CELL_THICKNESS, &dims, Some(&chunk), thickness)
}

/// The name of a horizon depth's standard-uncertainty variable.
fn depth_uncertainty_name(mineral: Mineral, threshold: f64) -> String {
    format!(
        "{}{UNCERTAINTY_SUFFIX}",
        horizon_depth_name(mineral, threshold)
    )
}

fn define_horizon(
    file: &mut FileMut,
    def: &ColumnDefinition,
    mineral: Mineral,
    threshold: f64,
    with_uncertainty: bool,
) -> Result<(), PipelineError> {
    let (dims, chunk) = def.step_dims();
    let name = mineral.name();
    let status_name = horizon_status_name(mineral, threshold);
    let uncertainty_name = depth_uncertainty_name(mineral, threshold);
    let ancillary = if with_uncertainty {
        format!("{status_name} {uncertainty_name}")
    } else {
        status_name.clone()
    };
    let mut depth = vec![
        (
            "long_name",
            AttributeValue::from(
                format!(
                    "depth of the {name} saturation horizon (shallowest depth where omega {name} falls below {threshold})"
                )
                .as_str(),
            ),
        ),
        ("units", AttributeValue::from("m")),
        ("positive", AttributeValue::from("down")),
        ("_FillValue", AttributeValue::Float(VALUE_FILL)),
        ("missing_value", AttributeValue::Float(VALUE_FILL)),
        ("ancillary_variables", AttributeValue::from(ancillary.as_str())),
        ("cell_measures", AttributeValue::from(CELL_MEASURES)),
        ("comment", AttributeValue::from(horizon_comment(name, threshold).as_str())),
    ];
    // CF standard name table (version 93): the "minimum depth of undersaturation", sometimes
    // called the saturation horizon.
    let standard =
        (threshold == 1.0).then(|| format!("minimum_depth_of_{name}_undersaturation_in_sea_water"));
    if let Some(standard) = &standard {
        depth.insert(
            0,
            ("standard_name", AttributeValue::from(standard.as_str())),
        );
    }
    depth.extend(def.grid_attributes());
    if with_uncertainty {
        let mut uncertainty = vec![
            (
                "long_name",
                AttributeValue::from(
                    format!("standard uncertainty of the depth of the omega {name} = {threshold} horizon").as_str(),
                ),
            ),
            ("units", AttributeValue::from("m")),
            ("_FillValue", AttributeValue::Float(VALUE_FILL)),
            ("missing_value", AttributeValue::Float(VALUE_FILL)),
            ("ancillary_variables", AttributeValue::from(status_name.as_str())),
            ("cell_measures", AttributeValue::from(CELL_MEASURES)),
            ("comment", AttributeValue::from(depth_uncertainty_comment(name).as_str())),
        ];
        if let Some(standard) = &standard {
            let modified = format!("{standard} standard_error");
            uncertainty.insert(
                0,
                ("standard_name", AttributeValue::from(modified.as_str())),
            );
        }
        uncertainty.extend(def.grid_attributes());
        def.add::<f32>(file, &uncertainty_name, &dims, Some(&chunk), uncertainty)?;
    }
    def.add::<f32>(
        file,
        &horizon_depth_name(mineral, threshold),
        &dims,
        Some(&chunk),
        depth,
    )?;

    let mut status = vec![
        ("standard_name", AttributeValue::from("status_flag")),
        (
            "long_name",
            AttributeValue::from(
                format!("how the omega {name} = {threshold} horizon of each column was found")
                    .as_str(),
            ),
        ),
        ("_FillValue", AttributeValue::Schar(STATUS_FILL)),
        (
            "flag_values",
            AttributeValue::Schars(HorizonStatus::flag_values()),
        ),
        (
            "flag_meanings",
            AttributeValue::from(HorizonStatus::flag_meanings().as_str()),
        ),
        ("comment", AttributeValue::from(status_comment().as_str())),
        ("cell_measures", AttributeValue::from(CELL_MEASURES)),
    ];
    status.extend(def.grid_attributes());
    def.add::<i8>(file, &status_name, &dims, Some(&chunk), status)
}

fn horizon_comment(name: &str, threshold: f64) -> String {
    format!(
        "Depth below the sea surface at which omega {name} first falls below {threshold} going down the water column, at each step's actual cell depths. Between the two level centres that bracket the crossing the depth is interpolated linearly in depth on ln(omega), which is exact for an exponential profile and does not depend on the threshold's scale. 0 m where the top wet cell is already below the threshold; missing where the water is saturated down to the sea floor, where omega is missing above any crossing, and on land. The status variable says which case each column is."
    )
}

fn depth_uncertainty_comment(name: &str) -> String {
    format!(
        "First-order propagation of omega_{name}{UNCERTAINTY_SUFFIX} at the two level centres the depth was interpolated (or extrapolated) from, through the derivatives of the depth with respect to both omega values, the two taken as fully correlated (neighbouring levels share the constants' errors and mostly the inputs'). Between two level centres the depth moves the same way with both omega values, so this is the larger of the possible values; extrapolated into the bottom cell the two partly cancel. The uncertainty of the level depths is not included. Missing where the depth is missing or does not depend on omega locally (0 m where the top wet cell is already below the threshold)."
    )
}

fn status_comment() -> String {
    HorizonStatus::ALL
        .iter()
        .map(|s| format!("{} {}: {}", s.flag_value(), s.word(), s.explanation()))
        .collect::<Vec<_>>()
        .join("; ")
}

/// Writes one slab's horizons, and the geometry it carries; `with_step_zero`: other ranks of a
/// collective write are writing slabs of step 0 now.
pub(crate) fn write_columns(
    file: &mut FileMut,
    path: &Path,
    layout: &OutputLayout,
    work: &ColumnWork,
    result: &ColumnResult,
    shape: [usize; 3],
    with_step_zero: bool,
) -> Result<(), PipelineError> {
    let rows = result.rows.clone();
    let mut horizontal = Vec::new();
    if layout.time_dim().is_some() {
        horizontal.push(result.step..result.step + 1);
    }
    horizontal.push(rows.clone());
    horizontal.push(0..shape[2]);
    for ((mineral, threshold), field) in work.plan().horizons().into_iter().zip(&result.horizons) {
        put(
            file,
            path,
            &horizon_depth_name(mineral, threshold),
            &field.depth_m,
            &horizontal,
            result.step,
        )?;
        put(
            file,
            path,
            &horizon_status_name(mineral, threshold),
            &field.status,
            &horizontal,
            result.step,
        )?;
        if !field.uncertainty_m.is_empty() {
            let name = depth_uncertainty_name(mineral, threshold);
            put(
                file,
                path,
                &name,
                &field.uncertainty_m,
                &horizontal,
                result.step,
            )?;
        }
    }
    // In a collective write, a slab without the step-0 geometry still takes part, with no
    // values, while another rank writes that geometry.
    let empty = rows.start..rows.start;
    let (thickness, thickness_rows) = match &result.thickness {
        Some(values) => (Some(values.as_slice()), rows.clone()),
        None if with_step_zero => (Some(&[][..]), empty.clone()),
        None => (None, empty.clone()),
    };
    if let Some(thickness) = thickness {
        let mut extents = layout.extents(result.step, thickness_rows, shape);
        if layout.time_dim().is_some() && !work.geometry().vertical.varies_in_time() {
            extents.remove(0);
        }
        put(file, path, CELL_THICKNESS, thickness, &extents, result.step)?;
    }
    let (floor, floor_rows) = match &result.sea_floor {
        Some(values) => (Some(values.as_slice()), rows),
        None if with_step_zero => (Some(&[][..]), empty),
        None => (None, empty),
    };
    if let Some(floor) = floor {
        let extents = [floor_rows, 0..shape[2]];
        put(file, path, SEA_FLOOR_DEPTH, floor, &extents, result.step)?;
    }
    Ok(())
}

fn put<T: netcdf::NcTypeDescriptor + Copy>(
    file: &mut FileMut,
    path: &Path,
    name: &str,
    values: &[T],
    extents: &[std::ops::Range<usize>],
    step: usize,
) -> Result<(), PipelineError> {
    let mut var = file
        .variable_mut(name)
        .ok_or_else(|| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("variable '{name}' is missing"),
        })?;
    nc(var.put_values(values, extents.to_vec()), path, || {
        format!("writing '{name}' at time step {}", step + 1)
    })
}

/// Writes one finished step's extent time series.
pub(crate) fn write_extent_step(
    file: &mut FileMut,
    path: &Path,
    layout: &OutputLayout,
    plan: &HorizonPlan,
    step: usize,
    extent: &CorrosiveExtent,
) -> Result<(), PipelineError> {
    for row in kept_rows(plan, &extent.summary()) {
        let value = row.value.unwrap_or(DOUBLE_FILL);
        let name = row_name(&row);
        if layout.time_dim().is_some() {
            let at = step..step + 1;
            put(file, path, &name, &[value], std::slice::from_ref(&at), step)?;
            continue;
        }
        let mut var = file
            .variable_mut(&name)
            .ok_or_else(|| PipelineError::Output {
                path: path.to_path_buf(),
                message: format!("variable '{name}' is missing"),
            })?;
        nc(var.put_value(value, ()), path, || {
            format!("writing '{name}'")
        })?;
    }
    Ok(())
}
