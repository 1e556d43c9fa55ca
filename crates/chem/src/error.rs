//! Errors are values: bad input and samples with no physical solution.

use crate::real::Real;
use std::fmt;

/// Why a sample could not be solved. Messages name the field and what was expected.
#[derive(Clone, Debug, PartialEq)]
pub enum ChemError {
    /// An input value is not a number, infinite, negative, or outside any plausible seawater range.
    InvalidInput {
        /// Which input field (e.g. "salinity", "dic").
        field: &'static str,
        /// The value given.
        value: f64,
        /// What was expected, with units.
        expected: &'static str,
    },
    /// The inputs are numbers but no seawater state satisfies them together.
    NoSolution {
        /// Why, in words a user can act on.
        reason: String,
    },
}

impl fmt::Display for ChemError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ChemError::InvalidInput {
                field,
                value,
                expected,
            } => write!(f, "invalid {field} = {value}: expected {expected}"),
            ChemError::NoSolution { reason } => write!(f, "no carbonate-system solution: {reason}"),
        }
    }
}

impl std::error::Error for ChemError {}

/// The values of one input that the solver accepts at all: `[min, max]`, finite bounds.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Accepted {
    pub field: &'static str,
    pub min: f64,
    pub max: f64,
    /// What was expected, with units, for the error message.
    pub expected: &'static str,
}

impl Accepted {
    /// The value, or the error naming the field and what was expected.
    #[inline(always)]
    pub(crate) fn check(&self, value: f64) -> Result<f64, ChemError> {
        check_range(self.field, value, self.min, self.max, self.expected)
    }

    /// Per cell, whether [`Accepted::check`] would accept the value.
    #[inline(always)]
    pub(crate) fn contains<T: Real>(&self, value: T) -> T::Mask {
        T::le(T::from(self.min), value) & T::le(value, T::from(self.max))
    }
}

/// Rejects NaN, infinities and values outside `[min, max]` (finite bounds: NaN fails both
/// comparisons, infinities fail one).
#[inline(always)]
pub(crate) fn check_range(
    field: &'static str,
    value: f64,
    min: f64,
    max: f64,
    expected: &'static str,
) -> Result<f64, ChemError> {
    debug_assert!(min.is_finite() && max.is_finite());
    if value >= min && value <= max {
        Ok(value)
    } else {
        Err(invalid_input(field, value, expected))
    }
}

#[cold]
#[inline(never)]
fn invalid_input(field: &'static str, value: f64, expected: &'static str) -> ChemError {
    ChemError::InvalidInput {
        field,
        value,
        expected,
    }
}
