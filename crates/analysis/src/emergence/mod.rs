//! Time of emergence of a series of annual means (one cell, or one region's mean).
//!
//! Two rules, chosen by the user and stated in words in the output's metadata
//! ([`EmergenceRule::description`]):
//! - **threshold**: the first year from which the annual mean stays beyond a threshold (below
//!   it, e.g. Ω aragonite < 1 or pH < 7.95; or above it) in every later year of the run;
//! - **departure from a reference window**: the first year from which the annual mean stays
//!   outside the reference window's range of annual means (minimum to maximum), or outside
//!   their mean ± k standard deviations (year-to-year variability; sample standard deviation,
//!   n − 1 in the denominator, common practice).
//!
//! "Beyond" and "outside" are strict (`<`, `>`). A year without a value (missing, NaN) neither
//! confirms nor breaks emergence: it is skipped, and the year reported always has a value.
//! Results are values of [`Emergence`], never a sentinel number: "not emerged by the end of the
//! run" and "already beyond in the first year" are their own cases.

#[cfg(test)]
mod tests;

use crate::windows::TimeWindow;
use thiserror::Error;

/// Inputs that cannot give a time of emergence.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum EmergenceError {
    /// Years and values of a series differ in length.
    #[error(transparent)]
    Length(#[from] crate::LengthError),
    /// Years not strictly increasing.
    #[error("annual means must come in increasing years: {next} after {previous}")]
    YearsOutOfOrder {
        /// The earlier year given.
        previous: i64,
        /// The year that followed it.
        next: i64,
    },
    /// A threshold or a number of standard deviations that is not a finite number (k > 0).
    #[error("{0}")]
    Parameter(String),
}

/// Which side of a threshold counts as beyond it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    /// Values below the threshold (Ω, pH, carbonate ion falling).
    Below,
    /// Values above the threshold (pCO2 rising, horizon shoaling).
    Above,
}

/// Which departures from the reference band count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Departure {
    /// Below the band only.
    Below,
    /// Above the band only.
    Above,
    /// Either side.
    Either,
}

/// The band of ordinary values a reference window defines.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ReferenceBand {
    /// From the minimum to the maximum of the reference window's annual means.
    Range,
    /// The reference mean ± k sample standard deviations of its annual means (k > 0).
    StandardDeviations(f64),
}

/// A rule of emergence, as the user chose it.
#[derive(Clone, Debug, PartialEq)]
pub enum EmergenceRule {
    /// Stays beyond a fixed threshold.
    Threshold {
        /// The threshold, in the series' units.
        threshold: f64,
        /// Which side is beyond.
        direction: Direction,
    },
    /// Stays outside the band of a reference window.
    Reference {
        /// The reference window (its annual means define the band).
        window: TimeWindow,
        /// Range or mean ± k standard deviations.
        band: ReferenceBand,
        /// Which side counts.
        departure: Departure,
    },
}

/// The test one series' annual means are put to: beyond when below `below` or above `above`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EmergenceTest {
    /// Values strictly below this are beyond.
    pub below: Option<f64>,
    /// Values strictly above this are beyond.
    pub above: Option<f64>,
}

impl EmergenceTest {
    /// Whether a (non-NaN) value is beyond.
    pub fn beyond(&self, value: f64) -> bool {
        self.below.is_some_and(|b| value < b) || self.above.is_some_and(|a| value > a)
    }
}

fn check_finite(what: &str, value: f64) -> Result<(), EmergenceError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(EmergenceError::Parameter(format!(
            "{what} must be a finite number, got {value}"
        )))
    }
}

impl EmergenceRule {
    /// Checks the rule's numbers.
    pub fn check(&self) -> Result<(), EmergenceError> {
        match self {
            EmergenceRule::Threshold { threshold, .. } => check_finite("the threshold", *threshold),
            EmergenceRule::Reference {
                band: ReferenceBand::StandardDeviations(k),
                ..
            } if !(k.is_finite() && *k > 0.0) => Err(EmergenceError::Parameter(format!(
                "the number of standard deviations must be positive, got {k}"
            ))),
            EmergenceRule::Reference { .. } => Ok(()),
        }
    }

    /// The test for one series. `reference` holds the series' annual means in the reference
    /// window (ignored by the threshold rule; NaN values are left out). `None` when the
    /// reference has too few values to define a band (none for the range, fewer than two for
    /// standard deviations): the series' emergence is then [`Emergence::NoData`].
    pub fn test_for(&self, reference: &[f64]) -> Result<Option<EmergenceTest>, EmergenceError> {
        self.check()?;
        let (band, departure) = match self {
            EmergenceRule::Threshold {
                threshold,
                direction,
            } => {
                let t = Some(*threshold);
                return Ok(Some(match direction {
                    Direction::Below => EmergenceTest {
                        below: t,
                        above: None,
                    },
                    Direction::Above => EmergenceTest {
                        below: None,
                        above: t,
                    },
                }));
            }
            EmergenceRule::Reference {
                band, departure, ..
            } => (band, departure),
        };
        let values: Vec<f64> = reference.iter().copied().filter(|v| !v.is_nan()).collect();
        let Some((low, high)) = band_limits(*band, &values) else {
            return Ok(None);
        };
        let (below, above) = match departure {
            Departure::Below => (Some(low), None),
            Departure::Above => (None, Some(high)),
            Departure::Either => (Some(low), Some(high)),
        };
        Ok(Some(EmergenceTest { below, above }))
    }

    /// The rule in words for output metadata, e.g. for `quantity` "omega_aragonite" and `units`
    /// "1": "first year from which the annual mean of omega_aragonite stays below 1 in every
    /// later year of the run; ...".
    pub fn description(&self, quantity: &str, units: &str) -> String {
        let units = if units == "1" || units.is_empty() {
            String::new()
        } else {
            format!(" {units}")
        };
        let condition = match self {
            EmergenceRule::Threshold {
                threshold,
                direction,
            } => {
                let side = match direction {
                    Direction::Below => "below",
                    Direction::Above => "above",
                };
                format!("stays {side} {threshold}{units}")
            }
            EmergenceRule::Reference {
                window,
                band,
                departure,
            } => {
                let band_words = match band {
                    ReferenceBand::Range => "the range (minimum to maximum)".to_string(),
                    ReferenceBand::StandardDeviations(k) => {
                        format!("the mean plus or minus {k} sample standard deviations")
                    }
                };
                let side = match departure {
                    Departure::Below => "below",
                    Departure::Above => "above",
                    Departure::Either => "outside",
                };
                format!(
                    "stays {side} {band_words} of its annual means over the reference window '{}' ({}-{})",
                    window.name, window.first_year, window.last_year
                )
            }
        };
        format!(
            "first year from which the annual mean of {quantity} {condition} in every later year of the run; years without a value are skipped; 'not emerged by the end of the run' and 'emerged from the first year' are flagged separately"
        )
    }
}

/// (low, high) of the reference band, or `None` when the values cannot define it.
fn band_limits(band: ReferenceBand, values: &[f64]) -> Option<(f64, f64)> {
    match band {
        ReferenceBand::Range => {
            let low = values.iter().copied().reduce(f64::min)?;
            let high = values.iter().copied().reduce(f64::max)?;
            Some((low, high))
        }
        ReferenceBand::StandardDeviations(k) => {
            if values.len() < 2 {
                return None;
            }
            let n = values.len() as f64;
            let mean = values.iter().sum::<f64>() / n;
            let variance = values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
            let spread = k * variance.sqrt();
            Some((mean - spread, mean + spread))
        }
    }
}

/// The time of emergence of one series.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Emergence {
    /// Beyond from this year (not the first year with a value) in every later year.
    Year(i64),
    /// Already beyond in the first year with a value, and in every later year.
    FromFirstYear(i64),
    /// Not beyond in the last year with a value: not emerged by the end of the run.
    NotEmerged,
    /// No year with a value (or no reference band).
    NoData,
}

impl Emergence {
    /// `flag_values` for a status variable beside the year variable.
    pub const FLAG_VALUES: [i8; 4] = [0, 1, 2, 3];
    /// `flag_meanings` (CF Conventions 1.10 section 3.5), in the order of `FLAG_VALUES`.
    pub const FLAG_MEANINGS: &'static str =
        "emerged emerged_from_first_year not_emerged_by_end_of_run no_data";

    /// The year of emergence, where there is one.
    pub fn year(self) -> Option<i64> {
        match self {
            Emergence::Year(y) | Emergence::FromFirstYear(y) => Some(y),
            Emergence::NotEmerged | Emergence::NoData => None,
        }
    }

    /// The status flag value.
    pub fn flag_value(self) -> i8 {
        match self {
            Emergence::Year(_) => 0,
            Emergence::FromFirstYear(_) => 1,
            Emergence::NotEmerged => 2,
            Emergence::NoData => 3,
        }
    }
}

/// Follows one series year by year (O(1) memory: keep one per cell while streaming a run).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct EmergenceTracker {
    first_year: Option<i64>,
    last_year: Option<i64>,
    candidate: Option<i64>,
}

impl EmergenceTracker {
    /// A tracker that has seen nothing.
    pub fn new() -> Self {
        Self::default()
    }

    /// Takes the annual mean of `year` (NaN when missing); years must increase.
    pub fn observe(
        &mut self,
        year: i64,
        value: f64,
        test: &EmergenceTest,
    ) -> Result<(), EmergenceError> {
        if let Some(previous) = self.last_year.filter(|&p| year <= p) {
            return Err(EmergenceError::YearsOutOfOrder {
                previous,
                next: year,
            });
        }
        self.last_year = Some(year);
        if value.is_nan() {
            return Ok(());
        }
        self.first_year.get_or_insert(year);
        if test.beyond(value) {
            self.candidate.get_or_insert(year);
        } else {
            self.candidate = None;
        }
        Ok(())
    }

    /// The time of emergence given the years seen so far.
    pub fn result(&self) -> Emergence {
        match (self.first_year, self.candidate) {
            (None, _) => Emergence::NoData,
            (Some(_), None) => Emergence::NotEmerged,
            (Some(first), Some(year)) if year == first => Emergence::FromFirstYear(year),
            (Some(_), Some(year)) => Emergence::Year(year),
        }
    }
}

/// The time of emergence of a series of annual means (`years` strictly increasing; NaN values
/// and absent years are skipped). `test` as from [`EmergenceRule::test_for`]; `None` gives
/// [`Emergence::NoData`].
///
/// ```
/// use acidscape_analysis::emergence::*;
/// let rule = EmergenceRule::Threshold { threshold: 1.0, direction: Direction::Below };
/// let test = rule.test_for(&[])?;
/// let years = [2015, 2016, 2017, 2018, 2019];
/// // Below 1 in 2016, back above in 2017, below for good from 2018.
/// let omega = [1.2, 0.95, 1.05, 0.9, 0.85];
/// assert_eq!(time_of_emergence(&years, &omega, test.as_ref())?, Emergence::Year(2018));
/// # Ok::<(), EmergenceError>(())
/// ```
pub fn time_of_emergence(
    years: &[i64],
    values: &[f64],
    test: Option<&EmergenceTest>,
) -> Result<Emergence, EmergenceError> {
    crate::check_length("annual means per year", years.len(), values.len())?;
    let Some(test) = test else {
        return Ok(Emergence::NoData);
    };
    let mut tracker = EmergenceTracker::new();
    for (&year, &value) in years.iter().zip(values) {
        tracker.observe(year, value, test)?;
    }
    Ok(tracker.result())
}
