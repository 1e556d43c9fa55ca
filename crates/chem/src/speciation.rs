//! Solving each input pair and assembling the full speciation.

use crate::constants::{constants_unchecked, validate_conditions, EquilibriumConstants};
use crate::error::{Accepted, ChemError};
use crate::real::Real;
use crate::solver::{solve_alkalinity, CarbonFixed, Contributions, NonCarbonate};
use crate::{Conditions, ConstantChoice, InputPair, Solution};

/// µmol kg-1 per mol kg-1.
pub(crate) const MICRO: f64 = 1e6;
/// Highest concentration accepted \[µmol kg-1\] (50 mmol kg-1, far beyond any seawater).
const MAX_CONCENTRATION: f64 = 50_000.0;
/// pH (total scale) range accepted as input and as a solution; outside it the pair describes no seawater.
const PH_RANGE: (f64, f64) = (3.0, 12.0);

/// Total alkalinity the solver accepts \[µmol kg-1\].
pub(crate) const ACCEPTED_ALKALINITY: Accepted = Accepted {
    field: "alkalinity",
    min: 0.0,
    max: MAX_CONCENTRATION,
    expected: "total alkalinity between 0 and 50000 µmol kg-1",
};

/// DIC the solver accepts \[µmol kg-1\].
pub(crate) const ACCEPTED_DIC: Accepted = Accepted {
    field: "dic",
    min: 1e-6,
    max: MAX_CONCENTRATION,
    expected: "dissolved inorganic carbon above 0 and at most 50000 µmol kg-1",
};

const ACCEPTED_PH: Accepted = Accepted {
    field: "ph_total",
    min: PH_RANGE.0,
    max: PH_RANGE.1,
    expected: "pH (total scale) between 3 and 12",
};

const ACCEPTED_PCO2: Accepted = Accepted {
    field: "pco2_uatm",
    min: 1e-6,
    max: 1e6,
    expected: "pCO2 above 0 and at most 1000000 µatm",
};

pub(crate) fn check_alkalinity(value: f64) -> Result<f64, ChemError> {
    ACCEPTED_ALKALINITY.check(value)
}

pub(crate) fn check_dic(value: f64) -> Result<f64, ChemError> {
    ACCEPTED_DIC.check(value)
}

fn check_ph(value: f64) -> Result<f64, ChemError> {
    ACCEPTED_PH.check(value)
}

fn check_pco2(value: f64) -> Result<f64, ChemError> {
    ACCEPTED_PCO2.check(value)
}

/// Solves the carbonate system of one sample from any input pair with the chosen constants.
/// Bad or inconsistent input gives a [`ChemError`], never a plausible-looking number.
///
/// ```
/// use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair};
/// let surface = Conditions { temperature_c: 25.0, salinity: 35.0, pressure_dbar: 0.0, phosphate: 0.0, silicate: 0.0 };
/// let s = solve(InputPair::AlkalinityDic { alkalinity: 2300.0, dic: 2000.0 }, &surface, &ConstantChoice::default()).unwrap();
/// // Typical warm surface seawater: pH near 8.0-8.1 and supersaturated for aragonite (common practice).
/// assert!(s.ph_total > 7.95 && s.ph_total < 8.15);
/// assert!(s.omega_aragonite > 2.5 && s.omega_aragonite < 4.5);
/// ```
pub fn solve(
    pair: InputPair,
    conditions: &Conditions,
    choice: &ConstantChoice,
) -> Result<Solution, ChemError> {
    validate_conditions(conditions)?;
    solve_given(pair, conditions, &constants_unchecked(conditions, choice))
}

/// As [`solve`], with equilibrium constants the caller already has: from
/// [`equilibrium_constants`](crate::equilibrium_constants) for the same conditions (to keep them
/// for [`uncertainty_budget`](crate::uncertainty_budget)), or deliberately perturbed ones (to
/// study what their uncertainty does to the results).
pub fn solve_with_constants(
    pair: InputPair,
    conditions: &Conditions,
    constants: &EquilibriumConstants,
) -> Result<Solution, ChemError> {
    validate_conditions(conditions)?;
    solve_given(pair, conditions, constants)
}

#[inline(always)]
fn solve_given(
    pair: InputPair,
    conditions: &Conditions,
    k: &EquilibriumConstants,
) -> Result<Solution, ChemError> {
    let k = *k;
    let others = NonCarbonate::new(
        &k,
        conditions.phosphate / MICRO,
        conditions.silicate / MICRO,
    );
    let (h, dic, iterations) = match pair {
        InputPair::AlkalinityDic { alkalinity, dic } => {
            let alkalinity = check_alkalinity(alkalinity)? / MICRO;
            let dic = check_dic(dic)? / MICRO;
            let root = solve_alkalinity(alkalinity, CarbonFixed::Dic(dic), k.k1, k.k2, &others)?;
            (root.h, dic, root.iterations)
        }
        InputPair::DicPh { dic, ph_total } => {
            let dic = check_dic(dic)? / MICRO;
            (h_from_ph(check_ph(ph_total)?), dic, 0)
        }
        InputPair::AlkalinityPh {
            alkalinity,
            ph_total,
        } => {
            let alkalinity = check_alkalinity(alkalinity)? / MICRO;
            let h = h_from_ph(check_ph(ph_total)?);
            (
                h,
                dic_from_alkalinity_ph(alkalinity, h, ph_total, &k, &others)?,
                0,
            )
        }
        InputPair::AlkalinityPco2 {
            alkalinity,
            pco2_uatm,
        } => {
            let alkalinity = check_alkalinity(alkalinity)? / MICRO;
            let co2 = co2_from_pco2(check_pco2(pco2_uatm)?, &k);
            let root = solve_alkalinity(alkalinity, CarbonFixed::Co2(co2), k.k1, k.k2, &others)?;
            let dic = co2 * (1.0 + k.k1 / root.h * (1.0 + k.k2 / root.h));
            (root.h, dic, root.iterations)
        }
        InputPair::DicPco2 { dic, pco2_uatm } => {
            let dic = check_dic(dic)? / MICRO;
            let co2 = co2_from_pco2(check_pco2(pco2_uatm)?, &k);
            (h_from_dic_co2(dic, co2, pco2_uatm, &k)?, dic, 0)
        }
    };
    speciate(h, dic, iterations, &k, &others)
}

/// pH = -log10 \[H+\] (common practice), any scale.
#[inline(always)]
fn ph_from_h<T: Real>(h: T) -> T {
    -h.ln() * std::f64::consts::LOG10_E
}

fn h_from_ph(ph: f64) -> f64 {
    10f64.powf(-ph)
}

/// CO2* \[mol kg-1\] = K0 · fCO2, with fCO2 = pCO2 · fugacity factor (Weiss 1974).
fn co2_from_pco2(pco2_uatm: f64, k: &EquilibriumConstants) -> f64 {
    k.k0 * pco2_uatm * k.fugacity_factor / MICRO
}

/// DIC from alkalinity and pH: what alkalinity the non-carbonate systems leave, over \[HCO3-\] + 2\[CO3--\] per unit DIC.
fn dic_from_alkalinity_ph(
    alkalinity: f64,
    h: f64,
    ph_total: f64,
    k: &EquilibriumConstants,
    others: &NonCarbonate,
) -> Result<f64, ChemError> {
    let at_h = others.evaluate(h, CarbonFixed::Dic(1.0), k.k1, k.k2);
    let (noncarbonate, per_unit_dic) = (at_h.others.sum(), at_h.carbonate);
    let carbonate_alkalinity = alkalinity - noncarbonate;
    if carbonate_alkalinity <= 0.0 {
        return Err(ChemError::NoSolution {
            reason: format!(
                "alkalinity {:.2} µmol kg-1 is not above the {:.2} µmol kg-1 that borate, water and nutrients alone give at pH {ph_total}",
                alkalinity * MICRO,
                noncarbonate * MICRO
            ),
        });
    }
    Ok(carbonate_alkalinity / per_unit_dic)
}

/// \[H+\] from DIC and CO2*: DIC/CO2* - 1 = K1/h + K1K2/h², solved as a quadratic in 1/h.
fn h_from_dic_co2(
    dic: f64,
    co2: f64,
    pco2_uatm: f64,
    k: &EquilibriumConstants,
) -> Result<f64, ChemError> {
    let excess = dic / co2 - 1.0;
    if excess <= 0.0 {
        return Err(ChemError::NoSolution {
            reason: format!(
                "pCO2 {pco2_uatm} µatm needs {:.2} µmol kg-1 of CO2 alone, more than the DIC {:.2} µmol kg-1",
                co2 * MICRO,
                dic * MICRO
            ),
        });
    }
    Ok((k.k1 + (k.k1 * k.k1 + 4.0 * k.k1 * k.k2 * excess).sqrt()) / (2.0 * excess))
}

/// Every output of the speciation at one \[H+\], in the units of [`Solution`] (µmol kg-1, µatm),
/// for one sample or a lane of cells.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Speciation<T: Real> {
    pub h_total: T,
    pub ph_total: T,
    pub ph_seawater: T,
    pub ph_free: T,
    pub dic: T,
    pub alkalinity: T,
    pub co2: T,
    pub bicarbonate: T,
    pub carbonate: T,
    pub pco2_uatm: T,
    pub fco2_uatm: T,
    pub omega_aragonite: T,
    pub omega_calcite: T,
    pub revelle_factor: T,
    /// Non-carbonate alkalinity contributions \[µmol kg-1\].
    pub parts: Contributions<T>,
}

/// Full speciation at total-scale \[H+\] = h and DIC \[mol kg-1\].
#[inline(always)]
pub(crate) fn speciation<T: Real>(
    h: T,
    dic: T,
    k: &EquilibriumConstants<T>,
    others: &NonCarbonate<T>,
) -> Speciation<T> {
    let k12 = k.k1 * k.k2;
    let denominator = h * h + k.k1 * h + k12;
    let dic_over_denominator = dic / denominator;
    let co2 = dic_over_denominator * h * h;
    let bicarbonate = dic_over_denominator * k.k1 * h;
    let carbonate = dic_over_denominator * k12;
    let at_h = others.evaluate(h, CarbonFixed::Dic(dic), k.k1, k.k2);
    let parts = at_h.others;
    let alkalinity = at_h.total();
    let fco2_uatm = co2 / k.k0 * MICRO;

    // Revelle factor, analytically: d ln CO2*/d ln DIC at constant TA = 1 + DIC (d ln x0/dh)
    // (dh/dDIC), x0 = h²/D the CO2* fraction, D = h² + K1 h + K1K2. With dTA = 0, dh/dDIC =
    // -(carbonate alkalinity/DIC)/TA'(h), and d ln x0/dh = 2/h - D'/D = (K1 h + 2 K1K2)/(h D);
    // carbonate alkalinity is DIC (K1 h + 2 K1K2)/D, so the factor is 1 - (CA/DIC)(CA)/(h TA').
    let revelle_factor = T::from(1.0) - at_h.carbonate * at_h.carbonate / (dic * h * at_h.slope);

    Speciation {
        h_total: h,
        // ln then scale: glibc's ln takes 51 instructions a call here, its log10 88 (callgrind).
        ph_total: ph_from_h(h),
        ph_seawater: ph_from_h(h / k.seawater_to_total),
        ph_free: ph_from_h(h / k.free_to_total),
        dic: dic * MICRO,
        alkalinity: alkalinity * MICRO,
        co2: co2 * MICRO,
        bicarbonate: bicarbonate * MICRO,
        carbonate: carbonate * MICRO,
        pco2_uatm: fco2_uatm / k.fugacity_factor,
        fco2_uatm,
        omega_aragonite: k.calcium * carbonate / k.ksp_aragonite,
        omega_calcite: k.calcium * carbonate / k.ksp_calcite,
        revelle_factor,
        parts: Contributions {
            borate: parts.borate * MICRO,
            hydroxide: parts.hydroxide * MICRO,
            phosphate: parts.phosphate * MICRO,
            silicate: parts.silicate * MICRO,
            free_hydrogen: parts.free_hydrogen * MICRO,
            hydrogen_sulfate: parts.hydrogen_sulfate * MICRO,
            hydrogen_fluoride: parts.hydrogen_fluoride * MICRO,
        },
    }
}

impl<T: Real> Speciation<T> {
    /// pH (total scale) inside the 3-12 of any seawater.
    #[inline(always)]
    pub(crate) fn ph_in_range(&self) -> T::Mask {
        T::le(T::from(PH_RANGE.0), self.ph_total) & T::le(self.ph_total, T::from(PH_RANGE.1))
    }

    /// Every output finite (the total-scale pH is covered by [`Self::ph_in_range`]).
    #[inline(always)]
    pub(crate) fn all_finite(&self) -> T::Mask {
        let outputs = [
            self.h_total,
            self.ph_seawater,
            self.ph_free,
            self.dic,
            self.alkalinity,
            self.co2,
            self.bicarbonate,
            self.carbonate,
            self.pco2_uatm,
            self.fco2_uatm,
            self.omega_aragonite,
            self.omega_calcite,
            self.revelle_factor,
        ];
        let mut all = self.h_total.is_finite();
        for value in outputs {
            all = all & value.is_finite();
        }
        for value in self.parts.each() {
            all = all & value.is_finite();
        }
        all
    }

    /// Derived DIC and alkalinity no larger than any input may be.
    #[inline(always)]
    pub(crate) fn within_concentration_limit(&self) -> T::Mask {
        let limit = T::from(MAX_CONCENTRATION);
        T::le(self.dic, limit) & T::le(self.alkalinity.abs(), limit)
    }

    /// All three tests: the state is seawater, or [`speciate`] explains why not.
    #[inline(always)]
    pub(crate) fn is_seawater(&self) -> T::Mask {
        self.ph_in_range() & self.all_finite() & self.within_concentration_limit()
    }
}

/// Full speciation at total-scale \[H+\] = h and DIC \[mol kg-1\], or why it is no seawater.
fn speciate(
    h: f64,
    dic: f64,
    iterations: u32,
    k: &EquilibriumConstants,
    others: &NonCarbonate,
) -> Result<Solution, ChemError> {
    let s = speciation(h, dic, k, others);
    if !s.ph_in_range() {
        return Err(ChemError::NoSolution {
            reason: format!(
                "the inputs give pH {:.2} (total scale), outside the 3-12 of any seawater: check that alkalinity and DIC (or pH, pCO2) belong together and are in µmol kg-1",
                s.ph_total
            ),
        });
    }
    if !s.all_finite() {
        return Err(ChemError::NoSolution {
            reason: "the speciation overflowed (non-finite result): inputs far outside seawater"
                .to_string(),
        });
    }
    // A derived DIC or alkalinity beyond what any input may be is no seawater either.
    if !s.within_concentration_limit() {
        return Err(ChemError::NoSolution {
            reason: format!(
                "the inputs imply DIC {:.0} and alkalinity {:.0} µmol kg-1, beyond the 50000 µmol kg-1 of any seawater: check the pH or pCO2",
                s.dic, s.alkalinity
            ),
        });
    }
    Ok(Solution {
        h_total: s.h_total,
        ph_total: s.ph_total,
        ph_seawater: s.ph_seawater,
        ph_free: s.ph_free,
        dic: s.dic,
        alkalinity: s.alkalinity,
        co2: s.co2,
        bicarbonate: s.bicarbonate,
        carbonate: s.carbonate,
        pco2_uatm: s.pco2_uatm,
        fco2_uatm: s.fco2_uatm,
        omega_aragonite: s.omega_aragonite,
        omega_calcite: s.omega_calcite,
        revelle_factor: s.revelle_factor,
        alk_borate: s.parts.borate,
        alk_hydroxide: s.parts.hydroxide,
        alk_phosphate: s.parts.phosphate,
        alk_silicate: s.parts.silicate,
        alk_hydrogen_sulfate: s.parts.hydrogen_sulfate,
        alk_hydrogen_fluoride: s.parts.hydrogen_fluoride,
        alk_free_hydrogen: s.parts.free_hydrogen,
        iterations,
        validity: k.validity,
    })
}
