//! Uncertainty propagation checked against the full solver: central finite differences of every
//! output in every source, a Monte Carlo propagation with independent normal draws of every
//! source, and what the abstract of Orr, Epitalon, Dickson & Gattuso 2018 (Marine Chemistry 207,
//! 84-107) states.

use acidscape_chem::{
    equilibrium_constants, sensitivities, solve, solve_with_constants, standard_uncertainties,
    uncertainty_budget, ChemError, Conditions, ConstantChoice, ConstantUncertainties,
    EquilibriumConstants, InputPair, InputUncertainties, Output, PerSource, Solution, SolvedSample,
    Source, Uncertainties,
};
use rand::rngs::StdRng;
use rand::{RngExt, SeedableRng};

/// One sample: the pair it is solved from and its conditions (synthetic values).
#[derive(Clone, Copy, Debug)]
struct Case {
    pair: InputPair,
    conditions: Conditions,
}

/// A change of every source, in the units of [`Source`].
type Deltas = [f64; Source::COUNT];

fn moved_pair(pair: InputPair, d: &Deltas) -> InputPair {
    let (ta, dic) = (d[Source::Alkalinity as usize], d[Source::Dic as usize]);
    let (ph, pco2) = (d[Source::Ph as usize], d[Source::Pco2 as usize]);
    match pair {
        InputPair::AlkalinityDic { alkalinity, dic: c } => InputPair::AlkalinityDic {
            alkalinity: alkalinity + ta,
            dic: c + dic,
        },
        InputPair::AlkalinityPh {
            alkalinity,
            ph_total,
        } => InputPair::AlkalinityPh {
            alkalinity: alkalinity + ta,
            ph_total: ph_total + ph,
        },
        InputPair::DicPh { dic: c, ph_total } => InputPair::DicPh {
            dic: c + dic,
            ph_total: ph_total + ph,
        },
        InputPair::AlkalinityPco2 {
            alkalinity,
            pco2_uatm,
        } => InputPair::AlkalinityPco2 {
            alkalinity: alkalinity + ta,
            pco2_uatm: pco2_uatm + pco2,
        },
        InputPair::DicPco2 { dic: c, pco2_uatm } => InputPair::DicPco2 {
            dic: c + dic,
            pco2_uatm: pco2_uatm + pco2,
        },
    }
}

/// The full solver on the case with every source moved: inputs and conditions directly, each
/// constant by K·10^-ΔpK after it has been computed at the moved conditions, total boron by
/// (1 + Δ).
fn solve_moved(case: &Case, choice: &ConstantChoice, d: &Deltas) -> Result<Solution, ChemError> {
    let at = |s: Source| d[s as usize];
    let c = &case.conditions;
    let conditions = Conditions {
        temperature_c: c.temperature_c + at(Source::Temperature),
        salinity: c.salinity + at(Source::Salinity),
        pressure_dbar: c.pressure_dbar + at(Source::Pressure),
        phosphate: c.phosphate + at(Source::Phosphate),
        silicate: c.silicate + at(Source::Silicate),
    };
    let mut k = equilibrium_constants(&conditions, choice)?;
    let pk = |s: Source| 10f64.powf(-at(s));
    k.k0 *= pk(Source::Pk0);
    k.k1 *= pk(Source::Pk1);
    k.k2 *= pk(Source::Pk2);
    k.kb *= pk(Source::Pkb);
    k.kw *= pk(Source::Pkw);
    k.ksp_aragonite *= pk(Source::PkspAragonite);
    k.ksp_calcite *= pk(Source::PkspCalcite);
    k.total_boron *= 1.0 + at(Source::TotalBoron);
    solve_with_constants(moved_pair(case.pair, d), &conditions, &k)
}

fn outputs(s: &Solution) -> [f64; Output::COUNT] {
    Output::ALL.map(|o| o.value(s))
}

/// Finite-difference step of each source. Richardson's five-point central difference leaves a
/// truncation error of order (step/L)⁴, L the scale over which the output curves (for
/// alkalinity and DIC their difference, ~100 µmol kg-1; ~30 °C; ~1 pH unit): below 1e-9 with
/// these steps, while the solver's round-off (~1e-15 relative) divided by the step stays below
/// 1e-10 relative.
fn step(source: Source, case: &Case) -> f64 {
    match source {
        Source::Alkalinity | Source::Dic => 0.5,
        Source::Ph => 2e-3,
        Source::Pco2 => {
            1e-3 * outputs(&solve(case.pair, &case.conditions, &ConstantChoice::default()).unwrap())
                [Output::Pco2 as usize]
        }
        Source::Temperature => 0.05,
        Source::Salinity => 0.02,
        Source::Pressure => 2.0,
        Source::Phosphate => 0.01,
        Source::Silicate => 0.2,
        Source::TotalBoron => 1e-3,
        _ => 2e-3,
    }
}

fn finite_difference(case: &Case, choice: &ConstantChoice, source: Source) -> [f64; Output::COUNT] {
    let h = step(source, case);
    let at = |multiple: f64| {
        let mut d = [0.0; Source::COUNT];
        d[source as usize] = multiple * h;
        outputs(&solve_moved(case, choice, &d).unwrap())
    };
    let (p1, m1, p2, m2) = (at(1.0), at(-1.0), at(2.0), at(-2.0));
    std::array::from_fn(|i| (8.0 * (p1[i] - m1[i]) - (p2[i] - m2[i])) / (12.0 * h))
}

/// The same sample from each of the five pairs, built from its TA-DIC solution.
fn all_pairs(alkalinity: f64, dic: f64, conditions: Conditions) -> Vec<Case> {
    let choice = ConstantChoice::default();
    let ta_dic = InputPair::AlkalinityDic { alkalinity, dic };
    let s = solve(ta_dic, &conditions, &choice).unwrap();
    [
        ta_dic,
        InputPair::AlkalinityPh {
            alkalinity,
            ph_total: s.ph_total,
        },
        InputPair::DicPh {
            dic,
            ph_total: s.ph_total,
        },
        InputPair::AlkalinityPco2 {
            alkalinity,
            pco2_uatm: s.pco2_uatm,
        },
        InputPair::DicPco2 {
            dic,
            pco2_uatm: s.pco2_uatm,
        },
    ]
    .into_iter()
    .map(|pair| Case { pair, conditions })
    .collect()
}

/// Random open-ocean samples (synthetic): -2 to 32 °C, S 30-38, 10-6000 dbar, TA - DIC from 30
/// to 400 µmol kg-1 (the range of seawater, common practice).
fn random_cases(count: usize, seed: u64) -> Vec<Case> {
    let mut rng = StdRng::seed_from_u64(seed);
    let mut cases = Vec::new();
    for _ in 0..count {
        let conditions = Conditions {
            temperature_c: rng.random_range(-2.0..32.0),
            salinity: rng.random_range(30.0..38.0),
            pressure_dbar: rng.random_range(10.0..6000.0),
            phosphate: rng.random_range(0.1..3.0),
            silicate: rng.random_range(1.0..150.0),
        };
        let dic = rng.random_range(1850.0..2300.0);
        let alkalinity = dic + rng.random_range(30.0..400.0);
        cases.extend(all_pairs(alkalinity, dic, conditions));
    }
    cases
}

/// Orr et al. 2018's constants and input uncertainties typical of good measurements
/// (alkalinity and DIC 2 µmol kg-1, pH 0.01, pCO2 2 µatm, temperature 0.05 °C, salinity 0.01,
/// nutrients 5 %; from memory, orders of magnitude only): the weights that decide how much a
/// disagreement matters.
fn typical_uncertainties(case: &Case) -> Uncertainties {
    Uncertainties {
        inputs: InputUncertainties {
            alkalinity: 2.0,
            dic: 2.0,
            ph: 0.01,
            pco2: 2.0,
            temperature: 0.05,
            salinity: 0.01,
            pressure: 5.0,
            phosphate: 0.05 * case.conditions.phosphate,
            silicate: 0.05 * case.conditions.silicate,
        },
        constants: ConstantUncertainties::ORR_2018,
    }
}

/// The solved sample and the constants it was solved with.
fn solved(case: &Case, choice: &ConstantChoice) -> (Solution, EquilibriumConstants) {
    let k = equilibrium_constants(&case.conditions, choice).unwrap();
    (
        solve_with_constants(case.pair, &case.conditions, &k).unwrap(),
        k,
    )
}

fn sample<'a>(
    case: &'a Case,
    choice: &'a ConstantChoice,
    solved: &'a (Solution, EquilibriumConstants),
) -> SolvedSample<'a> {
    SolvedSample {
        pair: &case.pair,
        conditions: &case.conditions,
        choice,
        constants: &solved.1,
        solution: &solved.0,
    }
}

#[test]
fn sensitivities_match_finite_differences_of_the_solver() {
    let choice = ConstantChoice::default();
    let mut worst = 0.0f64;
    let mut checked = 0;
    for case in random_cases(12, 2018) {
        let solved = solved(&case, &choice);
        let analytic = sensitivities(&sample(&case, &choice, &solved));
        let u = typical_uncertainties(&case);
        let budget = uncertainty_budget(&sample(&case, &choice, &solved), &u);
        let combined = budget.combined();
        for source in Source::ALL {
            if !source.applies_to(&case.pair) {
                continue;
            }
            let numeric = finite_difference(&case, &choice, source);
            for output in Output::ALL {
                let (a, n) = (analytic.get(source, output), numeric[output as usize]);
                // Relative to the sensitivity itself, or, for sensitivities that are nearly
                // zero, to one part in 1e4 of the output's combined uncertainty per unit source.
                let floor = 1e-4 * combined.get(output) / u.of(source);
                let error = (a - n).abs() / n.abs().max(floor);
                worst = worst.max(error);
                checked += 1;
                assert!(
                    error < 1e-6,
                    "{case:?} d{output:?}/d{source:?}: analytic {a:e}, finite difference {n:e}"
                );
            }
        }
    }
    eprintln!("{checked} sensitivities; worst relative disagreement {worst:.1e}");
}

/// Standard normal draws by the Box & Muller 1958 transform (Ann. Math. Stat. 29, 610).
fn normal(rng: &mut StdRng) -> f64 {
    let u1: f64 = 1.0 - rng.random::<f64>();
    let u2: f64 = rng.random::<f64>();
    (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
}

/// Standard deviation of each output over `draws` solves with every source drawn independently
/// from a normal distribution of its standard uncertainty.
fn monte_carlo(case: &Case, u: &Uncertainties, draws: usize, seed: u64) -> [f64; Output::COUNT] {
    let choice = ConstantChoice::default();
    let mut rng = StdRng::seed_from_u64(seed);
    let (mut sum, mut sum_sq) = ([0.0; Output::COUNT], [0.0; Output::COUNT]);
    let centre = outputs(&solved(case, &choice).0);
    for _ in 0..draws {
        let d: Deltas = std::array::from_fn(|i| {
            let source = Source::ALL[i];
            if source.applies_to(&case.pair) {
                u.of(source) * normal(&mut rng)
            } else {
                0.0
            }
        });
        let values = outputs(&solve_moved(case, &choice, &d).unwrap());
        for i in 0..Output::COUNT {
            // Deviations from the unperturbed value keep the sums well conditioned.
            let x = values[i] - centre[i];
            sum[i] += x;
            sum_sq[i] += x * x;
        }
    }
    let n = draws as f64;
    std::array::from_fn(|i| ((sum_sq[i] - sum[i] * sum[i] / n) / (n - 1.0)).sqrt())
}

#[test]
fn standard_uncertainties_match_a_monte_carlo_propagation() {
    const DRAWS: usize = 40_000;
    // The sampling error of a standard deviation from N normal draws is σ/√(2(N-1)) (common
    // practice): 0.35 % here. Allow four of those.
    let tolerance = 4.0 / (2.0 * (DRAWS as f64 - 1.0)).sqrt();
    let choice = ConstantChoice::default();
    let surface = Conditions {
        temperature_c: 24.0,
        salinity: 35.5,
        // Eight standard uncertainties (5 dbar) from the surface, which no draw may cross.
        pressure_dbar: 40.0,
        phosphate: 0.3,
        silicate: 3.0,
    };
    let deep = Conditions {
        temperature_c: 1.8,
        salinity: 34.7,
        pressure_dbar: 4000.0,
        phosphate: 2.4,
        silicate: 130.0,
    };
    let mut cases = all_pairs(2300.0, 2000.0, surface);
    cases.extend(all_pairs(2360.0, 2280.0, deep).into_iter().step_by(2));
    let mut worst = 0.0f64;
    for (i, case) in cases.iter().enumerate() {
        let u = typical_uncertainties(case);
        let solved = solved(case, &choice);
        let analytic = standard_uncertainties(&sample(case, &choice, &solved), &u);
        let sampled = monte_carlo(case, &u, DRAWS, 7 + i as u64);
        for output in Output::ALL {
            let (a, s) = (analytic.get(output), sampled[output as usize]);
            if a == 0.0 {
                // An input passed through unchanged has no uncertainty but its own.
                assert!(s == 0.0, "{output:?}: Monte Carlo {s}");
                continue;
            }
            let ratio = s / a - 1.0;
            worst = worst.max(ratio.abs());
            assert!(
                ratio.abs() < tolerance,
                "{case:?} {output:?}: analytic {a:e}, Monte Carlo {s:e} ({:+.2} %)",
                100.0 * ratio
            );
        }
    }
    eprintln!(
        "worst Monte Carlo / analytic - 1: {:.2} % (tolerance {:.2} %)",
        100.0 * worst,
        100.0 * tolerance
    );
}

/// Share of an output's variance that a group of sources brings.
fn share(budget: &PerSource, output: Output, group: impl Fn(Source) -> bool) -> f64 {
    Source::ALL
        .into_iter()
        .filter(|s| group(*s))
        .map(|s| budget.variance_share(s, output))
        .sum()
}

/// Orr et al. 2018, abstract (verified): "further improvement beyond today's state-of-the-art
/// measurement uncertainties for the input pair would generally be ineffective at reducing the
/// combined standard uncertainties because the contribution from the constants is larger".
/// State-of-the-art alkalinity and DIC: 2 µmol kg-1 each (from memory).
#[test]
fn with_state_of_the_art_alkalinity_and_dic_the_constants_dominate() {
    let choice = ConstantChoice::default();
    let conditions = Conditions {
        temperature_c: 18.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.5,
        silicate: 5.0,
    };
    let pair = InputPair::AlkalinityDic {
        alkalinity: 2300.0,
        dic: 2050.0,
    };
    let case = Case { pair, conditions };
    let solved = solved(&case, &choice);
    let u = Uncertainties {
        inputs: InputUncertainties {
            alkalinity: 2.0,
            dic: 2.0,
            ..Default::default()
        },
        constants: ConstantUncertainties::ORR_2018,
    };
    let budget = uncertainty_budget(&sample(&case, &choice, &solved), &u);
    for output in [
        Output::PhTotal,
        Output::Carbonate,
        Output::Pco2,
        Output::OmegaAragonite,
        Output::OmegaCalcite,
    ] {
        let constants = share(&budget, output, Source::is_constant);
        assert!(
            constants > 0.5,
            "{output:?}: the constants bring only {:.0} % of the variance",
            100.0 * constants
        );
    }
}

/// Why constants can be left out of differences (README): two states computed with the same
/// constants move together when a constant moves, so the constants' part of the uncertainty of
/// their difference is a small fraction of their part in either state.
#[test]
fn shared_constants_largely_cancel_in_a_difference() {
    let choice = ConstantChoice::default();
    let conditions = Conditions {
        temperature_c: 15.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.5,
        silicate: 5.0,
    };
    // Synthetic: the same water with 60 µmol kg-1 more DIC, as after decades of uptake.
    let states = [2000.0, 2060.0].map(|dic| {
        let pair = InputPair::AlkalinityDic {
            alkalinity: 2300.0,
            dic,
        };
        let case = Case { pair, conditions };
        let solved = solved(&case, &choice);
        let u = Uncertainties {
            constants: ConstantUncertainties::ORR_2018,
            ..Default::default()
        };
        uncertainty_budget(&sample(&case, &choice, &solved), &u)
    });
    for output in [Output::PhTotal, Output::Carbonate, Output::OmegaAragonite] {
        let (mut each, mut difference) = (0.0, 0.0);
        for source in Source::ALL {
            let (a, b) = (states[0].get(source, output), states[1].get(source, output));
            each += a * a;
            difference += (b - a) * (b - a);
        }
        assert!(
            difference.sqrt() < 0.25 * each.sqrt(),
            "{output:?}: {} of {}",
            difference.sqrt(),
            each.sqrt()
        );
    }
}
