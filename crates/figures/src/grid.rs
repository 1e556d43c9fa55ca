//! Horizontal grids as the figures need them: each cell's centre and four corners, in a
//! longitude frame without a seam inside the domain.

use crate::FigureError;

/// A horizontal grid of `ny` × `nx` cells (row-major, j then i).
#[derive(Clone, Debug)]
pub struct MapGrid {
    ny: usize,
    nx: usize,
    cells: Cells,
}

#[derive(Clone, Debug)]
enum Cells {
    Rectilinear {
        lon_bounds: Vec<[f64; 2]>,
        lat_bounds: Vec<[f64; 2]>,
    },
    Curvilinear {
        lon: Vec<f64>,
        lat: Vec<f64>,
        lon_vertices: Vec<[f64; 4]>,
        lat_vertices: Vec<[f64; 4]>,
    },
}

impl MapGrid {
    /// A grid from 1-D cell bounds (degrees east, degrees north), as CF `lon_bnds`/`lat_bnds`.
    pub fn rectilinear(
        lon_bounds: Vec<[f64; 2]>,
        lat_bounds: Vec<[f64; 2]>,
    ) -> Result<Self, FigureError> {
        if lon_bounds.is_empty() || lat_bounds.is_empty() {
            return Err(FigureError::input("grid: no longitude or latitude cells"));
        }
        check_lons("longitude bounds", lon_bounds.iter().flatten())?;
        check_lats("latitude bounds", lat_bounds.iter().flatten())?;
        Ok(Self {
            ny: lat_bounds.len(),
            nx: lon_bounds.len(),
            cells: Cells::Rectilinear {
                lon_bounds,
                lat_bounds,
            },
        })
    }

    /// A rectilinear grid from 1-D cell centres, with bounds halfway between neighbours
    /// (common practice when a file carries no bounds).
    pub fn rectilinear_from_centres(lon: &[f64], lat: &[f64]) -> Result<Self, FigureError> {
        Self::rectilinear(
            bounds_from_centres(lon, true),
            bounds_from_centres(lat, false),
        )
    }

    /// A curvilinear grid from 2-D centres and 4-vertex bounds, all `ny * nx` long
    /// (row-major), as CF `lon(j, i)` with `lon_vertices(j, i, 4)`.
    pub fn curvilinear(
        (ny, nx): (usize, usize),
        lon: Vec<f64>,
        lat: Vec<f64>,
        lon_vertices: Vec<[f64; 4]>,
        lat_vertices: Vec<[f64; 4]>,
    ) -> Result<Self, FigureError> {
        let cells = ny * nx;
        if cells == 0 {
            return Err(FigureError::input("grid: no cells"));
        }
        FigureError::check_len("grid longitude", cells, lon.len())?;
        FigureError::check_len("grid latitude", cells, lat.len())?;
        FigureError::check_len("grid longitude vertices", cells, lon_vertices.len())?;
        FigureError::check_len("grid latitude vertices", cells, lat_vertices.len())?;
        check_lons("longitude", lon.iter())?;
        check_lats("latitude", lat.iter())?;
        check_lons("longitude vertices", lon_vertices.iter().flatten())?;
        check_lats("latitude vertices", lat_vertices.iter().flatten())?;
        Ok(Self {
            ny,
            nx,
            cells: Cells::Curvilinear {
                lon,
                lat,
                lon_vertices,
                lat_vertices,
            },
        })
    }

    /// (ny, nx).
    pub fn shape(&self) -> (usize, usize) {
        (self.ny, self.nx)
    }

    /// Centre and corners of cell (j, i) as given (longitudes not yet unwrapped).
    fn raw_cell(&self, j: usize, i: usize) -> ((f64, f64), [(f64, f64); 4]) {
        match &self.cells {
            Cells::Rectilinear {
                lon_bounds,
                lat_bounds,
            } => {
                let [w, e] = lon_bounds[i];
                let [s, n] = lat_bounds[j];
                let lon = w + 0.5 * wrap180(e - w);
                ((lon, 0.5 * (s + n)), [(w, s), (e, s), (e, n), (w, n)])
            }
            Cells::Curvilinear {
                lon,
                lat,
                lon_vertices,
                lat_vertices,
            } => {
                let k = j * self.nx + i;
                let (xs, ys) = (lon_vertices[k], lat_vertices[k]);
                let corners = [
                    (xs[0], ys[0]),
                    (xs[1], ys[1]),
                    (xs[2], ys[2]),
                    (xs[3], ys[3]),
                ];
                ((lon[k], lat[k]), corners)
            }
        }
    }

    /// The grid in a plane of (longitude, latitude) with the domain kept in one piece.
    pub(crate) fn to_plane(&self) -> PlaneGrid {
        let count = self.ny * self.nx;
        let raw: Vec<_> = (0..count)
            .map(|k| self.raw_cell(k / self.nx, k % self.nx))
            .collect();
        let start = seam_free_start(raw.iter().map(|(c, _)| c.0));
        let unwrap = |lon: f64| start + (lon - start).rem_euclid(360.0);
        let mut centres = Vec::with_capacity(count);
        let mut corners = Vec::with_capacity(count);
        let (mut x_range, mut y_range) = ((f64::MAX, f64::MIN), (f64::MAX, f64::MIN));
        for ((lon, lat), raw_corners) in raw {
            let x = unwrap(lon);
            centres.push((x, lat));
            let cell = raw_corners.map(|(cx, cy)| (x + wrap180(cx - lon), cy));
            for &(cx, cy) in &cell {
                x_range = (x_range.0.min(cx), x_range.1.max(cx));
                y_range = (y_range.0.min(cy), y_range.1.max(cy));
            }
            corners.push(cell);
        }
        PlaneGrid {
            ny: self.ny,
            nx: self.nx,
            centres,
            corners,
            x_range,
            y_range,
            lon_start: start,
        }
    }
}

/// A grid in the unwrapped (longitude, latitude) plane.
pub(crate) struct PlaneGrid {
    pub ny: usize,
    pub nx: usize,
    pub centres: Vec<(f64, f64)>,
    pub corners: Vec<[(f64, f64); 4]>,
    pub x_range: (f64, f64),
    pub y_range: (f64, f64),
    /// Longitudes are placed in [lon_start, lon_start + 360).
    pub lon_start: f64,
}

impl PlaneGrid {
    /// A longitude moved into this grid's frame.
    pub(crate) fn unwrap_lon(&self, lon: f64) -> f64 {
        self.lon_start + (lon - self.lon_start).rem_euclid(360.0)
    }

    /// Position of fractional index (fj, fi), bilinear between cell centres.
    pub(crate) fn at_index(&self, fj: f64, fi: f64) -> (f64, f64) {
        let j0 = (fj.floor() as usize).min(self.ny.saturating_sub(2));
        let i0 = (fi.floor() as usize).min(self.nx.saturating_sub(2));
        let j1 = (j0 + 1).min(self.ny - 1);
        let i1 = (i0 + 1).min(self.nx - 1);
        let (tj, ti) = (fj - j0 as f64, fi - i0 as f64);
        let c = |j: usize, i: usize| self.centres[j * self.nx + i];
        let mix =
            |a: (f64, f64), b: (f64, f64), t: f64| (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1));
        let low = mix(c(j0, i0), c(j0, i1), ti);
        let high = mix(c(j1, i0), c(j1, i1), ti);
        mix(low, high, tj)
    }
}

/// The angle brought into [−180, 180).
pub(crate) fn wrap180(degrees: f64) -> f64 {
    (degrees + 180.0).rem_euclid(360.0) - 180.0
}

/// Where the longitude frame starts: the given values keep their own convention when they
/// already run without a seam; otherwise the frame opens in the widest empty arc.
fn seam_free_start(lons: impl Iterator<Item = f64>) -> f64 {
    let raw: Vec<f64> = lons.collect();
    let (min, max) = raw
        .iter()
        .fold((f64::MAX, f64::MIN), |(lo, hi), &v| (lo.min(v), hi.max(v)));
    let mut circle: Vec<f64> = raw.iter().map(|v| v.rem_euclid(360.0)).collect();
    circle.sort_by(f64::total_cmp);
    circle.dedup_by(|a, b| (*a - *b).abs() < 1e-9);
    let mut widest = (360.0 - circle[circle.len() - 1] + circle[0], circle[0]);
    for pair in circle.windows(2) {
        if pair[1] - pair[0] > widest.0 {
            widest = (pair[1] - pair[0], pair[1]);
        }
    }
    let first = if max - min <= 360.0 - widest.0 + 1e-6 {
        min
    } else {
        widest.1
    };
    // Start halfway across the empty arc, so cell corners and nearby points fall inside.
    first - 0.5 * widest.0
}

/// Bounds halfway between neighbouring centres; the ends mirror their neighbour's spacing.
/// Longitudes (`periodic`) step the short way round, so 179.5 and −179.5 meet at 180.
fn bounds_from_centres(centres: &[f64], periodic: bool) -> Vec<[f64; 2]> {
    let n = centres.len();
    if n == 1 {
        return vec![[centres[0] - 0.5, centres[0] + 0.5]];
    }
    let step = |a: f64, b: f64| if periodic { wrap180(b - a) } else { b - a };
    let edge = |k: usize| -> f64 {
        match k {
            0 => centres[0] - 0.5 * step(centres[0], centres[1]),
            k if k == n => centres[n - 1] + 0.5 * step(centres[n - 2], centres[n - 1]),
            k => centres[k - 1] + 0.5 * step(centres[k - 1], centres[k]),
        }
    };
    (0..n).map(|k| [edge(k), edge(k + 1)]).collect()
}

fn check_lons<'a>(
    what: &str,
    mut values: impl Iterator<Item = &'a f64>,
) -> Result<(), FigureError> {
    match values.find(|v| !v.is_finite() || v.abs() > 720.0) {
        Some(bad) => Err(FigureError::input(format!(
            "grid {what}: {bad} is not a longitude in degrees east"
        ))),
        None => Ok(()),
    }
}

fn check_lats<'a>(
    what: &str,
    mut values: impl Iterator<Item = &'a f64>,
) -> Result<(), FigureError> {
    match values.find(|v| !v.is_finite() || v.abs() > 90.0 + 1e-9) {
        Some(bad) => Err(FigureError::input(format!(
            "grid {what}: {bad} is not a latitude in degrees north (−90 to 90)"
        ))),
        None => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn one_degree(lons: impl Iterator<Item = f64>) -> MapGrid {
        let lon: Vec<f64> = lons.collect();
        MapGrid::rectilinear_from_centres(&lon, &[10.5, 11.5]).unwrap()
    }

    #[test]
    fn longitudes_keep_their_convention_when_there_is_no_seam() {
        let east = one_degree((0..360).map(|i| i as f64 + 0.5)).to_plane();
        assert_eq!(east.x_range, (0.0, 360.0));
        let centred = one_degree((0..360).map(|i| i as f64 - 179.5)).to_plane();
        assert_eq!(centred.x_range, (-180.0, 180.0));
        let gulf = one_degree((200..212).map(|i| i as f64 + 0.5)).to_plane();
        assert_eq!(gulf.x_range, (200.0, 212.0));
        let gulf_west = one_degree((200..212).map(|i| i as f64 + 0.5 - 360.0)).to_plane();
        assert_eq!(gulf_west.x_range, (-160.0, -148.0));
    }

    #[test]
    fn a_domain_across_the_dateline_stays_in_one_piece() {
        // 170 °E to 170 °W written in −180…180: 170.5 … 179.5, −179.5 … −170.5.
        let lons = (170..190).map(|i| wrap180(i as f64 + 0.5));
        let plane = one_degree(lons).to_plane();
        assert_eq!(plane.x_range, (170.0, 190.0));
        let xs: Vec<f64> = plane.centres[..20].iter().map(|c| c.0).collect();
        assert!(xs.windows(2).all(|w| (w[1] - w[0] - 1.0).abs() < 1e-9));
    }

    #[test]
    fn cell_corners_never_straddle_the_frame() {
        // A cell whose bounds are written 179.5 and −179.5 spans one degree, not 359.
        let grid = MapGrid::rectilinear(vec![[179.5, -179.5]], vec![[0.0, 1.0]]).unwrap();
        let plane = grid.to_plane();
        assert!((plane.x_range.1 - plane.x_range.0 - 1.0).abs() < 1e-9);
    }

    #[test]
    fn bad_inputs_are_named() {
        let err = MapGrid::rectilinear(vec![[0.0, 1.0]], vec![[89.0, 91.0]]).unwrap_err();
        assert!(err.to_string().contains("latitude bounds"));
        let err = MapGrid::curvilinear((2, 2), vec![0.0; 3], vec![0.0; 4], vec![], vec![]);
        assert!(err
            .unwrap_err()
            .to_string()
            .contains("expected 4 values, got 3"));
    }
}
