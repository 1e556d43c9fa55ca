//! K1 and K2 of carbonic acid on the seawater scale: Waters, Millero & Woosley 2014, Marine Chemistry 165,
//! 66-67 (corrigendum refitting Millero 2010). Coefficients from memory (the paper could not be read
//! here); checked against the verified Millero et al. 2006 fit of the same measurements.

use super::millero2006::{pure_water_pk1, pure_water_pk2, salinity_part};
use super::SampleTerms;
use crate::real::Real;

/// pK1 (seawater scale, mol kg-1): Waters et al. 2014, Table 1 seawater-scale A1, B1, C1 (from memory).
///
/// ```
/// use acidscape_chem::constants::{waters2014, SampleTerms};
/// // Refit of the Millero et al. 2006 data: agrees with its verified pK1* = 5.8401 within σ = 0.0054.
/// assert!((waters2014::pk1(&SampleTerms::new(25.0, 35.0)) - 5.8401).abs() < 0.0054);
/// ```
#[inline(always)]
pub fn pk1<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk1(terms)
        + salinity_part(
            terms,
            [13.409160, 0.031646, -5.1895e-5],
            [-531.3642, -5.713],
            -2.0669166,
        )
}

/// pK2 (seawater scale, mol kg-1): Waters et al. 2014, Table 1 seawater-scale A2, B2, C2 (from memory).
///
/// ```
/// use acidscape_chem::constants::{waters2014, SampleTerms};
/// // Refit of the Millero et al. 2006 data: agrees with its verified pK2* = 8.9636 within σ = 0.011.
/// assert!((waters2014::pk2(&SampleTerms::new(25.0, 35.0)) - 8.9636).abs() < 0.011);
/// ```
#[inline(always)]
pub fn pk2<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk2(terms)
        + salinity_part(
            terms,
            [21.225890, 0.12450870, -3.7243e-4],
            [-779.3444, -19.91739],
            -3.3534679,
        )
}
