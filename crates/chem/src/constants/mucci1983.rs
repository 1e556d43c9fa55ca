//! Stoichiometric solubility products of calcite and aragonite: Mucci 1983, American Journal of
//! Science 283, 780-799.

use super::SampleTerms;
use crate::real::Real;

/// log10 Ksp* of calcite (mol² kg-2): Mucci 1983, Table 7 equation.
///
/// ```
/// use acidscape_chem::constants::{mucci1983, SampleTerms};
/// // S = 35, 25 °C: log10 Ksp* = -6.3693, Ksp* = 4.27e-7 (Mucci 1983; from memory)
/// let log_ksp = mucci1983::log10_ksp_calcite(&SampleTerms::new(25.0, 35.0));
/// assert!((log_ksp - (-6.3693)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn log10_ksp_calcite<T: Real>(terms: &SampleTerms<T>) -> T {
    log10_ksp(
        terms,
        [-171.9065, 2839.319],
        [-0.77712, 0.0028426, 178.34],
        -0.07711,
        0.0041249,
    )
}

/// log10 Ksp* of aragonite (mol² kg-2): Mucci 1983, Table 7 equation.
///
/// ```
/// use acidscape_chem::constants::{mucci1983, SampleTerms};
/// // S = 35, 25 °C: log10 Ksp* = -6.1883, Ksp* = 6.48e-7 (Mucci 1983; from memory)
/// let log_ksp = mucci1983::log10_ksp_aragonite(&SampleTerms::new(25.0, 35.0));
/// assert!((log_ksp - (-6.1883)).abs() < 5e-4);
/// ```
#[inline(always)]
pub fn log10_ksp_aragonite<T: Real>(terms: &SampleTerms<T>) -> T {
    log10_ksp(
        terms,
        [-171.945, 2903.293],
        [-0.068393, 0.0017276, 88.135],
        -0.10018,
        0.0059415,
    )
}

/// The form of both Mucci 1983 fits: log10 Ksp at S = 0, a0 - 0.077993 T + a1/T + 71.595 log10 T,
/// plus (b0 + b1 T + b2/T)√S + c S + d S^1.5.
#[inline(always)]
fn log10_ksp<T: Real>(terms: &SampleTerms<T>, a: [f64; 2], b: [f64; 3], c: f64, d: f64) -> T {
    let t = terms.kelvin;
    let (s, r) = (terms.salinity, terms.sqrt_salinity);
    T::from(a[0]) - t * 0.077993
        + terms.inv_kelvin * a[1]
        + terms.log10_kelvin() * 71.595
        + (t * b[1] + b[0] + terms.inv_kelvin * b[2]) * r
        + s * c
        + s * d * r
}
