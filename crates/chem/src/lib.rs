//! Seawater carbonate-system chemistry from published constants: equilibrium constants at in-situ
//! temperature, salinity and pressure, the alkalinity-pH equation and its solution from any of five
//! input pairs, speciation, saturation states and the Revelle factor. Pure computation, no I/O.
//!
//! Units at the interface: concentrations µmol kg-1, in-situ temperature °C, practical salinity,
//! sea pressure dbar (0 at the surface), pH on the total scale, pCO2 and fCO2 in µatm.
//!
//! # Methods
//! - K0 and the CO2 fugacity coefficient: Weiss 1974 (fugacity at 1 atm, (1 - xCO2)² ≈ 1).
//! - K1, K2: Lueker et al. 2000 (total scale, default); Millero 2010 and Waters, Millero & Woosley
//!   2014 (seawater scale; coefficients from memory, checked against the verified Millero et al.
//!   2006 fit of the same data).
//! - KB: Dickson 1990 (total); KS: Dickson 1990 (free); KW, K1P, K2P, K3P, KSi: Millero 1995 as
//!   given on the total scale by Dickson, Sabine & Christian 2007; KF: Perez & Fraga 1987 (total,
//!   default) or Dickson & Riley 1979 (free).
//! - Totals from salinity: boron Uppström 1974 (default) or Lee et al. 2010; sulfate Morris & Riley
//!   1966; fluoride Riley 1965; calcium Riley & Tongudai 1967.
//! - Ksp of calcite and aragonite: Mucci 1983.
//! - Pressure: Millero 1995 for every constant (KSi takes the KB coefficients; KB a2 = -2.608e-3,
//!   the Millero 1979 sign). KS and KF are corrected on the free scale first; the acid constants are
//!   corrected on the seawater scale and converted to the total scale with the in-situ KS and KF.
//! - Alkalinity-pH equation (Dickson 1981 definition, with borate, water, phosphate, silicate,
//!   HSO4- and HF) solved by Halley steps (Newton steps corrected for curvature; two per sample
//!   from the carbonate-borate cubic start) inside the always-valid bracket of Munhoven 2013, with
//!   bisection fallback; DIC+pH, TA+pH and DIC+pCO2 in closed form.
//! - Revelle factor: analytical ∂ln pCO2/∂ln DIC at constant alkalinity.
//!
//! # Many cells
//! [`solve_cells`] solves blocks of cells from alkalinity and DIC (slices in, slices out) with
//! the same formulas as [`solve`], several cells per instruction (SIMD lanes, the widest
//! instruction set the CPU has, chosen at run time); any cell the lanes cannot finish is handed
//! to [`solve`], so results agree with it to within 1e-10 relative and statuses exactly.

// Lets the synthetic-cell helpers shared with the benches and tests name this crate in unit tests.
#[cfg(test)]
extern crate self as acidscape_chem;

mod batch;
mod choice;
pub mod constants;
mod error;
mod lanes;
mod real;
mod solver;
mod speciation;
mod uncertainty;
mod validity;

pub use batch::{solve_cells, CellInputs, CellOutputs, CellStatus, LengthMismatch};
pub use choice::{BoronTotal, CarbonicSet, ConstantChoice, FluorideSet, UnknownKey, FIXED_SOURCES};
pub use constants::{equilibrium_constants, EquilibriumConstants};
pub use error::ChemError;
pub use real::Real;
pub use speciation::{solve, solve_with_constants};
pub use uncertainty::{
    sensitivities, standard_uncertainties, uncertainty_budget, ConstantUncertainties,
    InputUncertainties, Output, PerOutput, PerSource, SolvedSample, Source, Uncertainties,
};
pub use validity::{OutOfRange, Validity};

/// One sample's physical state. Concentrations µmol kg-1; in-situ temperature °C; practical
/// salinity; sea pressure dbar (0 at surface).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conditions {
    /// In-situ temperature \[°C\].
    pub temperature_c: f64,
    /// Practical salinity \[-\].
    pub salinity: f64,
    /// Sea (gauge) pressure \[dbar\], 0 at the surface.
    pub pressure_dbar: f64,
    /// Total phosphate \[µmol kg-1\].
    pub phosphate: f64,
    /// Total silicate \[µmol kg-1\].
    pub silicate: f64,
}

/// The two measured or modelled carbonate quantities that fix the system. µmol kg-1, pH total
/// scale, µatm.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum InputPair {
    /// Total alkalinity and dissolved inorganic carbon \[µmol kg-1\].
    AlkalinityDic { alkalinity: f64, dic: f64 },
    /// Total alkalinity \[µmol kg-1\] and pH (total scale).
    AlkalinityPh { alkalinity: f64, ph_total: f64 },
    /// Dissolved inorganic carbon \[µmol kg-1\] and pH (total scale).
    DicPh { dic: f64, ph_total: f64 },
    /// Total alkalinity \[µmol kg-1\] and pCO2 \[µatm\] at in-situ temperature and 1 atm.
    AlkalinityPco2 { alkalinity: f64, pco2_uatm: f64 },
    /// Dissolved inorganic carbon \[µmol kg-1\] and pCO2 \[µatm\] at in-situ temperature and 1 atm.
    DicPco2 { dic: f64, pco2_uatm: f64 },
}

/// The solved carbonate system of one sample.
///
/// pCO2 and fCO2 are reported at the sample's in-situ temperature and 1 atm total pressure, i.e.
/// as if the water were brought to the surface without changing temperature (common practice for
/// in-situ pCO2); every other quantity is at in-situ pressure.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Solution {
    /// \[H+\] on the total scale \[mol kg-1\].
    pub h_total: f64,
    /// pH, total scale.
    pub ph_total: f64,
    /// pH, seawater scale.
    pub ph_seawater: f64,
    /// pH, free scale.
    pub ph_free: f64,
    /// Dissolved inorganic carbon \[µmol kg-1\].
    pub dic: f64,
    /// Total alkalinity \[µmol kg-1\].
    pub alkalinity: f64,
    /// CO2* (dissolved CO2 + H2CO3) \[µmol kg-1\].
    pub co2: f64,
    /// HCO3- \[µmol kg-1\].
    pub bicarbonate: f64,
    /// CO3-- \[µmol kg-1\].
    pub carbonate: f64,
    /// CO2 partial pressure \[µatm\].
    pub pco2_uatm: f64,
    /// CO2 fugacity \[µatm\].
    pub fco2_uatm: f64,
    /// Saturation state of aragonite, \[Ca\]\[CO3\]/Ksp*.
    pub omega_aragonite: f64,
    /// Saturation state of calcite, \[Ca\]\[CO3\]/Ksp*.
    pub omega_calcite: f64,
    /// Revelle factor (∂ln pCO2/∂ln DIC at constant alkalinity), evaluated analytically.
    pub revelle_factor: f64,
    /// Borate alkalinity \[B(OH)4-\] \[µmol kg-1\], positive.
    pub alk_borate: f64,
    /// Hydroxide alkalinity \[OH-\] \[µmol kg-1\], positive.
    pub alk_hydroxide: f64,
    /// Phosphate alkalinity \[HPO4--\] + 2\[PO4---\] - \[H3PO4\] \[µmol kg-1\].
    pub alk_phosphate: f64,
    /// Silicate alkalinity \[SiO(OH)3-\] \[µmol kg-1\], positive.
    pub alk_silicate: f64,
    /// -\[HSO4-\] \[µmol kg-1\]: negative, as it enters alkalinity.
    pub alk_hydrogen_sulfate: f64,
    /// -\[HF\] \[µmol kg-1\]: negative, as it enters alkalinity.
    pub alk_hydrogen_fluoride: f64,
    /// -\[H+\]free \[µmol kg-1\]: negative, as it enters alkalinity.
    pub alk_free_hydrogen: f64,
    /// Iterations of the alkalinity-pH solver (0 for pairs solved in closed form).
    pub iterations: u32,
    /// Validity ranges the inputs fall outside.
    pub validity: Validity,
}
