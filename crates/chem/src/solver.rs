//! The alkalinity-pH equation and a solver for it that cannot diverge: bracketing bounds after
//! Munhoven 2013 (Geosci. Model Dev. 6, 1367-1388), Halley steps (Newton corrected for
//! curvature), bisection fallback. Written over [`Real`]: one sample, or a lane of cells whose
//! iterations run side by side (a cell that has converged keeps its value while the others go on).

use crate::constants::EquilibriumConstants;
use crate::error::ChemError;
use crate::real::Real;

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
pub(crate) struct NonCarbonate<T: Real = f64> {
    kb: T,
    kw: T,
    k1p: T,
    k2p: T,
    k3p: T,
    ksi: T,
    /// KS on the free scale times \[H+\]T/\[H+\]F, so that \[HSO4-\] = ST·h/(h + ks_scaled) with h total.
    ks_scaled: T,
    kf: T,
    free_to_total: T,
    inv_free_to_total: T,
    total_boron: T,
    total_phosphate: T,
    total_silicate: T,
    total_sulfate: T,
    total_fluoride: T,
}

/// Each non-carbonate contribution to total alkalinity (mol kg-1), with the sign it enters TA.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Contributions<T: Real = f64> {
    pub borate: T,
    pub hydroxide: T,
    pub phosphate: T,
    pub silicate: T,
    pub free_hydrogen: T,
    pub hydrogen_sulfate: T,
    pub hydrogen_fluoride: T,
}

impl<T: Real> Contributions<T> {
    /// Summed pairwise (a shallow tree of additions, not a chain): the sums lie on the
    /// solver's critical path.
    #[inline(always)]
    pub(crate) fn sum(&self) -> T {
        ((self.borate + self.hydroxide) + (self.phosphate + self.silicate))
            + ((self.free_hydrogen + self.hydrogen_sulfate) + self.hydrogen_fluoride)
    }

    /// Every contribution, in declaration order.
    #[inline(always)]
    pub(crate) fn each(&self) -> [T; 7] {
        [
            self.borate,
            self.hydroxide,
            self.phosphate,
            self.silicate,
            self.free_hydrogen,
            self.hydrogen_sulfate,
            self.hydrogen_fluoride,
        ]
    }
}

impl<T: Real> NonCarbonate<T> {
    /// Systems from the constants and phosphate, silicate totals \[mol kg-1\].
    #[inline(always)]
    pub(crate) fn new(k: &EquilibriumConstants<T>, total_phosphate: T, total_silicate: T) -> Self {
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
            inv_free_to_total: T::from(1.0) / k.free_to_total,
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
    pub(crate) fn evaluate(&self, h: T, carbon: CarbonFixed<T>, k1: T, k2: T) -> Alkalinity<T> {
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
            CarbonFixed::Co2(_) => T::from(1.0),
        };
        let inverse = |x: T| T::from(1.0) / x;
        let inv_h = inverse(h);
        let inv_borate = inverse(self.kb + h);
        let inv_silicate = inverse(self.ksi + h);
        let inv_sulfate = inverse(h + self.ks_scaled);
        let inv_fluoride = inverse(h + self.kf);
        let inv_phosphate = inverse(h3 + p1 * h2 + p12 * h + p123);
        let inv_carbonate = inverse(carbonate_denominator);
        let phosphate_numerator = p12 * h + p123 * 2.0 - h3;

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
                let numerator = k1 * h + k12 * 2.0;
                let denominator_slope = h * 2.0 + k1;
                let value = dic * numerator * inv_carbonate;
                let slope = (dic * k1 - value * denominator_slope) * inv_carbonate;
                let curvature = (slope * denominator_slope + value) * -2.0 * inv_carbonate;
                (value, slope, curvature)
            }
            // CO2* (K1/h + 2 K1K2/h²)
            CarbonFixed::Co2(co2) => {
                let k1co2 = k1 * co2;
                let k1co2_over_h2 = k1co2 * inv_h * inv_h;
                let value = k1co2 * inv_h * (k2 * 2.0 * inv_h + 1.0);
                let slope = -k1co2_over_h2 * (k2 * 4.0 * inv_h + 1.0);
                let curvature = k1co2_over_h2 * 2.0 * inv_h * (k2 * 6.0 * inv_h + 1.0);
                (value, slope, curvature)
            }
        };
        let phosphate_denominator_slope = h2 * 3.0 + p1 * 2.0 * h + p12;
        let phosphate_slope = self.total_phosphate
            * inv_phosphate
            * ((p12 - h2 * 3.0)
                - phosphate_numerator * inv_phosphate * phosphate_denominator_slope);
        let sulfate_slope = hydrogen_sulfate * self.ks_scaled * inv_sulfate * inv_h;
        let fluoride_slope = hydrogen_fluoride * self.kf * inv_fluoride * inv_h;
        let slope = ((carbonate_slope + phosphate_slope)
            - (borate * inv_borate + hydroxide * inv_h))
            + ((sulfate_slope + fluoride_slope)
                - (silicate * inv_silicate + self.inv_free_to_total));
        // d²/dh² of each a/(h + b) term is -2/(h + b) times its slope.
        let phosphate_curvature = (self.total_phosphate * -6.0 * h
            - phosphate_slope * 2.0 * phosphate_denominator_slope
            - phosphate * (h * 6.0 + p1 * 2.0))
            * inv_phosphate;
        let curvature = (carbonate_curvature + phosphate_curvature)
            + ((borate * inv_borate * inv_borate + hydroxide * inv_h * inv_h)
                + (silicate * inv_silicate * inv_silicate
                    - (sulfate_slope * inv_sulfate + fluoride_slope * inv_fluoride)))
                * 2.0;
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
    #[inline(always)]
    fn alkalinity_infimum(&self) -> T {
        -(self.total_phosphate + self.total_sulfate + self.total_fluoride)
    }

    /// Highest possible non-carbonate, non-water alkalinity: B(OH)4-, PO4---, SiO(OH)3- fully formed.
    #[inline(always)]
    fn alkalinity_supremum(&self) -> T {
        self.total_boron + self.total_phosphate * 2.0 + self.total_silicate
    }

    /// \[H+\] at which the water terms KW/h - h/Z equal `excess` (Munhoven 2013, eq. for the bounds).
    #[inline(always)]
    fn water_root(&self, excess: T) -> T {
        let root = (excess * excess + self.kw * 4.0 * self.inv_free_to_total).sqrt();
        T::select(
            T::lt(T::from(0.0), excess),
            self.kw * 2.0 / (excess + root),
            self.free_to_total * 0.5 * (root - excess),
        )
    }
}

/// Total alkalinity at one \[H+\], split into its parts, with its derivative.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Alkalinity<T: Real = f64> {
    /// \[HCO3-\] + 2\[CO3--\] \[mol kg-1\].
    pub carbonate: T,
    /// All other contributions \[mol kg-1\].
    pub others: Contributions<T>,
    /// d(TA)/dh.
    pub slope: T,
    /// d²(TA)/dh².
    pub curvature: T,
}

impl<T: Real> Alkalinity<T> {
    #[inline(always)]
    pub(crate) fn total(&self) -> T {
        self.carbonate + self.others.sum()
    }
}

/// Carbonate species from which the alkalinity is known.
#[derive(Clone, Copy, Debug)]
pub(crate) enum CarbonFixed<T: Real = f64> {
    /// Dissolved inorganic carbon \[mol kg-1\].
    Dic(T),
    /// CO2* concentration \[mol kg-1\].
    Co2(T),
}

/// The solved \[H+\] (total scale) and the number of iterations taken.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Root {
    pub h: f64,
    pub iterations: u32,
}

/// Where the iteration ended for each cell: \[H+\], the iteration that ended it, whether it met
/// a convergence test (false: bounds unusable, or the budget ran out) and whether its bounds were
/// usable at all.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Iterated<T: Real> {
    pub h: T,
    pub iterations: T,
    pub converged: T::Mask,
    pub bounds_usable: T::Mask,
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
    let equation = Equation {
        alkalinity,
        carbon,
        k1,
        k2,
        others,
    };
    let (low, high, guess) = equation.bracket();
    let ended = bracketed_halley(&equation, low, high, guess, MAX_ITERATIONS);
    if !ended.bounds_usable {
        return Err(ChemError::NoSolution {
            reason: format!(
                "alkalinity-pH bounds not finite ([H+] between {low:e} and {high:e} mol kg-1)"
            ),
        });
    }
    if !ended.converged {
        return Err(ChemError::NoSolution {
            reason: format!("alkalinity-pH solver did not converge in {MAX_ITERATIONS} iterations"),
        });
    }
    Ok(Root {
        h: ended.h,
        iterations: ended.iterations as u32,
    })
}

/// TA(h) = alkalinity, with the carbon species held fixed and the other systems.
pub(crate) struct Equation<'a, T: Real> {
    pub alkalinity: T,
    pub carbon: CarbonFixed<T>,
    pub k1: T,
    pub k2: T,
    pub others: &'a NonCarbonate<T>,
}

impl<T: Real> Equation<'_, T> {
    /// The bracket \[h_min, h_max\] of Munhoven 2013 and a starting \[H+\] inside it.
    #[inline(always)]
    pub(crate) fn bracket(&self) -> (T, T, T) {
        let (alkalinity, k1, k2, others) = (self.alkalinity, self.k1, self.k2, self.others);
        let h_min = others.water_root(alkalinity - others.alkalinity_infimum());
        let (carbonate_supremum, guess) = match self.carbon {
            CarbonFixed::Dic(dic) => (
                dic * 2.0,
                initial_guess_dic(alkalinity, dic, k1, k2, others),
            ),
            CarbonFixed::Co2(co2) => {
                // Carbonate alkalinity grows without bound as h -> 0, but not below h_min.
                let at_h_min = others.evaluate(h_min, self.carbon, k1, k2).carbonate;
                (at_h_min, initial_guess_co2(alkalinity, co2, k1, k2))
            }
        };
        let h_max =
            others.water_root(alkalinity - others.alkalinity_supremum() - carbonate_supremum);
        (h_min, h_max, guess)
    }

    /// TA(h) - alkalinity with its first and second derivatives.
    #[inline(always)]
    fn residual(&self, h: T) -> (T, T, T) {
        let at_h = self.others.evaluate(h, self.carbon, self.k1, self.k2);
        let residual = (at_h.carbonate - self.alkalinity) + at_h.others.sum();
        (residual, at_h.slope, at_h.curvature)
    }
}

/// Halley iteration on h kept inside \[low, high\]; a step that leaves the bracket, or one that
/// did not halve |f|, is replaced by bisection in ln h, on the equation's residual. Each cell
/// stops at its own convergence test (later iterations leave it unchanged); the loop ends when
/// every cell has stopped or after `max_iterations`.
#[inline(always)]
pub(crate) fn bracketed_halley<T: Real>(
    equation: &Equation<'_, T>,
    mut low: T,
    mut high: T,
    guess: T,
    max_iterations: u32,
) -> Iterated<T> {
    let zero = T::from(0.0);
    let bounds_usable = low.is_finite() & high.is_finite() & T::lt(zero, low) & T::le(low, high);
    let guess_inside = guess.is_finite() & T::lt(low, guess) & T::lt(guess, high);
    let mut h = T::select(guess_inside, guess, (low * high).sqrt());
    let mut previous_residual = T::from(f64::INFINITY);
    let mut iterations = zero;
    let mut converged = T::lt(zero, zero);
    let mut stopped = !bounds_usable;
    for iteration in 1..=max_iterations {
        if T::all(stopped) {
            break;
        }
        let (residual, slope, curvature) = equation.residual(h);
        let at_root = T::eq(residual, zero);
        let moving = !(stopped | at_root);
        let above = T::lt(zero, residual);
        low = T::select(moving & above, h, low);
        high = T::select(moving & !above, h, high);
        // Halley's step -2 f f' / (2 f'² - f f''), i.e. Newton's divided by 1 - f f''/(2 f'²);
        // where that divisor is below 1/2 the curvature cannot be trusted and Newton's step is
        // taken. Both are formed at once so that only one division lies on the critical path.
        let slope2 = slope * slope;
        let curvature_term = residual * curvature;
        let halley_step = residual * -2.0 * slope / (slope2 * 2.0 - curvature_term);
        let newton_step = -residual / slope;
        let trust_curvature = T::lt(curvature_term, slope2);
        let local_step = T::select(trust_curvature, halley_step, newton_step);
        let tolerance = T::select(
            trust_curvature,
            T::from(HALLEY_STEP_TOLERANCE),
            T::from(NEWTON_STEP_TOLERANCE),
        );
        let candidate = h + local_step;
        // The bracket is closed: once converged to round-off a step may leave h where it is, on a
        // bound just moved to h, and must then end the iteration rather than force a bisection.
        let use_local = T::le(low, candidate)
            & T::le(candidate, high)
            & T::le(residual.abs(), previous_residual * 0.5);
        let next = if T::all(use_local) {
            candidate
        } else {
            T::select(use_local, candidate, (low * high).sqrt())
        };
        previous_residual = T::select(moving, residual.abs(), previous_residual);
        let step = next - h;
        h = T::select(moving, next, h);
        let finished = (use_local & T::le(step.abs(), tolerance * h))
            | T::le(high - low, low * BRACKET_TOLERANCE);
        let ends_now = (moving & finished) | (!stopped & at_root);
        iterations = T::select(ends_now, T::from(f64::from(iteration)), iterations);
        converged = converged | ends_now;
        stopped = stopped | ends_now;
    }
    Iterated {
        h,
        iterations,
        converged,
        bounds_usable,
    }
}

/// Starting \[H+\] from the carbonate-borate cubic, expanded to second order around its local
/// minimum (the approach of Munhoven 2013, sect. 3.2); pH 8 when that cubic gives no guidance.
#[inline(always)]
fn initial_guess_dic<T: Real>(alkalinity: T, dic: T, k1: T, k2: T, others: &NonCarbonate<T>) -> T {
    let one = T::from(1.0);
    let zero = T::from(0.0);
    let (kb, tb) = (others.kb, others.total_boron);
    let inv_alkalinity = one / alkalinity;
    let dic_ratio = dic * inv_alkalinity;
    let boron_ratio = tb * inv_alkalinity;
    let a2 = kb * (one - boron_ratio) + k1 * (one - dic_ratio);
    let a1 = k1 * (kb * (one - boron_ratio - dic_ratio) + k2 * (one - dic_ratio * 2.0));
    let a0 = k1 * k2 * kb * (one - dic_ratio * 2.0 - boron_ratio);
    let discriminant = a2 * a2 - a1 * 3.0;
    let sqrt_discriminant = discriminant.sqrt();
    let h_at_minimum = (sqrt_discriminant - a2) * (1.0 / 3.0);
    let cubic_at_minimum = a0 + h_at_minimum * (a1 + h_at_minimum * (a2 + h_at_minimum));
    let no_guidance = T::le(alkalinity, zero)
        | T::le(zero, a0)
        | T::le(discriminant, zero)
        | T::le(zero, cubic_at_minimum);
    T::select(
        no_guidance,
        T::from(1e-8),
        h_at_minimum + (-cubic_at_minimum / sqrt_discriminant).sqrt(),
    )
}

/// Starting \[H+\] from carbonate alkalinity alone: CO2*(K1/h + 2 K1K2/h²) = TA.
#[inline(always)]
fn initial_guess_co2<T: Real>(alkalinity: T, co2: T, k1: T, k2: T) -> T {
    let k1co2 = k1 * co2;
    let inverse_h =
        alkalinity * 2.0 / (k1co2 + (k1co2 * k1co2 + k1co2 * 8.0 * k2 * alkalinity).sqrt());
    T::from(1.0) / inverse_h
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
