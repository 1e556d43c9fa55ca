//! HF dissociation constant on the total scale: Perez & Fraga 1987, Marine Chemistry 21, 161-168.

use super::SampleTerms;

/// ln KF (total scale, mol kg-1): Perez & Fraga 1987, as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{perez_fraga1987, SampleTerms};
/// // S = 35, 25 °C: ln KF = -6.09 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((perez_fraga1987::ln_kf(&SampleTerms::new(25.0, 35.0)) - (-6.09)).abs() < 5e-3);
/// ```
pub fn ln_kf(terms: &SampleTerms) -> f64 {
    874.0 * terms.inv_kelvin - 9.68 + 0.111 * terms.sqrt_salinity
}
