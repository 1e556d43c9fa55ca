//! The number type the chemistry is written over: `f64` for one sample, or a lane of cells
//! ([`crate::lanes::Lanes`]) inside the batch kernel. Every formula is written once, generic over
//! [`Real`], so the scalar path and the lanes run the same source.

use crate::choice::ConstantChoice;
use crate::validity::Validity;
use std::ops::{Add, BitAnd, BitOr, Div, Mul, Neg, Not, Sub};

mod sealed {
    pub trait Sealed {}
    impl Sealed for f64 {}
    impl<const N: usize, const FUSED: bool> Sealed for crate::lanes::Lanes<N, FUSED> {}
}

/// One value per cell: `f64` for one sample, a lane of cells in the batch kernel. Arithmetic
/// rounds exactly as `f64` does (IEEE 754, no fused operations), so scalar and lanes differ only
/// through [`Real::exp`] and [`Real::ln`]. Sealed: implemented only inside this crate.
pub trait Real:
    sealed::Sealed
    + Copy
    + std::fmt::Debug
    + From<f64>
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + Add<f64, Output = Self>
    + Sub<f64, Output = Self>
    + Mul<f64, Output = Self>
    + Div<f64, Output = Self>
{
    /// Result of a comparison, one truth value per cell.
    type Mask: Copy
        + std::fmt::Debug
        + BitAnd<Output = Self::Mask>
        + BitOr<Output = Self::Mask>
        + Not<Output = Self::Mask>;
    /// The validity-range breaches of each cell.
    type Validity: Copy + std::fmt::Debug + PartialEq;

    /// e^x.
    fn exp(self) -> Self;
    /// Natural logarithm.
    fn ln(self) -> Self;
    /// Square root (correctly rounded in both implementations).
    fn sqrt(self) -> Self;
    /// |x|.
    fn abs(self) -> Self;
    /// `self < other`, per cell.
    fn lt(self, other: Self) -> Self::Mask;
    /// `self <= other`, per cell.
    fn le(self, other: Self) -> Self::Mask;
    /// `self == other`, per cell.
    fn eq(self, other: Self) -> Self::Mask;
    /// Finite (not NaN, not infinite), per cell.
    fn is_finite(self) -> Self::Mask;
    /// `yes` where `mask` holds, `no` elsewhere.
    fn select(mask: Self::Mask, yes: Self, no: Self) -> Self;
    /// True when `mask` holds in any cell.
    fn any(mask: Self::Mask) -> bool;
    /// True when `mask` holds in every cell.
    fn all(mask: Self::Mask) -> bool;
    /// Each cell's breaches of the chosen sets' published ranges, by [`Validity::assess`].
    fn assess_validity(
        temperature_c: Self,
        salinity: Self,
        pressure_dbar: Self,
        choice: &ConstantChoice,
    ) -> Self::Validity;
}

impl Real for f64 {
    type Mask = bool;
    type Validity = Validity;

    #[inline(always)]
    fn exp(self) -> Self {
        f64::exp(self)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        f64::ln(self)
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        f64::sqrt(self)
    }
    #[inline(always)]
    fn abs(self) -> Self {
        f64::abs(self)
    }
    #[inline(always)]
    fn lt(self, other: Self) -> bool {
        self < other
    }
    #[inline(always)]
    fn le(self, other: Self) -> bool {
        self <= other
    }
    #[inline(always)]
    fn eq(self, other: Self) -> bool {
        self == other
    }
    #[inline(always)]
    fn is_finite(self) -> bool {
        f64::is_finite(self)
    }
    #[inline(always)]
    fn select(mask: bool, yes: Self, no: Self) -> Self {
        if mask {
            yes
        } else {
            no
        }
    }
    #[inline(always)]
    fn any(mask: bool) -> bool {
        mask
    }
    #[inline(always)]
    fn all(mask: bool) -> bool {
        mask
    }
    #[inline(always)]
    fn assess_validity(
        temperature_c: Self,
        salinity: Self,
        pressure_dbar: Self,
        choice: &ConstantChoice,
    ) -> Validity {
        Validity::assess(temperature_c, salinity, pressure_dbar, choice)
    }
}
