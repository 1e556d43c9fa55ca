//! Exact percentiles over a window, and how many cells fit a memory budget.
//!
//! A percentile needs every value of the window for a cell, unlike a mean: a window of `n`
//! steps costs `8 n` bytes per cell. [`cells_per_pass`] says how many cells fit a budget; the
//! caller then reads the window once per block of cells (e.g. blocks of whole rows), with
//! `ceil(cells / cells_per_pass)` passes in all.

use super::WindowError;
use crate::check_length;

/// The `p`-th percentile (0 ≤ p ≤ 100) of the non-NaN values, by linear interpolation between
/// order statistics: with the n sorted values x₀ ≤ … ≤ xₙ₋₁ and h = (n − 1) p / 100,
/// x⌊h⌋ + (h − ⌊h⌋)(x⌊h⌋₊₁ − x⌊h⌋) (Hyndman & Fan 1996, The American Statistician 50,
/// 361–365, definition 7). `None` when there is no value. Reorders `values`.
///
/// ```
/// use acidscape_analysis::windows::percentile;
/// // numpy.percentile([3.2, -1, 7.5, 0.25, 12, 4.4, 4.4, 9.9, 2, 5.5, -3.75], 95) = 10.95
/// let mut v = [3.2, -1.0, 7.5, 0.25, 12.0, 4.4, 4.4, 9.9, 2.0, 5.5, -3.75];
/// let p95 = percentile(&mut v, 95.0).unwrap().unwrap();
/// assert!((p95 - 10.95).abs() < 1e-12);
/// ```
pub fn percentile(values: &mut [f64], p: f64) -> Result<Option<f64>, WindowError> {
    if !(0.0..=100.0).contains(&p) {
        return Err(WindowError::Percentile(p));
    }
    let mut n = 0;
    for i in 0..values.len() {
        if !values[i].is_nan() {
            values.swap(n, i);
            n += 1;
        }
    }
    let values = &mut values[..n];
    if n == 0 {
        return Ok(None);
    }
    let h = (n - 1) as f64 * p / 100.0;
    let low = (h.floor() as usize).min(n - 1);
    let (_, &mut x_low, above) = values.select_nth_unstable_by(low, f64::total_cmp);
    let fraction = h - low as f64;
    if fraction == 0.0 || above.is_empty() {
        return Ok(Some(x_low));
    }
    let x_high = above.iter().copied().fold(f64::INFINITY, f64::min);
    Ok(Some(x_low + fraction * (x_high - x_low)))
}

/// How many cells' values of a window of `steps` steps fit in `budget_bytes` (at least one).
pub fn cells_per_pass(budget_bytes: usize, steps: usize) -> usize {
    (budget_bytes / (8 * steps.max(1))).max(1)
}

/// Every value of a window for a block of cells, for exact percentiles.
#[derive(Clone, Debug, PartialEq)]
pub struct PercentileBuffer {
    cells: usize,
    steps: usize,
    /// Step-major: the values of step s are at `s * cells .. (s + 1) * cells`.
    values: Vec<f64>,
}

impl PercentileBuffer {
    /// A buffer for `cells` cells and up to `steps` steps (`8 × cells × steps` bytes).
    pub fn new(cells: usize, steps: usize) -> Self {
        PercentileBuffer {
            cells,
            steps,
            values: Vec::with_capacity(cells * steps),
        }
    }

    /// Adds one step's values (NaN where missing).
    pub fn add_step(&mut self, values: &[f64]) -> Result<(), WindowError> {
        check_length("values per cell", self.cells, values.len())?;
        if self.values.len() == self.cells * self.steps {
            return Err(WindowError::TooManySteps(self.steps));
        }
        self.values.extend_from_slice(values);
        Ok(())
    }

    /// The `p`-th percentile of each cell over the steps added; NaN where a cell has no value.
    pub fn percentile(&self, p: f64) -> Result<Vec<f64>, WindowError> {
        let steps = self.values.len() / self.cells.max(1);
        let mut scratch = Vec::with_capacity(steps);
        (0..self.cells)
            .map(|c| {
                scratch.clear();
                scratch.extend((0..steps).map(|s| self.values[s * self.cells + c]));
                Ok(percentile(&mut scratch, p)?.unwrap_or(f64::NAN))
            })
            .collect()
    }
}
