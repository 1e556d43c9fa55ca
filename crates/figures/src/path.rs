//! The grid cells a section path crosses: great-circle segments between the given points,
//! walked in small steps, with each change of cell found by bisection.

use crate::grid::{MapGrid, PlaneGrid};
use crate::FigureError;

/// Mean Earth radius, km (IUGG mean radius R1 of the GRS 80 ellipsoid, Moritz 2000; from
/// memory).
pub const EARTH_RADIUS_KM: f64 = 6371.0088;

/// A grid cell crossed by a section path, in order along the path.
#[derive(Clone, Debug, PartialEq)]
pub struct PathCell {
    pub j: usize,
    pub i: usize,
    /// Distance along the path (km) where it enters and leaves the cell.
    pub start_km: f64,
    pub end_km: f64,
    /// Where the path enters and leaves the cell (longitude, latitude in degrees).
    pub entry: (f64, f64),
    pub exit: (f64, f64),
}

type Vec3 = [f64; 3];

fn to_unit((lon, lat): (f64, f64)) -> Vec3 {
    let (lon, lat) = (lon.to_radians(), lat.to_radians());
    [lat.cos() * lon.cos(), lat.cos() * lon.sin(), lat.sin()]
}

fn to_lon_lat(v: Vec3) -> (f64, f64) {
    let lat = v[2].atan2((v[0] * v[0] + v[1] * v[1]).sqrt());
    (v[1].atan2(v[0]).to_degrees(), lat.to_degrees())
}

fn dot(a: Vec3, b: Vec3) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: Vec3, b: Vec3) -> Vec3 {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Central angle between unit vectors (atan2 form, accurate at every separation).
fn central_angle(a: Vec3, b: Vec3) -> f64 {
    let c = cross(a, b);
    dot(c, c).sqrt().atan2(dot(a, b))
}

/// Great-circle distance in km between two (lon, lat) points.
pub fn great_circle_km(from: (f64, f64), to: (f64, f64)) -> f64 {
    EARTH_RADIUS_KM * central_angle(to_unit(from), to_unit(to))
}

/// One great-circle segment of the path.
struct Segment {
    a: Vec3,
    b: Vec3,
    angle: f64,
    start_km: f64,
}

impl Segment {
    fn length_km(&self) -> f64 {
        EARTH_RADIUS_KM * self.angle
    }

    /// The point a fraction `t` of the way along (spherical linear interpolation).
    fn at(&self, t: f64) -> (f64, f64) {
        if self.angle < 1e-12 {
            return to_lon_lat(self.a);
        }
        let s = self.angle.sin();
        let (wa, wb) = (
            ((1.0 - t) * self.angle).sin() / s,
            (t * self.angle).sin() / s,
        );
        to_lon_lat([
            wa * self.a[0] + wb * self.b[0],
            wa * self.a[1] + wb * self.b[1],
            wa * self.a[2] + wb * self.b[2],
        ])
    }
}

/// Finds the cell holding a point through a uniform grid of bins over the domain.
struct Locator<'a> {
    plane: &'a PlaneGrid,
    bins: Vec<Vec<u32>>,
    shape: (usize, usize),
}

impl<'a> Locator<'a> {
    fn new(plane: &'a PlaneGrid) -> Self {
        let cells = plane.corners.len();
        let side = (cells as f64).sqrt().ceil().max(1.0) as usize;
        let shape = (side, side);
        let mut bins = vec![Vec::new(); side * side];
        for (k, corners) in plane.corners.iter().enumerate() {
            let (bx0, by0) = Self::bin_of(
                plane,
                shape,
                corners
                    .iter()
                    .fold((f64::MAX, f64::MAX), |m, c| (m.0.min(c.0), m.1.min(c.1))),
            );
            let (bx1, by1) = Self::bin_of(
                plane,
                shape,
                corners
                    .iter()
                    .fold((f64::MIN, f64::MIN), |m, c| (m.0.max(c.0), m.1.max(c.1))),
            );
            for by in by0..=by1 {
                for bx in bx0..=bx1 {
                    bins[by * side + bx].push(k as u32);
                }
            }
        }
        Self { plane, bins, shape }
    }

    fn bin_of(plane: &PlaneGrid, (nx, ny): (usize, usize), (x, y): (f64, f64)) -> (usize, usize) {
        let fx = (x - plane.x_range.0) / (plane.x_range.1 - plane.x_range.0);
        let fy = (y - plane.y_range.0) / (plane.y_range.1 - plane.y_range.0);
        let bin = |f: f64, n: usize| ((f * n as f64).floor().max(0.0) as usize).min(n - 1);
        (bin(fx, nx), bin(fy, ny))
    }

    /// Index of the cell containing (lon, lat), if any.
    fn find(&self, (lon, lat): (f64, f64)) -> Option<usize> {
        let x = self.plane.unwrap_lon(lon);
        let (xr, yr) = (self.plane.x_range, self.plane.y_range);
        if x < xr.0 || x > xr.1 || lat < yr.0 || lat > yr.1 {
            return None;
        }
        let (bx, by) = Self::bin_of(self.plane, self.shape, (x, lat));
        self.bins[by * self.shape.0 + bx]
            .iter()
            .map(|&k| k as usize)
            .find(|&k| inside(&self.plane.corners[k], (x, lat)))
    }
}

/// Crossing-number test (a point on a shared edge belongs to exactly one side).
fn inside(polygon: &[(f64, f64); 4], (x, y): (f64, f64)) -> bool {
    let mut crossings = false;
    for e in 0..4 {
        let (a, b) = (polygon[e], polygon[(e + 1) % 4]);
        if (a.1 > y) != (b.1 > y) {
            let at = a.0 + (y - a.1) / (b.1 - a.1) * (b.0 - a.0);
            if x < at {
                crossings = !crossings;
            }
        }
    }
    crossings
}

/// Smallest cell width in km (distance between midpoints of opposite sides).
fn smallest_cell_km(plane: &PlaneGrid) -> f64 {
    let mid = |a: (f64, f64), b: (f64, f64)| (0.5 * (a.0 + b.0), 0.5 * (a.1 + b.1));
    plane
        .corners
        .iter()
        .map(|c| {
            let across = great_circle_km(mid(c[0], c[3]), mid(c[1], c[2]));
            let along = great_circle_km(mid(c[0], c[1]), mid(c[3], c[2]));
            across.min(along)
        })
        .filter(|d| *d > 0.0)
        .fold(f64::INFINITY, f64::min)
}

/// A change of cell at a distance along the path.
struct Change {
    km: f64,
    point: (f64, f64),
    cell: Option<usize>,
}

/// The cells crossed by the path through `points` (longitude, latitude in degrees; two or
/// more), following great circles between consecutive points. A stay shorter than a tenth of
/// the grid's smallest cell (the path grazing a corner) is shared out to its neighbours, so
/// a section has no slivers. Positions come back in the grid's own longitude convention.
pub fn sample_path(grid: &MapGrid, points: &[(f64, f64)]) -> Result<Vec<PathCell>, FigureError> {
    if points.len() < 2 {
        return Err(FigureError::input("section path: give at least two points"));
    }
    let bad = points
        .iter()
        .find(|(lon, lat)| !lon.is_finite() || !lat.is_finite() || lat.abs() > 90.0);
    if let Some(bad) = bad {
        return Err(FigureError::input(format!(
            "section path: ({}, {}) is not a longitude, latitude",
            bad.0, bad.1
        )));
    }
    let plane = grid.to_plane();
    let locator = Locator::new(&plane);
    let smallest = smallest_cell_km(&plane);
    let total_km: f64 = points.windows(2).map(|w| great_circle_km(w[0], w[1])).sum();
    let step_km = (smallest / 4.0).max(total_km / 200_000.0).max(1e-6);
    let tolerance_km = (smallest * 1e-7).max(1e-9);
    let mut changes = Vec::new();
    let mut start_km = 0.0;
    for pair in points.windows(2) {
        let (a, b) = (to_unit(pair[0]), to_unit(pair[1]));
        let segment = Segment {
            a,
            b,
            angle: central_angle(a, b),
            start_km,
        };
        let mut t0 = 0.0;
        let mut c0 = locator.find(segment.at(0.0));
        if changes.is_empty() {
            changes.push(Change {
                km: 0.0,
                point: segment.at(0.0),
                cell: c0,
            });
        }
        let steps = (segment.length_km() / step_km).ceil().max(1.0) as usize;
        for s in 1..=steps {
            let t1 = s as f64 / steps as f64;
            let c1 = locator.find(segment.at(t1));
            bisect(
                &locator,
                &segment,
                (t0, c0),
                (t1, c1),
                tolerance_km,
                &mut changes,
            );
            (t0, c0) = (t1, c1);
        }
        start_km += segment.length_km();
    }
    let last = to_lon_lat(to_unit(points[points.len() - 1]));
    let mut cells = stays(&changes, (total_km, last), plane.nx);
    drop_slivers(&mut cells, smallest / 10.0);
    for cell in &mut cells {
        cell.entry.0 = plane.unwrap_lon(cell.entry.0);
        cell.exit.0 = plane.unwrap_lon(cell.exit.0);
    }
    Ok(cells)
}

/// Records every change of cell between t0 and t1, located to within `tolerance_km`.
fn bisect(
    locator: &Locator,
    segment: &Segment,
    (t0, c0): (f64, Option<usize>),
    (t1, c1): (f64, Option<usize>),
    tolerance_km: f64,
    changes: &mut Vec<Change>,
) {
    if c0 == c1 {
        return;
    }
    let tm = 0.5 * (t0 + t1);
    if (t1 - t0) * segment.length_km() <= tolerance_km {
        changes.push(Change {
            km: segment.start_km + tm * segment.length_km(),
            point: segment.at(tm),
            cell: c1,
        });
        return;
    }
    let cm = locator.find(segment.at(tm));
    bisect(locator, segment, (t0, c0), (tm, cm), tolerance_km, changes);
    bisect(locator, segment, (tm, cm), (t1, c1), tolerance_km, changes);
}

/// One entry per stay in a cell (outside the grid: none).
fn stays(changes: &[Change], (total_km, last): (f64, (f64, f64)), nx: usize) -> Vec<PathCell> {
    let mut cells = Vec::new();
    for (k, change) in changes.iter().enumerate() {
        let Some(cell) = change.cell else { continue };
        let (end_km, exit) = match changes.get(k + 1) {
            Some(next) => (next.km, next.point),
            None => (total_km, last),
        };
        cells.push(PathCell {
            j: cell / nx,
            i: cell % nx,
            start_km: change.km,
            end_km,
            entry: change.point,
            exit,
        });
    }
    cells
}

/// Gives each stay shorter than `min_km` to the stays it touches (half each, or all to the
/// one neighbour it has), then joins neighbours left in the same cell.
fn drop_slivers(cells: &mut Vec<PathCell>, min_km: f64) {
    let mut k = 0;
    while k < cells.len() {
        let sliver = &cells[k];
        let short = sliver.end_km - sliver.start_km < min_km;
        let before = k > 0 && (cells[k - 1].end_km - sliver.start_km).abs() < 1e-9;
        let after = k + 1 < cells.len() && (cells[k + 1].start_km - sliver.end_km).abs() < 1e-9;
        if !short || !(before || after) {
            k += 1;
            continue;
        }
        let (km, point) = match (before, after) {
            (true, true) => (
                0.5 * (sliver.start_km + sliver.end_km),
                midpoint(sliver.entry, sliver.exit),
            ),
            (true, false) => (sliver.end_km, sliver.exit),
            _ => (sliver.start_km, sliver.entry),
        };
        if before {
            cells[k - 1].end_km = km;
            cells[k - 1].exit = point;
        }
        if after {
            cells[k + 1].start_km = km;
            cells[k + 1].entry = point;
        }
        cells.remove(k);
        if before && after && (cells[k - 1].j, cells[k - 1].i) == (cells[k].j, cells[k].i) {
            let next = cells.remove(k);
            cells[k - 1].end_km = next.end_km;
            cells[k - 1].exit = next.exit;
        }
        k = k.saturating_sub(1);
    }
}

/// Midpoint of two nearby positions (on the great circle between them).
fn midpoint(a: (f64, f64), b: (f64, f64)) -> (f64, f64) {
    let (ua, ub) = (to_unit(a), to_unit(b));
    to_lon_lat([ua[0] + ub[0], ua[1] + ub[1], ua[2] + ub[2]])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_degree_of_the_equator() {
        // 2π R / 360 with R = 6371.0088 km.
        let km = great_circle_km((0.0, 0.0), (1.0, 0.0));
        assert!((km - 111.19508).abs() < 1e-4, "{km}");
        assert!((great_circle_km((10.0, 90.0), (80.0, 90.0))).abs() < 1e-9);
    }

    #[test]
    fn the_segment_midpoint_lies_on_the_great_circle() {
        let (a, b) = (to_unit((0.0, 0.0)), to_unit((90.0, 0.0)));
        let segment = Segment {
            a,
            b,
            angle: central_angle(a, b),
            start_km: 0.0,
        };
        let (lon, lat) = segment.at(0.5);
        assert!((lon - 45.0).abs() < 1e-9 && lat.abs() < 1e-9);
    }

    #[test]
    fn quads_share_edges_without_double_counting() {
        let left = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)];
        let right = [(1.0, 0.0), (2.0, 0.0), (2.0, 1.0), (1.0, 1.0)];
        let on_edge = (1.0, 0.5);
        assert_ne!(inside(&left, on_edge), inside(&right, on_edge));
    }
}
