#![warn(missing_docs)]
//! Pure analysis of carbonate-system indicator fields: saturation horizons of water columns,
//! cell areas and volumes on the sphere, the extent of corrosive water, region membership and
//! regional statistics, time windows and time of emergence. No I/O: callers read and write files.
//!
//! # Conventions
//! - Depths are in metres, positive down, measured below the sea surface.
//! - Areas in m², volumes in m³, longitudes and latitudes in degrees (east, north).
//! - Missing values (land, no solution, missing input) are `f64::NAN` on input.
//! - Slabs are in the canonical order of the reader: (level, row, col), level outermost.
//! - Accumulators that may be split across slabs or processes ([`extent`], [`regions`]) sum
//!   each column in level order and add the column totals exactly ([`ExactSum`]): their results
//!   are bitwise the same for any split into slabs and any merge order.

pub mod column;
pub mod emergence;
pub mod extent;
pub mod geometry;
pub mod horizons;
pub mod regions;
mod sum;
pub mod windows;

pub use sum::ExactSum;

/// Two arrays that describe the same cells (or an index and its range) disagree.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error("{what}: expected {expected} values, got {got}")]
pub struct LengthError {
    /// What was being counted.
    pub what: &'static str,
    /// The length (or bound) expected.
    pub expected: usize,
    /// The length (or index) found.
    pub got: usize,
}

/// `Ok` when `got == expected`, else a [`LengthError`] naming `what`.
pub(crate) fn check_length(
    what: &'static str,
    expected: usize,
    got: usize,
) -> Result<(), LengthError> {
    if expected == got {
        Ok(())
    } else {
        Err(LengthError {
            what,
            expected,
            got,
        })
    }
}
