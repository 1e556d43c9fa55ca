//! HF dissociation constant on the free scale: Dickson & Riley 1979, Marine Chemistry 7, 89-99.

use super::SampleTerms;
use crate::real::Real;

/// ln KF (free scale, mol kg-1 of seawater): Dickson & Riley 1979, with the ionic strength and
/// water-fraction terms of Dickson 1990.
///
/// ```
/// use acidscape_chem::constants::{dickson_riley1979, SampleTerms};
/// // No printed check value was reachable: hand evaluation at S = 35, 25 °C (T = 298.15 K),
/// // I = 19.924·35/(1000 - 1.005·35) = 0.722763, √I = 0.850155:
/// // 1590.2/298.15 - 12.641 + 1.525·0.850155 + ln(1 - 0.035175)
/// // = 5.333557 - 12.641 + 1.296486 - 0.035809 = -6.046766
/// let ln_kf = dickson_riley1979::ln_kf_free(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_kf - (-6.046766)).abs() < 2e-6);
/// ```
pub fn ln_kf_free<T: Real>(terms: &SampleTerms<T>) -> T {
    ln_kf_free_per_kg_water(terms) + terms.ln_water_fraction()
}

/// ln KF (free scale, mol kg-1 of water): Dickson & Riley 1979 with the ionic-strength term of
/// Dickson 1990; multiply KF by [`SampleTerms::water_fraction`] for mol kg-1 of seawater.
#[inline(always)]
pub fn ln_kf_free_per_kg_water<T: Real>(terms: &SampleTerms<T>) -> T {
    terms.inv_kelvin * 1590.2 - 12.641 + terms.sqrt_ionic_strength * 1.525
}
