//! The alkalinity-pH equation and a solver for it that cannot diverge: bracketing bounds after
//! Munhoven 2013 (Geosci. Model Dev. 6, 1367-1388), Newton steps, bisection fallback.

use crate::constants::EquilibriumConstants;
use crate::error::ChemError;

/// A Newton step smaller than this (relative) ends the iteration: Newton converges quadratically,
/// so the error left after such a step is of order its square, ~1e-14 relative in \[H+\].
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
    /// The seven reciprocals share one division (batch inversion: invert the product, then peel
    /// off each factor); all factors are positive and their product stays far inside f64 range
    /// for \[H+\] in the solver's bracket.
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
            reciprocals([
                h,
                self.kb + h,
                self.ksi + h,
                h + self.ks_scaled,
                h + self.kf,
                h3 + p1 * h2 + p12 * h + p123,
                carbonate_denominator,
            ]);
        let phosphate_numerator = p12 * h + 2.0 * p123 - h3;

        let borate = self.total_boron * self.kb * inv_borate;
        let hydroxide = self.kw * inv_h;
        let phosphate = self.total_phosphate * phosphate_numerator * inv_phosphate;
        let silicate = self.total_silicate * self.ksi * inv_silicate;
        let free_hydrogen = -h * self.inv_free_to_total;
        let hydrogen_sulfate = -self.total_sulfate * h * inv_sulfate;
        let hydrogen_fluoride = -self.total_fluoride * h * inv_fluoride;

        let (carbonate, carbonate_slope) = match carbon {
            // DIC (K1 h + 2 K1K2) / (h² + K1 h + K1K2)
            CarbonFixed::Dic(dic) => {
                let numerator = k1 * h + 2.0 * k12;
                let value = dic * numerator * inv_carbonate;
                let slope = (dic * k1 - value * (2.0 * h + k1)) * inv_carbonate;
                (value, slope)
            }
            // CO2* (K1/h + 2 K1K2/h²)
            CarbonFixed::Co2(co2) => {
                let k1co2 = k1 * co2;
                let value = k1co2 * inv_h * (1.0 + 2.0 * k2 * inv_h);
                let slope = -k1co2 * inv_h * inv_h * (1.0 + 4.0 * k2 * inv_h);
                (value, slope)
            }
        };
        let phosphate_slope = self.total_phosphate
            * inv_phosphate
            * ((p12 - 3.0 * h2)
                - phosphate_numerator * inv_phosphate * (3.0 * h2 + 2.0 * p1 * h + p12));
        let slope = carbonate_slope - borate * inv_borate - hydroxide * inv_h + phosphate_slope
            - silicate * inv_silicate
            - self.inv_free_to_total
            + hydrogen_sulfate * self.ks_scaled * inv_sulfate * inv_h
            + hydrogen_fluoride * self.kf * inv_fluoride * inv_h;
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
        let root = (excess * excess + 4.0 * self.kw / self.free_to_total).sqrt();
        if excess > 0.0 {
            2.0 * self.kw / (excess + root)
        } else {
            0.5 * self.free_to_total * (root - excess)
        }
    }
}

/// 1/x for each x, with one division (batch inversion).
fn reciprocals<const N: usize>(values: [f64; N]) -> [f64; N] {
    let mut prefix = [1.0; N];
    let mut running = 1.0;
    for (slot, value) in prefix.iter_mut().zip(values) {
        *slot = running;
        running *= value;
    }
    let mut inverse = 1.0 / running;
    let mut out = [0.0; N];
    for i in (0..N).rev() {
        out[i] = inverse * prefix[i];
        inverse *= values[i];
    }
    out
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
        (at_h.total() - alkalinity, at_h.slope)
    };
    bracketed_newton(evaluate, h_min, h_max, guess)
}

/// Newton iteration on h kept inside \[low, high\]; a step that leaves the bracket, or a Newton
/// step that did not halve |f|, is replaced by bisection in ln h.
fn bracketed_newton(
    evaluate: impl Fn(f64) -> (f64, f64),
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
        let (residual, slope) = evaluate(h);
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
        let newton = h - residual / slope;
        let use_newton = newton > low && newton < high && residual.abs() <= 0.5 * previous_residual;
        let next = if use_newton {
            newton
        } else {
            (low * high).sqrt()
        };
        previous_residual = residual.abs();
        let step = next - h;
        h = next;
        if (use_newton && step.abs() <= NEWTON_STEP_TOLERANCE * h)
            || high - low <= BRACKET_TOLERANCE * low
        {
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

/// Starting \[H+\] from carbonate alkalinity alone: CO2*(K1/h + 2 K1K2/h²) = TA.
fn initial_guess_co2(alkalinity: f64, co2: f64, k1: f64, k2: f64) -> f64 {
    let k1co2 = k1 * co2;
    let inverse_h =
        2.0 * alkalinity / (k1co2 + (k1co2 * k1co2 + 8.0 * k1co2 * k2 * alkalinity).sqrt());
    1.0 / inverse_h
}
