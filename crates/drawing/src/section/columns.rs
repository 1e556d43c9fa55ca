//! The water columns of a section at one time step: each cell's layers from the surface down
//! (interfaces and values), and the depths of the saturation horizons.

use super::line::LineCell;
use crate::error::{DrawError, Result};
use crate::source::Source;
use acidscape_analysis::horizons::{sea_floor_depth, WetColumn};
use acidscape_gridio::{bounds_between, VerticalCoordinate, SEA_FLOOR_DEPTH};

/// One step's columns of the whole grid, for picking the section's cells.
pub(crate) struct StepColumns {
    levels: usize,
    columns: usize,
    cols: usize,
    /// Depth of each cell's centre below the sea surface \[m\] (levels × rows × cols).
    centres: Vec<f64>,
    /// Per level, the depths of its upper and lower interfaces for z-levels (None for
    /// terrain-following layers, whose interfaces lie halfway between centres).
    level_bounds: Option<Vec<[f64; 2]>>,
    /// The sea floor below the sea surface per column \[m\], where known.
    floors: Option<Vec<f64>>,
}

/// A column of the section, from the surface down.
pub(crate) struct SectionCell {
    /// Layer interfaces \[m, positive down\], one more than `order`.
    pub interfaces: Vec<f64>,
    /// File level index of each layer, from the surface down.
    pub order: Vec<usize>,
    /// Depth of each layer's centre \[m\].
    pub centres: Vec<f64>,
    /// The floor used for horizons in the bottom cell \[m\], if the file gives it.
    pub floor: Option<f64>,
}

impl StepColumns {
    pub(crate) fn read(source: &Source, variable: &str, step: usize) -> Result<StepColumns> {
        let file = &source.file;
        let grid = file.grid();
        let rows = 0..grid.rows;
        let (level_bounds, floors) = match &file.vertical().coordinate {
            VerticalCoordinate::Depths {
                depth_m, bounds_m, ..
            } => {
                let bounds = bounds_m.clone().unwrap_or_else(|| {
                    let mut order: Vec<usize> = (0..depth_m.len()).collect();
                    order.sort_by(|&a, &b| depth_m[a].total_cmp(&depth_m[b]));
                    let sorted: Vec<f64> = order.iter().map(|&k| depth_m[k]).collect();
                    let between = bounds_between(&sorted);
                    let mut bounds = vec![[0.0; 2]; depth_m.len()];
                    for (position, &k) in order.iter().enumerate() {
                        bounds[k] = between[position];
                    }
                    bounds
                });
                let top_first = bounds.iter().map(|[a, b]| [a.min(*b).max(0.0), a.max(*b)]);
                let floors = if file.has(SEA_FLOOR_DEPTH) {
                    file.sea_floor_depth()?
                } else {
                    None
                };
                (Some(top_first.collect()), floors)
            }
            VerticalCoordinate::Parametric { .. } => {
                let p = file.parametric_columns(step, rows.clone())?;
                let floors = p.map(|p| {
                    p.sea_floor_m
                        .iter()
                        .zip(&p.free_surface_m)
                        .map(|(floor, eta)| floor + eta)
                        .collect()
                });
                (None, floors)
            }
            _ => {
                return Err(DrawError::variable(
                    source.path(),
                    variable,
                    "a section needs the depth of each level (z-levels or a terrain-following coordinate); this file's levels have none",
                ))
            }
        };
        Ok(StepColumns {
            levels: file.levels(),
            columns: grid.columns(),
            cols: grid.cols,
            centres: file.centre_depths(step, rows)?,
            level_bounds,
            floors,
        })
    }

    /// Index in a step's (level, row, col) arrays.
    pub(crate) fn index(&self, level: usize, cell: LineCell) -> usize {
        level * self.columns + cell.j * self.cols + cell.i
    }

    /// The layers of one cell of the section, from the surface down.
    pub(crate) fn cell(&self, cell: LineCell) -> SectionCell {
        let centre = |k: usize| self.centres[self.index(k, cell)];
        let mut order: Vec<usize> = (0..self.levels).collect();
        order.sort_by(|&a, &b| centre(a).total_cmp(&centre(b)));
        let centres: Vec<f64> = order.iter().map(|&k| centre(k)).collect();
        let floor = self
            .floors
            .as_ref()
            .map(|f| f[cell.j * self.cols + cell.i])
            .filter(|f| f.is_finite() && *f > 0.0);
        let interfaces = match &self.level_bounds {
            Some(bounds) => {
                let mut interfaces: Vec<f64> = order.iter().map(|&k| bounds[k][0]).collect();
                interfaces.push(bounds[order[order.len() - 1]][1]);
                interfaces
            }
            None => {
                let mut interfaces = vec![0.0];
                interfaces.extend(centres.windows(2).map(|w| 0.5 * (w[0] + w[1])));
                let deepest = centres[centres.len() - 1];
                interfaces
                    .push(floor.unwrap_or(deepest + (deepest - interfaces[interfaces.len() - 1])));
                interfaces
            }
        };
        SectionCell {
            interfaces,
            order,
            centres,
            floor,
        }
    }
}

impl SectionCell {
    /// One field's values in this cell's order.
    pub(crate) fn values(&self, step: &StepColumns, cell: LineCell, field: &[f64]) -> Vec<f64> {
        self.order
            .iter()
            .map(|&k| field[step.index(k, cell)])
            .collect()
    }

    /// The interfaces with the deepest wet cell's lower one clipped to the sea floor (partial
    /// bottom cells), given the values of a field (NaN below the floor).
    pub(crate) fn clipped_interfaces(&self, values: &[f64]) -> Vec<f64> {
        let mut interfaces = self.interfaces.clone();
        if let (Some(floor), Some(last)) = (self.floor, values.iter().rposition(|v| v.is_finite()))
        {
            if floor > interfaces[last] && floor < interfaces[last + 1] {
                interfaces[last + 1] = floor;
            }
        }
        interfaces
    }

    /// The depth where Ω crosses 1 going down this column (`omega` in this cell's order, NaN
    /// where missing; `wet` marks the water cells), as the analysis crate finds it (linear in
    /// depth on ln Ω between centres); NaN where the column has none.
    pub(crate) fn horizon(&self, omega: &[f64], wet: &[bool]) -> f64 {
        let take = |values: &[f64]| -> Vec<f64> {
            values
                .iter()
                .zip(wet)
                .filter(|(_, &w)| w)
                .map(|(&v, _)| v)
                .collect()
        };
        let depths = take(&self.centres);
        let omegas = take(omega);
        let deepest = (0..wet.len())
            .rev()
            .find(|&k| wet[k])
            .map_or(0.0, |k| self.interfaces[k + 1]);
        let floor = sea_floor_depth(self.floor, deepest);
        WetColumn::new(&depths, floor)
            .and_then(|column| column.horizon(&omegas, 1.0))
            .ok()
            .and_then(|h| h.depth_m)
            .unwrap_or(f64::NAN)
    }
}
