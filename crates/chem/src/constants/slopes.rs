//! How every equilibrium constant and total changes with in-situ temperature, salinity and
//! pressure (d ln K / dx), for the propagation of their uncertainties.
//!
//! Each paper's formula is differenced centrally at nearby T, S or P: the scalar formulas only,
//! never the solver, and no exp is evaluated again. The assembly that combines them (pressure
//! corrections, pH-scale conversions, see [`super::assemble`]) is differentiated analytically.

use super::pressure::{PressureTerms, KF, KS};
use super::{
    pressure_ingredients, surface_ingredients, EquilibriumConstants, PerConstant, SampleTerms,
    SurfaceIngredients,
};
use crate::choice::{ConstantChoice, FluorideSet, PhScale};
use crate::{Conditions, Validity};

/// Temperature step \[°C\] of the central differences of the surface formulas. Every formula
/// is a sum of terms in 1/T, ln T, T and T², for which the truncation error relative to the
/// derivative is at most (step/T)² ≈ 1.4e-9 at -2 °C; round-off (terms of up to ~1e3
/// differenced over 0.02 K) adds about 1e-11 absolute. Measured against the full constants in
/// the tests below.
const TEMPERATURE_STEP: f64 = 0.01;
/// Salinity step, relative to S. The formulas are polynomials in S, √S, I and √I: the
/// truncation error relative to the derivative is about step²/8 ≈ 1.3e-9 (the √S term).
const RELATIVE_SALINITY_STEP: f64 = 1e-4;

/// d ln(field)/dx of every constant and total along one direction x (per °C, per unit of
/// salinity or per dbar), held in the fields of the constants themselves (`validity` unused).
pub(crate) type ConstantSlopes = EquilibriumConstants;

/// What every direction shares: the sample, its constants and terms, and the surface-to-in-situ
/// factors of KS and KF.
pub(crate) struct Slopes<'a> {
    conditions: &'a Conditions,
    choice: &'a ConstantChoice,
    k: &'a EquilibriumConstants,
    terms: SampleTerms,
    /// exp of the pressure terms of KS and KF: K_in_situ / K_surface.
    pressure_ks: f64,
    pressure_kf: f64,
}

impl<'a> Slopes<'a> {
    /// For the sample under `conditions`, whose constants `k` are already known.
    pub(crate) fn new(
        conditions: &'a Conditions,
        choice: &'a ConstantChoice,
        k: &'a EquilibriumConstants,
    ) -> Self {
        let pt = PressureTerms::new(conditions.temperature_c, conditions.pressure_dbar * 0.1);
        Self {
            conditions,
            choice,
            k,
            terms: SampleTerms::new(conditions.temperature_c, conditions.salinity),
            pressure_ks: pt.ln_factor(&KS).exp(),
            pressure_kf: pt.ln_factor(&KF).exp(),
        }
    }

    /// d ln K/dT of every constant \[per °C\].
    pub(crate) fn temperature(&self) -> ConstantSlopes {
        let (step, t) = (TEMPERATURE_STEP, self.conditions.temperature_c);
        let at = |temperature_c| {
            surface_ingredients(&self.terms.with_temperature(temperature_c), self.choice)
        };
        let slope_terms = PressureTerms::temperature_slope(t, self.conditions.pressure_dbar * 0.1);
        let change = IngredientSlopes {
            pressure: pressure_ingredients(&slope_terms),
            ..IngredientSlopes::central(&at(t + step), &at(t - step), step)
        };
        self.assembly_slopes(&change)
    }

    /// d ln K/dS of every constant \[per unit of practical salinity\].
    pub(crate) fn salinity(&self) -> ConstantSlopes {
        let s = self.conditions.salinity;
        let step = RELATIVE_SALINITY_STEP * s;
        let at = |salinity| surface_ingredients(&self.terms.with_salinity(salinity), self.choice);
        self.assembly_slopes(&IngredientSlopes::central(
            &at(s + step),
            &at(s - step),
            step,
        ))
    }

    /// d ln K/dP of every constant \[per dbar\]: the pressure terms only, exactly.
    pub(crate) fn pressure(&self) -> ConstantSlopes {
        let c = self.conditions;
        let per_bar = PressureTerms::pressure_slope(c.temperature_c, c.pressure_dbar * 0.1);
        let zero = PerConstant::default();
        let change = IngredientSlopes {
            surface: zero,
            pressure: pressure_ingredients(&per_bar).zip(&zero, |per_bar, _| 0.1 * per_bar),
            ln_k0: 0.0,
            ln_fugacity_factor: 0.0,
            water_fraction: 0.0,
            total_boron: 0.0,
            total_sulfate: 0.0,
            total_fluoride: 0.0,
            calcium: 0.0,
        };
        self.assembly_slopes(&change)
    }
}

/// d/dx of each ingredient: of the ln K and pressure terms directly, of the water fraction and
/// totals as d ln/dx (they are linear in S, for which the central difference is exact).
struct IngredientSlopes {
    surface: PerConstant,
    pressure: PerConstant,
    ln_k0: f64,
    ln_fugacity_factor: f64,
    water_fraction: f64,
    total_boron: f64,
    total_sulfate: f64,
    total_fluoride: f64,
    calcium: f64,
}

impl IngredientSlopes {
    /// From the surface ingredients a step above and below; no pressure term.
    fn central(plus: &SurfaceIngredients, minus: &SurfaceIngredients, step: f64) -> Self {
        let per_step = 0.5 / step;
        let slope = |a: f64, b: f64| (a - b) * per_step;
        // d ln x = dx / x, with x at the midpoint: exact for x linear in the step.
        let ln_slope = |a: f64, b: f64| (a - b) / ((a + b) * step);
        Self {
            surface: plus.ln_k.zip(&minus.ln_k, slope),
            pressure: PerConstant::default(),
            ln_k0: slope(plus.ln_k0, minus.ln_k0),
            ln_fugacity_factor: slope(plus.ln_fugacity_factor, minus.ln_fugacity_factor),
            water_fraction: ln_slope(plus.water_fraction, minus.water_fraction),
            total_boron: ln_slope(plus.total_boron, minus.total_boron),
            total_sulfate: ln_slope(plus.total_sulfate, minus.total_sulfate),
            total_fluoride: ln_slope(plus.total_fluoride, minus.total_fluoride),
            calcium: ln_slope(plus.calcium, minus.calcium),
        }
    }
}

impl PerConstant {
    fn zip(&self, other: &Self, f: impl Fn(f64, f64) -> f64) -> Self {
        Self {
            ks: f(self.ks, other.ks),
            kf: f(self.kf, other.kf),
            k1: f(self.k1, other.k1),
            k2: f(self.k2, other.k2),
            kb: f(self.kb, other.kb),
            kw: f(self.kw, other.kw),
            k1p: f(self.k1p, other.k1p),
            k2p: f(self.k2p, other.k2p),
            k3p: f(self.k3p, other.k3p),
            ksi: f(self.ksi, other.ksi),
            calcite: f(self.calcite, other.calcite),
            aragonite: f(self.aragonite, other.aragonite),
        }
    }
}

/// The derivative of [`super::assemble`] in logarithms: every constant is exp(ln K + pressure
/// term) times scale factors built from a = ST/KS and b = FT/KF (free scale), in situ and at
/// the surface.
impl Slopes<'_> {
    fn assembly_slopes(&self, d: &IngredientSlopes) -> ConstantSlopes {
        let (k, choice) = (self.k, self.choice);
        let (s, p) = (&d.surface, &d.pressure);
        // Surface values from in-situ ones: K_surface = K_in_situ / exp(pressure term).
        let (pressure_ks, pressure_kf) = (self.pressure_ks, self.pressure_kf);

        // [H+]T/[H+]F = 1 + a, a = ST/KS, in situ and at the surface.
        let ks_free = s.ks + p.ks + d.water_fraction;
        let ks_surface = s.ks + d.water_fraction;
        let a = k.total_sulfate / k.ks_free;
        let a_surface = a * pressure_ks;
        let free_to_total = a / (1.0 + a) * (d.total_sulfate - ks_free);
        let free_to_total_surface = a_surface / (1.0 + a_surface) * (d.total_sulfate - ks_surface);

        // KF as published, then b = FT/KF on the free scale (Perez & Fraga 1987 is converted from
        // the total scale with the surface [H+]T/[H+]F).
        let kf_published = s.kf
            + p.kf
            + match choice.fluoride {
                FluorideSet::PerezFraga1987 => 0.0,
                FluorideSet::DicksonRiley1979 => d.water_fraction,
            };
        let to_free = match choice.fluoride {
            FluorideSet::PerezFraga1987 => free_to_total_surface,
            FluorideSet::DicksonRiley1979 => 0.0,
        };
        let kf_free = kf_published - to_free;
        let b = k.total_fluoride / k.kf_free;
        let b_surface = b * pressure_kf;
        let fluoride = d.total_fluoride - kf_free;
        let fluoride_surface = fluoride + p.kf;

        // [H+]F/[H+]SWS = 1 + a + b, in situ and at the surface.
        let free_to_seawater = ((1.0 + a) * free_to_total + b * fluoride) / (1.0 + a + b);
        let free_to_seawater_surface = ((1.0 + a_surface) * free_to_total_surface
            + b_surface * fluoride_surface)
            / (1.0 + a_surface + b_surface);
        let seawater_to_total = free_to_total - free_to_seawater;
        let total_surface_to_total =
            free_to_total + free_to_seawater_surface - free_to_seawater - free_to_total_surface;
        let carbonic = match choice.carbonic.scale() {
            PhScale::Total => total_surface_to_total,
            PhScale::Seawater => seawater_to_total,
        };
        let in_situ_total =
            |surface: f64, pressure: f64| surface + pressure + total_surface_to_total;

        ConstantSlopes {
            validity: Validity::default(),
            k0: d.ln_k0,
            fugacity_factor: d.ln_fugacity_factor,
            k1: s.k1 + p.k1 + carbonic,
            k2: s.k2 + p.k2 + carbonic,
            kb: in_situ_total(s.kb, p.kb),
            kw: in_situ_total(s.kw, p.kw),
            ks_free,
            kf: kf_free + free_to_total,
            kf_free,
            k1p: in_situ_total(s.k1p, p.k1p),
            k2p: in_situ_total(s.k2p, p.k2p),
            k3p: in_situ_total(s.k3p, p.k3p),
            ksi: in_situ_total(s.ksi, p.ksi) + d.water_fraction,
            ksp_calcite: s.calcite + p.calcite,
            ksp_aragonite: s.aragonite + p.aragonite,
            total_boron: d.total_boron,
            total_sulfate: d.total_sulfate,
            total_fluoride: d.total_fluoride,
            calcium: d.calcium,
            free_to_total,
            seawater_to_total,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::constants_unchecked;
    use crate::{BoronTotal, CarbonicSet};

    /// Every number of the constants (or of their slopes), in one order.
    fn as_array(k: &EquilibriumConstants) -> [f64; 21] {
        [
            k.k0,
            k.fugacity_factor,
            k.k1,
            k.k2,
            k.kb,
            k.kw,
            k.ks_free,
            k.kf,
            k.kf_free,
            k.k1p,
            k.k2p,
            k.k3p,
            k.ksi,
            k.ksp_calcite,
            k.ksp_aragonite,
            k.total_boron,
            k.total_sulfate,
            k.total_fluoride,
            k.calcium,
            k.free_to_total,
            k.seawater_to_total,
        ]
    }

    /// Richardson-extrapolated central difference of the complete constants (exps, pressure
    /// corrections and scale conversions included): error O(step⁴), an independent check on
    /// the analytic assembly and on the step sizes chosen above.
    fn reference(conditions: &Conditions, choice: &ConstantChoice, which: usize) -> [f64; 21] {
        let base = [
            conditions.temperature_c,
            conditions.salinity,
            conditions.pressure_dbar,
        ];
        let step = [0.05, 0.002 * conditions.salinity, 20.0][which];
        let ln_at = |offset: f64| {
            let mut x = base;
            x[which] += offset;
            let shifted = Conditions {
                temperature_c: x[0],
                salinity: x[1],
                pressure_dbar: x[2],
                ..*conditions
            };
            as_array(&constants_unchecked(&shifted, choice)).map(f64::ln)
        };
        let (p1, m1, p2, m2) = (
            ln_at(step),
            ln_at(-step),
            ln_at(2.0 * step),
            ln_at(-2.0 * step),
        );
        std::array::from_fn(|i| (8.0 * (p1[i] - m1[i]) - (p2[i] - m2[i])) / (12.0 * step))
    }

    #[test]
    fn slopes_match_differences_of_the_complete_constants() {
        let samples = [
            (25.0, 35.0, 0.0),
            (-1.5, 34.7, 5500.0),
            (30.0, 5.0, 10.0),
            (12.0, 38.0, 1200.0),
        ];
        let choices = [
            ConstantChoice::default(),
            ConstantChoice {
                carbonic: CarbonicSet::Millero2010,
                fluoride: FluorideSet::DicksonRiley1979,
                boron: BoronTotal::Lee2010,
            },
        ];
        let mut worst = 0.0f64;
        for (temperature_c, salinity, pressure_dbar) in samples {
            let conditions = Conditions {
                temperature_c,
                salinity,
                pressure_dbar,
                phosphate: 1.0,
                silicate: 10.0,
            };
            for choice in &choices {
                let k = constants_unchecked(&conditions, choice);
                let slopes = Slopes::new(&conditions, choice, &k);
                let analytic = [slopes.temperature(), slopes.salinity(), slopes.pressure()];
                for (which, slopes) in analytic.iter().enumerate() {
                    let expected = reference(&conditions, choice, which);
                    let got = as_array(slopes);
                    // Slopes near zero are held to an absolute bound, a small part of the
                    // largest slope in the same direction (what round-off allows).
                    let scale = expected.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                    for i in 0..21 {
                        let bound = 1e-7 * expected[i].abs() + 1e-8 * scale;
                        let error = (got[i] - expected[i]).abs();
                        worst = worst.max(error / bound);
                        assert!(
                            error < bound,
                            "{conditions:?} {choice:?} direction {which} constant {i}: {} vs {}",
                            got[i],
                            expected[i]
                        );
                    }
                }
            }
        }
        eprintln!(
            "worst disagreement of the constants' slopes, as a fraction of the bound: {worst:.2}"
        );
    }
}
