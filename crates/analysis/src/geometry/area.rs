//! Cell areas on a sphere from cell bounds (CF Conventions 1.10, section 7.1: bounds of 1-D
//! coordinates and vertices of 2-D cells).

use super::GeometryError;

/// Mean radius R1 = (2a + b) / 3 of the GRS80 ellipsoid \[m\] (Moritz 2000, "Geodetic
/// Reference System 1980", Journal of Geodesy 74, 128–133). The default sphere for cells
/// whose run gives no areas; a model's own radius may differ (e.g. 6371229 m or 6371000 m,
/// from memory), which changes areas by up to about 7e-5 relative.
pub const EARTH_MEAN_RADIUS_M: f64 = 6_371_008.771_4;

fn check_radius(radius_m: f64) -> Result<(), GeometryError> {
    if radius_m.is_finite() && radius_m > 0.0 {
        Ok(())
    } else {
        Err(GeometryError::Radius(radius_m))
    }
}

fn check_point(cell: usize, lon: f64, lat: f64) -> Result<(), GeometryError> {
    if !lon.is_finite() {
        return Err(GeometryError::Longitude {
            cell,
            longitude: lon,
        });
    }
    if !(-90.0..=90.0).contains(&lat) {
        return Err(GeometryError::Latitude {
            cell,
            latitude: lat,
        });
    }
    Ok(())
}

/// Longitude width \[degrees\] of bounds given in either order and in any 360° convention: the
/// shorter way round (so `[359.5, 0.5]` is 1° wide), except that bounds exactly 360° apart
/// describe a cell spanning every longitude.
fn longitude_width_deg(lon_bounds: [f64; 2]) -> f64 {
    let d = lon_bounds[1] - lon_bounds[0];
    if (d.abs() - 360.0).abs() <= 1e-9 {
        return 360.0;
    }
    ((d + 180.0).rem_euclid(360.0) - 180.0).abs()
}

/// Area of a cell bounded by two meridians and two parallels \[m²\]:
/// R² Δλ |sin φ₂ − sin φ₁| (exact on the sphere: the integral of R² cos φ dφ dλ).
///
/// `lon_bounds` \[degrees east\] in either order and convention (the shorter way round;
/// bounds 360° apart span every longitude), `lat_bounds` \[degrees north\], `radius_m` \[m\].
///
/// ```
/// use acidscape_analysis::geometry::{lon_lat_cell_area, EARTH_MEAN_RADIUS_M as R};
/// // The whole sphere: 4πR² (about 5.1e14 m²).
/// let a = lon_lat_cell_area([0.0, 360.0], [-90.0, 90.0], R).unwrap();
/// assert!((a / (4.0 * std::f64::consts::PI * R * R) - 1.0).abs() < 1e-14);
/// ```
pub fn lon_lat_cell_area(
    lon_bounds: [f64; 2],
    lat_bounds: [f64; 2],
    radius_m: f64,
) -> Result<f64, GeometryError> {
    check_radius(radius_m)?;
    for i in 0..2 {
        check_point(0, lon_bounds[i], lat_bounds[i])?;
    }
    let width = longitude_width_deg(lon_bounds).to_radians();
    let band = (lat_bounds[1].to_radians().sin() - lat_bounds[0].to_radians().sin()).abs();
    Ok(radius_m * radius_m * width * band)
}

/// Areas of every cell of a rectilinear grid \[m²\], row-major: row `j` (latitude, the Y axis)
/// outer, col `i` (longitude) inner, as in slabs. `lon_bounds` per column and `lat_bounds` per
/// row, as the `bounds` variables of 1-D coordinates give them.
pub fn rectilinear_cell_areas(
    lon_bounds: &[[f64; 2]],
    lat_bounds: &[[f64; 2]],
    radius_m: f64,
) -> Result<Vec<f64>, GeometryError> {
    let mut areas = Vec::with_capacity(lon_bounds.len() * lat_bounds.len());
    for lat in lat_bounds {
        for lon in lon_bounds {
            areas.push(lon_lat_cell_area(*lon, *lat, radius_m)?);
        }
    }
    Ok(areas)
}

fn unit_vector(lon_deg: f64, lat_deg: f64) -> [f64; 3] {
    let (lon, lat) = (lon_deg.to_radians(), lat_deg.to_radians());
    [lat.cos() * lon.cos(), lat.cos() * lon.sin(), lat.sin()]
}

fn sub(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [a[0] - b[0], a[1] - b[1], a[2] - b[2]]
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

fn cross(a: [f64; 3], b: [f64; 3]) -> [f64; 3] {
    [
        a[1] * b[2] - a[2] * b[1],
        a[2] * b[0] - a[0] * b[2],
        a[0] * b[1] - a[1] * b[0],
    ]
}

/// Signed solid angle of the spherical triangle with unit-vector vertices a, b, c \[sr\]:
/// tan(E/2) = a·(b×c) / (1 + a·b + b·c + c·a) (Van Oosterom & Strackee 1983, IEEE Trans.
/// Biomed. Eng. 30, 125–126). The triple product is formed from the edge vectors b − a and
/// c − a, which keeps full relative precision for small cells.
fn signed_triangle_solid_angle(a: [f64; 3], b: [f64; 3], c: [f64; 3]) -> f64 {
    let triple = dot(a, cross(sub(b, a), sub(c, a)));
    let denominator = 1.0 + dot(a, b) + dot(b, c) + dot(c, a);
    2.0 * triple.atan2(denominator)
}

/// Area of a spherical quadrilateral whose edges are great-circle arcs \[m²\].
///
/// Vertices \[degrees east, degrees north\] in order around the cell, either way round (CF
/// gives them anticlockwise); any longitude convention, the dateline and 0°/360° need no
/// care because the computation is on unit vectors. A repeated vertex (a cell touching a
/// pole, or a collapsed tripolar cell) makes a triangle. The area is the sum of the signed
/// solid angles of the triangles (v0, v1, v2) and (v0, v2, v3), exact for any simple
/// quadrilateral, convex or not.
///
/// ```
/// use acidscape_analysis::geometry::{quadrilateral_area, EARTH_MEAN_RADIUS_M as R};
/// // An octant (three right angles; Girard's theorem gives πR²/2), the pole vertex repeated.
/// let a = quadrilateral_area([0.0, 90.0, 0.0, 0.0], [0.0, 0.0, 90.0, 90.0], R).unwrap();
/// assert!((a / (std::f64::consts::PI * R * R / 2.0) - 1.0).abs() < 1e-12);
/// ```
pub fn quadrilateral_area(
    lon: [f64; 4],
    lat: [f64; 4],
    radius_m: f64,
) -> Result<f64, GeometryError> {
    check_radius(radius_m)?;
    quadrilateral_area_checked(0, lon, lat, radius_m)
}

fn quadrilateral_area_checked(
    cell: usize,
    lon: [f64; 4],
    lat: [f64; 4],
    radius_m: f64,
) -> Result<f64, GeometryError> {
    for i in 0..4 {
        check_point(cell, lon[i], lat[i])?;
    }
    let v: Vec<[f64; 3]> = (0..4).map(|i| unit_vector(lon[i], lat[i])).collect();
    let solid_angle = signed_triangle_solid_angle(v[0], v[1], v[2])
        + signed_triangle_solid_angle(v[0], v[2], v[3]);
    Ok(radius_m * radius_m * solid_angle.abs())
}

/// Areas of the cells of a curvilinear grid \[m²\], from the four vertices of each cell
/// (`lon_vertices[c]`, `lat_vertices[c]`, as CF 2-D bounds variables with a vertex dimension of
/// 4 give them), cell order as given. Edges are taken as great-circle arcs.
pub fn curvilinear_cell_areas(
    lon_vertices: &[[f64; 4]],
    lat_vertices: &[[f64; 4]],
    radius_m: f64,
) -> Result<Vec<f64>, GeometryError> {
    check_radius(radius_m)?;
    crate::check_length(
        "latitude vertices (one set of 4 per cell, as the longitude vertices)",
        lon_vertices.len(),
        lat_vertices.len(),
    )?;
    lon_vertices
        .iter()
        .zip(lat_vertices)
        .enumerate()
        .map(|(cell, (lon, lat))| quadrilateral_area_checked(cell, *lon, *lat, radius_m))
        .collect()
}

#[cfg(test)]
#[path = "area_tests.rs"]
mod tests;
