//! Implicit differentiation of the solved carbonate system: how \[H+\] and DIC, and through them
//! every output, move when an input, a constant or a total moves.
//!
//! The state is (ln h, ln DIC). Two equations fix it, one for each member of the input pair:
//! alkalinity TA(h, DIC; θ) = TA_in, DIC = DIC_in, h = 10^-pH_in, or DIC·α0(h) = K0·F·pCO2_in
//! (α0 the CO2* fraction, F the fugacity factor). For a change d of the inputs and constants θ,
//! J·(d ln h, d ln DIC) = -(∂equations/∂θ)·d, with J the equations' 2×2 Jacobian in the state;
//! each output is then a function of the state and θ, differentiated by the chain rule.

use super::systems::{self, Moments};
use super::{Output, Source};
use crate::constants::slopes::ConstantSlopes;
use crate::{Conditions, EquilibriumConstants, InputPair, Solution};
use std::f64::consts::{LN_10, LOG10_E};

/// µmol kg-1 per mol kg-1.
const MICRO: f64 = 1e6;

/// A change of the sample's nutrients (mol kg-1) and of the ln of each constant and total; as a
/// gradient, the change of a quantity per unit change of each.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct Direction {
    pub phosphate: f64,
    pub silicate: f64,
    pub ln_k0: f64,
    pub ln_fugacity_factor: f64,
    pub ln_k1: f64,
    pub ln_k2: f64,
    pub ln_kb: f64,
    pub ln_kw: f64,
    pub ln_k1p: f64,
    pub ln_k2p: f64,
    pub ln_k3p: f64,
    pub ln_ksi: f64,
    /// KS (free) × \[H+\]T/\[H+\]F, as the hydrogen-sulfate term uses it with total-scale h.
    pub ln_ks_scaled: f64,
    /// KF on the total scale.
    pub ln_kf: f64,
    pub ln_free_to_total: f64,
    pub ln_seawater_to_total: f64,
    pub ln_ksp_aragonite: f64,
    pub ln_ksp_calcite: f64,
    pub ln_total_boron: f64,
    pub ln_total_sulfate: f64,
    pub ln_total_fluoride: f64,
    pub ln_calcium: f64,
}

impl Direction {
    /// The change of every constant and total for a unit change of T, S or P.
    pub(crate) fn from_slopes(s: &ConstantSlopes) -> Self {
        Self {
            ln_k0: s.k0,
            ln_fugacity_factor: s.fugacity_factor,
            ln_k1: s.k1,
            ln_k2: s.k2,
            ln_kb: s.kb,
            ln_kw: s.kw,
            ln_k1p: s.k1p,
            ln_k2p: s.k2p,
            ln_k3p: s.k3p,
            ln_ksi: s.ksi,
            ln_ks_scaled: s.ks_free + s.free_to_total,
            ln_kf: s.kf,
            ln_free_to_total: s.free_to_total,
            ln_seawater_to_total: s.seawater_to_total,
            ln_ksp_aragonite: s.ksp_aragonite,
            ln_ksp_calcite: s.ksp_calcite,
            ln_total_boron: s.total_boron,
            ln_total_sulfate: s.total_sulfate,
            ln_total_fluoride: s.total_fluoride,
            ln_calcium: s.calcium,
            ..Self::default()
        }
    }

    /// Σ self·other over the fields that move the alkalinity equation (a gradient applied to a
    /// change).
    fn dot(&self, d: &Self) -> f64 {
        ((self.ln_k1 * d.ln_k1 + self.ln_k2 * d.ln_k2)
            + (self.ln_kb * d.ln_kb + self.ln_total_boron * d.ln_total_boron)
            + (self.ln_kw * d.ln_kw + self.ln_free_to_total * d.ln_free_to_total))
            + ((self.ln_k1p * d.ln_k1p + self.ln_k2p * d.ln_k2p)
                + (self.ln_k3p * d.ln_k3p + self.phosphate * d.phosphate)
                + (self.ln_ksi * d.ln_ksi + self.silicate * d.silicate))
            + ((self.ln_ks_scaled * d.ln_ks_scaled + self.ln_total_sulfate * d.ln_total_sulfate)
                + (self.ln_kf * d.ln_kf + self.ln_total_fluoride * d.ln_total_fluoride))
    }
}

/// One number per source, in [`Source::ALL`] order: every source is propagated at once, lane by
/// lane, so that the arithmetic runs on whole arrays.
pub(crate) type Lanes = [f64; Source::COUNT];

fn lanes(f: impl Fn(usize) -> f64) -> Lanes {
    std::array::from_fn(f)
}

/// What each source's change does before the state (ln h, ln DIC) responds: the change of the
/// modelled alkalinity and of its slope ∂TA/∂ln h at fixed state, of the inputs, and of the
/// constants that the outputs read directly. Most sources move one or two of these.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Pushes {
    /// ∂TA/∂θ · d \[mol kg-1\].
    pub alkalinity: Lanes,
    /// ∂(∂TA/∂ln h)/∂θ · d \[mol kg-1\].
    pub slope: Lanes,
    /// Input alkalinity \[mol kg-1\].
    pub alkalinity_input: Lanes,
    pub ln_dic_input: Lanes,
    pub ph_input: Lanes,
    pub ln_pco2_input: Lanes,
    pub ln_k0: Lanes,
    pub ln_fugacity_factor: Lanes,
    pub ln_k1: Lanes,
    pub ln_k2: Lanes,
    pub ln_free_to_total: Lanes,
    pub ln_seawater_to_total: Lanes,
    pub ln_ksp_aragonite: Lanes,
    pub ln_ksp_calcite: Lanes,
    pub ln_calcium: Lanes,
}

impl Default for Pushes {
    fn default() -> Self {
        let zero = [0.0; Source::COUNT];
        Self {
            alkalinity: zero,
            slope: zero,
            alkalinity_input: zero,
            ln_dic_input: zero,
            ph_input: zero,
            ln_pco2_input: zero,
            ln_k0: zero,
            ln_fugacity_factor: zero,
            ln_k1: zero,
            ln_k2: zero,
            ln_free_to_total: zero,
            ln_seawater_to_total: zero,
            ln_ksp_aragonite: zero,
            ln_ksp_calcite: zero,
            ln_calcium: zero,
        }
    }
}

/// One equation of the pair that fixes the state.
#[derive(Clone, Copy, Debug)]
#[repr(usize)]
enum Equation {
    Alkalinity,
    Dic,
    Ph,
    Pco2,
}

fn equations(pair: &InputPair) -> [Equation; 2] {
    match pair {
        InputPair::AlkalinityDic { .. } => [Equation::Alkalinity, Equation::Dic],
        InputPair::AlkalinityPh { .. } => [Equation::Alkalinity, Equation::Ph],
        InputPair::DicPh { .. } => [Equation::Dic, Equation::Ph],
        InputPair::AlkalinityPco2 { .. } => [Equation::Alkalinity, Equation::Pco2],
        InputPair::DicPco2 { .. } => [Equation::Dic, Equation::Pco2],
    }
}

/// ∂equation/∂(ln h, ln DIC), from the CO2*, HCO3-, CO3-- fractions, ∂TA/∂ln h and the
/// carbonate alkalinity.
fn row(
    equation: Equation,
    fractions: &[f64; 3],
    alkalinity_by_h: f64,
    carbonate_alkalinity: f64,
) -> [f64; 2] {
    match equation {
        Equation::Alkalinity => [alkalinity_by_h, carbonate_alkalinity],
        Equation::Dic => [0.0, 1.0],
        Equation::Ph => [1.0, 0.0],
        // ln DIC + ln α0(h) - ln(K0 F pCO2): ∂ln α0/∂ln h = 2 - Σ mi αi.
        Equation::Pco2 => [2.0 - (2.0 * fractions[0] + fractions[1]), 1.0],
    }
}

/// The alkalinity equation's partial derivatives at the solution, from the moments of each
/// acid-base system (see `systems.rs`).
struct Partials {
    /// ∂TA/∂θ at fixed state \[mol kg-1\].
    alkalinity_gradient: Direction,
    /// ∂(∂TA/∂ln h)/∂θ at fixed state.
    slope_gradient: Direction,
    /// ∂TA/∂ln h, ∂TA/∂ln DIC (the carbonate alkalinity).
    alkalinity_by_h: f64,
    alkalinity_by_dic: f64,
    /// ∂²TA/∂(ln h)², ∂²TA/∂ln h ∂ln DIC.
    slope_by_h: f64,
    slope_by_dic: f64,
    carbonate: Moments<2>,
}

fn partials(solution: &Solution, k: &EquilibriumConstants, conditions: &Conditions) -> Partials {
    let h = solution.h_total;
    let dic = solution.dic / MICRO;
    let total_phosphate = conditions.phosphate / MICRO;
    let total_silicate = conditions.silicate / MICRO;
    let ks_scaled = k.ks_free * k.free_to_total;

    let carbonate = systems::carbonate(h, k.k1, k.k2);
    let boron = systems::monoprotic(h, k.kb, 0.0);
    let phosphate = systems::phosphate(h, k.k1p, k.k2p, k.k3p);
    let silicate = systems::monoprotic(h, k.ksi, 0.0);
    let sulfate = systems::monoprotic(h, ks_scaled, -1.0);
    let fluoride = systems::monoprotic(h, k.kf, -1.0);
    let hydroxide = k.kw / h;
    let free_hydrogen = -h / k.free_to_total;
    let (tb, ts, tf) = (k.total_boron, k.total_sulfate, k.total_fluoride);

    // Level 0: TA and its derivatives; level 1: ∂TA/∂ln h and its derivatives. The water terms
    // KW/h and -h/[H+]T/[H+]F change sign and keep it under d/d ln h.
    let level = |l: usize| {
        let (c, b, p) = (&carbonate.levels[l], &boron.levels[l], &phosphate.levels[l]);
        let (si, su, f) = (&silicate.levels[l], &sulfate.levels[l], &fluoride.levels[l]);
        let hydroxide = [hydroxide, -hydroxide][l];
        let gradient = Direction {
            ln_k1: dic * c.by_k[0],
            ln_k2: dic * c.by_k[1],
            ln_kb: tb * b.by_k[0],
            ln_total_boron: tb * b.value,
            ln_kw: hydroxide,
            ln_free_to_total: -free_hydrogen,
            ln_k1p: total_phosphate * p.by_k[0],
            ln_k2p: total_phosphate * p.by_k[1],
            ln_k3p: total_phosphate * p.by_k[2],
            phosphate: p.value,
            ln_ksi: total_silicate * si.by_k[0],
            silicate: si.value,
            ln_ks_scaled: ts * su.by_k[0],
            ln_total_sulfate: ts * su.value,
            ln_kf: tf * f.by_k[0],
            ln_total_fluoride: tf * f.value,
            ..Direction::default()
        };
        let by_h = dic * c.by_h
            + tb * b.by_h
            + total_phosphate * p.by_h
            + total_silicate * si.by_h
            + ts * su.by_h
            + tf * f.by_h
            - hydroxide
            + free_hydrogen;
        (gradient, by_h, dic * c.value)
    };
    let [(alkalinity_gradient, alkalinity_by_h, alkalinity_by_dic), (slope_gradient, slope_by_h, slope_by_dic)] =
        [level(0), level(1)];
    Partials {
        alkalinity_gradient,
        slope_gradient,
        alkalinity_by_h,
        alkalinity_by_dic,
        slope_by_h,
        slope_by_dic,
        carbonate,
    }
}

impl Partials {
    /// Revelle factor - 1 = CA²/(DIC·(-∂TA/∂ln h)), CA = DIC·c̄ the carbonate alkalinity.
    fn revelle_excess(&self, dic: f64) -> f64 {
        -self.alkalinity_by_dic * self.alkalinity_by_dic / (dic * self.alkalinity_by_h)
    }
}

/// The solved sample, linearized.
pub(crate) struct Linearized {
    /// d ln h and d ln DIC per unit change of each kind of equation ([`Equation`] order): the
    /// negated inverse Jacobian of the pair's two equations, zero for the other two kinds.
    state_by_equation: [[f64; 4]; 2],
    alkalinity_gradient: Direction,
    slope_gradient: Direction,
    /// Fractions of CO2*, HCO3-, CO3--.
    fractions: [f64; 3],
    /// ∂TA/∂ln h and ∂TA/∂ln DIC \[mol kg-1\]; ∂²TA/∂(ln h)², ∂²TA/∂ln h ∂ln DIC.
    alkalinity_by_h: f64,
    alkalinity_by_dic: f64,
    slope_by_h: f64,
    slope_by_dic: f64,
    /// ∂c̄/∂ln h, ∂c̄/∂ln K1, ∂c̄/∂ln K2 of carbonate, each over c̄.
    ln_mean_by: [f64; 3],
    inv_alkalinity_by_h: f64,
    /// Revelle factor minus one.
    revelle_excess: f64,
    /// The solution's outputs, in [`Output::ALL`] order.
    values: [f64; Output::COUNT],
}

impl Linearized {
    /// Linearizes the sample solved from `pair` under `conditions` with constants `k`.
    pub(crate) fn new(
        pair: &InputPair,
        solution: &Solution,
        k: &EquilibriumConstants,
        conditions: &Conditions,
    ) -> Self {
        let d = partials(solution, k, conditions);
        let h = solution.h_total;
        let inv_d = 1.0 / (h * h + k.k1 * h + k.k1 * k.k2);
        let fractions = [h * h * inv_d, k.k1 * h * inv_d, k.k1 * k.k2 * inv_d];
        let rows =
            equations(pair).map(|e| row(e, &fractions, d.alkalinity_by_h, d.alkalinity_by_dic));
        let inv_det = 1.0 / (rows[0][0] * rows[1][1] - rows[0][1] * rows[1][0]);
        let inverse = [
            [rows[1][1] * inv_det, -rows[0][1] * inv_det],
            [-rows[1][0] * inv_det, rows[0][0] * inv_det],
        ];
        let mut state_by_equation = [[0.0; 4]; 2];
        for (j, equation) in equations(pair).into_iter().enumerate() {
            for (by, inverse) in state_by_equation.iter_mut().zip(&inverse) {
                by[equation as usize] = -inverse[j];
            }
        }

        let c = &d.carbonate.levels[0];
        let inv_mean = 1.0 / c.value;
        let s = solution;
        Self {
            state_by_equation,
            alkalinity_gradient: d.alkalinity_gradient,
            slope_gradient: d.slope_gradient,
            fractions,
            alkalinity_by_h: d.alkalinity_by_h,
            alkalinity_by_dic: d.alkalinity_by_dic,
            slope_by_h: d.slope_by_h,
            slope_by_dic: d.slope_by_dic,
            ln_mean_by: [
                c.by_h * inv_mean,
                c.by_k[0] * inv_mean,
                c.by_k[1] * inv_mean,
            ],
            inv_alkalinity_by_h: 1.0 / d.alkalinity_by_h,
            revelle_excess: d.revelle_excess(s.dic / MICRO),
            values: Output::ALL.map(|output| output.value(s)),
        }
    }

    /// ∂TA/∂θ at fixed state, per unit of each field \[mol kg-1\].
    pub(crate) fn alkalinity_gradient(&self) -> &Direction {
        &self.alkalinity_gradient
    }

    /// ∂(∂TA/∂ln h)/∂θ at fixed state, per unit of each field.
    pub(crate) fn slope_gradient(&self) -> &Direction {
        &self.slope_gradient
    }

    /// Sets the lane of `source` to the push of `size` times the change `d` of the constants and
    /// totals (temperature, salinity, pressure move them all).
    pub(crate) fn push(&self, p: &mut Pushes, source: Source, d: &Direction, size: f64) {
        let i = source as usize;
        p.alkalinity[i] = self.alkalinity_gradient.dot(d) * size;
        p.slope[i] = self.slope_gradient.dot(d) * size;
        p.ln_k0[i] = d.ln_k0 * size;
        p.ln_fugacity_factor[i] = d.ln_fugacity_factor * size;
        p.ln_k1[i] = d.ln_k1 * size;
        p.ln_k2[i] = d.ln_k2 * size;
        p.ln_free_to_total[i] = d.ln_free_to_total * size;
        p.ln_seawater_to_total[i] = d.ln_seawater_to_total * size;
        p.ln_ksp_aragonite[i] = d.ln_ksp_aragonite * size;
        p.ln_ksp_calcite[i] = d.ln_ksp_calcite * size;
        p.ln_calcium[i] = d.ln_calcium * size;
    }

    /// The change of every output (in [`Output::ALL`] order and the units of [`Output::value`])
    /// for each source's push.
    pub(crate) fn output_changes(&self, p: &Pushes) -> [Lanes; Output::COUNT] {
        let [f0, f1, f2] = self.fractions;
        // The change of each kind of equation at fixed state, in [`Equation`] order:
        // TA(h, DIC) - TA_in, ln DIC - ln DIC_in, ln h + ln 10·pH_in,
        // ln DIC + ln α0(h, K1, K2) - ln(K0·F·pCO2_in).
        let residuals = [
            lanes(|i| p.alkalinity[i] - p.alkalinity_input[i]),
            lanes(|i| -p.ln_dic_input[i]),
            lanes(|i| LN_10 * p.ph_input[i]),
            lanes(|i| {
                -(f1 + f2) * p.ln_k1[i]
                    - f2 * p.ln_k2[i]
                    - p.ln_k0[i]
                    - p.ln_fugacity_factor[i]
                    - p.ln_pco2_input[i]
            }),
        ];
        let respond = |by: &[f64; 4]| {
            lanes(|i| {
                (by[0] * residuals[0][i] + by[1] * residuals[1][i])
                    + (by[2] * residuals[2][i] + by[3] * residuals[3][i])
            })
        };
        let (ln_h, ln_dic) = (
            respond(&self.state_by_equation[0]),
            respond(&self.state_by_equation[1]),
        );

        // D = h² + K1 h + K1K2, the carbonate fractions' common denominator.
        let ln_d = lanes(|i| (2.0 * f0 + f1) * ln_h[i] + (f1 + f2) * p.ln_k1[i] + f2 * p.ln_k2[i]);
        let ln_co2 = lanes(|i| ln_dic[i] + 2.0 * ln_h[i] - ln_d[i]);
        let ln_carbonate = lanes(|i| ln_dic[i] + p.ln_k1[i] + p.ln_k2[i] - ln_d[i]);
        // Revelle factor - 1 = CA²/(DIC·(-∂TA/∂ln h)), CA = DIC·c̄: its d ln is
        // 2 d ln c̄ + d ln DIC - d(∂TA/∂ln h)/(∂TA/∂ln h).
        let [mean_by_h, mean_by_k1, mean_by_k2] = self.ln_mean_by;
        let ln_revelle_excess = lanes(|i| {
            let ln_mean = mean_by_h * ln_h[i] + mean_by_k1 * p.ln_k1[i] + mean_by_k2 * p.ln_k2[i];
            let slope = self.slope_by_h * ln_h[i] + self.slope_by_dic * ln_dic[i] + p.slope[i];
            2.0 * ln_mean + ln_dic[i] - slope * self.inv_alkalinity_by_h
        });

        let v = |output: Output| self.values[output as usize];
        let ph = |ln_scale: &Lanes| lanes(|i| (ln_scale[i] - ln_h[i]) * LOG10_E);
        let (hydrogen, dic, co2) = (v(Output::Hydrogen), v(Output::Dic), v(Output::Co2));
        let (bicarbonate, carbonate) = (v(Output::Bicarbonate), v(Output::Carbonate));
        let (pco2, fco2) = (v(Output::Pco2), v(Output::Fco2));
        let (aragonite, calcite) = (v(Output::OmegaAragonite), v(Output::OmegaCalcite));
        [
            lanes(|i| -ln_h[i] * LOG10_E),
            ph(&p.ln_seawater_to_total),
            ph(&p.ln_free_to_total),
            lanes(|i| hydrogen * ln_h[i]),
            lanes(|i| dic * ln_dic[i]),
            lanes(|i| {
                (self.alkalinity_by_h * ln_h[i]
                    + self.alkalinity_by_dic * ln_dic[i]
                    + p.alkalinity[i])
                    * MICRO
            }),
            lanes(|i| co2 * ln_co2[i]),
            lanes(|i| bicarbonate * (ln_dic[i] + p.ln_k1[i] + ln_h[i] - ln_d[i])),
            lanes(|i| carbonate * ln_carbonate[i]),
            lanes(|i| pco2 * (ln_co2[i] - p.ln_k0[i] - p.ln_fugacity_factor[i])),
            lanes(|i| fco2 * (ln_co2[i] - p.ln_k0[i])),
            lanes(|i| aragonite * (p.ln_calcium[i] + ln_carbonate[i] - p.ln_ksp_aragonite[i])),
            lanes(|i| calcite * (p.ln_calcium[i] + ln_carbonate[i] - p.ln_ksp_calcite[i])),
            lanes(|i| self.revelle_excess * ln_revelle_excess[i]),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::constants_unchecked;
    use crate::solver::{CarbonFixed, NonCarbonate};
    use crate::{solve, ConstantChoice};

    /// ∂TA/∂ln h and the Revelle factor from the moments agree with the solver's own analytic
    /// slope and Revelle factor (two independent derivations of the same quantities).
    #[test]
    fn moments_reproduce_the_solvers_slope_and_revelle_factor() {
        let conditions = Conditions {
            temperature_c: 4.0,
            salinity: 34.5,
            pressure_dbar: 3000.0,
            phosphate: 2.2,
            silicate: 120.0,
        };
        let choice = ConstantChoice::default();
        let pair = InputPair::AlkalinityDic {
            alkalinity: 2350.0,
            dic: 2250.0,
        };
        let solution = solve(pair, &conditions, &choice).unwrap();
        let k = constants_unchecked(&conditions, &choice);
        let partials = partials(&solution, &k, &conditions);
        let others = NonCarbonate::new(&k, 2.2e-6, 120e-6);
        let at_h = others.evaluate(
            solution.h_total,
            CarbonFixed::Dic(solution.dic / MICRO),
            k.k1,
            k.k2,
        );
        let slope = at_h.slope * solution.h_total;
        assert!(((partials.alkalinity_by_h - slope) / slope).abs() < 1e-12);
        let curvature = (at_h.curvature * solution.h_total + at_h.slope) * solution.h_total;
        assert!(((partials.slope_by_h - curvature) / curvature).abs() < 1e-10);
        let revelle = 1.0 + partials.revelle_excess(solution.dic / MICRO);
        assert!((revelle - solution.revelle_factor).abs() < 1e-10 * revelle);
    }
}
