//! HF dissociation constant on the total scale: Perez & Fraga 1987, Marine Chemistry 21, 161-168.

use super::SampleTerms;
use crate::real::Real;

/// ln KF (total scale, mol kg-1): Perez & Fraga 1987, as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{perez_fraga1987, SampleTerms};
/// // S = 35, 25 °C: ln KF = -6.09 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((perez_fraga1987::ln_kf(&SampleTerms::new(25.0, 35.0)) - (-6.09)).abs() < 5e-3);
/// ```
#[inline(always)]
pub fn ln_kf<T: Real>(terms: &SampleTerms<T>) -> T {
    terms.inv_kelvin * 874.0 - 9.68 + terms.sqrt_salinity * 0.111
}
