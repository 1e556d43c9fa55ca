//! `exp` and `ln` for lanes: branch-free per cell (selects instead of branches, bit operations on
//! the IEEE 754 representation), so the compiler vectorises them across the lane.
//!
//! Accuracy (measured against the standard library in this module's tests, which sweep the
//! stated ranges): relative error at most 4e-16 for `exp` over \[-700, 700\] and for `ln` over
//! \[1e-300, 1e300\] (about two units in the last place; the chemistry uses exp on \[-60, 10\] and ln
//! on \[1e-14, 400\]). Outside: `exp` gives 0 below -708 and +∞ above 708 (the standard library
//! still gives subnormal or finite values within 1.8 of those bounds); `ln` follows the standard
//! library for 0, negative, subnormal, infinite and NaN arguments.

use super::Lanes;

/// log2(e), correctly rounded.
const LOG2_E: f64 = std::f64::consts::LOG2_E;
/// ln 2 split for Cody & Waite (1980) argument reduction: `LN2_HI` keeps 21 significant bits, so
/// n·LN2_HI is exact for every |n| < 2^32; `LN2_LO` = ln 2 - LN2_HI, rounded (computed from ln 2 to
/// 60 digits).
const LN2_HI: f64 = 0.6931467056274414;
const LN2_LO: f64 = 4.7493250390316726e-07;
/// 1.5·2^52: adding it rounds a double of magnitude below 2^51 to an integer held in the low
/// mantissa bits.
const ROUNDING_SHIFTER: f64 = 6755399441055744.0;
/// 1/k! for k = 0..=13, correctly rounded. On |r| ≤ ln2/2 the Taylor remainder r^14/14! is below
/// 5e-18 relative.
const EXP_TAYLOR: [f64; 14] = [
    1.0,
    1.0,
    0.5,
    0.16666666666666666,
    0.041666666666666664,
    0.008333333333333333,
    0.001388888888888889,
    0.0001984126984126984,
    2.48015873015873e-05,
    2.7557319223985893e-06,
    2.755731922398589e-07,
    2.505210838544172e-08,
    2.08767569878681e-09,
    1.6059043836821613e-10,
];
/// Arguments beyond which `exp` saturates to 0 or +∞ (2^±1021 keeps the scale factor normal).
const EXP_DOMAIN: f64 = 708.0;

/// √½ as bits: `ln` reduces its argument to a mantissa m in \[√½, √2).
const SQRT_HALF_BITS: u64 = 0x3FE6_A09E_667F_3BCD;
/// 2/(2k+1) for k = 1..=9: ln((1+s)/(1-s)) = 2s + s·Σ 2 s^2k/(2k+1). With |s| ≤ 0.1716 (s² ≤
/// 0.0295) the first term left out, s^20·2/21, is below 3e-17 of the result.
const LN_SERIES: [f64; 9] = [
    0.6666666666666666,
    0.4,
    0.2857142857142857,
    0.2222222222222222,
    0.18181818181818182,
    0.15384615384615385,
    0.13333333333333333,
    0.11764705882352941,
    0.10526315789473684,
];
/// 2^52 + 1023: the biased exponent e read as a double with `from_bits(2^52 bits | e)` is
/// 2^52 + e, so subtracting this gives e - 1023 exactly, without an integer-to-float conversion
/// (which AVX2 lacks for 64-bit integers).
const EXPONENT_OFFSET: f64 = 4503599627370496.0 + 1023.0;
const TWO_POW_52_BITS: u64 = 0x4330_0000_0000_0000;
/// 2^54, to lift subnormal arguments into the normal range.
const TWO_POW_54: f64 = 18014398509481984.0;

/// c\[0\] + x (c\[1\] + x (c\[2\] + ...)), with fused multiply-adds if `FUSED`.
#[inline(always)]
fn horner<const K: usize, const FUSED: bool>(coefficients: &[f64; K], x: f64) -> f64 {
    let mut sum = coefficients[K - 1];
    for &coefficient in coefficients[..K - 1].iter().rev() {
        sum = if FUSED {
            sum.mul_add(x, coefficient)
        } else {
            sum * x + coefficient
        };
    }
    sum
}

/// e^x of every cell.
#[inline(always)]
pub(crate) fn exp<const N: usize, const FUSED: bool>(x: Lanes<N, FUSED>) -> Lanes<N, FUSED> {
    x.map(exp_one::<FUSED>)
}

/// ln x of every cell.
#[inline(always)]
pub(crate) fn ln<const N: usize, const FUSED: bool>(x: Lanes<N, FUSED>) -> Lanes<N, FUSED> {
    x.map(ln_one::<FUSED>)
}

/// e^x = 2^n·e^r with n = round(x/ln 2), r = x - n ln 2 (Cody & Waite 1980), e^r by its Taylor
/// polynomial, 2^n built in the exponent bits.
#[inline(always)]
pub(crate) fn exp_one<const FUSED: bool>(x: f64) -> f64 {
    let shifted = x * LOG2_E + ROUNDING_SHIFTER;
    let n = shifted - ROUNDING_SHIFTER;
    let r = (x - n * LN2_HI) - n * LN2_LO;
    let polynomial = horner::<14, FUSED>(&EXP_TAYLOR, r);
    // The low mantissa bits of `shifted` hold n (two's complement); n + 1023 shifted into the
    // exponent field is 2^n (the bits above are shifted out).
    let scale = f64::from_bits(shifted.to_bits().wrapping_add(1023) << 52);
    let value = polynomial * scale;
    let value = if x > EXP_DOMAIN { f64::INFINITY } else { value };
    if x < -EXP_DOMAIN {
        0.0
    } else {
        value
    }
}

/// ln x = k ln 2 + ln m with x = 2^k·m, m in \[√½, √2); ln m = 2 atanh(s), s = (m-1)/(m+1),
/// arranged as f - (f²/2 - s(f²/2 + R)) with f = m - 1 so that ln stays accurate near 1.
#[inline(always)]
pub(crate) fn ln_one<const FUSED: bool>(x: f64) -> f64 {
    let subnormal = x < f64::MIN_POSITIVE;
    let normal = if subnormal { x * TWO_POW_54 } else { x };
    // Adding (1 - √½)'s exponent-and-mantissa offset carries into the exponent exactly when the
    // mantissa is at least √½, so the exponent read below is k with m in [√½, √2).
    let adjusted = normal
        .to_bits()
        .wrapping_add(0x3FF0_0000_0000_0000 - SQRT_HALF_BITS);
    let exponent = f64::from_bits(TWO_POW_52_BITS | (adjusted >> 52)) - EXPONENT_OFFSET;
    let exponent = if subnormal { exponent - 54.0 } else { exponent };
    let mantissa = f64::from_bits((adjusted & 0x000F_FFFF_FFFF_FFFF) + SQRT_HALF_BITS);
    let f = mantissa - 1.0;
    let half_f2 = 0.5 * f * f;
    let s = f / (2.0 + f);
    let z = s * s;
    let series = z * horner::<9, FUSED>(&LN_SERIES, z);
    let value = s * (half_f2 + series) + exponent * LN2_LO - half_f2 + f + exponent * LN2_HI;
    // Special arguments as the standard library: ln 0 = -∞, ln(+∞) = +∞, NaN otherwise.
    let value = if x == 0.0 { f64::NEG_INFINITY } else { value };
    let value = if x == f64::INFINITY { x } else { value };
    if x >= 0.0 {
        value
    } else {
        f64::NAN
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Largest relative difference from the standard library over `count` points spread
    /// geometrically or linearly across a range, plus a deterministic jitter.
    fn worst(
        f: fn(f64) -> f64,
        reference: fn(f64) -> f64,
        points: impl Iterator<Item = f64>,
    ) -> f64 {
        points
            .map(|x| {
                let (got, want) = (f(x), reference(x));
                let error = if got == want {
                    0.0
                } else {
                    ((got - want) / want).abs()
                };
                // A NaN must fail the bound, not vanish in the maximum.
                if error.is_nan() {
                    f64::INFINITY
                } else {
                    error
                }
            })
            .fold(0.0, f64::max)
    }

    fn linear(low: f64, high: f64, count: usize) -> impl Iterator<Item = f64> {
        (0..=count)
            .map(move |i| low + (high - low) * (i as f64 / count as f64) + 1e-7 * (i % 7) as f64)
    }

    fn geometric(low: f64, high: f64, count: usize) -> impl Iterator<Item = f64> {
        let ratio = high.ln() - low.ln();
        (0..=count).map(move |i| {
            low * (ratio * (i as f64 / count as f64)).exp() * (1.0 + 1e-9 * (i % 5) as f64)
        })
    }

    /// The bound the tests hold both variants to (measured: about 2.2e-16, one unit in the last
    /// place of a mantissa near 1).
    const BOUND: f64 = 3e-16;

    fn check_exp<const FUSED: bool>() {
        let chemistry = worst(exp_one::<FUSED>, f64::exp, linear(-60.0, 10.0, 2_000_000));
        let wide = worst(exp_one::<FUSED>, f64::exp, linear(-700.0, 700.0, 2_000_000));
        eprintln!("exp (fused {FUSED}): largest relative error {chemistry:.2e} on [-60, 10], {wide:.2e} on [-700, 700]");
        assert!(chemistry < BOUND, "exp on [-60, 10]: {chemistry:e}");
        assert!(wide < BOUND, "exp on [-700, 700]: {wide:e}");
    }

    fn check_ln<const FUSED: bool>() {
        let chemistry = worst(ln_one::<FUSED>, f64::ln, geometric(1e-14, 400.0, 2_000_000));
        let wide = worst(
            ln_one::<FUSED>,
            f64::ln,
            geometric(1e-300, 1e300, 2_000_000),
        );
        // Near 1 the result is near 0: measure there too (relative to the result).
        let near_one = worst(ln_one::<FUSED>, f64::ln, linear(0.5, 2.0, 1_000_000));
        eprintln!("ln (fused {FUSED}): largest relative error {chemistry:.2e} on [1e-14, 400], {wide:.2e} on [1e-300, 1e300], {near_one:.2e} on [0.5, 2]");
        assert!(chemistry < BOUND, "ln on [1e-14, 400]: {chemistry:e}");
        assert!(wide < BOUND, "ln on [1e-300, 1e300]: {wide:e}");
        assert!(near_one < BOUND, "ln on [0.5, 2]: {near_one:e}");
    }

    #[test]
    fn exp_within_about_one_ulp_of_std() {
        check_exp::<false>();
        check_exp::<true>();
    }

    #[test]
    fn ln_within_about_one_ulp_of_std() {
        check_ln::<false>();
        check_ln::<true>();
    }

    fn check_special_arguments<const FUSED: bool>() {
        for x in [
            0.0,
            -0.0,
            -1.0,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::NAN,
            1e-310,
            5e-324,
            1.0,
        ] {
            let (got, want) = (ln_one::<FUSED>(x), f64::ln(x));
            assert!(
                got == want
                    || (got.is_nan() && want.is_nan())
                    || ((got - want) / want).abs() < BOUND,
                "ln({x}) = {got}, std {want}"
            );
        }
        assert_eq!(exp_one::<FUSED>(0.0), 1.0);
        assert_eq!(exp_one::<FUSED>(-1000.0), 0.0);
        assert_eq!(exp_one::<FUSED>(f64::NEG_INFINITY), 0.0);
        assert_eq!(exp_one::<FUSED>(1000.0), f64::INFINITY);
        assert!(exp_one::<FUSED>(f64::NAN).is_nan());
    }

    #[test]
    fn special_arguments_follow_std() {
        check_special_arguments::<false>();
        check_special_arguments::<true>();
    }
}
