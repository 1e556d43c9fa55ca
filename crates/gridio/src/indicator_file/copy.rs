//! Copying an indicator file's static coordinates (horizontal, vertical, formula terms, grid
//! mapping, with their bounds) into a new output, so that statistics written there sit on the
//! same grid.

use super::layout::VerticalCoordinate;
use super::IndicatorFile;
use crate::catalog::attr_text;
use crate::error::Result;
use crate::output::{copy_static, ensure_dim};

/// What [`IndicatorFile::copy_coordinates`] defined in the output.
#[derive(Clone, Debug, PartialEq)]
pub struct CopiedCoordinates {
    /// The vertical dimension, if the grid has one.
    pub z_dim: Option<String>,
    /// The Y (row) dimension.
    pub y_dim: String,
    /// The X (column) dimension.
    pub x_dim: String,
    /// For curvilinear grids, the `coordinates` attribute data variables need ("lat lon").
    pub coordinates_attr: Option<String>,
    /// The grid-mapping variable copied, if any.
    pub grid_mapping: Option<String>,
    /// The time-dependent free-surface term of a parametric coordinate, which is not copied
    /// (it lies on the run's time axis): the caller writes it on its own time axis.
    pub free_surface: Option<String>,
}

impl IndicatorFile {
    /// Copies the static coordinates into `out`: the Y and X coordinate variables or the 2-D
    /// latitude and longitude, the vertical coordinate and its static formula terms, the grid
    /// mapping, each with the variable its `bounds` attribute names. Attributes are copied as
    /// they are; dimensions are defined as needed.
    pub fn copy_coordinates(&self, out: &mut netcdf::FileMut) -> Result<CopiedCoordinates> {
        let file = &self.files[0];
        let g = &self.grid;
        ensure_dim(out, &g.y_dim, g.rows)?;
        ensure_dim(out, &g.x_dim, g.cols)?;
        let mut names: Vec<String> = Vec::new();
        let mut free_surface = None;
        if let Some(z) = &self.vertical.name {
            ensure_dim(out, z, self.vertical.levels)?;
            names.push(z.clone());
            if let VerticalCoordinate::Parametric {
                terms,
                free_surface: eta,
                ..
            } = &self.vertical.coordinate
            {
                names.extend(terms.iter().filter(|t| *t != eta).cloned());
                free_surface = Some(eta.clone());
            }
        }
        for name in [&g.y_dim, &g.x_dim, &g.lat_name, &g.lon_name] {
            names.push(name.clone());
        }
        names.extend(g.grid_mapping.iter().cloned());
        for name in &names {
            let Some(var) = file.nc.variable(name) else {
                continue;
            };
            let bounds = attr_text(&var, "bounds").filter(|b| file.nc.variable(b).is_some());
            drop(var);
            copy_static(file, name, out)?;
            if let Some(b) = bounds {
                copy_static(file, &b, out)?;
            }
        }
        Ok(CopiedCoordinates {
            z_dim: self.vertical.name.clone(),
            y_dim: g.y_dim.clone(),
            x_dim: g.x_dim.clone(),
            coordinates_attr: g
                .is_curvilinear()
                .then(|| format!("{} {}", g.lat_name, g.lon_name)),
            grid_mapping: g.grid_mapping.clone(),
            free_surface,
        })
    }
}
