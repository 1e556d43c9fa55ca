//! Reading CF NetCDF ocean-model runs (one or many files, joined along time) into
//! slabs of converted inputs for the carbonate solver, and copying their coordinates
//! into CF NetCDF outputs.
//!
//! Canonical slab order is (level, row, col), C-order, level outermost; row is the
//! Y (latitude-like) axis and col the X axis, whatever the file's dimension order.
//! Missing and land values are `f64::NAN`.

pub mod calendar;
pub mod sampling;
pub mod seawater;
pub mod specific_volume;
pub mod units;

mod axes;
mod catalog;
mod cell_geometry;
mod cell_outlines;
mod chunk_cache;
pub mod chunk_filters;
mod conservative_temperature;
mod conversion;
mod discovery;
mod error;
mod grid;
mod indicator_file;
mod integrity;
mod lanes;
mod mapping;
mod native;
mod output;
mod plausibility;
mod report;
mod resume_facts;
mod roles;
mod run;
mod slab;
mod source;
mod timeline;
mod uncertainty_field;
mod vertical;

pub use catalog::prepare_hdf5;
pub use cell_geometry::{CellGeometry, ColumnField, VerticalCells};
pub use cell_outlines::CellOutlines;
pub use error::{GridError, Result};
pub use indicator_file::{
    bounds_between, uncertainty_of, CopiedCoordinates, FieldInfo, FieldKind, GridLayout,
    HorizontalGrid, IndicatorFile, ParametricColumns, TimeSteps, VerticalAxis, VerticalCoordinate,
    CELL_AREA, CELL_THICKNESS, SEA_FLOOR_DEPTH, VERSION_ATTRIBUTE,
};
pub use mapping::{MappedVariable, SalinityKind, TemperatureKind, VariableMapping, ROLE_NAMES};
pub use run::Run;

pub use chunk_cache::lcm as least_common_multiple;
pub use slab::{filled_on_pool, RawSlab};
pub use uncertainty_field::UncertaintyField;

use std::ops::Range;

/// What the user asked to read.
#[derive(Clone, Debug)]
pub struct RunSpec {
    /// Paths or glob patterns, as the user typed them.
    pub inputs: Vec<String>,
    /// User overrides (from a TOML file and/or the command line); default empty.
    pub mapping: VariableMapping,
    /// How per-volume concentrations become per-mass.
    pub density: DensityChoice,
    /// Which failed checks the user accepts; default none.
    pub checks: InputChecks,
}

impl Default for RunSpec {
    fn default() -> Self {
        RunSpec {
            inputs: Vec::new(),
            mapping: VariableMapping::default(),
            density: DensityChoice::InSitu,
            checks: InputChecks::default(),
        }
    }
}

/// Checks of a run the user states are to be accepted rather than refused.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct InputChecks {
    /// Process inputs whose sampled values are implausible for their role (entirely
    /// missing over the wet cells, or far outside the plausible range over a large part of
    /// the grid); the finding is kept in the output's metadata.
    pub accept_implausible: bool,
    /// Accept time steps that break the run's sampling (missing or uneven steps, time
    /// bounds that do not meet): the run is irregular on purpose.
    pub irregular_time: bool,
}

/// Density used to turn per-volume concentrations (mol m-3) into per-mass (µmol kg-1).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum DensityChoice {
    /// In-situ density from TEOS-10 at each cell.
    InSitu,
    /// A constant reference density [kg m-3], as a Boussinesq model uses.
    Reference(f64),
}

/// Size of one time step of the run in canonical order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct GridShape {
    pub levels: usize,
    pub rows: usize,
    pub cols: usize,
}

impl GridShape {
    /// Cells in one time step.
    pub fn cells(&self) -> usize {
        self.levels * self.rows * self.cols
    }
}

/// Names of what [`Run::write_coordinates`] defined in the output.
#[derive(Clone, Debug, PartialEq)]
pub struct OutputAxes {
    /// `[time, vertical, y, x]` dimension names as defined in the output (absent axes left out).
    pub dims: Vec<String>,
    /// For curvilinear grids, the value for data variables' `coordinates` attribute (e.g. "lat lon").
    pub coordinates_attr: Option<String>,
    /// Name of the grid-mapping variable copied into the output, if any.
    pub grid_mapping: Option<String>,
}

/// Converted inputs of one slab: one time step, all levels, a block of rows.
#[derive(Clone, Debug)]
pub struct SlabInputs {
    pub step: usize,
    pub rows: Range<usize>,
    /// `[levels, rows.len(), cols]`.
    pub shape: [usize; 3],
    /// In-situ temperature [°C].
    pub temperature_c: Vec<f64>,
    /// Practical salinity (PSS-78).
    pub salinity: Vec<f64>,
    /// Sea pressure (absolute pressure minus 10.1325 dbar) [dbar].
    pub pressure_dbar: Vec<f64>,
    /// Dissolved inorganic carbon [µmol kg-1].
    pub dic: Vec<f64>,
    /// Total alkalinity [µmol kg-1].
    pub alkalinity: Vec<f64>,
    /// Phosphate [µmol kg-1]; 0 when the run has none.
    pub phosphate: Vec<f64>,
    /// Silicate [µmol kg-1]; 0 when the run has none.
    pub silicate: Vec<f64>,
    /// Density used for per-volume <-> per-mass [kg m-3].
    pub density_kg_m3: Vec<f64>,
    /// Depth of the cell centre [m], positive down (below the datum for parametric
    /// coordinates: add `surface_height_m` for the depth below the sea surface).
    pub depth_m: Vec<f64>,
    /// Free-surface height above the datum per column (rows × cols) [m]; 0 on fixed levels.
    pub surface_height_m: Vec<f64>,
}
