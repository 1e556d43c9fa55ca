//! Water, phosphoric acid and silicic acid constants: Millero 1995, Geochimica et Cosmochimica Acta 59,
//! 661-677 (phosphate and silicate fits of Yao & Millero 1995), on the total scale as given by
//! Dickson, Sabine & Christian 2007, chapter 5.

use super::SampleTerms;
use crate::real::Real;

/// ln KW (total scale, mol² kg-2): Millero 1995 as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{millero1995, SampleTerms};
/// // S = 35, 25 °C: ln KW = -30.434 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((millero1995::ln_kw(&SampleTerms::new(25.0, 35.0)) - (-30.434)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn ln_kw<T: Real>(terms: &SampleTerms<T>) -> T {
    let (inv_t, ln_t) = (terms.inv_kelvin, terms.ln_kelvin);
    T::from(148.9652) - inv_t * 13847.26 - ln_t * 23.6521
        + (inv_t * 118.67 - 5.977 + ln_t * 1.0495) * terms.sqrt_salinity
        - terms.salinity * 0.01615
}

/// ln K1P of H3PO4 (total scale, mol kg-1): Millero 1995 as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{millero1995, SampleTerms};
/// // S = 35, 25 °C: ln K1P = -3.71 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((millero1995::ln_k1p(&SampleTerms::new(25.0, 35.0)) - (-3.71)).abs() < 5e-3);
/// ```
#[inline(always)]
pub fn ln_k1p<T: Real>(terms: &SampleTerms<T>) -> T {
    let inv_t = terms.inv_kelvin;
    inv_t * -4576.752 + 115.525 - terms.ln_kelvin * 18.453
        + (inv_t * -106.736 + 0.69171) * terms.sqrt_salinity
        + (inv_t * -0.65643 - 0.01844) * terms.salinity
}

/// ln K2P of H2PO4- (total scale, mol kg-1): Millero 1995 as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{millero1995, SampleTerms};
/// // S = 35, 25 °C: ln K2P = -13.727 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((millero1995::ln_k2p(&SampleTerms::new(25.0, 35.0)) - (-13.727)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn ln_k2p<T: Real>(terms: &SampleTerms<T>) -> T {
    let inv_t = terms.inv_kelvin;
    inv_t * -8814.715 + 172.0883 - terms.ln_kelvin * 27.927
        + (inv_t * -160.340 + 1.3566) * terms.sqrt_salinity
        + (inv_t * 0.37335 - 0.05778) * terms.salinity
}

/// ln K3P of HPO4-- (total scale, mol kg-1): Millero 1995 as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{millero1995, SampleTerms};
/// // S = 35, 25 °C: ln K3P = -20.24 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((millero1995::ln_k3p(&SampleTerms::new(25.0, 35.0)) - (-20.24)).abs() < 5e-3);
/// ```
#[inline(always)]
pub fn ln_k3p<T: Real>(terms: &SampleTerms<T>) -> T {
    let inv_t = terms.inv_kelvin;
    inv_t * -3070.75 - 18.141
        + (inv_t * 17.27039 + 2.81197) * terms.sqrt_salinity
        + (inv_t * -44.99486 - 0.09984) * terms.salinity
}

/// ln KSi of Si(OH)4 (total scale, mol kg-1): Millero 1995 as given by Dickson et al. 2007, ch. 5.
///
/// ```
/// use acidscape_chem::constants::{millero1995, SampleTerms};
/// // S = 35, 25 °C: ln KSi = -21.61 (Dickson et al. 2007 ch. 5; from memory)
/// assert!((millero1995::ln_ksi(&SampleTerms::new(25.0, 35.0)) - (-21.61)).abs() < 5e-3);
/// ```
pub fn ln_ksi<T: Real>(terms: &SampleTerms<T>) -> T {
    ln_ksi_per_kg_water(terms) + terms.ln_water_fraction()
}

/// ln KSi of Si(OH)4 (total scale, mol kg-1 of water): Millero 1995 as given by Dickson et al.
/// 2007, ch. 5, without its water-fraction term; multiply KSi by [`SampleTerms::water_fraction`]
/// for mol kg-1 of seawater.
#[inline(always)]
pub fn ln_ksi_per_kg_water<T: Real>(terms: &SampleTerms<T>) -> T {
    let (inv_t, i) = (terms.inv_kelvin, terms.ionic_strength);
    inv_t * -8904.2 + 117.385 - terms.ln_kelvin * 19.334
        + (inv_t * -458.79 + 3.5913) * terms.sqrt_ionic_strength
        + (inv_t * 188.74 - 1.5998) * i
        + (inv_t * -12.1652 + 0.07871) * i * i
}
