//! Columns of a slab: the shape of one slab (one time step × all levels × a block of rows, in
//! (level, row, col) order) and a reusable buffer that gathers one column's wet cells from the
//! surface down, whichever way the file orders its levels.

/// The shape of a slab in canonical (level, row, col) order, level outermost.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SlabShape {
    /// Vertical levels.
    pub levels: usize,
    /// Rows (the Y axis) in the slab.
    pub rows: usize,
    /// Columns of the X axis.
    pub cols: usize,
}

impl SlabShape {
    /// Water columns in the slab (`rows × cols`); column `c` is row `c / cols`, col `c % cols`.
    pub fn columns(&self) -> usize {
        self.rows * self.cols
    }

    /// Cells in the slab.
    pub fn cells(&self) -> usize {
        self.levels * self.columns()
    }

    /// Index in the slab arrays of `level` in `column`.
    pub fn index(&self, level: usize, column: usize) -> usize {
        level * self.columns() + column
    }
}

/// The wet cells of one column, ordered from the surface down, with any number of per-cell
/// fields gathered alongside. Reuse one buffer per thread to avoid allocating per column.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ColumnCells {
    /// Level index in the slab of each wet cell, from the surface down.
    pub levels: Vec<usize>,
    /// Depth of each wet cell's centre \[m\], positive down.
    pub depth_m: Vec<f64>,
    /// Each gathered field's values at the wet cells, in the same order.
    pub fields: Vec<Vec<f64>>,
}

impl ColumnCells {
    /// An empty buffer.
    pub fn new() -> Self {
        Self::default()
    }

    /// Fills the buffer with `column` of a slab: the cells for which `wet(index)` holds (index
    /// into the slab arrays), their depths from `depth_m` and their values of each of `fields`
    /// (every array of length `shape.cells()`). Levels are put in order from the surface down:
    /// when the file's level order runs upwards (e.g. level 0 at the bottom) the order is
    /// reversed, judged from the depths of the first and last wet cells.
    pub fn gather(
        &mut self,
        shape: SlabShape,
        column: usize,
        depth_m: &[f64],
        wet: impl Fn(usize) -> bool,
        fields: &[&[f64]],
    ) {
        self.levels.clear();
        self.depth_m.clear();
        self.fields.resize_with(fields.len(), Vec::new);
        for values in &mut self.fields {
            values.clear();
        }
        for level in 0..shape.levels {
            let cell = shape.index(level, column);
            if !wet(cell) {
                continue;
            }
            self.levels.push(level);
            self.depth_m.push(depth_m[cell]);
            for (out, field) in self.fields.iter_mut().zip(fields) {
                out.push(field[cell]);
            }
        }
        let upwards = matches!(
            (self.depth_m.first(), self.depth_m.last()),
            (Some(top), Some(last)) if top > last
        );
        if upwards {
            self.levels.reverse();
            self.depth_m.reverse();
            for values in &mut self.fields {
                values.reverse();
            }
        }
    }

    /// Number of wet cells gathered.
    pub fn len(&self) -> usize {
        self.levels.len()
    }

    /// Whether the column has no wet cell (land).
    pub fn is_empty(&self) -> bool {
        self.levels.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gathers_wet_cells_from_the_surface_down() {
        // 3 levels × 1 row × 2 cols; column 1 has its deepest level dry.
        let shape = SlabShape {
            levels: 3,
            rows: 1,
            cols: 2,
        };
        let depth = [5.0, 5.0, 15.0, 15.0, 30.0, 30.0];
        let omega = [3.0, 3.1, 2.0, 2.1, 1.0, f64::NAN];
        let wet = [true, true, true, true, true, false];
        let mut buffer = ColumnCells::new();
        buffer.gather(shape, 1, &depth, |i| wet[i], &[&omega]);
        assert_eq!(buffer.levels, vec![0, 1]);
        assert_eq!(buffer.depth_m, vec![5.0, 15.0]);
        assert_eq!(buffer.fields, vec![vec![3.1, 2.1]]);
        // Reuse: no stale values remain.
        buffer.gather(shape, 0, &depth, |i| wet[i], &[&omega]);
        assert_eq!(buffer.fields, vec![vec![3.0, 2.0, 1.0]]);
    }

    #[test]
    fn bottom_first_files_are_reversed() {
        // Level 0 at the bottom, as ROMS-style s-levels are stored.
        let shape = SlabShape {
            levels: 3,
            rows: 1,
            cols: 1,
        };
        let depth = [90.0, 50.0, 10.0];
        let omega = [0.8, 1.2, 2.0];
        let mut buffer = ColumnCells::new();
        buffer.gather(shape, 0, &depth, |_| true, &[&omega]);
        assert_eq!(buffer.levels, vec![2, 1, 0]);
        assert_eq!(buffer.depth_m, vec![10.0, 50.0, 90.0]);
        assert_eq!(buffer.fields[0], vec![2.0, 1.2, 0.8]);
        buffer.gather(shape, 0, &depth, |_| false, &[&omega]);
        assert!(buffer.is_empty());
    }
}
