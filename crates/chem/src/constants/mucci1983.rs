//! Stoichiometric solubility products of calcite and aragonite: Mucci 1983, American Journal of
//! Science 283, 780-799.

use super::SampleTerms;

/// log10 Ksp* of calcite (mol² kg-2): Mucci 1983, Table 7 equation.
///
/// ```
/// use acidscape_chem::constants::{mucci1983, SampleTerms};
/// // S = 35, 25 °C: log10 Ksp* = -6.3693, Ksp* = 4.27e-7 (Mucci 1983; from memory)
/// let log_ksp = mucci1983::log10_ksp_calcite(&SampleTerms::new(25.0, 35.0));
/// assert!((log_ksp - (-6.3693)).abs() < 5e-4);
/// ```
pub fn log10_ksp_calcite(terms: &SampleTerms) -> f64 {
    let t = terms.kelvin;
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    -171.9065 - 0.077993 * t
        + 2839.319 * terms.inv_kelvin
        + 71.595 * terms.log10_kelvin()
        + (-0.77712 + 0.0028426 * t + 178.34 * terms.inv_kelvin) * r
        - 0.07711 * s
        + 0.0041249 * s * r
}

/// log10 Ksp* of aragonite (mol² kg-2): Mucci 1983, Table 7 equation.
///
/// ```
/// use acidscape_chem::constants::{mucci1983, SampleTerms};
/// // S = 35, 25 °C: log10 Ksp* = -6.1883, Ksp* = 6.48e-7 (Mucci 1983; from memory)
/// let log_ksp = mucci1983::log10_ksp_aragonite(&SampleTerms::new(25.0, 35.0));
/// assert!((log_ksp - (-6.1883)).abs() < 5e-4);
/// ```
pub fn log10_ksp_aragonite(terms: &SampleTerms) -> f64 {
    let t = terms.kelvin;
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    -171.945 - 0.077993 * t
        + 2903.293 * terms.inv_kelvin
        + 71.595 * terms.log10_kelvin()
        + (-0.068393 + 0.0017276 * t + 88.135 * terms.inv_kelvin) * r
        - 0.10018 * s
        + 0.0059415 * s * r
}
