//! Boric acid (total scale) and bisulfate (free scale) constants: Dickson 1990, Deep-Sea Research 37,
//! 755-766 (KB) and Journal of Chemical Thermodynamics 22, 113-127 (KS).

use super::SampleTerms;

/// ln KB (total scale, mol kg-1): Dickson 1990, Deep-Sea Research 37, eq. 23.
///
/// ```
/// use acidscape_chem::constants::{dickson1990, SampleTerms};
/// // S = 35, 25 °C: ln KB = -19.7964 (Dickson et al. 2007 ch. 5; from memory)
/// let ln_kb = dickson1990::ln_kb(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_kb - (-19.7964)).abs() < 5e-4);
/// ```
pub fn ln_kb(terms: &SampleTerms) -> f64 {
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    let s15 = s * r;
    (-8966.90 - 2890.53 * r - 77.942 * s + 1.728 * s15 - 0.0996 * s * s) * terms.inv_kelvin
        + 148.0248
        + 137.1942 * r
        + 1.62142 * s
        - (24.4344 + 25.085 * r + 0.2474 * s) * terms.ln_kelvin
        + 0.053105 * r * terms.kelvin
}

/// ln KS of HSO4- (free scale, mol kg-1 of seawater): Dickson 1990, J. Chem. Thermodyn. 22, eq. 22.
///
/// ```
/// use acidscape_chem::constants::{dickson1990, SampleTerms};
/// // S = 35, 25 °C: ln KS = -2.30 (Dickson et al. 2007 ch. 5; from memory)
/// let ln_ks = dickson1990::ln_ks(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_ks - (-2.30)).abs() < 5e-3);
/// ```
pub fn ln_ks(terms: &SampleTerms) -> f64 {
    ln_ks_per_kg_water(terms) + terms.ln_water_fraction()
}

/// ln KS of HSO4- (free scale, mol kg-1 of water): Dickson 1990, J. Chem. Thermodyn. 22, eq. 22
/// without its water-fraction term; multiply KS by [`SampleTerms::water_fraction`] for mol kg-1
/// of seawater.
pub fn ln_ks_per_kg_water(terms: &SampleTerms) -> f64 {
    let (i, sqrt_i) = (terms.ionic_strength, terms.sqrt_ionic_strength);
    let (inv_t, ln_t) = (terms.inv_kelvin, terms.ln_kelvin);
    -4276.1 * inv_t + 141.328 - 23.093 * ln_t
        + (-13856.0 * inv_t + 324.57 - 47.986 * ln_t) * sqrt_i
        + (35474.0 * inv_t - 771.54 + 114.723 * ln_t) * i
        - 2698.0 * inv_t * i * sqrt_i
        + 1776.0 * inv_t * i * i
}
