//! K1 and K2 of carbonic acid on the seawater scale: Millero 2010, Marine and Freshwater Research 61, 139-142.
//! Coefficients from memory (the paper could not be read here); they are checked against the
//! verified Millero et al. 2006 fit of the same measurements, which they must match within its σ.

use super::millero2006::{pure_water_pk1, pure_water_pk2, salinity_part};
use super::SampleTerms;
use crate::real::Real;

/// pK1 (seawater scale, mol kg-1): Millero 2010, seawater-scale A1, B1, C1 (from memory).
///
/// ```
/// use acidscape_chem::constants::{millero2006, millero2010, SampleTerms};
/// // Refit of the Millero et al. 2006 data: agrees with its verified pK1* = 5.8401 within σ = 0.0054.
/// let terms = SampleTerms::new(25.0, 35.0);
/// assert!((millero2010::pk1(&terms) - 5.8401).abs() < 0.0054);
/// ```
#[inline(always)]
pub fn pk1<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk1(terms)
        + salinity_part(
            terms,
            [13.4038, 0.03206, -5.242e-5],
            [-530.659, -5.8210],
            -2.0664,
        )
}

/// pK2 (seawater scale, mol kg-1): Millero 2010, seawater-scale A2, B2, C2 (from memory).
///
/// ```
/// use acidscape_chem::constants::{millero2010, SampleTerms};
/// // Refit of the Millero et al. 2006 data: agrees with its verified pK2* = 8.9636 within σ = 0.011.
/// assert!((millero2010::pk2(&SampleTerms::new(25.0, 35.0)) - 8.9636).abs() < 0.011);
/// ```
#[inline(always)]
pub fn pk2<T: Real>(terms: &SampleTerms<T>) -> T {
    pure_water_pk2(terms)
        + salinity_part(
            terms,
            [21.3728, 0.1218, -3.688e-4],
            [-788.289, -19.189],
            -3.374,
        )
}
