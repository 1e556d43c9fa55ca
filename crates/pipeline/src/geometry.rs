//! The geometry of a job's water columns, set up once before the first slab: the horizontal
//! area of every column (the run's own `areacello`/`cell_area`, or computed from the cell
//! bounds on the sphere) and the sea-floor depth, with words saying where each came from.

use crate::PipelineError;
use acidscape_analysis::geometry::{
    curvilinear_cell_areas, rectilinear_cell_areas, EARTH_MEAN_RADIUS_M,
};
use acidscape_gridio::{CellGeometry, CellOutlines, Run, VerticalCells};

/// Per-column geometry of the whole grid (rows × cols, row-major).
#[derive(Clone, Debug)]
pub struct ColumnGeometry {
    /// Horizontal area of each column [m2]; NaN where nothing gives one.
    pub area_m2: Vec<f64>,
    /// Where the areas come from, for the `cell_area` comment (names, no paths: a resumed job
    /// compares it, and its inputs may have moved).
    pub area_source: String,
    /// Sea-floor depth below the datum [m, positive down]; NaN where the run gives none.
    pub sea_floor_m: Vec<f64>,
    /// Where the sea-floor depths come from, for the `sea_floor_depth` comment.
    pub sea_floor_source: String,
    /// How the vertical extent of each level is found.
    pub vertical: VerticalCells,
}

/// The radius used for areas from bounds, in words with its source.
pub const RADIUS_NOTE: &str = "a sphere of radius 6371008.7714 m, the GRS80 mean radius R1 = (2a + b)/3 (Moritz 2000, Geodetic Reference System 1980, J. Geodesy 74, 128-133)";

/// Areas of every column from the outlines on the sphere ([`EARTH_MEAN_RADIUS_M`]).
pub fn areas_from_outlines(outlines: &CellOutlines) -> Result<Option<Vec<f64>>, String> {
    let areas = match outlines {
        CellOutlines::Rectilinear {
            lon_bounds,
            lat_bounds,
            ..
        } => rectilinear_cell_areas(lon_bounds, lat_bounds, EARTH_MEAN_RADIUS_M),
        CellOutlines::Curvilinear {
            lon_vertices,
            lat_vertices,
            ..
        } => curvilinear_cell_areas(lon_vertices, lat_vertices, EARTH_MEAN_RADIUS_M),
        CellOutlines::Unknown => return Ok(None),
    };
    areas.map(Some).map_err(|e| e.to_string())
}

impl ColumnGeometry {
    /// Reads the run's cell geometry and settles every column's area and sea floor.
    pub fn of(run: &Run) -> Result<ColumnGeometry, PipelineError> {
        let geometry = run.cell_geometry()?;
        let (area_m2, area_source) = column_areas(&geometry)?;
        let (sea_floor_m, sea_floor_source) = match &geometry.sea_floor {
            Some(field) => (
                field.values.clone(),
                format!("the run's '{}'", field.variable),
            ),
            None => (
                vec![f64::NAN; area_m2.len()],
                "the lower bound of the deepest wet cell (the run gives no sea-floor depth)"
                    .to_string(),
            ),
        };
        Ok(ColumnGeometry {
            area_m2,
            area_source,
            sea_floor_m,
            sea_floor_source,
            vertical: geometry.vertical,
        })
    }
}

/// The run's own areas where it has them, else areas from the bounds on the sphere.
fn column_areas(geometry: &CellGeometry) -> Result<(Vec<f64>, String), PipelineError> {
    let usable = |a: f64| a.is_finite() && a >= 0.0;
    let from_outlines = || {
        areas_from_outlines(&geometry.outlines).map_err(|message| PipelineError::Option {
            option: "cell areas".into(),
            message: format!(
                "the cell bounds ({}) give no area: {message}; name the run's cell-area variable with --variable cell_area=NAME, or pass --no-horizons",
                geometry.outlines.origin()
            ),
        })
    };
    let bounds_note = || {
        format!(
            "the cell outlines ({}) on {RADIUS_NOTE}",
            geometry.outlines.origin()
        )
    };
    let Some(own) = &geometry.cell_area else {
        let areas = from_outlines()?.ok_or_else(|| PipelineError::Option {
            option: "--no-horizons".into(),
            message: "horizons and the extent of corrosive water need the cells' areas, but the run has neither a cell-area variable (areacello) nor latitude and longitude; name the area with --variable cell_area=NAME or pass --no-horizons".into(),
        })?;
        return Ok((areas, bounds_note()));
    };
    let mut areas = own.values.clone();
    let source = format!("the run's '{}' (the model's own areas)", own.variable);
    let gaps = areas.iter().filter(|a| !usable(**a)).count();
    if gaps == 0 {
        return Ok((areas, source));
    }
    let Some(fallback) = from_outlines().ok().flatten() else {
        return Ok((areas, source));
    };
    for (a, b) in areas.iter_mut().zip(fallback) {
        if !usable(*a) {
            *a = b;
        }
    }
    Ok((
        areas,
        format!(
            "{source}; where it has no value ({gaps} column(s), land in most runs), from {}",
            bounds_note()
        ),
    ))
}
