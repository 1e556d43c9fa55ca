//! CO2 solubility K0 and the CO2 fugacity coefficient: Weiss 1974, Marine Chemistry 2, 203-215.

use super::SampleTerms;
use crate::real::Real;

/// Gas constant in cm³ atm mol-1 K-1 (CODATA), for the virial term.
const GAS_CONSTANT_CM3_ATM: f64 = 82.057_366;

/// ln K0 \[K0 in mol kg-1 atm-1\]: Weiss 1974, eq. 12 with the mol kg-1 coefficients of Table I.
///
/// ```
/// use acidscape_chem::constants::{weiss1974, SampleTerms};
/// // Check value at S = 35, 25 °C: ln K0 = -3.5617 (Dickson, Sabine & Christian 2007, ch. 5; from memory)
/// let ln_k0 = weiss1974::ln_k0(&SampleTerms::new(25.0, 35.0));
/// assert!((ln_k0 - (-3.5617)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn ln_k0<T: Real>(terms: &SampleTerms<T>) -> T {
    let t100 = terms.kelvin / 100.0;
    T::from(93.4517) / t100 - 60.2409
        + (terms.ln_kelvin - std::f64::consts::LN_10 * 2.0) * 23.3585
        + terms.salinity * (T::from(0.023517) - t100 * 0.023656 + t100 * 0.0047036 * t100)
}

/// fCO2 / pCO2 \[-\] at 1 atm total pressure: Weiss 1974, eqs. 5-9 (virial coefficient B and
/// cross-virial δ of CO2 in air); the mole-fraction factor (1 - xCO2)² is taken as 1 (common practice).
///
/// ```
/// use acidscape_chem::constants::weiss1974;
/// // At 298.15 K: B = -123.2 cm³ mol-1, δ = 22.5 cm³ mol-1 (Weiss 1974; check-values.md, from memory)
/// let factor = weiss1974::fugacity_factor(298.15);
/// let expected = ((-123.2 + 2.0 * 22.5) / (82.057 * 298.15_f64)).exp();
/// assert!((factor - expected).abs() < 2e-6);
/// assert!((factor - 0.99681).abs() < 1e-5);
/// ```
#[inline(always)]
pub fn fugacity_factor<T: Real>(kelvin: T) -> T {
    ln_fugacity_factor(kelvin).exp()
}

/// ln(fCO2 / pCO2) at 1 atm total pressure: the exponent of [`fugacity_factor`].
#[inline(always)]
pub fn ln_fugacity_factor<T: Real>(kelvin: T) -> T {
    let virial_b = kelvin * (kelvin * (kelvin * 3.16528e-5 - 3.27957e-2) + 12.0408) - 1636.75;
    let delta = T::from(57.7) - kelvin * 0.118;
    (virial_b + delta * 2.0) / (kelvin * GAS_CONSTANT_CM3_ATM)
}
