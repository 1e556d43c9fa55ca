//! Streaming per-cell statistics over a window, annual means from sub-annual steps, and
//! differences between runs or windows.
//!
//! Steps are added one at a time, in time order, so memory holds a few numbers per cell
//! whatever the window's length. Each cell is independent: results do not depend on how cells
//! are split into blocks.

use super::WindowError;
use crate::check_length;

/// Running mean (weighted by step length), minimum, maximum and count of valid steps per cell.
#[derive(Clone, Debug, PartialEq)]
pub struct WindowStats {
    weight: Vec<f64>,
    weighted_sum: Vec<f64>,
    count: Vec<u32>,
    /// Minimum and maximum, when asked for.
    extremes: Option<(Vec<f64>, Vec<f64>)>,
}

impl WindowStats {
    /// Memory per cell \[bytes\], with or without min and max.
    pub fn bytes_per_cell(extremes: bool) -> usize {
        8 + 8 + 4 + if extremes { 16 } else { 0 }
    }

    /// An empty accumulator for `cells` cells; `extremes` keeps the minimum and maximum too.
    pub fn new(cells: usize, extremes: bool) -> Self {
        WindowStats {
            weight: vec![0.0; cells],
            weighted_sum: vec![0.0; cells],
            count: vec![0; cells],
            extremes: extremes
                .then(|| (vec![f64::INFINITY; cells], vec![f64::NEG_INFINITY; cells])),
        }
    }

    /// Adds one step's values (NaN where missing) with the step's length `weight` \[days, from
    /// the time bounds; 1 for equal weights\].
    pub fn add_step(&mut self, values: &[f64], weight: f64) -> Result<(), WindowError> {
        check_length("values per cell", self.weight.len(), values.len())?;
        if !(weight.is_finite() && weight > 0.0) {
            return Err(WindowError::StepLength(weight));
        }
        for (c, &v) in values.iter().enumerate() {
            if v.is_nan() {
                continue;
            }
            self.weight[c] += weight;
            self.weighted_sum[c] += weight * v;
            self.count[c] += 1;
            if let Some((min, max)) = &mut self.extremes {
                min[c] = min[c].min(v);
                max[c] = max[c].max(v);
            }
        }
        Ok(())
    }

    /// Weighted mean per cell; NaN where no step had a value.
    pub fn mean(&self) -> Vec<f64> {
        self.weighted_sum
            .iter()
            .zip(&self.weight)
            .map(|(&s, &w)| if w > 0.0 { s / w } else { f64::NAN })
            .collect()
    }

    /// Number of steps with a value, per cell.
    pub fn count(&self) -> &[u32] {
        &self.count
    }

    /// Minimum per cell (NaN where no value), if kept.
    pub fn min(&self) -> Option<Vec<f64>> {
        self.extreme(|e| &e.0)
    }

    /// Maximum per cell (NaN where no value), if kept.
    pub fn max(&self) -> Option<Vec<f64>> {
        self.extreme(|e| &e.1)
    }

    fn extreme(&self, pick: impl Fn(&(Vec<f64>, Vec<f64>)) -> &Vec<f64>) -> Option<Vec<f64>> {
        self.extremes.as_ref().map(|e| {
            pick(e)
                .iter()
                .zip(&self.count)
                .map(|(&v, &n)| if n > 0 { v } else { f64::NAN })
                .collect()
        })
    }
}

/// One year's mean per cell.
#[derive(Clone, Debug, PartialEq)]
pub struct AnnualMean {
    /// The year.
    pub year: i64,
    /// Total length of the year's steps \[days\]: compare with the calendar's year length to
    /// recognise a year the run covers only in part.
    pub covered_days: f64,
    /// Length-weighted mean per cell; NaN where any of the year's steps is missing (a mean
    /// over part of the seasonal cycle would be biased).
    pub means: Vec<f64>,
}

/// Annual means from sub-annual steps, weighted by step length, built as steps stream past.
#[derive(Clone, Debug, PartialEq)]
pub struct AnnualMeans {
    year: Option<i64>,
    covered_days: f64,
    weighted_sum: Vec<f64>,
    complete: Vec<bool>,
}

impl AnnualMeans {
    /// An empty accumulator for `cells` cells.
    pub fn new(cells: usize) -> Self {
        AnnualMeans {
            year: None,
            covered_days: 0.0,
            weighted_sum: vec![0.0; cells],
            complete: vec![true; cells],
        }
    }

    /// Adds one step of `year` (steps in time order) with its length \[days\]. When the year
    /// changes, the finished year's means are returned.
    pub fn add_step(
        &mut self,
        year: i64,
        values: &[f64],
        length_days: f64,
    ) -> Result<Option<AnnualMean>, WindowError> {
        check_length("values per cell", self.weighted_sum.len(), values.len())?;
        if !(length_days.is_finite() && length_days > 0.0) {
            return Err(WindowError::StepLength(length_days));
        }
        let finished = match self.year {
            Some(current) if year < current => {
                return Err(WindowError::YearsOutOfOrder {
                    previous: current,
                    next: year,
                })
            }
            Some(current) if year > current => self.finish(),
            _ => None,
        };
        self.year = Some(year);
        self.covered_days += length_days;
        for (c, &v) in values.iter().enumerate() {
            if v.is_nan() {
                self.complete[c] = false;
            } else {
                self.weighted_sum[c] += length_days * v;
            }
        }
        Ok(finished)
    }

    /// The means of the year in progress (after the last step), and a fresh start.
    pub fn finish(&mut self) -> Option<AnnualMean> {
        let year = self.year.take()?;
        let days = self.covered_days;
        let means = self
            .weighted_sum
            .iter()
            .zip(&self.complete)
            .map(|(&s, &ok)| if ok { s / days } else { f64::NAN })
            .collect();
        self.covered_days = 0.0;
        self.weighted_sum.iter_mut().for_each(|s| *s = 0.0);
        self.complete.iter_mut().for_each(|c| *c = true);
        Some(AnnualMean {
            year,
            covered_days: days,
            means,
        })
    }
}

/// Annual means of one series (a regional mean, a single cell): `(year, mean, covered days)`
/// per year, from steps in time order with their years and lengths \[days\].
pub fn annual_series(
    years: &[i64],
    values: &[f64],
    lengths_days: &[f64],
) -> Result<Vec<(i64, f64, f64)>, WindowError> {
    check_length("values per step", years.len(), values.len())?;
    check_length("step lengths per step", years.len(), lengths_days.len())?;
    let mut acc = AnnualMeans::new(1);
    let mut out = Vec::new();
    for i in 0..years.len() {
        out.extend(acc.add_step(years[i], &values[i..=i], lengths_days[i])?);
    }
    out.extend(acc.finish());
    Ok(out
        .into_iter()
        .map(|a| (a.year, a.means[0], a.covered_days))
        .collect())
}

/// `a − b` per cell (run minus run, or window minus window); NaN where either is missing.
/// IEEE 754 subtraction gives exactly +0 for `x − x`, so a run compared with itself gives
/// exactly zero wherever it has a value.
pub fn difference(a: &[f64], b: &[f64]) -> Result<Vec<f64>, WindowError> {
    check_length("values per cell of the second field", a.len(), b.len())?;
    Ok(a.iter().zip(b).map(|(x, y)| x - y).collect())
}

/// Shoaling of a saturation horizon per column \[m\], positive when the horizon in `later` is
/// shallower than in `earlier`: `earlier − later` (depths positive down). NaN where either
/// depth is missing (e.g. deeper than the sea floor: the change is then only bounded).
pub fn shoaling_m(earlier_m: &[f64], later_m: &[f64]) -> Result<Vec<f64>, WindowError> {
    difference(earlier_m, later_m)
}
