//! Horizontal cell outlines of a run: the latitude and longitude bounds (1-D pairs, or the
//! four vertices of each cell on curvilinear grids), or edges midway between the centres when
//! the run gives no bounds.

use crate::catalog::{attr_text, dim_names, read_all, require_var, InputFile};
use crate::error::{GridError, Result};
use crate::run::Run;
use std::path::PathBuf;

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

/// The horizontal outlines from the latitude and longitude bounds, or from the centres.
pub(crate) fn outlines(run: &Run, files: &[InputFile]) -> Result<CellOutlines> {
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
