//! The alkalinity-pH equation and a solver for it that cannot diverge: bracketing bounds after
//! Munhoven 2013 (Geosci. Model Dev. 6, 1367-1388), Newton steps, bisection fallback.

use crate::constants::EquilibriumConstants;
use crate::error::ChemError;

/// Relative change in [H+] below which the iteration stops (Newton converges quadratically, so
/// the result is far closer than this).
const RELATIVE_TOLERANCE: f64 = 1e-12;
/// Safety cap; bisection alone halves ln[H+] brackets of width < 60 to 1e-12 in under 60 steps.
const MAX_ITERATIONS: u32 = 200;

/// The acid-base systems other than carbonate, all in mol kg-1 on the total scale.
#[derive(Clone, Copy, Debug)]
pub(crate) struct NonCarbonate {
    kb: f64,
    kw: f64,
    k1p: f64,
    k2p: f64,
    k3p: f64,
    ksi: f64,
    /// KS on the free scale times [H+]T/[H+]F, so that [HSO4-] = ST·h/(h + ks_scaled) with h total.
    ks_scaled: f64,
    kf: f64,
    free_to_total: f64,
    total_boron: f64,
    total_phosphate: f64,
    total_silicate: f64,
    total_sulfate: f64,
    total_fluoride: f64,
}

/// Each non-carbonate contribution to total alkalinity (mol kg-1), with the sign it enters TA.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct Contributions {
    pub borate: f64,
    pub hydroxide: f64,
    pub phosphate: f64,
    pub silicate: f64,
    pub free_hydrogen: f64,
    pub hydrogen_sulfate: f64,
    pub hydrogen_fluoride: f64,
}

impl Contributions {
    pub(crate) fn sum(&self) -> f64 {
        self.borate
            + self.hydroxide
            + self.phosphate
            + self.silicate
            + self.free_hydrogen
            + self.hydrogen_sulfate
            + self.hydrogen_fluoride
    }
}

impl NonCarbonate {
    /// Systems from the constants and phosphate, silicate totals [mol kg-1].
    pub(crate) fn new(k: &EquilibriumConstants, total_phosphate: f64, total_silicate: f64) -> Self {
        Self {
            kb: k.kb,
            kw: k.kw,
            k1p: k.k1p,
            k2p: k.k2p,
            k3p: k.k3p,
            ksi: k.ksi,
            ks_scaled: k.ks_free * k.free_to_total,
            kf: k.kf,
            free_to_total: k.free_to_total,
            total_boron: k.total_boron,
            total_phosphate,
            total_silicate,
            total_sulfate: k.total_sulfate,
            total_fluoride: k.total_fluoride,
        }
    }

    /// Each contribution at total-scale [H+] = h (Dickson 1981 definition of total alkalinity).
    pub(crate) fn contributions(&self, h: f64) -> Contributions {
        let (p1, p12, p123) = (self.k1p, self.k1p * self.k2p, self.k1p * self.k2p * self.k3p);
        let h2 = h * h;
        let h3 = h2 * h;
        let phosphate_denominator = h3 + p1 * h2 + p12 * h + p123;
        Contributions {
            borate: self.total_boron * self.kb / (self.kb + h),
            hydroxide: self.kw / h,
            phosphate: self.total_phosphate * (p12 * h + 2.0 * p123 - h3) / phosphate_denominator,
            silicate: self.total_silicate * self.ksi / (self.ksi + h),
            free_hydrogen: -h / self.free_to_total,
            hydrogen_sulfate: -self.total_sulfate * h / (h + self.ks_scaled),
            hydrogen_fluoride: -self.total_fluoride * h / (h + self.kf),
        }
    }

    /// Non-carbonate alkalinity and its derivative with respect to h.
    pub(crate) fn value_and_slope(&self, h: f64) -> (f64, f64) {
        let (p1, p12, p123) = (self.k1p, self.k1p * self.k2p, self.k1p * self.k2p * self.k3p);
        let h2 = h * h;
        let h3 = h2 * h;
        let borate_den = self.kb + h;
        let silicate_den = self.ksi + h;
        let sulfate_den = h + self.ks_scaled;
        let fluoride_den = h + self.kf;
        let p_num = p12 * h + 2.0 * p123 - h3;
        let p_den = h3 + p1 * h2 + p12 * h + p123;
        let inv_p_den = 1.0 / p_den;
        let inv_h = 1.0 / h;
        let inv_z = 1.0 / self.free_to_total;

        let value = self.total_boron * self.kb / borate_den
            + self.kw * inv_h
            + self.total_phosphate * p_num * inv_p_den
            + self.total_silicate * self.ksi / silicate_den
            - h * inv_z
            - self.total_sulfate * h / sulfate_den
            - self.total_fluoride * h / fluoride_den;
        let slope = -self.total_boron * self.kb / (borate_den * borate_den)
            - self.kw * inv_h * inv_h
            + self.total_phosphate
                * ((p12 - 3.0 * h2) * p_den - p_num * (3.0 * h2 + 2.0 * p1 * h + p12))
                * inv_p_den
                * inv_p_den
            - self.total_silicate * self.ksi / (silicate_den * silicate_den)
            - inv_z
            - self.total_sulfate * self.ks_scaled / (sulfate_den * sulfate_den)
            - self.total_fluoride * self.kf / (fluoride_den * fluoride_den);
        (value, slope)
    }

    /// Lowest possible non-carbonate, non-water alkalinity: H3PO4, HSO4- and HF fully formed.
    fn alkalinity_infimum(&self) -> f64 {
        -(self.total_phosphate + self.total_sulfate + self.total_fluoride)
    }

    /// Highest possible non-carbonate, non-water alkalinity: B(OH)4-, PO4---, SiO(OH)3- fully formed.
    fn alkalinity_supremum(&self) -> f64 {
        self.total_boron + 2.0 * self.total_phosphate + self.total_silicate
    }

    /// [H+] at which the water terms KW/h - h/Z equal `excess` (Munhoven 2013, eq. for the bounds).
    fn water_root(&self, excess: f64) -> f64 {
        let root = (excess * excess + 4.0 * self.kw / self.free_to_total).sqrt();
        if excess > 0.0 {
            2.0 * self.kw / (excess + root)
        } else {
            0.5 * self.free_to_total * (root - excess)
        }
    }
}

/// Carbonate alkalinity [HCO3-] + 2[CO3--] from DIC, and its derivative with respect to h.
pub(crate) fn carbonate_from_dic(dic: f64, k1: f64, k2: f64, h: f64) -> (f64, f64) {
    let k12 = k1 * k2;
    let numerator = k1 * h + 2.0 * k12;
    let denominator = h * h + k1 * h + k12;
    let inv = 1.0 / denominator;
    let value = dic * numerator * inv;
    let slope = dic * (k1 * denominator - numerator * (2.0 * h + k1)) * inv * inv;
    (value, slope)
}

/// Carbonate alkalinity from a fixed [CO2*], and its derivative with respect to h.
pub(crate) fn carbonate_from_co2(co2: f64, k1: f64, k2: f64, h: f64) -> (f64, f64) {
    let inv_h = 1.0 / h;
    let k1co2 = k1 * co2;
    let value = k1co2 * inv_h * (1.0 + 2.0 * k2 * inv_h);
    let slope = -k1co2 * inv_h * inv_h * (1.0 + 4.0 * k2 * inv_h);
    (value, slope)
}

/// Carbonate species from which the alkalinity is known.
#[derive(Clone, Copy, Debug)]
pub(crate) enum CarbonFixed {
    /// Dissolved inorganic carbon [mol kg-1].
    Dic(f64),
    /// CO2* concentration [mol kg-1].
    Co2(f64),
}

/// The solved [H+] (total scale) and the number of iterations taken.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Root {
    pub h: f64,
    pub iterations: u32,
}

/// Solves TA(h) = alkalinity for total-scale h. TA(h) decreases strictly with h, and the bounds
/// bracket the root for any alkalinity, so the iteration always converges.
pub(crate) fn solve_alkalinity(
    alkalinity: f64,
    carbon: CarbonFixed,
    k1: f64,
    k2: f64,
    others: &NonCarbonate,
) -> Result<Root, ChemError> {
    let h_min = others.water_root(alkalinity - others.alkalinity_infimum());
    let (carbonate_supremum, guess) = match carbon {
        CarbonFixed::Dic(dic) => (2.0 * dic, initial_guess_dic(alkalinity, dic, k1, k2, others)),
        CarbonFixed::Co2(co2) => {
            // Carbonate alkalinity grows without bound as h -> 0, but not below h_min.
            let (at_h_min, _) = carbonate_from_co2(co2, k1, k2, h_min);
            (at_h_min, initial_guess_co2(alkalinity, co2, k1, k2))
        }
    };
    let h_max = others.water_root(alkalinity - others.alkalinity_supremum() - carbonate_supremum);
    let evaluate = |h: f64| {
        let (carbonate, carbonate_slope) = match carbon {
            CarbonFixed::Dic(dic) => carbonate_from_dic(dic, k1, k2, h),
            CarbonFixed::Co2(co2) => carbonate_from_co2(co2, k1, k2, h),
        };
        let (rest, rest_slope) = others.value_and_slope(h);
        (carbonate + rest - alkalinity, carbonate_slope + rest_slope)
    };
    bracketed_newton(evaluate, h_min, h_max, guess)
}

/// Newton iteration on h kept inside [low, high]; a step that leaves the bracket, or a Newton
/// step that did not halve |f|, is replaced by bisection in ln h.
fn bracketed_newton(
    evaluate: impl Fn(f64) -> (f64, f64),
    mut low: f64,
    mut high: f64,
    guess: f64,
) -> Result<Root, ChemError> {
    if !(low.is_finite() && high.is_finite() && low > 0.0 && high >= low) {
        return Err(ChemError::NoSolution {
            reason: format!("alkalinity-pH bounds not finite ([H+] between {low:e} and {high:e} mol kg-1)"),
        });
    }
    let mut h = if guess.is_finite() && guess > low && guess < high {
        guess
    } else {
        (low * high).sqrt()
    };
    let mut previous_residual = f64::INFINITY;
    for iteration in 1..=MAX_ITERATIONS {
        let (residual, slope) = evaluate(h);
        if residual == 0.0 {
            return Ok(Root { h, iterations: iteration });
        }
        if residual > 0.0 {
            low = h;
        } else {
            high = h;
        }
        let newton = h - residual / slope;
        let use_newton = newton > low && newton < high && residual.abs() <= 0.5 * previous_residual;
        let next = if use_newton { newton } else { (low * high).sqrt() };
        previous_residual = residual.abs();
        let step = next - h;
        h = next;
        if step.abs() <= RELATIVE_TOLERANCE * h || high - low <= RELATIVE_TOLERANCE * low {
            return Ok(Root { h, iterations: iteration });
        }
    }
    Err(ChemError::NoSolution {
        reason: format!("alkalinity-pH solver did not converge in {MAX_ITERATIONS} iterations"),
    })
}

/// Starting [H+] from the carbonate-borate cubic, expanded to second order around its local
/// minimum (the approach of Munhoven 2013, sect. 3.2); pH 8 when that cubic gives no guidance.
fn initial_guess_dic(alkalinity: f64, dic: f64, k1: f64, k2: f64, others: &NonCarbonate) -> f64 {
    const FALLBACK: f64 = 1e-8;
    if alkalinity <= 0.0 {
        return FALLBACK;
    }
    let (kb, tb) = (others.kb, others.total_boron);
    let dic_ratio = dic / alkalinity;
    let boron_ratio = tb / alkalinity;
    let a2 = kb * (1.0 - boron_ratio) + k1 * (1.0 - dic_ratio);
    let a1 = k1 * (kb * (1.0 - boron_ratio - dic_ratio) + k2 * (1.0 - 2.0 * dic_ratio));
    let a0 = k1 * k2 * kb * (1.0 - (2.0 * dic + tb) / alkalinity);
    let discriminant = a2 * a2 - 3.0 * a1;
    if a0 >= 0.0 || discriminant <= 0.0 {
        return FALLBACK;
    }
    let sqrt_discriminant = discriminant.sqrt();
    let h_at_minimum = (sqrt_discriminant - a2) / 3.0;
    let cubic_at_minimum = a0 + h_at_minimum * (a1 + h_at_minimum * (a2 + h_at_minimum));
    if cubic_at_minimum >= 0.0 {
        return FALLBACK;
    }
    h_at_minimum + (-cubic_at_minimum / sqrt_discriminant).sqrt()
}

/// Starting [H+] from carbonate alkalinity alone: CO2*(K1/h + 2 K1K2/h²) = TA.
fn initial_guess_co2(alkalinity: f64, co2: f64, k1: f64, k2: f64) -> f64 {
    let k1co2 = k1 * co2;
    let inverse_h = 2.0 * alkalinity / (k1co2 + (k1co2 * k1co2 + 8.0 * k1co2 * k2 * alkalinity).sqrt());
    1.0 / inverse_h
}
