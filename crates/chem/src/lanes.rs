//! A lane of cells: N values side by side, one operation for all of them. Written as plain arrays
//! with element-wise loops that the compiler turns into SIMD instructions (SSE2/NEON by default,
//! AVX2 in the batch kernel's dispatched copy); `exp` and `ln` are our own, in [`math`], because
//! the standard library's call one cell at a time.

use crate::choice::ConstantChoice;
use crate::real::Real;
use crate::validity::Validity;
use std::ops::{Add, BitAnd, BitOr, Div, Mul, Neg, Not, Sub};

pub(crate) mod math;

/// N cells' values of one quantity. With `FUSED`, `exp` and `ln` evaluate their polynomials with
/// fused multiply-adds (for CPUs that have them; a little faster, rounding slightly differently).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Lanes<const N: usize, const FUSED: bool>(pub [f64; N]);

/// N cells' truth values, each all ones (true) or all zeros (false): the form SIMD comparisons
/// produce and blends consume (a `bool` per cell costs packing and unpacking at every use).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LaneMask<const N: usize>(pub [u64; N]);

const TRUE: u64 = u64::MAX;

// Plain element-wise loops, not `array::map` or `array::from_fn`: those are calls the optimiser
// may keep out of line, and then nothing vectorises (seen in the disassembly).
impl<const N: usize, const FUSED: bool> Lanes<N, FUSED> {
    /// Applies `f` to each cell.
    #[inline(always)]
    pub(crate) fn map(self, f: impl Fn(f64) -> f64) -> Self {
        let mut out = [0.0; N];
        for (out, &a) in out.iter_mut().zip(&self.0) {
            *out = f(a);
        }
        Lanes(out)
    }

    /// Applies `f` to each pair of cells.
    #[inline(always)]
    pub(crate) fn zip(self, other: Self, f: impl Fn(f64, f64) -> f64) -> Self {
        let mut out = [0.0; N];
        for ((out, &a), &b) in out.iter_mut().zip(&self.0).zip(&other.0) {
            *out = f(a, b);
        }
        Lanes(out)
    }

    #[inline(always)]
    fn compare(self, other: Self, f: impl Fn(f64, f64) -> bool) -> LaneMask<N> {
        let mut out = [0; N];
        for ((out, &a), &b) in out.iter_mut().zip(&self.0).zip(&other.0) {
            *out = if f(a, b) { TRUE } else { 0 };
        }
        LaneMask(out)
    }
}

impl<const N: usize> LaneMask<N> {
    /// Whether cell `i`'s value is true.
    #[inline(always)]
    pub(crate) fn get(self, i: usize) -> bool {
        self.0[i] != 0
    }

    #[inline(always)]
    fn zip(self, other: Self, f: impl Fn(u64, u64) -> u64) -> Self {
        let mut out = [0; N];
        for ((out, &a), &b) in out.iter_mut().zip(&self.0).zip(&other.0) {
            *out = f(a, b);
        }
        LaneMask(out)
    }
}

impl<const N: usize, const FUSED: bool> From<f64> for Lanes<N, FUSED> {
    #[inline(always)]
    fn from(value: f64) -> Self {
        Lanes([value; N])
    }
}

/// `impl Op<Lanes> for Lanes` and `impl Op<f64> for Lanes`, element by element.
macro_rules! lane_operator {
    ($trait:ident, $method:ident, $op:tt) => {
        impl<const N: usize, const FUSED: bool> $trait for Lanes<N, FUSED> {
            type Output = Self;
            #[inline(always)]
            fn $method(self, other: Self) -> Self {
                self.zip(other, |a, b| a $op b)
            }
        }
        impl<const N: usize, const FUSED: bool> $trait<f64> for Lanes<N, FUSED> {
            type Output = Self;
            #[inline(always)]
            fn $method(self, other: f64) -> Self {
                self.map(|a| a $op other)
            }
        }
    };
}

lane_operator!(Add, add, +);
lane_operator!(Sub, sub, -);
lane_operator!(Mul, mul, *);
lane_operator!(Div, div, /);

impl<const N: usize, const FUSED: bool> Neg for Lanes<N, FUSED> {
    type Output = Self;
    #[inline(always)]
    fn neg(self) -> Self {
        self.map(|a| -a)
    }
}

impl<const N: usize> BitAnd for LaneMask<N> {
    type Output = Self;
    #[inline(always)]
    fn bitand(self, other: Self) -> Self {
        self.zip(other, |a, b| a & b)
    }
}

impl<const N: usize> BitOr for LaneMask<N> {
    type Output = Self;
    #[inline(always)]
    fn bitor(self, other: Self) -> Self {
        self.zip(other, |a, b| a | b)
    }
}

impl<const N: usize> Not for LaneMask<N> {
    type Output = Self;
    #[inline(always)]
    fn not(self) -> Self {
        self.zip(self, |a, _| !a)
    }
}

impl<const N: usize, const FUSED: bool> Real for Lanes<N, FUSED> {
    type Mask = LaneMask<N>;
    type Validity = [Validity; N];

    #[inline(always)]
    fn exp(self) -> Self {
        math::exp(self)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        math::ln(self)
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        self.map(f64::sqrt)
    }
    #[inline(always)]
    fn abs(self) -> Self {
        self.map(f64::abs)
    }
    #[inline(always)]
    fn lt(self, other: Self) -> LaneMask<N> {
        self.compare(other, |a, b| a < b)
    }
    #[inline(always)]
    fn le(self, other: Self) -> LaneMask<N> {
        self.compare(other, |a, b| a <= b)
    }
    #[inline(always)]
    fn eq(self, other: Self) -> LaneMask<N> {
        self.compare(other, |a, b| a == b)
    }
    #[inline(always)]
    fn is_finite(self) -> LaneMask<N> {
        self.compare(self, |a, _| a.is_finite())
    }
    #[inline(always)]
    fn select(mask: LaneMask<N>, yes: Self, no: Self) -> Self {
        let mut out = [0.0; N];
        for (i, out) in out.iter_mut().enumerate() {
            let bits = (yes.0[i].to_bits() & mask.0[i]) | (no.0[i].to_bits() & !mask.0[i]);
            *out = f64::from_bits(bits);
        }
        Lanes(out)
    }
    #[inline(always)]
    fn any(mask: LaneMask<N>) -> bool {
        let mut any = 0;
        for m in mask.0 {
            any |= m;
        }
        any != 0
    }
    #[inline(always)]
    fn all(mask: LaneMask<N>) -> bool {
        let mut all = TRUE;
        for m in mask.0 {
            all &= m;
        }
        all != 0
    }
    #[inline(always)]
    fn assess_validity(
        temperature_c: Self,
        salinity: Self,
        pressure_dbar: Self,
        choice: &ConstantChoice,
    ) -> [Validity; N] {
        let mut out = [Validity::default(); N];
        for (i, out) in out.iter_mut().enumerate() {
            *out = f64::assess_validity(
                temperature_c.0[i],
                salinity.0[i],
                pressure_dbar.0[i],
                choice,
            );
        }
        out
    }
}
