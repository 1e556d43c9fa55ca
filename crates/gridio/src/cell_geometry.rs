//! What a run says about the shape of its cells, for areas and volumes: the horizontal cell
//! outlines (1-D latitude/longitude bounds, or 4-vertex bounds on curvilinear grids), the run's
//! own cell area and sea-floor depth, and the vertical extent of every level. Raw numbers only:
//! areas on the sphere, thicknesses and volumes are computed by the caller. Where the run gives
//! no bounds they are derived from the centres (midpoints), and the description says so.

use crate::catalog::{attr_text, dim_names, open_paths, read_all, require_var, InputFile};
use crate::cell_outlines::{outlines, CellOutlines};
use crate::conversion::Conversion;
use crate::error::{GridError, Result};
use crate::roles::Role;
use crate::run::Run;
use crate::units;
use crate::vertical::{formula_from, Formula, Vertical};
use std::path::PathBuf;

/// The shape of a run's cells, as far as the run describes it.
#[derive(Clone, Debug)]
pub struct CellGeometry {
    /// Horizontal outlines of the cells.
    pub outlines: CellOutlines,
    /// The run's own horizontal cell area [m2] (`areacello` or another `cell_area`), if any.
    pub cell_area: Option<ColumnField>,
    /// Sea-floor depth below the geoid [m, positive down]: the `depth` term of a parametric
    /// coordinate, else `deptho` or another `sea_floor_depth_below_geoid`, if any.
    pub sea_floor: Option<ColumnField>,
    /// Vertical extent of each level.
    pub vertical: VerticalCells,
}

/// One value per water column (rows × cols, row-major, canonical order), with its source.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnField {
    /// The variable read.
    pub variable: String,
    /// The file it was read from.
    pub file: PathBuf,
    /// Values converted to SI (m2 or m); NaN where the file marks them missing.
    pub values: Vec<f64>,
}

/// How the vertical extent of each level is found.
#[derive(Clone, Debug)]
pub struct VerticalCells {
    kind: VerticalKind,
    description: String,
    varies_in_time: bool,
}

#[derive(Clone, Debug)]
enum VerticalKind {
    /// Fixed bounds per level [m below the sea surface, positive down], from the coordinate's
    /// `bounds` variable.
    Bounds(Vec<[f64; 2]>),
    /// The w-level (interface) terms of a parametric coordinate: `levels + 1` interfaces.
    Interfaces(Formula),
    /// Midway between the centres; the top at the sea surface; the bottom at the sea floor
    /// (`bottom_at_sea_floor`) or as far below the deepest centre as the interface above it.
    Midpoints { bottom_at_sea_floor: bool },
}

impl VerticalCells {
    /// Where the level bounds come from, in words, for metadata.
    pub fn describe(&self) -> &str {
        &self.description
    }

    /// Whether the levels' extent changes from step to step (parametric coordinates follow the
    /// free surface); otherwise the same every step.
    pub fn varies_in_time(&self) -> bool {
        self.varies_in_time
    }

    /// Whether [`VerticalCells::level_bounds`] reads the centres' depths (only for bounds
    /// derived from the centres); otherwise an empty slice may be passed.
    pub fn needs_centres(&self) -> bool {
        matches!(self.kind, VerticalKind::Midpoints { .. })
    }

    /// The upper and lower bound of every level of one column [m below the sea surface,
    /// positive down], in the file's level order: fixed bounds as they are, others computed
    /// into `out`.
    ///
    /// - `centres_m`: depth of each level's centre below the sea surface [m], file order
    ///   (read only when [`VerticalCells::needs_centres`]);
    /// - `surface_height_m`: free-surface height above the datum [m] (0 on fixed levels);
    /// - `sea_floor_m`: the column's sea-floor depth below the datum [m], if known.
    ///
    /// Values are NaN where the inputs are (land).
    pub fn level_bounds<'a>(
        &'a self,
        centres_m: &[f64],
        surface_height_m: f64,
        sea_floor_m: Option<f64>,
        out: &'a mut Vec<[f64; 2]>,
    ) -> &'a [[f64; 2]] {
        out.clear();
        match &self.kind {
            VerticalKind::Bounds(bounds) => return bounds,
            VerticalKind::Interfaces(formula) => {
                let depth = sea_floor_m.unwrap_or(f64::NAN);
                let below =
                    |k: usize| surface_height_m - formula.height(k, surface_height_m, depth);
                let levels = formula.level_values().len() - 1;
                out.extend((0..levels).map(|k| [below(k), below(k + 1)]));
            }
            VerticalKind::Midpoints {
                bottom_at_sea_floor,
            } => {
                let floor = sea_floor_m.map(|d| d + surface_height_m);
                let bottom = if *bottom_at_sea_floor { floor } else { None };
                midpoint_bounds(centres_m, bottom, out);
            }
        }
        out
    }
}

/// Bounds of each level midway between its centre and its neighbours' (`centres_m` in file
/// order, either direction): the level nearest the surface starts at 0 m, the deepest ends at
/// `bottom_m`, or as far below its centre as its upper bound is above it.
pub(crate) fn midpoint_bounds(centres_m: &[f64], bottom_m: Option<f64>, out: &mut Vec<[f64; 2]>) {
    out.clear();
    let n = centres_m.len();
    if n == 0 {
        return;
    }
    // Work from the surface down, then put the bounds back in file order.
    let upwards = n > 1 && centres_m[0] > centres_m[n - 1];
    let at = |i: usize| centres_m[if upwards { n - 1 - i } else { i }];
    let mut upper = 0.0;
    for i in 0..n {
        let centre = at(i);
        let lower = if i + 1 < n {
            0.5 * (centre + at(i + 1))
        } else {
            bottom_m.unwrap_or(centre + (centre - upper))
        };
        out.push([upper, lower]);
        upper = lower;
    }
    if upwards {
        out.reverse();
    }
}

impl Run {
    /// Reads what the run says about the shape of its cells (see [`CellGeometry`]).
    pub fn cell_geometry(&self) -> Result<CellGeometry> {
        crate::catalog::prepare_hdf5();
        let files = open_paths(&self.paths)?;
        Ok(CellGeometry {
            outlines: outlines(self, &files)?,
            cell_area: self.column_role(Role::CellArea)?,
            sea_floor: self.sea_floor()?,
            vertical: vertical_cells(self, &files)?,
        })
    }

    /// A per-column input (cell area or sea-floor depth), converted to SI.
    fn column_role(&self, role: Role) -> Result<Option<ColumnField>> {
        let Some(input) = self.input(role) else {
            return Ok(None);
        };
        let factor = match input.meaning_at(0).conversion {
            Conversion::Area(f) | Conversion::Length(f) => f,
            _ => 1.0,
        };
        let values = input.source.read(&self.paths, 0, &(0..self.shape.rows))?;
        Ok(Some(ColumnField {
            variable: input.name.clone(),
            file: self.paths[input.source.pieces[0].file].clone(),
            values: values.into_iter().map(|v| v * factor).collect(),
        }))
    }

    /// The parametric coordinate's `depth` term, else the sea-floor-depth input.
    fn sea_floor(&self) -> Result<Option<ColumnField>> {
        let Vertical::Parametric(p) = &self.vertical else {
            return self.column_role(Role::SeaFloorDepth);
        };
        let values = p.depth.read(&self.paths, 0, &(0..self.shape.rows))?;
        Ok(Some(ColumnField {
            variable: p.depth.name.clone(),
            file: self.paths[p.depth.pieces[0].file].clone(),
            values: values.into_iter().map(|v| v * p.depth_to_m).collect(),
        }))
    }
}

/// The level bounds: the vertical coordinate's bounds, a parametric coordinate's w-levels,
/// or midpoints between the centres.
fn vertical_cells(run: &Run, files: &[InputFile]) -> Result<VerticalCells> {
    let midpoints = |bottom_at_sea_floor: bool, description: String| VerticalCells {
        kind: VerticalKind::Midpoints {
            bottom_at_sea_floor,
        },
        description,
        varies_in_time: matches!(run.vertical, Vertical::Parametric(_)),
    };
    match &run.vertical {
        Vertical::Surface => Ok(midpoints(
            true,
            "no vertical coordinate: one level from the sea surface to the sea floor".into(),
        )),
        Vertical::Pressures { name, .. } => Ok(midpoints(
            false,
            format!("pressure levels '{name}': bounds midway between the depths of the level centres (top at the sea surface)"),
        )),
        Vertical::Depths {
            name,
            depth_m,
            positive_up,
        } => {
            if let Some(bounds) = depth_bounds(run, files, name, depth_m, *positive_up)? {
                return Ok(bounds);
            }
            Ok(midpoints(
                false,
                format!("'{name}' has no bounds: bounds midway between the level centres, the top at the sea surface, the deepest level as far below its centre as above (derived from the centres)"),
            ))
        }
        Vertical::Parametric(p) => {
            if let Some(cells) = w_levels(files, p)? {
                return Ok(cells);
            }
            Ok(midpoints(
                true,
                format!("no w-level terms for '{}': interfaces midway between the level centres at each step, the top at the free surface and the bottom at the sea floor '{}' (derived from the centres)", p.name, p.depth.name),
            ))
        }
    }
}

/// Bounds of fixed depth levels from the coordinate's `bounds` variable, in metres below the
/// surface; an error when they are not finite or do not enclose their centres.
fn depth_bounds(
    run: &Run,
    files: &[InputFile],
    name: &str,
    depth_m: &[f64],
    positive_up: bool,
) -> Result<Option<VerticalCells>> {
    let Some(file) = crate::output::holder(run, files, name) else {
        return Ok(None);
    };
    let var = require_var(file, name, "the vertical coordinate")?;
    let Some(bounds_name) = attr_text(&var, "bounds") else {
        return Ok(None);
    };
    let bvar = require_var(file, &bounds_name, "the vertical coordinate's bounds")?;
    let fail = |message: String| GridError::Metadata {
        file: file.path.clone(),
        variable: bounds_name.clone(),
        message,
    };
    let to_m = units::parse_length(&attr_text(&var, "units").unwrap_or_default())
        .map(|u| u.to_m)
        .unwrap_or(1.0);
    let sign = if positive_up { -1.0 } else { 1.0 };
    let values = read_all(&file.path, &bvar)?;
    if values.len() != 2 * depth_m.len() {
        return Err(fail(format!(
            "holds {} values; expected 2 per level of '{name}' ({})",
            values.len(),
            2 * depth_m.len()
        )));
    }
    let mut bounds = Vec::with_capacity(depth_m.len());
    for (level, (pair, centre)) in values.chunks(2).zip(depth_m).enumerate() {
        let (a, b) = (sign * pair[0] * to_m, sign * pair[1] * to_m);
        let tolerance = 1e-6 * centre.abs().max(1.0);
        let encloses = a.min(b) - tolerance <= *centre && *centre <= a.max(b) + tolerance;
        if !(a.is_finite() && b.is_finite() && encloses) {
            return Err(fail(format!(
                "level {} has bounds {} and {} that do not enclose its centre {} (after conversion to depths in m); expected finite bounds around each level",
                level + 1, pair[0], pair[1], centre / sign / to_m
            )));
        }
        bounds.push([a.min(b), a.max(b)]);
    }
    Ok(Some(VerticalCells {
        kind: VerticalKind::Bounds(bounds),
        description: format!("level bounds '{bounds_name}' of '{name}'"),
        varies_in_time: false,
    }))
}

/// A parametric coordinate's interfaces: a 1-D variable of `levels + 1` values with the same
/// `standard_name` and its own `formula_terms` (as ROMS writes `s_w` with `Cs_w`), whose values
/// enclose the centres' level by level.
fn w_levels(files: &[InputFile], p: &crate::vertical::Parametric) -> Result<Option<VerticalCells>> {
    let centres = p.formula.level_values();
    for file in files {
        for var in file.nc.variables() {
            let name = var.name();
            let dims = dim_names(&var);
            let same_kind = attr_text(&var, "standard_name").as_deref() == Some(&p.standard_name);
            let (Some(terms), true, true) = (
                attr_text(&var, "formula_terms"),
                same_kind && name != p.name,
                dims.len() == 1 && var.len() == centres.len() + 1,
            ) else {
                continue;
            };
            let formula = formula_from(file, &name, &p.standard_name, &terms)?;
            let w = formula.level_values();
            let encloses = centres
                .iter()
                .enumerate()
                .all(|(k, c)| (w[k] - c) * (w[k + 1] - c) <= 0.0 && w[k] != w[k + 1]);
            if !encloses {
                return Err(GridError::Metadata {
                    file: file.path.clone(),
                    variable: name,
                    message: format!(
                        "its values {w:?} do not enclose the centres of '{}' ({centres:?}) level by level; expected the w-level interfaces of that coordinate",
                        p.name
                    ),
                });
            }
            return Ok(Some(VerticalCells {
                kind: VerticalKind::Interfaces(formula),
                description: format!(
                    "interfaces from the w-level terms of '{name}' ({terms}) at each step, below the free surface"
                ),
                varies_in_time: true,
            }));
        }
    }
    Ok(None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn midpoints_from_the_surface_down_in_either_order() {
        let mut out = Vec::new();
        midpoint_bounds(&[5.0, 15.0, 30.0], None, &mut out);
        assert_eq!(out, vec![[0.0, 10.0], [10.0, 22.5], [22.5, 37.5]]);
        midpoint_bounds(&[30.0, 15.0, 5.0], Some(40.0), &mut out);
        assert_eq!(out, vec![[22.5, 40.0], [10.0, 22.5], [0.0, 10.0]]);
    }
}
