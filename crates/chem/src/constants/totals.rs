//! Total concentrations of conservative constituents from practical salinity (mol kg-1).

use crate::choice::BoronTotal;
use crate::real::Real;

/// Chlorinity (‰) from practical salinity: S = 1.80655 Cl (Wooster, Lee & Dietrich 1969).
#[inline(always)]
pub fn chlorinity<T: Real>(salinity: T) -> T {
    salinity / 1.80655
}

/// Total boron (mol kg-1) from the chosen B/Cl ratio: Uppström 1974 (0.232 mg kg-1 ‰-1) or
/// Lee et al. 2010 (0.2414 mg kg-1 ‰-1), with boron's atomic weight 10.811.
///
/// ```
/// use acidscape_chem::{constants::totals, BoronTotal};
/// // S = 35: 4.157e-4 (Uppström 1974, quoted truncated; the ratio gives 4.1576e-4) and
/// // 4.326e-4 mol kg-1 (Lee et al. 2010), both verified
/// assert!((totals::boron(35.0, BoronTotal::Uppstrom1974) - 4.157e-4).abs() < 1e-7);
/// assert!((totals::boron(35.0, BoronTotal::Lee2010) - 4.326e-4).abs() < 5e-8);
/// ```
#[inline(always)]
pub fn boron<T: Real>(salinity: T, ratio: BoronTotal) -> T {
    let grams_per_kg_per_permil = match ratio {
        BoronTotal::Uppstrom1974 => 0.000232,
        BoronTotal::Lee2010 => 0.0002414,
    };
    chlorinity(salinity) * (grams_per_kg_per_permil / 10.811)
}

/// Total sulfate (mol kg-1): Morris & Riley 1966, 0.1400 g kg-1 ‰-1 of SO4 (96.062 g mol-1).
///
/// ```
/// // S = 35: 0.02824 mol kg-1 (Morris & Riley 1966; from memory)
/// assert!((acidscape_chem::constants::totals::sulfate(35.0) - 0.02824).abs() < 5e-6);
/// ```
#[inline(always)]
pub fn sulfate<T: Real>(salinity: T) -> T {
    chlorinity(salinity) * (0.1400 / 96.062)
}

/// Total fluoride (mol kg-1): Riley 1965, 6.7e-5 g kg-1 ‰-1 of F (18.998 g mol-1).
///
/// ```
/// // S = 35: 6.83e-5 mol kg-1 (Riley 1965; from memory)
/// assert!((acidscape_chem::constants::totals::fluoride(35.0) - 6.83e-5).abs() < 5e-8);
/// ```
#[inline(always)]
pub fn fluoride<T: Real>(salinity: T) -> T {
    chlorinity(salinity) * (0.000067 / 18.998)
}

/// Calcium (mol kg-1): Riley & Tongudai 1967, 0.02128 g kg-1 ‰-1 of Ca (40.087 g mol-1).
///
/// ```
/// // S = 35: 0.01028 mol kg-1 (Riley & Tongudai 1967; from memory)
/// assert!((acidscape_chem::constants::totals::calcium(35.0) - 0.01028).abs() < 5e-6);
/// ```
#[inline(always)]
pub fn calcium<T: Real>(salinity: T) -> T {
    chlorinity(salinity) * (0.02128 / 40.087)
}
