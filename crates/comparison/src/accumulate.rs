//! Per-cell accumulators for one block of cells of one run, fed one time step at a time:
//! annual means (weighted by step length), then per window the mean, minimum, maximum and
//! percentiles of the annual means; and the time of emergence of each column.

use crate::error::{ComparisonError, Result};
use crate::options::Statistic;
use crate::plan::PlannedRun;
use acidscape_analysis::emergence::{Emergence, EmergenceRule, EmergenceTest, EmergenceTracker};
use acidscape_analysis::windows::{
    AnnualMean, AnnualMeans, PercentileBuffer, TimeWindow, WindowStats,
};

/// Window statistics of one field for a block of cells.
pub(crate) struct FieldWindows {
    annual: AnnualMeans,
    stats: Vec<WindowStats>,
    /// Every annual mean of each window, when a percentile is asked for.
    buffers: Vec<Option<PercentileBuffer>>,
}

fn wants_extremes(statistics: &[Statistic]) -> bool {
    statistics
        .iter()
        .any(|s| matches!(s, Statistic::Min | Statistic::Max))
}

fn wants_percentiles(statistics: &[Statistic]) -> bool {
    statistics
        .iter()
        .any(|s| matches!(s, Statistic::Percentile(_)))
}

fn analysis_error(e: impl std::fmt::Display) -> ComparisonError {
    ComparisonError::option("window statistics", e.to_string())
}

impl FieldWindows {
    /// Memory per cell \[bytes\] for these windows and statistics, with the step read and the
    /// finished year's means.
    pub fn bytes_per_cell(windows: &[TimeWindow], statistics: &[Statistic]) -> usize {
        let extremes = wants_extremes(statistics);
        let percentile_years: usize = if wants_percentiles(statistics) {
            windows.iter().map(TimeWindow::years).sum()
        } else {
            0
        };
        let annual = 8 + 1;
        let read_and_year = 16;
        annual
            + read_and_year
            + windows.len() * WindowStats::bytes_per_cell(extremes)
            + 8 * percentile_years
    }

    /// Empty accumulators for `cells` cells.
    pub fn new(cells: usize, windows: &[TimeWindow], statistics: &[Statistic]) -> Self {
        let extremes = wants_extremes(statistics);
        let percentiles = wants_percentiles(statistics);
        FieldWindows {
            annual: AnnualMeans::new(cells),
            stats: windows
                .iter()
                .map(|_| WindowStats::new(cells, extremes))
                .collect(),
            buffers: windows
                .iter()
                .map(|w| percentiles.then(|| PercentileBuffer::new(cells, w.years())))
                .collect(),
        }
    }

    /// Adds one step; returns the annual means of a year that the step finished.
    pub fn add_step(
        &mut self,
        year: i64,
        values: &[f64],
        length_days: f64,
    ) -> Result<Option<AnnualMean>> {
        self.annual
            .add_step(year, values, length_days)
            .map_err(analysis_error)
    }

    /// The annual means of the last year, after the last step.
    pub fn finish(&mut self) -> Option<AnnualMean> {
        self.annual.finish()
    }

    /// Adds a finished year to every window holding it (each year weighs the same: "mean
    /// within years, mean over years"). Years the run covers only in part are left out.
    pub fn add_year(
        &mut self,
        mean: &AnnualMean,
        windows: &[TimeWindow],
        run: &PlannedRun,
    ) -> Result<()> {
        if !run.is_complete(mean.year) {
            return Ok(());
        }
        for (w, window) in windows.iter().enumerate() {
            if !window.contains(mean.year) {
                continue;
            }
            self.stats[w]
                .add_step(&mean.means, 1.0)
                .map_err(analysis_error)?;
            if let Some(buffer) = &mut self.buffers[w] {
                buffer.add_step(&mean.means).map_err(analysis_error)?;
            }
        }
        Ok(())
    }

    /// One statistic over one window, per cell (NaN where no year had a value).
    pub fn result(&self, statistic: Statistic, window: usize) -> Result<Vec<f64>> {
        let stats = &self.stats[window];
        let missing = || analysis_error(format!("statistic {statistic:?} was not accumulated"));
        match statistic {
            Statistic::Mean => Ok(stats.mean()),
            Statistic::Min => stats.min().ok_or_else(missing),
            Statistic::Max => stats.max().ok_or_else(missing),
            Statistic::Percentile(p) => self.buffers[window]
                .as_ref()
                .ok_or_else(missing)?
                .percentile(p)
                .map_err(analysis_error),
        }
    }
}

/// Time of emergence of every column of a block.
pub(crate) struct EmergenceColumns {
    tests: Vec<Option<EmergenceTest>>,
    trackers: Vec<EmergenceTracker>,
    /// Offset of the surface level in a block of the field (level × columns).
    offset: usize,
}

impl EmergenceColumns {
    /// Trackers for `columns` columns. `reference` holds, per complete year of the reference
    /// window, the annual means of the block's columns (ignored by the threshold rule).
    pub fn new(
        rule: &EmergenceRule,
        reference: &[Vec<f64>],
        columns: usize,
        offset: usize,
    ) -> Result<Self> {
        let mut tests = Vec::with_capacity(columns);
        let mut values = Vec::with_capacity(reference.len());
        for c in 0..columns {
            values.clear();
            values.extend(reference.iter().map(|year| year[c]));
            tests.push(rule.test_for(&values).map_err(analysis_error)?);
        }
        Ok(EmergenceColumns {
            tests,
            trackers: vec![EmergenceTracker::new(); columns],
            offset,
        })
    }

    /// Takes a finished year of the field's annual means (whole block); partial years are
    /// skipped like years without a value.
    pub fn observe(&mut self, mean: &AnnualMean, run: &PlannedRun) -> Result<()> {
        if !run.is_complete(mean.year) {
            return Ok(());
        }
        let surface = &mean.means[self.offset..self.offset + self.trackers.len()];
        for ((tracker, test), &value) in self.trackers.iter_mut().zip(&self.tests).zip(surface) {
            if let Some(test) = test {
                tracker
                    .observe(mean.year, value, test)
                    .map_err(analysis_error)?;
            }
        }
        Ok(())
    }

    /// The time of emergence of each column.
    pub fn results(&self) -> Vec<Emergence> {
        self.trackers
            .iter()
            .zip(&self.tests)
            .map(|(tracker, test)| match test {
                Some(_) => tracker.result(),
                None => Emergence::NoData,
            })
            .collect()
    }
}
