//! Cell areas on the sphere, cell thicknesses and volumes.
//!
//! Callers should prefer the run's own cell areas (`areacello`, or any variable with
//! `standard_name = cell_area`) when present: models compute them with their own Earth radius
//! and grid construction. The functions here serve runs that give only bounds.

mod area;
mod thickness;

pub use area::{
    curvilinear_cell_areas, lon_lat_cell_area, quadrilateral_area, rectilinear_cell_areas,
    EARTH_MEAN_RADIUS_M,
};
pub use thickness::{
    cell_volumes, clipped_thickness, thicknesses_from_bounds, thicknesses_from_interfaces, Positive,
};

use thiserror::Error;

/// Bounds or vertices that do not describe a cell.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum GeometryError {
    /// The sphere radius is not a positive finite number.
    #[error("the sphere radius must be a positive number of metres, got {0}")]
    Radius(f64),
    /// A latitude is outside −90..90 degrees or not finite.
    #[error("cell {cell}: latitude {latitude} is not within -90..90 degrees north")]
    Latitude {
        /// Index of the cell.
        cell: usize,
        /// The latitude \[degrees north\].
        latitude: f64,
    },
    /// A longitude is not finite.
    #[error("cell {cell}: longitude {longitude} is not a finite number of degrees east")]
    Longitude {
        /// Index of the cell.
        cell: usize,
        /// The longitude \[degrees east\].
        longitude: f64,
    },
    /// A vertical bound or interface is not finite.
    #[error("level {level}: vertical bound {value} is not a finite number of metres")]
    Vertical {
        /// Index of the level (or interface).
        level: usize,
        /// The value \[m\].
        value: f64,
    },
    /// Two arrays that describe the same cells have different lengths.
    #[error(transparent)]
    Length(#[from] crate::LengthError),
}
