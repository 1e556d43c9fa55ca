//! Reading hyperslabs of an indicator file: one step of a field, one level, a block of rows,
//! and the geometry variables.

use super::layout::{parametric_columns, ParametricColumns, VerticalCoordinate};
use super::{FieldInfo, IndicatorFile, CELL_AREA, CELL_THICKNESS, SEA_FLOOR_DEPTH};
use crate::axes::Axis;
use crate::error::{GridError, Result};
use crate::source::{read_hyperslab, to_canonical};
use netcdf::Extent;
use std::ops::Range;

impl IndicatorFile {
    /// One time step of a field, every level and row: `levels × rows × cols` values for a 3-D
    /// field, `rows × cols` for a 2-D one (NaN where missing). `step` is ignored for fields
    /// without time.
    pub fn read_step(&self, name: &str, step: usize) -> Result<Vec<f64>> {
        self.read_rows(name, step, 0..self.grid.rows)
    }

    /// One time step of a field for a block of rows (all levels and columns): bounded memory
    /// for large grids. Canonical order, level outermost.
    pub fn read_rows(&self, name: &str, step: usize, rows: Range<usize>) -> Result<Vec<f64>> {
        let field = self.variable(name)?;
        let levels = if field.has_levels {
            0..self.levels()
        } else {
            0..1
        };
        self.read_block(field, step, levels, rows)
    }

    /// One level of a 3-D field at one step (`rows × cols` values); for a 2-D field, the field.
    pub fn read_level(&self, name: &str, step: usize, level: usize) -> Result<Vec<f64>> {
        self.read_level_rows(name, step, level, 0..self.grid.rows)
    }

    /// One level of a 3-D field at one step for a block of rows (`rows × cols` values).
    pub fn read_level_rows(
        &self,
        name: &str,
        step: usize,
        level: usize,
        rows: Range<usize>,
    ) -> Result<Vec<f64>> {
        let field = self.variable(name)?;
        if !field.has_levels {
            return self.read_block(field, step, 0..1, rows);
        }
        if level >= self.levels() {
            return Err(self.out_of_range(name, format!("level {level} of {}", self.levels())));
        }
        self.read_block(field, step, level..level + 1, rows)
    }

    fn out_of_range(&self, name: &str, what: String) -> GridError {
        GridError::OutOfRange {
            message: format!(
                "{}, variable '{name}': {what} is outside the file",
                self.path.display()
            ),
        }
    }

    fn read_block(
        &self,
        field: &FieldInfo,
        step: usize,
        levels: Range<usize>,
        rows: Range<usize>,
    ) -> Result<Vec<f64>> {
        if field.axes.is_empty() || !field.on_grid {
            return Err(GridError::Metadata {
                file: self.path.clone(),
                variable: field.name.clone(),
                message: "not a field on the horizontal grid".to_string(),
            });
        }
        if field.has_time && step >= self.steps() {
            return Err(
                self.out_of_range(&field.name, format!("time step {step} of {}", self.steps()))
            );
        }
        if rows.end > self.grid.rows || rows.is_empty() {
            return Err(self.out_of_range(
                &field.name,
                format!("rows {}..{} of {}", rows.start, rows.end, self.grid.rows),
            ));
        }
        let file = &self.files[0];
        crate::catalog::still_complete(&file.path, file.expected.length)?;
        let var = crate::catalog::require_var(file, &field.name, "the indicator file")?;
        let mut extents = Vec::with_capacity(field.axes.len());
        let mut sizes = Vec::with_capacity(field.axes.len());
        for axis in &field.axes {
            let range = match axis {
                Axis::T => step..step + 1,
                Axis::Z => levels.clone(),
                Axis::Y => rows.clone(),
                Axis::X => 0..self.grid.cols,
            };
            sizes.push(range.len());
            extents.push(Extent::from(range));
        }
        let mut raw = read_hyperslab(&var, extents, &sizes, &self.path)?;
        field.mask.apply(&mut raw);
        Ok(to_canonical(raw, &field.axes, &sizes))
    }

    /// `cell_area` \[m²\] per column (rows × cols), if the file has it.
    pub fn cell_area(&self) -> Result<Option<Vec<f64>>> {
        self.optional(CELL_AREA, 0, 0..self.grid.rows)
    }

    /// `cell_thickness` \[m\] at a step for a block of rows (levels × rows × cols), if the
    /// file has it (static for z-levels: `step` is then ignored).
    pub fn cell_thickness(&self, step: usize, rows: Range<usize>) -> Result<Option<Vec<f64>>> {
        self.optional(CELL_THICKNESS, step, rows)
    }

    /// `sea_floor_depth` \[m, positive down\] per column, if the file has it.
    pub fn sea_floor_depth(&self) -> Result<Option<Vec<f64>>> {
        self.optional(SEA_FLOOR_DEPTH, 0, 0..self.grid.rows)
    }

    fn optional(&self, name: &str, step: usize, rows: Range<usize>) -> Result<Option<Vec<f64>>> {
        if self.has(name) {
            self.read_rows(name, step, rows).map(Some)
        } else {
            Ok(None)
        }
    }

    /// Depth of each cell centre below the sea surface \[m, positive down\] at a step, for a
    /// block of rows (levels × rows × cols): the level depths of z-levels, or the depths from
    /// `formula_terms` for a parametric coordinate (CF Conventions 1.10, Appendix D).
    pub fn centre_depths(&self, step: usize, rows: Range<usize>) -> Result<Vec<f64>> {
        let columns = rows.len() * self.grid.cols;
        match &self.vertical.coordinate {
            VerticalCoordinate::Surface => Ok(vec![0.0; columns]),
            VerticalCoordinate::Depths { depth_m, .. } => Ok(depth_m
                .iter()
                .flat_map(|&d| std::iter::repeat_n(d, columns))
                .collect()),
            VerticalCoordinate::Pressures { .. } => Err(GridError::Metadata {
                file: self.path.clone(),
                variable: self.vertical.name.clone().unwrap_or_default(),
                message: "levels are given as pressures; the depth of cells is not known"
                    .to_string(),
            }),
            VerticalCoordinate::Parametric { .. } => {
                let p =
                    self.parametric_columns(step, rows)?
                        .ok_or_else(|| GridError::OutOfRange {
                            message: "a parametric coordinate without its formula".to_string(),
                        })?;
                let columns = p.free_surface_m.len();
                Ok(p.height_m
                    .iter()
                    .enumerate()
                    .map(|(i, z)| p.free_surface_m[i % columns] - z)
                    .collect())
            }
        }
    }

    /// For a parametric vertical coordinate: heights of the cell centres, free surface and sea
    /// floor at a step for a block of rows; `None` for other coordinates.
    pub fn parametric_columns(
        &self,
        step: usize,
        rows: Range<usize>,
    ) -> Result<Option<ParametricColumns>> {
        let paths = [self.path.clone()];
        parametric_columns(&self.levels_internal, &paths, step, &rows, self.grid.cols)
    }
}
