//! K1 and K2 of carbonic acid on the seawater scale: Millero, Graham, Huang, Bustos-Serrano & Pierrot 2006,
//! Marine Chemistry 100, 80-94 (coefficients and check values verified in the abstract). The pure-water
//! terms here are shared with Millero 2010 and Waters et al. 2014.

use super::SampleTerms;
use crate::real::Real;

/// pK1 in pure water (Harned & Davis 1943, as fitted in Millero et al. 2006).
#[inline(always)]
pub fn pure_water_pk1<T: Real>(terms: &SampleTerms<T>) -> T {
    terms.inv_kelvin * 6320.813 - 126.34048 + terms.ln_kelvin * 19.568224
}

/// pK2 in pure water (Harned & Scholes 1941, as fitted in Millero et al. 2006).
#[inline(always)]
pub fn pure_water_pk2<T: Real>(terms: &SampleTerms<T>) -> T {
    terms.inv_kelvin * 5143.692 - 90.18333 + terms.ln_kelvin * 14.613358
}

/// Salinity part pK - pK0 = A + B/T + C ln T, the form shared by Millero 2006, 2010 and Waters et al. 2014;
/// `a = [a_sqrt_s, a_s, a_s2]`, `b = [b_sqrt_s, b_s]`, `c = c_sqrt_s`.
#[inline(always)]
pub(crate) fn salinity_part<T: Real>(
    terms: &SampleTerms<T>,
    a: [f64; 3],
    b: [f64; 2],
    c: f64,
) -> T {
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    (r * a[0] + s * a[1] + s * a[2] * s)
        + (r * b[0] + s * b[1]) * terms.inv_kelvin
        + r * c * terms.ln_kelvin
}

/// pK1 (seawater scale, mol kg-1): Millero et al. 2006, eq. for pK1* with A1, B1, C1.
///
/// ```
/// use acidscape_chem::constants::{millero2006, SampleTerms};
/// // Check value printed in the abstract of Millero et al. 2006: pK1* = 5.8401 at S = 35, 25 °C (verified)
/// assert!((millero2006::pk1(&SampleTerms::new(25.0, 35.0)) - 5.8401).abs() < 5e-5);
/// ```
#[inline(always)]
pub fn pk1<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk1(terms)
        + salinity_part(
            terms,
            [13.4191, 0.0331, -5.33e-5],
            [-530.123, -6.103],
            -2.06950,
        )
}

/// pK2 (seawater scale, mol kg-1): Millero et al. 2006, eq. for pK2* with A2, B2, C2.
///
/// ```
/// use acidscape_chem::constants::{millero2006, SampleTerms};
/// // Check value printed in the abstract of Millero et al. 2006: pK2* = 8.9636 at S = 35, 25 °C (verified)
/// assert!((millero2006::pk2(&SampleTerms::new(25.0, 35.0)) - 8.9636).abs() < 5e-5);
/// ```
#[inline(always)]
pub fn pk2<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk2(terms)
        + salinity_part(
            terms,
            [21.0894, 0.1248, -3.687e-4],
            [-772.483, -20.051],
            -3.3336,
        )
}
