//! The alkalinity-pH equation and a solver for it that cannot diverge: bracketing bounds after
//! Munhoven 2013 (Geosci. Model Dev. 6, 1367-1388), Halley steps (Newton corrected for
//! curvature), bisection fallback.

use crate::constants::EquilibriumConstants;
use crate::error::ChemError;

/// A Halley step smaller than this (relative) ends the iteration. Halley converges cubically, so
/// the error left after such a step is of order its cube, ~1e-15 relative in \[H+\]: each term of
/// the alkalinity equation is of the form a/(h + b), for which a Halley step is exact, so the
/// cubic coefficient is of order one (measured: at most 2e-14 relative left over 2e5 ocean cells).
const HALLEY_STEP_TOLERANCE: f64 = 1e-5;
/// The same for a plain Newton step (taken where the curvature is not trusted): Newton converges
/// quadratically, so the error left is of order the step's square, ~1e-14 relative.
const NEWTON_STEP_TOLERANCE: f64 = 1e-7;
/// Bracket width (relative) at which bisection alone is deemed converged.
const BRACKET_TOLERANCE: f64 = 1e-13;
/// Safety cap; bisection alone halves ln\[H+\] brackets of width < 60 to 1e-12 in under 60 steps.
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
    /// KS on the free scale times \[H+\]T/\[H+\]F, so that \[HSO4-\] = ST·h/(h + ks_scaled) with h total.
    ks_scaled: f64,
    kf: f64,
    free_to_total: f64,
    inv_free_to_total: f64,
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
    /// Summed pairwise (a shallow tree of additions, not a chain): the sums lie on the
    /// solver's critical path.
    pub(crate) fn sum(&self) -> f64 {
        ((self.borate + self.hydroxide) + (self.phosphate + self.silicate))
            + ((self.free_hydrogen + self.hydrogen_sulfate) + self.hydrogen_fluoride)
    }
}

impl NonCarbonate {
    /// Systems from the constants and phosphate, silicate totals \[mol kg-1\].
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
            inv_free_to_total: 1.0 / k.free_to_total,
            total_boron: k.total_boron,
            total_phosphate,
            total_silicate,
            total_sulfate: k.total_sulfate,
            total_fluoride: k.total_fluoride,
        }
    }

    /// Total alkalinity at total-scale \[H+\] = h (Dickson 1981 definition): the carbonate part
    /// from the fixed carbon species, each other contribution, and d(TA)/dh.
    ///
    /// The seven reciprocals are independent divisions rather than one shared (batch) inversion:
    /// they overlap in the divider, while batch inversion puts two chains of products around its
    /// division on the solver's critical path (measured: ~7 % slower per cell).
    #[inline(always)]
    pub(crate) fn evaluate(&self, h: f64, carbon: CarbonFixed, k1: f64, k2: f64) -> Alkalinity {
        let (p1, p12, p123) = (
            self.k1p,
            self.k1p * self.k2p,
            self.k1p * self.k2p * self.k3p,
        );
        let h2 = h * h;
        let h3 = h2 * h;
        let k12 = k1 * k2;
        let carbonate_denominator = match carbon {
            CarbonFixed::Dic(_) => h2 + k1 * h + k12,
            CarbonFixed::Co2(_) => 1.0,
        };
        let [inv_h, inv_borate, inv_silicate, inv_sulfate, inv_fluoride, inv_phosphate, inv_carbonate] =
            [
                h,
                self.kb + h,
                self.ksi + h,
                h + self.ks_scaled,
                h + self.kf,
                h3 + p1 * h2 + p12 * h + p123,
                carbonate_denominator,
            ]
            .map(|x| 1.0 / x);
        let phosphate_numerator = p12 * h + 2.0 * p123 - h3;

        let borate = self.total_boron * self.kb * inv_borate;
        let hydroxide = self.kw * inv_h;
        let phosphate = self.total_phosphate * phosphate_numerator * inv_phosphate;
        let silicate = self.total_silicate * self.ksi * inv_silicate;
        let free_hydrogen = -h * self.inv_free_to_total;
        let hydrogen_sulfate = -self.total_sulfate * h * inv_sulfate;
        let hydrogen_fluoride = -self.total_fluoride * h * inv_fluoride;

        let (carbonate, carbonate_slope, carbonate_curvature) = match carbon {
            // DIC (K1 h + 2 K1K2) / (h² + K1 h + K1K2)
            CarbonFixed::Dic(dic) => {
                let numerator = k1 * h + 2.0 * k12;
                let denominator_slope = 2.0 * h + k1;
                let value = dic * numerator * inv_carbonate;
                let slope = (dic * k1 - value * denominator_slope) * inv_carbonate;
                let curvature = -2.0 * (slope * denominator_slope + value) * inv_carbonate;
                (value, slope, curvature)
            }
            // CO2* (K1/h + 2 K1K2/h²)
            CarbonFixed::Co2(co2) => {
                let k1co2 = k1 * co2;
                let k1co2_over_h2 = k1co2 * inv_h * inv_h;
                let value = k1co2 * inv_h * (1.0 + 2.0 * k2 * inv_h);
                let slope = -k1co2_over_h2 * (1.0 + 4.0 * k2 * inv_h);
                let curvature = 2.0 * k1co2_over_h2 * inv_h * (1.0 + 6.0 * k2 * inv_h);
                (value, slope, curvature)
            }
        };
        let phosphate_slope = self.total_phosphate
            * inv_phosphate
            * ((p12 - 3.0 * h2)
                - phosphate_numerator * inv_phosphate * (3.0 * h2 + 2.0 * p1 * h + p12));
        let sulfate_slope = hydrogen_sulfate * self.ks_scaled * inv_sulfate * inv_h;
        let fluoride_slope = hydrogen_fluoride * self.kf * inv_fluoride * inv_h;
        let slope = ((carbonate_slope + phosphate_slope)
            - (borate * inv_borate + hydroxide * inv_h))
            + ((sulfate_slope + fluoride_slope)
                - (silicate * inv_silicate + self.inv_free_to_total));
        // d²/dh² of each a/(h + b) term is -2/(h + b) times its slope.
        let phosphate_curvature = (-6.0 * self.total_phosphate * h
            - 2.0 * phosphate_slope * (3.0 * h2 + 2.0 * p1 * h + p12)
            - phosphate * (6.0 * h + 2.0 * p1))
            * inv_phosphate;
        let curvature = (carbonate_curvature + phosphate_curvature)
            + 2.0
                * ((borate * inv_borate * inv_borate + hydroxide * inv_h * inv_h)
                    + (silicate * inv_silicate * inv_silicate
                        - (sulfate_slope * inv_sulfate + fluoride_slope * inv_fluoride)));
        Alkalinity {
            carbonate,
            others: Contributions {
                borate,
                hydroxide,
                phosphate,
                silicate,
                free_hydrogen,
                hydrogen_sulfate,
                hydrogen_fluoride,
            },
            slope,
            curvature,
        }
    }

    /// Lowest possible non-carbonate, non-water alkalinity: H3PO4, HSO4- and HF fully formed.
    fn alkalinity_infimum(&self) -> f64 {
        -(self.total_phosphate + self.total_sulfate + self.total_fluoride)
    }

    /// Highest possible non-carbonate, non-water alkalinity: B(OH)4-, PO4---, SiO(OH)3- fully formed.
    fn alkalinity_supremum(&self) -> f64 {
        self.total_boron + 2.0 * self.total_phosphate + self.total_silicate
    }

    /// \[H+\] at which the water terms KW/h - h/Z equal `excess` (Munhoven 2013, eq. for the bounds).
    fn water_root(&self, excess: f64) -> f64 {
        let root = (excess * excess + 4.0 * self.kw * self.inv_free_to_total).sqrt();
        if excess > 0.0 {
            2.0 * self.kw / (excess + root)
        } else {
            0.5 * self.free_to_total * (root - excess)
        }
    }
}

/// Total alkalinity at one \[H+\], split into its parts, with its derivative.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Alkalinity {
    /// \[HCO3-\] + 2\[CO3--\] \[mol kg-1\].
    pub carbonate: f64,
    /// All other contributions \[mol kg-1\].
    pub others: Contributions,
    /// d(TA)/dh.
    pub slope: f64,
    /// d²(TA)/dh².
    pub curvature: f64,
}

impl Alkalinity {
    pub(crate) fn total(&self) -> f64 {
        self.carbonate + self.others.sum()
    }
}

/// Carbonate species from which the alkalinity is known.
#[derive(Clone, Copy, Debug)]
pub(crate) enum CarbonFixed {
    /// Dissolved inorganic carbon \[mol kg-1\].
    Dic(f64),
    /// CO2* concentration \[mol kg-1\].
    Co2(f64),
}

/// The solved \[H+\] (total scale) and the number of iterations taken.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Root {
    pub h: f64,
    pub iterations: u32,
}

/// Solves TA(h) = alkalinity for total-scale h. TA(h) decreases strictly with h, and the bounds
/// bracket the root for any alkalinity, so the iteration always converges.
#[inline(always)]
pub(crate) fn solve_alkalinity(
    alkalinity: f64,
    carbon: CarbonFixed,
    k1: f64,
    k2: f64,
    others: &NonCarbonate,
) -> Result<Root, ChemError> {
    let h_min = others.water_root(alkalinity - others.alkalinity_infimum());
    let (carbonate_supremum, guess) = match carbon {
        CarbonFixed::Dic(dic) => (
            2.0 * dic,
            initial_guess_dic(alkalinity, dic, k1, k2, others),
        ),
        CarbonFixed::Co2(co2) => {
            // Carbonate alkalinity grows without bound as h -> 0, but not below h_min.
            let at_h_min = others.evaluate(h_min, carbon, k1, k2).carbonate;
            (at_h_min, initial_guess_co2(alkalinity, co2, k1, k2))
        }
    };
    let h_max = others.water_root(alkalinity - others.alkalinity_supremum() - carbonate_supremum);
    let evaluate = |h: f64| {
        let at_h = others.evaluate(h, carbon, k1, k2);
        let residual = (at_h.carbonate - alkalinity) + at_h.others.sum();
        (residual, at_h.slope, at_h.curvature)
    };
    bracketed_halley(evaluate, h_min, h_max, guess)
}

/// Halley iteration on h kept inside \[low, high\]; a step that leaves the bracket, or one that
/// did not halve |f|, is replaced by bisection in ln h. `evaluate` gives f, f' and f''.
fn bracketed_halley(
    evaluate: impl Fn(f64) -> (f64, f64, f64),
    mut low: f64,
    mut high: f64,
    guess: f64,
) -> Result<Root, ChemError> {
    if !(low.is_finite() && high.is_finite() && low > 0.0 && high >= low) {
        return Err(ChemError::NoSolution {
            reason: format!(
                "alkalinity-pH bounds not finite ([H+] between {low:e} and {high:e} mol kg-1)"
            ),
        });
    }
    let mut h = if guess.is_finite() && guess > low && guess < high {
        guess
    } else {
        (low * high).sqrt()
    };
    let mut previous_residual = f64::INFINITY;
    for iteration in 1..=MAX_ITERATIONS {
        let (residual, slope, curvature) = evaluate(h);
        if residual == 0.0 {
            return Ok(Root {
                h,
                iterations: iteration,
            });
        }
        if residual > 0.0 {
            low = h;
        } else {
            high = h;
        }
        // Halley's step -2 f f' / (2 f'² - f f''), i.e. Newton's divided by 1 - f f''/(2 f'²);
        // where that divisor is below 1/2 the curvature cannot be trusted and Newton's step is
        // taken. Both are formed at once so that only one division lies on the critical path.
        let slope2 = slope * slope;
        let curvature_term = residual * curvature;
        let halley_step = -2.0 * residual * slope / (2.0 * slope2 - curvature_term);
        let newton_step = -residual / slope;
        let (local_step, tolerance) = if curvature_term < slope2 {
            (halley_step, HALLEY_STEP_TOLERANCE)
        } else {
            (newton_step, NEWTON_STEP_TOLERANCE)
        };
        let candidate = h + local_step;
        // The bracket is closed: once converged to round-off a step may leave h where it is, on a
        // bound just moved to h, and must then end the iteration rather than force a bisection.
        let use_local =
            candidate >= low && candidate <= high && residual.abs() <= 0.5 * previous_residual;
        let next = if use_local {
            candidate
        } else {
            (low * high).sqrt()
        };
        previous_residual = residual.abs();
        let step = next - h;
        h = next;
        if (use_local && step.abs() <= tolerance * h) || high - low <= BRACKET_TOLERANCE * low {
            return Ok(Root {
                h,
                iterations: iteration,
            });
        }
    }
    Err(ChemError::NoSolution {
        reason: format!("alkalinity-pH solver did not converge in {MAX_ITERATIONS} iterations"),
    })
}

/// Starting \[H+\] from the carbonate-borate cubic, expanded to second order around its local
/// minimum (the approach of Munhoven 2013, sect. 3.2); pH 8 when that cubic gives no guidance.
fn initial_guess_dic(alkalinity: f64, dic: f64, k1: f64, k2: f64, others: &NonCarbonate) -> f64 {
    const FALLBACK: f64 = 1e-8;
    if alkalinity <= 0.0 {
        return FALLBACK;
    }
    let (kb, tb) = (others.kb, others.total_boron);
    let inv_alkalinity = 1.0 / alkalinity;
    let dic_ratio = dic * inv_alkalinity;
    let boron_ratio = tb * inv_alkalinity;
    let a2 = kb * (1.0 - boron_ratio) + k1 * (1.0 - dic_ratio);
    let a1 = k1 * (kb * (1.0 - boron_ratio - dic_ratio) + k2 * (1.0 - 2.0 * dic_ratio));
    let a0 = k1 * k2 * kb * (1.0 - 2.0 * dic_ratio - boron_ratio);
    let discriminant = a2 * a2 - 3.0 * a1;
    if a0 >= 0.0 || discriminant <= 0.0 {
        return FALLBACK;
    }
    let sqrt_discriminant = discriminant.sqrt();
    let h_at_minimum = (sqrt_discriminant - a2) * (1.0 / 3.0);
    let cubic_at_minimum = a0 + h_at_minimum * (a1 + h_at_minimum * (a2 + h_at_minimum));
    if cubic_at_minimum >= 0.0 {
        return FALLBACK;
    }
    h_at_minimum + (-cubic_at_minimum / sqrt_discriminant).sqrt()
}

/// Starting \[H+\] from carbonate alkalinity alone: CO2*(K1/h + 2 K1K2/h²) = TA.
fn initial_guess_co2(alkalinity: f64, co2: f64, k1: f64, k2: f64) -> f64 {
    let k1co2 = k1 * co2;
    let inverse_h =
        2.0 * alkalinity / (k1co2 + (k1co2 * k1co2 + 8.0 * k1co2 * k2 * alkalinity).sqrt());
    1.0 / inverse_h
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::constants_unchecked;
    use crate::{Conditions, ConstantChoice};

    /// d(TA)/dh and d²(TA)/dh² against central differences of TA itself (step 1e-4 h: the
    /// differences' truncation error is ~1e-8 relative, their round-off well below 1e-6).
    #[test]
    fn slope_and_curvature_match_central_differences() {
        for (temperature_c, salinity, pressure_dbar, phosphate, silicate, ph) in [
            (33.5, 22.0, 1040.0, 1.5, 75.0, 8.26),
            (2.0, 34.7, 4000.0, 2.5, 140.0, 7.8),
            (25.0, 35.0, 0.0, 0.0, 0.0, 8.05),
            (10.0, 30.0, 200.0, 3.0, 20.0, 6.5),
            (15.0, 36.0, 500.0, 1.0, 10.0, 9.5),
        ] {
            let conditions = Conditions {
                temperature_c,
                salinity,
                pressure_dbar,
                phosphate,
                silicate,
            };
            let k = constants_unchecked(&conditions, &ConstantChoice::default());
            let others = NonCarbonate::new(&k, phosphate * 1e-6, silicate * 1e-6);
            let h = 10f64.powf(-ph);
            for carbon in [CarbonFixed::Dic(2.1e-3), CarbonFixed::Co2(1.5e-5)] {
                let at = |x: f64| others.evaluate(x, carbon, k.k1, k.k2);
                let step = 1e-4 * h;
                let (up, mid, down) = (at(h + step), at(h), at(h - step));
                let slope = (up.total() - down.total()) / (2.0 * step);
                let curvature = (up.slope - down.slope) / (2.0 * step);
                let relative = |a: f64, b: f64| ((a - b) / b).abs();
                assert!(
                    relative(mid.slope, slope) < 1e-6,
                    "{ph}: slope {} vs {slope}",
                    mid.slope
                );
                assert!(
                    relative(mid.curvature, curvature) < 1e-6,
                    "pH {ph} {carbon:?}: curvature {} vs {curvature}",
                    mid.curvature
                );
            }
        }
    }
}
