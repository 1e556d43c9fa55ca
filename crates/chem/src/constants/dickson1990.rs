//! Boric acid (total scale) and bisulfate (free scale) constants: Dickson 1990, Deep-Sea Research 37,
//! 755-766 (KB) and Journal of Chemical Thermodynamics 22, 113-127 (KS).

use super::SampleTerms;
use crate::real::Real;

/// ln KB (total scale, mol kg-1): Dickson 1990, Deep-Sea Research 37, eq. 23.
///
/// ```
/// use acidscape_chem::constants::{dickson1990, SampleTerms};
/// // S = 35, 25 °C: ln KB = -19.7964 (Dickson et al. 2007 ch. 5; from memory)
/// let ln_kb = dickson1990::ln_kb(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_kb - (-19.7964)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn ln_kb<T: Real>(terms: &SampleTerms<T>) -> T {
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    let s15 = s * r;
    (T::from(-8966.90) - r * 2890.53 - s * 77.942 + s15 * 1.728 - s * 0.0996 * s) * terms.inv_kelvin
        + 148.0248
        + r * 137.1942
        + s * 1.62142
        - (r * 25.085 + 24.4344 + s * 0.2474) * terms.ln_kelvin
        + r * 0.053105 * terms.kelvin
}

/// ln KS of HSO4- (free scale, mol kg-1 of seawater): Dickson 1990, J. Chem. Thermodyn. 22, eq. 22.
///
/// ```
/// use acidscape_chem::constants::{dickson1990, SampleTerms};
/// // S = 35, 25 °C: ln KS = -2.30 (Dickson et al. 2007 ch. 5; from memory)
/// let ln_ks = dickson1990::ln_ks(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_ks - (-2.30)).abs() < 5e-3);
/// ```
pub fn ln_ks<T: Real>(terms: &SampleTerms<T>) -> T {
    ln_ks_per_kg_water(terms) + terms.ln_water_fraction()
}

/// ln KS of HSO4- (free scale, mol kg-1 of water): Dickson 1990, J. Chem. Thermodyn. 22, eq. 22
/// without its water-fraction term; multiply KS by [`SampleTerms::water_fraction`] for mol kg-1
/// of seawater.
#[inline(always)]
pub fn ln_ks_per_kg_water<T: Real>(terms: &SampleTerms<T>) -> T {
    let (i, sqrt_i) = (terms.ionic_strength, terms.sqrt_ionic_strength);
    let (inv_t, ln_t) = (terms.inv_kelvin, terms.ln_kelvin);
    inv_t * -4276.1 + 141.328 - ln_t * 23.093
        + (inv_t * -13856.0 + 324.57 - ln_t * 47.986) * sqrt_i
        + (inv_t * 35474.0 - 771.54 + ln_t * 114.723) * i
        - inv_t * 2698.0 * i * sqrt_i
        + inv_t * 1776.0 * i * i
}
