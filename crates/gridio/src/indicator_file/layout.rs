//! The spatial axes of an indicator file: horizontal grid (rectilinear or curvilinear, with
//! bounds) and vertical coordinate (with bounds, or parametric).

use super::FieldInfo;
use crate::axes::Axis;
use crate::catalog::{attr_text, dim_names, read_all, require_var, InputFile};
use crate::error::{GridError, Result};
use crate::source::VarSource;
use crate::timeline::TimeSpan;
use crate::vertical::{vertical_from, Formula, Vertical};

/// Positions of cell centres and corners on the horizontal grid.
#[derive(Clone, Debug, PartialEq)]
pub enum GridLayout {
    /// 1-D latitude and longitude coordinate variables.
    Rectilinear {
        /// Latitude of each row \[degrees north\].
        lat: Vec<f64>,
        /// Longitude of each column \[degrees east\].
        lon: Vec<f64>,
        /// Bounds of each row, if the file has them.
        lat_bounds: Option<Vec<[f64; 2]>>,
        /// Bounds of each column, if the file has them.
        lon_bounds: Option<Vec<[f64; 2]>>,
    },
    /// 2-D latitude and longitude (row-major, rows × cols) with optional 4-vertex bounds.
    Curvilinear {
        /// Latitude of each cell centre \[degrees north\].
        lat: Vec<f64>,
        /// Longitude of each cell centre \[degrees east\].
        lon: Vec<f64>,
        /// The four vertices' latitudes of each cell, in the file's order.
        lat_vertices: Option<Vec<[f64; 4]>>,
        /// The four vertices' longitudes of each cell.
        lon_vertices: Option<Vec<[f64; 4]>>,
    },
}

/// The horizontal grid of an indicator file.
#[derive(Clone, Debug, PartialEq)]
pub struct HorizontalGrid {
    /// Name of the Y (row) dimension.
    pub y_dim: String,
    /// Name of the X (column) dimension.
    pub x_dim: String,
    /// Rows (length of the Y dimension).
    pub rows: usize,
    /// Columns (length of the X dimension).
    pub cols: usize,
    /// Latitude variable.
    pub lat_name: String,
    /// Longitude variable.
    pub lon_name: String,
    /// Grid-mapping variable named by the data, if any.
    pub grid_mapping: Option<String>,
    /// Centres and bounds.
    pub layout: GridLayout,
}

impl HorizontalGrid {
    /// Water columns (rows × cols).
    pub fn columns(&self) -> usize {
        self.rows * self.cols
    }

    /// Whether latitude and longitude are 2-D.
    pub fn is_curvilinear(&self) -> bool {
        matches!(self.layout, GridLayout::Curvilinear { .. })
    }

    /// Longitude and latitude of every column's centre, row-major \[degrees\].
    pub fn column_centres(&self) -> (Vec<f64>, Vec<f64>) {
        match &self.layout {
            GridLayout::Rectilinear { lat, lon, .. } => {
                let mut lons = Vec::with_capacity(self.columns());
                let mut lats = Vec::with_capacity(self.columns());
                for &y in lat {
                    for &x in lon {
                        lons.push(x);
                        lats.push(y);
                    }
                }
                (lons, lats)
            }
            GridLayout::Curvilinear { lat, lon, .. } => (lon.clone(), lat.clone()),
        }
    }
}

/// Values of a variable on (rows, cols) in row-major order, whichever order its two
/// dimensions have in the file; `per_cell` values follow each (e.g. 4 vertices).
fn row_major(
    file: &InputFile,
    name: &str,
    grid_dims: (&str, &str, usize, usize),
    per_cell: usize,
) -> Result<Vec<f64>> {
    let (y_dim, x_dim, rows, cols) = grid_dims;
    let var = require_var(file, name, "the grid")?;
    let dims = dim_names(&var);
    let values = read_all(&file.path, &var)?;
    let fail = || GridError::Metadata {
        file: file.path.clone(),
        variable: name.to_string(),
        message: format!(
            "expected dimensions ({y_dim}, {x_dim}{}) of lengths ({rows}, {cols}{})",
            if per_cell > 1 { ", vertices" } else { "" },
            if per_cell > 1 {
                format!(", {per_cell}")
            } else {
                String::new()
            }
        ),
    };
    if values.len() != rows * cols * per_cell || dims.len() < 2 {
        return Err(fail());
    }
    if dims[0] == y_dim && dims[1] == x_dim {
        return Ok(values);
    }
    if dims[0] != x_dim || dims[1] != y_dim {
        return Err(fail());
    }
    let mut out = Vec::with_capacity(values.len());
    for j in 0..rows {
        for i in 0..cols {
            let at = (i * rows + j) * per_cell;
            out.extend_from_slice(&values[at..at + per_cell]);
        }
    }
    Ok(out)
}

/// The values of the variable named by `name`'s `bounds` attribute, if it has one.
fn bounds_of(file: &InputFile, name: &str) -> Result<Option<(String, Vec<f64>)>> {
    let var = require_var(file, name, "the grid")?;
    match attr_text(&var, "bounds").filter(|b| file.nc.variable(b).is_some()) {
        Some(b) => {
            let bvar = require_var(file, &b, "a bounds attribute")?;
            Ok(Some((b.clone(), read_all(&file.path, &bvar)?)))
        }
        None => Ok(None),
    }
}

fn pairs(values: &[f64]) -> Vec<[f64; 2]> {
    values.chunks_exact(2).map(|p| [p[0], p[1]]).collect()
}

fn quads(values: &[f64]) -> Vec<[f64; 4]> {
    values
        .chunks_exact(4)
        .map(|p| [p[0], p[1], p[2], p[3]])
        .collect()
}

/// The horizontal grid of the reference variable.
pub(super) fn horizontal(files: &[InputFile], reference: &FieldInfo) -> Result<HorizontalGrid> {
    let file = &files[0];
    let dim_of = |axis: Axis| reference.axes.iter().position(|a| *a == axis);
    let (Some(y), Some(x)) = (dim_of(Axis::Y), dim_of(Axis::X)) else {
        return Err(GridError::Metadata {
            file: file.path.clone(),
            variable: reference.name.clone(),
            message: "has no Y and X dimensions".to_string(),
        });
    };
    let (y_dim, x_dim) = (reference.dims[y].clone(), reference.dims[x].clone());
    let var = require_var(file, &reference.name, "the grid")?;
    let lens = crate::catalog::dim_lens(&var);
    let (rows, cols) = (lens[y], lens[x]);
    drop(var);
    let h = crate::grid::horizontal_grid(files, 0, &reference.name, &y_dim, &x_dim)?;
    let missing = |what: &str| {
        GridError::Metadata {
        file: file.path.clone(),
        variable: reference.name.clone(),
        message: format!(
            "no {what} found (neither a 1-D coordinate variable '{y_dim}'/'{x_dim}' nor 2-D coordinates named in `coordinates`)"
        ),
    }
    };
    let lat_name = h.lat_name.clone().ok_or_else(|| missing("latitude"))?;
    let lon_name = h.lon_name.clone().ok_or_else(|| missing("longitude"))?;
    let layout = if h.curvilinear {
        let dims = (y_dim.as_str(), x_dim.as_str(), rows, cols);
        let vertices = |name: &str| -> Result<Option<Vec<[f64; 4]>>> {
            let Some((b, _)) = bounds_of(file, name)? else {
                return Ok(None);
            };
            Ok(Some(quads(&row_major(file, &b, dims, 4)?)))
        };
        GridLayout::Curvilinear {
            lat: row_major(file, &lat_name, dims, 1)?,
            lon: row_major(file, &lon_name, dims, 1)?,
            lat_vertices: vertices(&lat_name)?,
            lon_vertices: vertices(&lon_name)?,
        }
    } else {
        let axis_values = |name: &str, len: usize| -> Result<Vec<f64>> {
            let v = read_all(&file.path, &require_var(file, name, "the grid")?)?;
            if v.len() == len {
                Ok(v)
            } else {
                Err(GridError::Metadata {
                    file: file.path.clone(),
                    variable: name.to_string(),
                    message: format!("expected {len} values, found {}", v.len()),
                })
            }
        };
        let bounds = |name: &str, len: usize| -> Result<Option<Vec<[f64; 2]>>> {
            Ok(bounds_of(file, name)?
                .filter(|(_, v)| v.len() == 2 * len)
                .map(|(_, v)| pairs(&v)))
        };
        GridLayout::Rectilinear {
            lat: axis_values(&lat_name, rows)?,
            lon: axis_values(&lon_name, cols)?,
            lat_bounds: bounds(&lat_name, rows)?,
            lon_bounds: bounds(&lon_name, cols)?,
        }
    };
    Ok(HorizontalGrid {
        y_dim,
        x_dim,
        rows,
        cols,
        lat_name,
        lon_name,
        grid_mapping: h.grid_mapping,
        layout,
    })
}

/// How the depth of each level is known.
#[derive(Clone, Debug, PartialEq)]
pub enum VerticalCoordinate {
    /// No vertical dimension: surface values only.
    Surface,
    /// Fixed depths of the level centres.
    Depths {
        /// Depth of each level's centre \[m, positive down\].
        depth_m: Vec<f64>,
        /// Depths of each level's upper and lower bounds \[m, positive down\], if the file has
        /// them.
        bounds_m: Option<Vec<[f64; 2]>>,
        /// Whether the file gives heights (`positive = "up"`).
        positive_up_in_file: bool,
    },
    /// Fixed sea pressure of each level \[dbar\].
    Pressures {
        /// Sea pressure of each level \[dbar\].
        dbar: Vec<f64>,
    },
    /// A CF parametric ocean coordinate (depth per cell and step from `formula_terms`).
    Parametric {
        /// Its standard name, e.g. `ocean_s_coordinate_g2`.
        standard_name: String,
        /// The free-surface term (time-dependent).
        free_surface: String,
        /// The sea-floor depth term.
        sea_floor: String,
        /// Every variable named in `formula_terms`.
        terms: Vec<String>,
    },
}

/// The vertical coordinate of an indicator file.
#[derive(Clone, Debug, PartialEq)]
pub struct VerticalAxis {
    /// The vertical dimension and coordinate variable, if any.
    pub name: Option<String>,
    /// Number of levels (1 without a vertical coordinate).
    pub levels: usize,
    /// Index of the level nearest the sea surface.
    pub surface_level: usize,
    /// How depths are known.
    pub coordinate: VerticalCoordinate,
}

impl VerticalAxis {
    /// Number of levels.
    pub fn levels(&self) -> usize {
        self.levels
    }

    /// Index of the level nearest the sea surface (level 0 for surface-first files, the last
    /// for bottom-first terrain-following files).
    pub fn surface_level(&self) -> usize {
        self.surface_level
    }
}

/// Index of the largest value (the level nearest the surface for heights and s values).
fn index_of_max(values: &[f64]) -> usize {
    (0..values.len())
        .max_by(|&a, &b| values[a].total_cmp(&values[b]))
        .unwrap_or(0)
}

/// The vertical coordinate of the reference variable.
pub(super) fn vertical(
    files: &[InputFile],
    reference: &FieldInfo,
    steps: usize,
    grid: &HorizontalGrid,
) -> Result<(VerticalAxis, Vertical)> {
    let file = &files[0];
    let Some(z) = reference.axes.iter().position(|a| *a == Axis::Z) else {
        let axis = VerticalAxis {
            name: None,
            levels: 1,
            surface_level: 0,
            coordinate: VerticalCoordinate::Surface,
        };
        return Ok((axis, Vertical::Surface));
    };
    let z_name = reference.dims[z].clone();
    let locate = |name: &str| -> Result<VarSource> {
        let var = require_var(file, name, "formula_terms")?;
        let timed = crate::axes::classify_dims(file, &var)?.contains(&Axis::T);
        let span = TimeSpan {
            file: 0,
            first_step: 0,
            steps: if timed { steps } else { 1 },
        };
        let source = VarSource::new(name, &[span], files)?;
        if source.len_of(Axis::Y) != Some(grid.rows) || source.len_of(Axis::X) != Some(grid.cols) {
            return Err(GridError::Mismatch {
                file: file.path.clone(),
                variable: name.to_string(),
                message: format!(
                    "expected a field of {} rows × {} columns, on the grid of the data",
                    grid.rows, grid.cols
                ),
            });
        }
        Ok(source)
    };
    let internal = vertical_from(files, 0, &z_name, &locate)?;
    let coordinate = match &internal {
        Vertical::Surface => VerticalCoordinate::Surface,
        Vertical::Depths {
            depth_m,
            positive_up,
            ..
        } => VerticalCoordinate::Depths {
            depth_m: depth_m.clone(),
            bounds_m: depth_bounds(file, &z_name, *positive_up, depth_m.len())?,
            positive_up_in_file: *positive_up,
        },
        Vertical::Pressures { dbar, .. } => VerticalCoordinate::Pressures { dbar: dbar.clone() },
        Vertical::Parametric(p) => VerticalCoordinate::Parametric {
            standard_name: p.standard_name.clone(),
            free_surface: p.eta.name.clone(),
            sea_floor: p.depth.name.clone(),
            terms: p.term_vars.clone(),
        },
    };
    let surface_level = match &internal {
        Vertical::Surface => 0,
        Vertical::Depths { depth_m, .. } => {
            let negated: Vec<f64> = depth_m.iter().map(|d| -d).collect();
            index_of_max(&negated)
        }
        Vertical::Pressures { dbar, .. } => {
            let negated: Vec<f64> = dbar.iter().map(|d| -d).collect();
            index_of_max(&negated)
        }
        Vertical::Parametric(p) => match &p.formula {
            Formula::Sigma { sigma } => index_of_max(sigma),
            Formula::SG1 { s, .. } | Formula::SG2 { s, .. } => index_of_max(s),
        },
    };
    let axis = VerticalAxis {
        name: Some(z_name),
        levels: internal.levels(),
        surface_level,
        coordinate,
    };
    Ok((axis, internal))
}

/// Depth bounds of z-levels \[m, positive down\], from the coordinate's `bounds` variable.
fn depth_bounds(
    file: &InputFile,
    name: &str,
    positive_up: bool,
    levels: usize,
) -> Result<Option<Vec<[f64; 2]>>> {
    let Some((b, values)) = bounds_of(file, name)? else {
        return Ok(None);
    };
    let var = require_var(file, name, "the vertical coordinate")?;
    let units = attr_text(&var, "units").unwrap_or_default();
    let to_m = crate::units::parse_length(&units)
        .map_err(|e| GridError::Units {
            file: file.path.clone(),
            variable: name.to_string(),
            message: e.to_string(),
        })?
        .to_m;
    if values.len() != 2 * levels {
        return Err(GridError::Metadata {
            file: file.path.clone(),
            variable: b,
            message: format!(
                "expected ({levels}, 2) bounds, found {} values",
                values.len()
            ),
        });
    }
    let sign = if positive_up { -1.0 } else { 1.0 };
    let depths: Vec<f64> = values.iter().map(|v| sign * v * to_m).collect();
    Ok(Some(pairs(&depths)))
}

/// Heights of the cells of a parametric coordinate at one step, with the free surface and the
/// sea floor of each column.
#[derive(Clone, Debug, PartialEq)]
pub struct ParametricColumns {
    /// Height of each cell centre above the datum \[m, positive up\], levels × rows × cols.
    pub height_m: Vec<f64>,
    /// Free-surface height of each column \[m, positive up\], rows × cols.
    pub free_surface_m: Vec<f64>,
    /// Sea-floor depth below the datum of each column \[m, positive down\], rows × cols.
    pub sea_floor_m: Vec<f64>,
}

/// The heights, free surface and sea floor of a parametric coordinate (None for others).
pub(super) fn parametric_columns(
    internal: &Vertical,
    paths: &[std::path::PathBuf],
    step: usize,
    rows: &std::ops::Range<usize>,
    cols: usize,
) -> Result<Option<ParametricColumns>> {
    let Vertical::Parametric(p) = internal else {
        return Ok(None);
    };
    let (height_m, free_surface_m) = internal.heights(paths, step, rows, cols)?;
    let sea_floor_m = p
        .depth
        .read(paths, step, rows)?
        .into_iter()
        .map(|d| d * p.depth_to_m)
        .collect();
    Ok(Some(ParametricColumns {
        height_m,
        free_surface_m,
        sea_floor_m,
    }))
}
