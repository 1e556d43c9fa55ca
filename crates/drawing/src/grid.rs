//! The figures' grid from an output's horizontal grid: cells from their bounds.

use crate::error::{DrawError, Result};
use crate::source::Source;
use acidscape_figures::MapGrid;
use acidscape_gridio::GridLayout;

/// Every cell of the file's grid as a quadrilateral: rectilinear cells from their bounds
/// (halfway between centres when the file has none), curvilinear cells from their vertices.
pub(crate) fn map_grid(source: &Source) -> Result<MapGrid> {
    let grid = source.file.grid();
    let made = match &grid.layout {
        GridLayout::Rectilinear {
            lat,
            lon,
            lat_bounds: Some(lat_b),
            lon_bounds: Some(lon_b),
        } if lat_b.len() == lat.len() && lon_b.len() == lon.len() => {
            MapGrid::rectilinear(lon_b.clone(), lat_b.clone())
        }
        GridLayout::Rectilinear { lat, lon, .. } => MapGrid::rectilinear_from_centres(lon, lat),
        GridLayout::Curvilinear {
            lat,
            lon,
            lat_vertices: Some(lat_v),
            lon_vertices: Some(lon_v),
        } => MapGrid::curvilinear(
            (grid.rows, grid.cols),
            lon.clone(),
            lat.clone(),
            lon_v.clone(),
            lat_v.clone(),
        ),
        GridLayout::Curvilinear { .. } => {
            return Err(DrawError::variable(
                source.path(),
                &grid.lat_name,
                format!(
                    "a curvilinear grid without cell vertices: expected a `bounds` attribute on {} and {} naming (rows, cols, 4) vertex variables",
                    grid.lat_name, grid.lon_name
                ),
            ))
        }
    };
    made.map_err(|e| DrawError::variable(source.path(), &grid.lon_name, e.to_string()))
}
