//! Cell areas and thicknesses for weighting: the run's own `cell_area` and `cell_thickness`
//! (what `compute` used for its corrosive volumes) when the output has them, otherwise from
//! its coordinate bounds with `analysis::geometry`. Volumes are always area × thickness
//! through `analysis::geometry::cell_volumes`.

use crate::error::{ComparisonError, Result};
use acidscape_analysis::geometry::{
    curvilinear_cell_areas, rectilinear_cell_areas, thicknesses_from_bounds,
    thicknesses_from_interfaces, Positive, EARTH_MEAN_RADIUS_M,
};
use acidscape_gridio::{
    bounds_between, GridLayout, IndicatorFile, VerticalCoordinate, CELL_THICKNESS,
};
use std::ops::Range;

/// How the thickness of each cell is found.
#[derive(Clone, Debug)]
enum Thickness {
    /// The output's `cell_thickness` (static or per step).
    File,
    /// One thickness per level, the same in every column \[m\].
    PerLevel(Vec<f64>),
    /// Level bounds \[m, positive down\] clipped to each column's sea floor.
    Clipped {
        bounds_m: Vec<[f64; 2]>,
        sea_floor_m: Vec<f64>,
    },
    /// Per step and column, between the midpoints of the parametric coordinate's centres.
    Parametric,
    /// No vertical coordinate: surface values, weighted by area (1 m).
    Unit,
}

/// Areas of the columns and the way to the thickness of every cell.
#[derive(Clone, Debug)]
pub struct Geometry {
    /// Area of each column \[m²\], row-major.
    pub areas_m2: Vec<f64>,
    thickness: Thickness,
    /// Where areas and thicknesses came from, for the output's metadata.
    pub description: String,
}

fn geometry_error(file: &IndicatorFile, e: impl std::fmt::Display) -> ComparisonError {
    ComparisonError::file(file.path(), format!("cell geometry: {e}"))
}

/// Column areas and how they were found.
fn areas(file: &IndicatorFile) -> Result<(Vec<f64>, String)> {
    if let Some(area) = file.cell_area()? {
        return Ok((area, "cell areas: the output's cell_area".into()));
    }
    let sphere = format!(
        "on a sphere of radius {EARTH_MEAN_RADIUS_M} m (GRS80 mean radius, Moritz 2000), as the output has no cell_area"
    );
    let area = match &file.grid().layout {
        GridLayout::Rectilinear {
            lat,
            lon,
            lat_bounds,
            lon_bounds,
        } => {
            let lat_b = lat_bounds.clone().unwrap_or_else(|| bounds_between(lat));
            let lon_b = lon_bounds.clone().unwrap_or_else(|| bounds_between(lon));
            let lat_b: Vec<[f64; 2]> = lat_b
                .iter()
                .map(|b| b.map(|v| v.clamp(-90.0, 90.0)))
                .collect();
            let from = if lat_bounds.is_some() && lon_bounds.is_some() {
                "the latitude and longitude bounds"
            } else {
                "bounds half-way between the latitudes and longitudes (the output has none)"
            };
            let a = rectilinear_cell_areas(&lon_b, &lat_b, EARTH_MEAN_RADIUS_M)
                .map_err(|e| geometry_error(file, e))?;
            return Ok((a, format!("cell areas from {from} {sphere}")));
        }
        GridLayout::Curvilinear {
            lat_vertices: Some(lat_v),
            lon_vertices: Some(lon_v),
            ..
        } => curvilinear_cell_areas(lon_v, lat_v, EARTH_MEAN_RADIUS_M)
            .map_err(|e| geometry_error(file, e))?,
        GridLayout::Curvilinear { .. } => {
            return Err(geometry_error(
                file,
                "a curvilinear grid needs cell_area or 4-vertex latitude and longitude bounds for area weights",
            ))
        }
    };
    Ok((
        area,
        format!("cell areas from the 4-vertex bounds (great-circle edges) {sphere}"),
    ))
}

impl Geometry {
    /// The geometry of a run's output.
    pub fn new(file: &IndicatorFile) -> Result<Geometry> {
        let (areas_m2, area_words) = areas(file)?;
        let (thickness, thickness_words) = if file.has(CELL_THICKNESS) {
            (
                Thickness::File,
                "cell thickness: the output's cell_thickness".to_string(),
            )
        } else {
            fallback_thickness(file)?
        };
        Ok(Geometry {
            areas_m2,
            thickness,
            description: format!(
                "{area_words}; {thickness_words}; volumes = area x thickness (analysis::geometry::cell_volumes)"
            ),
        })
    }

    /// Whether thicknesses change from step to step (read them at every step).
    pub fn varies_in_time(&self, file: &IndicatorFile) -> bool {
        match self.thickness {
            Thickness::File => file.variable(CELL_THICKNESS).is_ok_and(|v| v.has_time),
            Thickness::Parametric => true,
            _ => false,
        }
    }

    /// Thickness of every cell \[m\] at a step for a block of rows (levels × rows × cols);
    /// NaN on land.
    pub fn thickness(
        &self,
        file: &IndicatorFile,
        step: usize,
        rows: Range<usize>,
    ) -> Result<Vec<f64>> {
        let cols = file.grid().cols;
        let columns = rows.len() * cols;
        let first = rows.start * cols;
        let levels = file.levels();
        let per_column = |thick: &dyn Fn(usize) -> Result<Vec<f64>>| -> Result<Vec<f64>> {
            let mut out = vec![f64::NAN; levels * columns];
            for c in 0..columns {
                let t = thick(c)?;
                for (k, value) in t.into_iter().enumerate() {
                    out[k * columns + c] = value;
                }
            }
            Ok(out)
        };
        match &self.thickness {
            Thickness::File => Ok(file.cell_thickness(step, rows)?.unwrap_or_default()),
            Thickness::Unit => Ok(vec![1.0; columns]),
            Thickness::PerLevel(t) => Ok(t
                .iter()
                .flat_map(|&h| std::iter::repeat_n(h, columns))
                .collect()),
            Thickness::Clipped {
                bounds_m,
                sea_floor_m,
            } => per_column(&|c| {
                let floor = sea_floor_m[first + c];
                if floor.is_nan() {
                    return Ok(vec![f64::NAN; levels]);
                }
                thicknesses_from_bounds(bounds_m, Positive::Down, floor)
                    .map_err(|e| geometry_error(file, e))
            }),
            Thickness::Parametric => {
                let p = file
                    .parametric_columns(step, rows.clone())?
                    .ok_or_else(|| geometry_error(file, "no parametric coordinate"))?;
                per_column(&|c| {
                    let heights: Vec<f64> =
                        (0..levels).map(|k| p.height_m[k * columns + c]).collect();
                    let (eta, floor) = (p.free_surface_m[c], p.sea_floor_m[c]);
                    if heights.iter().any(|h| !h.is_finite())
                        || !eta.is_finite()
                        || !floor.is_finite()
                    {
                        return Ok(vec![f64::NAN; levels]);
                    }
                    let upwards = heights.first() < heights.last();
                    let (bottom, top) = (-floor, eta);
                    let mut interfaces = vec![if upwards { bottom } else { top }];
                    interfaces.extend(heights.windows(2).map(|w| 0.5 * (w[0] + w[1])));
                    interfaces.push(if upwards { top } else { bottom });
                    thicknesses_from_interfaces(&interfaces, Positive::Up, f64::INFINITY)
                        .map_err(|e| geometry_error(file, e))
                })
            }
        }
    }
}

/// Thickness from the vertical coordinate when the output has no `cell_thickness`.
fn fallback_thickness(file: &IndicatorFile) -> Result<(Thickness, String)> {
    let none = "(the output has no cell_thickness";
    match &file.vertical().coordinate {
        VerticalCoordinate::Surface => Ok((
            Thickness::Unit,
            "no vertical coordinate: surface values weighted by area".into(),
        )),
        VerticalCoordinate::Depths {
            depth_m, bounds_m, ..
        } => {
            let (bounds, from) = match bounds_m {
                Some(b) => (b.clone(), "the vertical bounds"),
                None => (
                    bounds_between(depth_m)
                        .into_iter()
                        .map(|[a, b]| [a.max(0.0), b])
                        .collect(),
                    "bounds half-way between the level depths (top at 0 m)",
                ),
            };
            match file.sea_floor_depth()? {
                Some(sea_floor_m) => Ok((
                    Thickness::Clipped {
                        bounds_m: bounds,
                        sea_floor_m,
                    },
                    format!("cell thickness from {from}, clipped to sea_floor_depth {none})"),
                )),
                None => {
                    let t = thicknesses_from_bounds(&bounds, Positive::Down, f64::INFINITY)
                        .map_err(|e| geometry_error(file, e))?;
                    Ok((
                        Thickness::PerLevel(t),
                        format!("cell thickness from {from}, whole cells {none} or sea_floor_depth, so partial bottom cells are not known)"),
                    ))
                }
            }
        }
        VerticalCoordinate::Parametric { .. } => Ok((
            Thickness::Parametric,
            format!("cell thickness per step between the midpoints of the level heights from formula_terms, the free surface and the sea floor {none})"),
        )),
        VerticalCoordinate::Pressures { .. } => Err(geometry_error(
            file,
            "levels given as pressures: volume weights need the output's cell_thickness",
        )),
    }
}
