//! Longitude-latitude boxes and polygons, and the rule for points on their edges.
//!
//! # Edge rule
//! Membership is decided for cell centres and is half-open, so that a centre lying exactly on
//! the boundary shared by two adjacent regions is counted in exactly one of them: a box
//! contains its west and south edges and not its east and north edges (a box whose north edge
//! is 90°N also contains the pole); a polygon uses the crossing-number test of a ray towards
//! increasing longitude, counting an edge when exactly one end lies strictly north of the
//! point and the crossing lies strictly east of it. On an axis-aligned rectangle the two rules
//! agree. Polygon edges are straight lines in longitude-latitude (as regions are drawn on a
//! map), not great circles.

use super::RegionError;
use serde::{Deserialize, Serialize};

/// A longitude-latitude box \[degrees east, degrees north\]. The box runs eastwards from `west`
/// to `east`, so `west = 350, east = 10` is 20° wide across the 0° meridian; `east − west = 360`
/// covers every longitude.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LonLatBox {
    /// Western edge \[degrees east\] (inside).
    pub west: f64,
    /// Eastern edge \[degrees east\] (outside).
    pub east: f64,
    /// Southern edge \[degrees north\] (inside).
    pub south: f64,
    /// Northern edge \[degrees north\] (outside, except 90).
    pub north: f64,
}

impl LonLatBox {
    /// Checks the edges: finite, south < north within −90..90, a non-zero width.
    pub fn check(&self, region: &str) -> Result<(), RegionError> {
        let bad = |message: String| RegionError::Shape {
            region: region.to_string(),
            message,
        };
        if ![self.west, self.east, self.south, self.north]
            .iter()
            .all(|v| v.is_finite())
        {
            return Err(bad("box edges must be finite numbers of degrees".into()));
        }
        if !(-90.0 <= self.south && self.south < self.north && self.north <= 90.0) {
            return Err(bad(format!(
                "box needs -90 <= south < north <= 90, got south {} north {}",
                self.south, self.north
            )));
        }
        if self.width() == 0.0 {
            return Err(bad(format!(
                "box has no width: west {} and east {} are the same meridian (use east = west + 360 for every longitude)",
                self.west, self.east
            )));
        }
        Ok(())
    }

    /// Eastward width \[degrees\], in (0, 360].
    fn width(&self) -> f64 {
        let d = self.east - self.west;
        if d >= 360.0 {
            360.0
        } else {
            d.rem_euclid(360.0)
        }
    }

    /// Whether the point \[degrees east, degrees north\] is inside (edge rule above).
    pub fn contains(&self, lon: f64, lat: f64) -> bool {
        let in_lat = lat >= self.south && (lat < self.north || (self.north == 90.0 && lat <= 90.0));
        let width = self.width();
        in_lat && (width >= 360.0 || (lon - self.west).rem_euclid(360.0) < width)
    }
}

/// A polygon of longitude-latitude vertices, unwrapped so that each edge takes the shorter way
/// round (a polygon may cross the 0° or 180° meridian in any longitude convention).
#[derive(Clone, Debug, PartialEq)]
pub struct LonLatPolygon {
    /// Unwrapped vertices (lon, lat) \[degrees\]; consecutive longitudes differ by < 180°.
    vertices: Vec<(f64, f64)>,
    /// Smallest unwrapped longitude: points are shifted into `[west, west + 360)`.
    west: f64,
}

impl LonLatPolygon {
    /// Builds a polygon from `[longitude, latitude]` pairs (a closing vertex equal to the first
    /// is allowed). Needs three distinct vertices, latitudes within −90..90, no edge spanning
    /// 180° or more of longitude, and must not encircle a pole.
    pub fn new(region: &str, points: &[[f64; 2]]) -> Result<Self, RegionError> {
        let bad = |message: String| RegionError::Shape {
            region: region.to_string(),
            message,
        };
        let mut points = points.to_vec();
        if points.len() > 1 && points.first() == points.last() {
            points.pop();
        }
        if points.len() < 3 {
            return Err(bad("a polygon needs at least three vertices".into()));
        }
        let mut vertices: Vec<(f64, f64)> = Vec::with_capacity(points.len());
        for [lon, lat] in points {
            if !(lon.is_finite() && (-90.0..=90.0).contains(&lat)) {
                return Err(bad(format!(
                    "vertex [{lon}, {lat}] is not a longitude and a latitude within -90..90"
                )));
            }
            let lon = match vertices.last() {
                Some(&(previous, _)) => unwrap_near(lon, previous),
                None => lon,
            };
            vertices.push((lon, lat));
        }
        for pair in vertices.windows(2) {
            if (pair[1].0 - pair[0].0).abs() >= 180.0 {
                return Err(bad("an edge spans 180 degrees of longitude or more".into()));
            }
        }
        let (first, last) = (vertices[0].0, vertices[vertices.len() - 1].0);
        if (unwrap_near(first, last) - first).abs() > 1e-9 {
            return Err(bad(
                "the polygon encircles a pole; use a box with a latitude limit instead".into(),
            ));
        }
        let west = vertices.iter().map(|v| v.0).fold(f64::INFINITY, f64::min);
        Ok(LonLatPolygon { vertices, west })
    }

    /// Whether the point \[degrees east, degrees north\] is inside (edge rule above).
    pub fn contains(&self, lon: f64, lat: f64) -> bool {
        let x = self.west + (lon - self.west).rem_euclid(360.0);
        let n = self.vertices.len();
        let mut inside = false;
        let mut j = n - 1;
        for i in 0..n {
            let (xi, yi) = self.vertices[i];
            let (xj, yj) = self.vertices[j];
            if (yi > lat) != (yj > lat) {
                let crossing = xi + (lat - yi) * (xj - xi) / (yj - yi);
                if x < crossing {
                    inside = !inside;
                }
            }
            j = i;
        }
        inside
    }
}

/// `lon` shifted by a multiple of 360 to lie within 180° of `reference`.
fn unwrap_near(lon: f64, reference: f64) -> f64 {
    reference + (lon - reference + 180.0).rem_euclid(360.0) - 180.0
}
