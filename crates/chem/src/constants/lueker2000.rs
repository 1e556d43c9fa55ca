//! K1 and K2 of carbonic acid on the total scale: Lueker, Dickson & Keeling 2000, Marine Chemistry 70, 105-119.

use super::SampleTerms;
use crate::real::Real;

/// pK1 (total scale, mol kg-1): Lueker et al. 2000, eq. 35.
///
/// ```
/// use acidscape_chem::constants::{lueker2000, SampleTerms};
/// // S = 35, 25 °C: log10 K1 = -5.8472 (Dickson et al. 2007 ch. 5; check value from memory)
/// let pk1 = lueker2000::pk1(&SampleTerms::new(25.0, 35.0));
/// assert!((pk1 - 5.8472).abs() < 5e-5);
/// ```
#[inline(always)]
pub fn pk1<T: Real>(terms: &SampleTerms<T>) -> T {
    let s = terms.salinity;
    terms.inv_kelvin * 3633.86 - 61.2172 + terms.ln_kelvin * 9.67770 - s * 0.011555
        + s * 0.0001152 * s
}

/// pK2 (total scale, mol kg-1): Lueker et al. 2000, eq. 36.
///
/// ```
/// use acidscape_chem::constants::{lueker2000, SampleTerms};
/// // S = 35, 25 °C: log10 K2 = -8.9660 (Dickson et al. 2007 ch. 5; check value from memory)
/// let pk2 = lueker2000::pk2(&SampleTerms::new(25.0, 35.0));
/// assert!((pk2 - 8.9660).abs() < 5e-5);
/// ```
#[inline(always)]
pub fn pk2<T: Real>(terms: &SampleTerms<T>) -> T {
    let s = terms.salinity;
    terms.inv_kelvin * 471.78 + 25.9290 - terms.ln_kelvin * 3.16967 - s * 0.01781
        + s * 0.0001122 * s
}
