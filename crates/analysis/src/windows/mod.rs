//! Named time windows and per-cell statistics over them: selection of steps by year, streaming
//! means (weighted by step length), minima, maxima and counts, exact percentiles within a
//! memory budget, annual means from sub-annual steps, and differences between runs or windows
//! (including horizon shoaling).

mod percentile;
mod spec;
mod stats;
#[cfg(test)]
mod tests;

pub use percentile::{cells_per_pass, percentile, PercentileBuffer};
pub use spec::{parse_windows, TimeWindow, WindowSelection};
pub use stats::{annual_series, difference, shoaling_m, AnnualMean, AnnualMeans, WindowStats};

use thiserror::Error;

/// Window definitions or inputs that cannot be used.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum WindowError {
    /// A window that does not parse.
    #[error("time window '{text}': {message}")]
    Parse {
        /// The text given.
        text: String,
        /// What is wrong.
        message: String,
    },
    /// Two windows share a name.
    #[error("two time windows are named '{0}'")]
    DuplicateName(String),
    /// The run lacks some years of a window.
    #[error("time window '{window}': the run has no time step in {}", years_list(.missing_years))]
    Incomplete {
        /// The window's name.
        window: String,
        /// Its years with no time step.
        missing_years: Vec<i64>,
    },
    /// A step length that is not a positive number of days.
    #[error("a time step's length must be a positive number of days, got {0}")]
    StepLength(f64),
    /// Steps given out of time order.
    #[error("time steps must come in time order: year {next} after year {previous}")]
    YearsOutOfOrder {
        /// The earlier year given.
        previous: i64,
        /// The year that followed it.
        next: i64,
    },
    /// A percentile outside 0–100.
    #[error("a percentile must lie within 0..100, got {0}")]
    Percentile(f64),
    /// More steps than a percentile buffer was sized for.
    #[error("the percentile buffer holds {0} steps; no room for another")]
    TooManySteps(usize),
    /// Arrays of different lengths.
    #[error(transparent)]
    Length(#[from] crate::LengthError),
}

fn years_list(years: &[i64]) -> String {
    let shown: Vec<String> = years.iter().take(10).map(i64::to_string).collect();
    let more = years.len().saturating_sub(shown.len());
    if more > 0 {
        format!("{} and {more} more years", shown.join(", "))
    } else {
        shown.join(", ")
    }
}
