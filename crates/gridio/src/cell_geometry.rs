//! What a run says about the shape of its cells, for areas and volumes: the horizontal cell
//! outlines (1-D latitude/longitude bounds, or 4-vertex bounds on curvilinear grids), the run's
//! own cell area and sea-floor depth, and the vertical extent of every level. Raw numbers only:
//! areas on the sphere, thicknesses and volumes are computed by the caller. Where the run gives
//! no bounds they are derived from the centres (midpoints), and the description says so.

use crate::catalog::{attr_text, dim_names, open_paths, read_all, require_var, InputFile};
use crate::conversion::Conversion;
use crate::error::{GridError, Result};
use crate::roles::Role;
use crate::run::Run;
use crate::units;
use crate::vertical::{formula_from, Formula, Vertical};
use std::path::PathBuf;

/// The shape of a run's cells, as far as the run describes it.
#[derive(Clone, Debug)]
pub struct CellGeometry {
    /// Horizontal outlines of the cells.
    pub outlines: CellOutlines,
    /// The run's own horizontal cell area [m2] (`areacello` or another `cell_area`), if any.
    pub cell_area: Option<ColumnField>,
    /// Sea-floor depth below the geoid [m, positive down]: the `depth` term of a parametric
    /// coordinate, else `deptho` or another `sea_floor_depth_below_geoid`, if any.
    pub sea_floor: Option<ColumnField>,
    /// Vertical extent of each level.
    pub vertical: VerticalCells,
}

/// One value per water column (rows × cols, row-major, canonical order), with its source.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnField {
    /// The variable read.
    pub variable: String,
    /// The file it was read from.
    pub file: PathBuf,
    /// Values converted to SI (m2 or m); NaN where the file marks them missing.
    pub values: Vec<f64>,
}

/// Horizontal cell outlines in degrees east and north.
#[derive(Clone, Debug, PartialEq)]
pub enum CellOutlines {
    /// 1-D coordinates: longitude bounds per grid column, latitude bounds per grid row.
    Rectilinear {
        lon_bounds: Vec<[f64; 2]>,
        lat_bounds: Vec<[f64; 2]>,
        origin: String,
    },
    /// 2-D coordinates: the four vertices of every cell (rows × cols, row-major), in order
    /// around the cell.
    Curvilinear {
        lon_vertices: Vec<[f64; 4]>,
        lat_vertices: Vec<[f64; 4]>,
        origin: String,
    },
    /// The run has no latitude and longitude for its cells.
    Unknown,
}

impl CellOutlines {
    /// Where the outlines come from, in words (e.g. "lat_bnds and lon_bnds").
    pub fn origin(&self) -> &str {
        match self {
            CellOutlines::Rectilinear { origin, .. } | CellOutlines::Curvilinear { origin, .. } => {
                origin
            }
            CellOutlines::Unknown => "no latitude and longitude",
        }
    }
}

/// How the vertical extent of each level is found.
#[derive(Clone, Debug)]
pub struct VerticalCells {
    kind: VerticalKind,
    description: String,
    varies_in_time: bool,
}

#[derive(Clone, Debug)]
enum VerticalKind {
    /// Fixed bounds per level [m below the sea surface, positive down], from the coordinate's
    /// `bounds` variable.
    Bounds(Vec<[f64; 2]>),
    /// The w-level (interface) terms of a parametric coordinate: `levels + 1` interfaces.
    Interfaces(Formula),
    /// Midway between the centres; the top at the sea surface; the bottom at the sea floor
    /// (`bottom_at_sea_floor`) or as far below the deepest centre as the interface above it.
    Midpoints { bottom_at_sea_floor: bool },
}

impl VerticalCells {
    /// Where the level bounds come from, in words, for metadata.
    pub fn describe(&self) -> &str {
        &self.description
    }

    /// Whether the levels' extent changes from step to step (parametric coordinates follow the
    /// free surface); otherwise the same every step.
    pub fn varies_in_time(&self) -> bool {
        self.varies_in_time
    }

    /// The upper and lower bound of every level of one column [m below the sea surface,
    /// positive down], in the file's level order, into `out`.
    ///
    /// - `centres_m`: depth of each level's centre below the sea surface [m], file order;
    /// - `surface_height_m`: free-surface height above the datum [m] (0 on fixed levels);
    /// - `sea_floor_m`: the column's sea-floor depth below the datum [m], if known.
    ///
    /// Values are NaN where the inputs are (land).
    pub fn level_bounds(
        &self,
        centres_m: &[f64],
        surface_height_m: f64,
        sea_floor_m: Option<f64>,
        out: &mut Vec<[f64; 2]>,
    ) {
        out.clear();
        match &self.kind {
            VerticalKind::Bounds(bounds) => out.extend_from_slice(bounds),
            VerticalKind::Interfaces(formula) => {
                let depth = sea_floor_m.unwrap_or(f64::NAN);
                let below =
                    |k: usize| surface_height_m - formula.height(k, surface_height_m, depth);
                out.extend((0..centres_m.len()).map(|k| [below(k), below(k + 1)]));
            }
            VerticalKind::Midpoints {
                bottom_at_sea_floor,
            } => {
                let floor = sea_floor_m.map(|d| d + surface_height_m);
                let bottom = if *bottom_at_sea_floor { floor } else { None };
                midpoint_bounds(centres_m, bottom, out);
            }
        }
    }
}

/// Bounds of each level midway between its centre and its neighbours' (`centres_m` in file
/// order, either direction): the level nearest the surface starts at 0 m, the deepest ends at
/// `bottom_m`, or as far below its centre as its upper bound is above it.
pub(crate) fn midpoint_bounds(centres_m: &[f64], bottom_m: Option<f64>, out: &mut Vec<[f64; 2]>) {
    out.clear();
    let n = centres_m.len();
    if n == 0 {
        return;
    }
    // Work from the surface down, then put the bounds back in file order.
    let upwards = n > 1 && centres_m[0] > centres_m[n - 1];
    let at = |i: usize| centres_m[if upwards { n - 1 - i } else { i }];
    let mut upper = 0.0;
    for i in 0..n {
        let centre = at(i);
        let lower = if i + 1 < n {
            0.5 * (centre + at(i + 1))
        } else {
            bottom_m.unwrap_or(centre + (centre - upper))
        };
        out.push([upper, lower]);
        upper = lower;
    }
    if upwards {
        out.reverse();
    }
}

impl Run {
    /// Reads what the run says about the shape of its cells (see [`CellGeometry`]).
    pub fn cell_geometry(&self) -> Result<CellGeometry> {
        crate::catalog::silence_hdf5_diagnostics();
        let files = open_paths(&self.paths)?;
        Ok(CellGeometry {
            outlines: outlines(self, &files)?,
            cell_area: self.column_role(Role::CellArea)?,
            sea_floor: self.sea_floor()?,
            vertical: vertical_cells(self, &files)?,
        })
    }

    /// A per-column input (cell area or sea-floor depth), converted to SI.
    fn column_role(&self, role: Role) -> Result<Option<ColumnField>> {
        let Some(input) = self.input(role) else {
            return Ok(None);
        };
        let factor = match input.meaning_at(0).conversion {
            Conversion::Area(f) | Conversion::Length(f) => f,
            _ => 1.0,
        };
        let values = input.source.read(&self.paths, 0, &(0..self.shape.rows))?;
        Ok(Some(ColumnField {
            variable: input.name.clone(),
            file: self.paths[input.source.pieces[0].file].clone(),
            values: values.into_iter().map(|v| v * factor).collect(),
        }))
    }

    /// The parametric coordinate's `depth` term, else the sea-floor-depth input.
    fn sea_floor(&self) -> Result<Option<ColumnField>> {
        let Vertical::Parametric(p) = &self.vertical else {
            return self.column_role(Role::SeaFloorDepth);
        };
        let values = p.depth.read(&self.paths, 0, &(0..self.shape.rows))?;
        Ok(Some(ColumnField {
            variable: p.depth.name.clone(),
            file: self.paths[p.depth.pieces[0].file].clone(),
            values: values.into_iter().map(|v| v * p.depth_to_m).collect(),
        }))
    }
}

/// The level bounds: the vertical coordinate's bounds, a parametric coordinate's w-levels,
/// or midpoints between the centres.
fn vertical_cells(run: &Run, files: &[InputFile]) -> Result<VerticalCells> {
    let midpoints = |bottom_at_sea_floor: bool, description: String| VerticalCells {
        kind: VerticalKind::Midpoints {
            bottom_at_sea_floor,
        },
        description,
        varies_in_time: matches!(run.vertical, Vertical::Parametric(_)),
    };
    match &run.vertical {
        Vertical::Surface => Ok(midpoints(
            true,
            "no vertical coordinate: one level from the sea surface to the sea floor".into(),
        )),
        Vertical::Pressures { name, .. } => Ok(midpoints(
            false,
            format!("pressure levels '{name}': bounds midway between the depths of the level centres (top at the sea surface)"),
        )),
        Vertical::Depths {
            name,
            depth_m,
            positive_up,
        } => {
            if let Some(bounds) = depth_bounds(run, files, name, depth_m, *positive_up)? {
                return Ok(bounds);
            }
            Ok(midpoints(
                false,
                format!("'{name}' has no bounds: bounds midway between the level centres, the top at the sea surface, the deepest level as far below its centre as above (derived from the centres)"),
            ))
        }
        Vertical::Parametric(p) => {
            if let Some(cells) = w_levels(files, p)? {
                return Ok(cells);
            }
            Ok(midpoints(
                true,
                format!("no w-level terms for '{}': interfaces midway between the level centres at each step, the top at the free surface and the bottom at the sea floor '{}' (derived from the centres)", p.name, p.depth.name),
            ))
        }
    }
}

/// Bounds of fixed depth levels from the coordinate's `bounds` variable, in metres below the
/// surface; an error when they are not finite or do not enclose their centres.
fn depth_bounds(
    run: &Run,
    files: &[InputFile],
    name: &str,
    depth_m: &[f64],
    positive_up: bool,
) -> Result<Option<VerticalCells>> {
    let Some(file) = crate::output::holder(run, files, name) else {
        return Ok(None);
    };
    let var = require_var(file, name, "the vertical coordinate")?;
    let Some(bounds_name) = attr_text(&var, "bounds") else {
        return Ok(None);
    };
    let bvar = require_var(file, &bounds_name, "the vertical coordinate's bounds")?;
    let fail = |message: String| GridError::Metadata {
        file: file.path.clone(),
        variable: bounds_name.clone(),
        message,
    };
    let to_m = units::parse_length(&attr_text(&var, "units").unwrap_or_default())
        .map(|u| u.to_m)
        .unwrap_or(1.0);
    let sign = if positive_up { -1.0 } else { 1.0 };
    let values = read_all(&file.path, &bvar)?;
    if values.len() != 2 * depth_m.len() {
        return Err(fail(format!(
            "holds {} values; expected 2 per level of '{name}' ({})",
            values.len(),
            2 * depth_m.len()
        )));
    }
    let mut bounds = Vec::with_capacity(depth_m.len());
    for (level, (pair, centre)) in values.chunks(2).zip(depth_m).enumerate() {
        let (a, b) = (sign * pair[0] * to_m, sign * pair[1] * to_m);
        let tolerance = 1e-6 * centre.abs().max(1.0);
        let encloses = a.min(b) - tolerance <= *centre && *centre <= a.max(b) + tolerance;
        if !(a.is_finite() && b.is_finite() && encloses) {
            return Err(fail(format!(
                "level {} has bounds {} and {} that do not enclose its centre {} (after conversion to depths in m); expected finite bounds around each level",
                level + 1, pair[0], pair[1], centre / sign / to_m
            )));
        }
        bounds.push([a.min(b), a.max(b)]);
    }
    Ok(Some(VerticalCells {
        kind: VerticalKind::Bounds(bounds),
        description: format!("level bounds '{bounds_name}' of '{name}'"),
        varies_in_time: false,
    }))
}

/// A parametric coordinate's interfaces: a 1-D variable of `levels + 1` values with the same
/// `standard_name` and its own `formula_terms` (as ROMS writes `s_w` with `Cs_w`), whose values
/// enclose the centres' level by level.
fn w_levels(files: &[InputFile], p: &crate::vertical::Parametric) -> Result<Option<VerticalCells>> {
    let centres = p.formula.level_values();
    for file in files {
        for var in file.nc.variables() {
            let name = var.name();
            let dims = dim_names(&var);
            let same_kind = attr_text(&var, "standard_name").as_deref() == Some(&p.standard_name);
            let (Some(terms), true, true) = (
                attr_text(&var, "formula_terms"),
                same_kind && name != p.name,
                dims.len() == 1 && var.len() == centres.len() + 1,
            ) else {
                continue;
            };
            let formula = formula_from(file, &name, &p.standard_name, &terms)?;
            let w = formula.level_values();
            let encloses = centres
                .iter()
                .enumerate()
                .all(|(k, c)| (w[k] - c) * (w[k + 1] - c) <= 0.0 && w[k] != w[k + 1]);
            if !encloses {
                return Err(GridError::Metadata {
                    file: file.path.clone(),
                    variable: name,
                    message: format!(
                        "its values {w:?} do not enclose the centres of '{}' ({centres:?}) level by level; expected the w-level interfaces of that coordinate",
                        p.name
                    ),
                });
            }
            return Ok(Some(VerticalCells {
                kind: VerticalKind::Interfaces(formula),
                description: format!(
                    "interfaces from the w-level terms of '{name}' ({terms}) at each step, below the free surface"
                ),
                varies_in_time: true,
            }));
        }
    }
    Ok(None)
}

/// The horizontal outlines from the latitude and longitude bounds, or from the centres.
fn outlines(run: &Run, files: &[InputFile]) -> Result<CellOutlines> {
    let h = &run.horizontal;
    let (Some(lat_name), Some(lon_name)) = (&h.lat_name, &h.lon_name) else {
        return Ok(CellOutlines::Unknown);
    };
    let lat = Coordinate::read(run, files, lat_name)?;
    let lon = Coordinate::read(run, files, lon_name)?;
    let (rows, cols) = (run.shape.rows, run.shape.cols);
    let origin = match (&lat.bounds, &lon.bounds) {
        (Some(a), Some(b)) => format!("bounds '{}' and '{}'", a.0, b.0),
        _ => format!(
            "'{lat_name}' and '{lon_name}' have no bounds: cell edges midway between the cell centres (derived from the centres)"
        ),
    };
    if !h.curvilinear {
        let pairs = |c: &Coordinate, n: usize| -> Result<Vec<[f64; 2]>> {
            match &c.bounds {
                Some((_, values, _)) if lat.bounds.is_some() && lon.bounds.is_some() => {
                    c.check_len(values.len(), 2 * n)?;
                    Ok(values.chunks(2).map(|p| [p[0], p[1]]).collect())
                }
                _ => Ok(edges_1d(&c.values, c.is_longitude)),
            }
        };
        return Ok(CellOutlines::Rectilinear {
            lon_bounds: pairs(&lon, cols)?,
            lat_bounds: pairs(&lat, rows)?,
            origin,
        });
    }
    let dims = [h.y_dim.as_str(), h.x_dim.as_str()];
    let (lat_centres, lon_centres) = (lat.yx(&dims, rows, cols)?, lon.yx(&dims, rows, cols)?);
    let vertices = match (&lat.bounds, &lon.bounds) {
        (Some(_), Some(_)) => (
            lat.vertices_yx(&dims, rows, cols)?,
            lon.vertices_yx(&dims, rows, cols)?,
        ),
        _ => corners_2d(&lat_centres, &lon_centres, rows, cols),
    };
    Ok(CellOutlines::Curvilinear {
        lat_vertices: vertices.0,
        lon_vertices: vertices.1,
        origin,
    })
}

/// A latitude or longitude variable with its bounds (name and values), as stored.
struct Coordinate {
    name: String,
    file: PathBuf,
    dims: Vec<String>,
    values: Vec<f64>,
    bounds: Option<(String, Vec<f64>, Vec<String>)>,
    is_longitude: bool,
}

impl Coordinate {
    fn read(run: &Run, files: &[InputFile], name: &str) -> Result<Coordinate> {
        let file = crate::output::holder(run, files, name).ok_or_else(|| GridError::Metadata {
            file: run.paths[run.grid_file].clone(),
            variable: name.to_string(),
            message: "the grid names this coordinate, but no input file has it".into(),
        })?;
        let var = require_var(file, name, "the grid")?;
        let bounds = match attr_text(&var, "bounds") {
            Some(b) => {
                let bvar = require_var(file, &b, "the coordinate's bounds")?;
                let values = read_all(&file.path, &bvar)?;
                Some((b, values, dim_names(&bvar)))
            }
            None => None,
        };
        Ok(Coordinate {
            name: name.to_string(),
            file: file.path.clone(),
            dims: dim_names(&var),
            values: read_all(&file.path, &var)?,
            bounds,
            is_longitude: Some(name) == run.horizontal.lon_name.as_deref(),
        })
    }

    fn check_len(&self, have: usize, want: usize) -> Result<()> {
        if have == want {
            return Ok(());
        }
        Err(GridError::Metadata {
            file: self.file.clone(),
            variable: self
                .bounds
                .as_ref()
                .map_or(self.name.clone(), |b| b.0.clone()),
            message: format!(
                "holds {have} values; expected {want} (the bounds of '{}')",
                self.name
            ),
        })
    }

    /// Values of a 2-D coordinate in (y, x) order.
    fn yx(&self, dims: &[&str; 2], rows: usize, cols: usize) -> Result<Vec<f64>> {
        self.check_len(self.values.len(), rows * cols)?;
        Ok(transpose_if(&self.values, &self.dims, dims, rows, cols, 1))
    }

    /// Four vertices per cell in (y, x) order.
    fn vertices_yx(&self, dims: &[&str; 2], rows: usize, cols: usize) -> Result<Vec<[f64; 4]>> {
        let Some((_, values, bdims)) = &self.bounds else {
            return Ok(Vec::new());
        };
        self.check_len(values.len(), 4 * rows * cols)?;
        let ordered = transpose_if(values, bdims, dims, rows, cols, 4);
        Ok(ordered
            .chunks(4)
            .map(|v| [v[0], v[1], v[2], v[3]])
            .collect())
    }
}

/// Blocks of `width` values laid out over the dimensions `have` (the first two of them the
/// grid's Y and X in some order), returned in (y, x) order.
fn transpose_if(
    values: &[f64],
    have: &[String],
    want: &[&str; 2],
    rows: usize,
    cols: usize,
    width: usize,
) -> Vec<f64> {
    let swapped = have.len() >= 2 && have[0] == want[1] && have[1] == want[0];
    if !swapped {
        return values.to_vec();
    }
    let mut out = Vec::with_capacity(values.len());
    for j in 0..rows {
        for i in 0..cols {
            let at = (i * rows + j) * width;
            out.extend_from_slice(&values[at..at + width]);
        }
    }
    out
}

/// Edges midway between 1-D centres, the outer ones half a spacing beyond the end centres;
/// longitudes the shorter way round, latitudes kept within ±90°.
fn edges_1d(centres: &[f64], longitude: bool) -> Vec<[f64; 2]> {
    let n = centres.len();
    let step = |a: f64, b: f64| {
        let d = b - a;
        if longitude {
            (d + 180.0).rem_euclid(360.0) - 180.0
        } else {
            d
        }
    };
    let mut edges = Vec::with_capacity(n + 1);
    match n {
        0 => return Vec::new(),
        1 => {
            // One centre: nothing to measure a spacing by; a cell of 1 degree (common practice).
            edges.extend([centres[0] - 0.5, centres[0] + 0.5]);
        }
        _ => {
            edges.push(centres[0] - 0.5 * step(centres[0], centres[1]));
            for w in centres.windows(2) {
                edges.push(w[0] + 0.5 * step(w[0], w[1]));
            }
            edges.push(centres[n - 1] + 0.5 * step(centres[n - 2], centres[n - 1]));
        }
    }
    let clamp = |v: f64| if longitude { v } else { v.clamp(-90.0, 90.0) };
    edges
        .windows(2)
        .map(|w| [clamp(w[0]), clamp(w[1])])
        .collect()
}

fn unit_vector(lat: f64, lon: f64) -> [f64; 3] {
    let (p, l) = (lat.to_radians(), lon.to_radians());
    [p.cos() * l.cos(), p.cos() * l.sin(), p.sin()]
}

fn lat_lon(v: [f64; 3]) -> (f64, f64) {
    let norm = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt();
    let lat = (v[2] / norm).clamp(-1.0, 1.0).asin().to_degrees();
    (lat, v[1].atan2(v[0]).to_degrees())
}

/// Vertices of 2-D cells midway between neighbouring centres: each corner is the mean of the
/// four centres around it as vectors in space (so the dateline and the poles need no special
/// case), with the centres extended by one row and column beyond the edges by linear
/// extrapolation.
fn corners_2d(
    lat: &[f64],
    lon: &[f64],
    rows: usize,
    cols: usize,
) -> (Vec<[f64; 4]>, Vec<[f64; 4]>) {
    // Centres on an extended (rows + 2) × (cols + 2) grid of vectors.
    let centre = |j: usize, i: usize| unit_vector(lat[j * cols + i], lon[j * cols + i]);
    let clampi = |k: isize, n: usize| k.clamp(0, n as isize - 1) as usize;
    let extended = |j: isize, i: isize| -> [f64; 3] {
        let (jc, ic) = (clampi(j, rows), clampi(i, cols));
        let base = centre(jc, ic);
        // Step back inside the grid once per axis we fell off, and extrapolate linearly.
        let mut v = base;
        for (off, inner) in [
            (
                j - jc as isize,
                (clampi(jc as isize - (j - jc as isize), rows), ic),
            ),
            (
                i - ic as isize,
                (jc, clampi(ic as isize - (i - ic as isize), cols)),
            ),
        ] {
            if off != 0 {
                let w = centre(inner.0, inner.1);
                for d in 0..3 {
                    v[d] += base[d] - w[d];
                }
            }
        }
        v
    };
    let corner = |j: isize, i: isize| -> (f64, f64) {
        // Corner between centres (j-1, i-1), (j-1, i), (j, i-1), (j, i).
        let mut sum = [0.0; 3];
        for (dj, di) in [(-1, -1), (-1, 0), (0, -1), (0, 0)] {
            let v = extended(j + dj, i + di);
            for d in 0..3 {
                sum[d] += v[d];
            }
        }
        lat_lon(sum)
    };
    let mut lat_v = Vec::with_capacity(rows * cols);
    let mut lon_v = Vec::with_capacity(rows * cols);
    for j in 0..rows as isize {
        for i in 0..cols as isize {
            let c = [
                corner(j, i),
                corner(j, i + 1),
                corner(j + 1, i + 1),
                corner(j + 1, i),
            ];
            lat_v.push(c.map(|p| p.0));
            lon_v.push(c.map(|p| p.1));
        }
    }
    (lat_v, lon_v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn midpoints_from_the_surface_down_in_either_order() {
        let mut out = Vec::new();
        midpoint_bounds(&[5.0, 15.0, 30.0], None, &mut out);
        assert_eq!(out, vec![[0.0, 10.0], [10.0, 22.5], [22.5, 37.5]]);
        midpoint_bounds(&[30.0, 15.0, 5.0], Some(40.0), &mut out);
        assert_eq!(out, vec![[22.5, 40.0], [10.0, 22.5], [0.0, 10.0]]);
    }

    #[test]
    fn one_dimensional_edges_wrap_longitudes_and_stop_at_the_poles() {
        assert_eq!(
            edges_1d(&[359.0, 1.0, 3.0], true),
            vec![[358.0, 360.0], [360.0, 2.0], [2.0, 4.0]]
        );
        assert_eq!(
            edges_1d(&[-89.5, 0.0, 89.5], false),
            vec![[-90.0, -44.75], [-44.75, 44.75], [44.75, 90.0]]
        );
    }

    #[test]
    fn corners_of_a_regular_patch_fall_midway() {
        // A 2 × 3 patch of 1° cells centred on half degrees: corners on whole degrees.
        let (rows, cols) = (2, 3);
        let mut lat = Vec::new();
        let mut lon = Vec::new();
        for j in 0..rows {
            for i in 0..cols {
                lat.push(10.5 + j as f64);
                lon.push(179.5 + i as f64);
            }
        }
        let (lat_v, lon_v) = corners_2d(&lat, &lon, rows, cols);
        // Cell (0, 1) spans 180-181 °E (written -180..-179), 10-11 °N.
        let k = 1;
        for (got, want) in lat_v[k].iter().zip([10.0, 10.0, 11.0, 11.0]) {
            assert!((got - want).abs() < 1e-3, "{:?}", lat_v[k]);
        }
        for (got, want) in lon_v[k].iter().zip([180.0, 181.0, 181.0, 180.0]) {
            assert!(((got - want + 540.0).rem_euclid(360.0) - 180.0).abs() < 1e-3);
        }
    }

    #[test]
    fn swapped_dimensions_are_put_in_y_x_order() {
        // Stored as (x, y) with x = 2, y = 3: value = 10 y + x.
        let stored: Vec<f64> = (0..2)
            .flat_map(|x| (0..3).map(move |y| (10 * y + x) as f64))
            .collect();
        let dims = vec!["i".to_string(), "j".to_string()];
        let out = transpose_if(&stored, &dims, &["j", "i"], 3, 2, 1);
        assert_eq!(out, vec![0.0, 1.0, 10.0, 11.0, 20.0, 21.0]);
    }
}
