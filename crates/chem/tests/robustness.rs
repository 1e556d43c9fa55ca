//! Bad input gives errors, never panics and never plausible numbers.

use acidscape_chem::{
    equilibrium_constants, solve, BoronTotal, CarbonicSet, ChemError, Conditions, ConstantChoice,
    FluorideSet, InputPair,
};
use proptest::prelude::*;

fn surface() -> Conditions {
    Conditions {
        temperature_c: 15.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 1.0,
        silicate: 10.0,
    }
}

/// Input pair number `kind` (0-4) from values `a`, `b`; the pH pairs take `ph` as their pH.
fn pair_of(kind: usize, a: f64, b: f64, ph: f64) -> InputPair {
    match kind {
        0 => InputPair::AlkalinityDic {
            alkalinity: a,
            dic: b,
        },
        1 => InputPair::AlkalinityPh {
            alkalinity: a,
            ph_total: ph,
        },
        2 => InputPair::DicPh {
            dic: a,
            ph_total: ph,
        },
        3 => InputPair::AlkalinityPco2 {
            alkalinity: a,
            pco2_uatm: b,
        },
        _ => InputPair::DicPco2 {
            dic: a,
            pco2_uatm: b,
        },
    }
}

fn any_pair() -> impl Strategy<Value = InputPair> {
    (0..5usize, any::<f64>(), any::<f64>()).prop_map(|(kind, a, b)| pair_of(kind, a, b, b))
}

/// Every combination of constant sets.
fn all_choices() -> Vec<ConstantChoice> {
    let mut choices = Vec::new();
    for &carbonic in CarbonicSet::ALL {
        for &fluoride in FluorideSet::ALL {
            for &boron in BoronTotal::ALL {
                choices.push(ConstantChoice {
                    carbonic,
                    fluoride,
                    boron,
                });
            }
        }
    }
    choices
}

/// Mostly plausible magnitudes with the odd wild value, so that the solver itself is exercised.
fn wide_value() -> impl Strategy<Value = f64> {
    prop_oneof![
        4 => 0.0..60_000.0f64,
        1 => any::<f64>(),
        1 => Just(f64::NAN),
        1 => -100.0..0.0f64,
    ]
}

fn check(result: Result<acidscape_chem::Solution, ChemError>) -> Result<(), TestCaseError> {
    match result {
        Ok(s) => {
            for v in [
                s.h_total,
                s.ph_total,
                s.dic,
                s.alkalinity,
                s.co2,
                s.carbonate,
                s.pco2_uatm,
                s.omega_aragonite,
                s.revelle_factor,
            ] {
                prop_assert!(v.is_finite());
            }
            prop_assert!((3.0..=12.0).contains(&s.ph_total));
            prop_assert!(s.dic > 0.0 && s.co2 >= 0.0 && s.carbonate >= 0.0);
            prop_assert!(s.dic <= 50_000.0 && s.alkalinity.abs() <= 50_000.0);
        }
        Err(e) => prop_assert!(!e.to_string().is_empty()),
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn never_panics_on_arbitrary_f64(pair in any_pair(), t in any::<f64>(), s in any::<f64>(), p in any::<f64>(), po4 in any::<f64>(), si in any::<f64>()) {
        let c = Conditions { temperature_c: t, salinity: s, pressure_dbar: p, phosphate: po4, silicate: si };
        for choice in all_choices() {
            check(solve(pair, &c, &choice))?;
            let _ = equilibrium_constants(&c, &choice);
        }
    }

    #[test]
    fn never_panics_on_wide_pairs_in_real_water(kind in 0..5usize, a in wide_value(), b in wide_value(), ph in 2.0..13.0f64, t in -10.0..60.0f64, s in 0.1..60.0f64, p in 0.0..12000.0f64) {
        let c = Conditions { temperature_c: t, salinity: s, pressure_dbar: p, phosphate: 2.0, silicate: 50.0 };
        let pair = pair_of(kind, a, b, ph);
        for choice in all_choices() {
            check(solve(pair, &c, &choice))?;
        }
    }
}

fn field_of(error: ChemError) -> &'static str {
    match error {
        ChemError::InvalidInput { field, .. } => field,
        ChemError::NoSolution { reason } => {
            panic!("expected invalid input, got no solution: {reason}")
        }
    }
}

#[test]
fn invalid_fields_are_named() {
    let choice = ConstantChoice::default();
    let ok_pair = InputPair::AlkalinityDic {
        alkalinity: 2300.0,
        dic: 2000.0,
    };
    let mut c = surface();
    c.salinity = f64::NAN;
    assert_eq!(
        field_of(solve(ok_pair, &c, &choice).unwrap_err()),
        "salinity"
    );
    c.salinity = 0.0;
    assert_eq!(
        field_of(solve(ok_pair, &c, &choice).unwrap_err()),
        "salinity"
    );
    c = surface();
    c.temperature_c = f64::INFINITY;
    assert_eq!(
        field_of(solve(ok_pair, &c, &choice).unwrap_err()),
        "temperature_c"
    );
    c = surface();
    c.pressure_dbar = -5.0;
    assert_eq!(
        field_of(solve(ok_pair, &c, &choice).unwrap_err()),
        "pressure_dbar"
    );
    c = surface();
    c.phosphate = -0.1;
    assert_eq!(
        field_of(solve(ok_pair, &c, &choice).unwrap_err()),
        "phosphate"
    );
    let c = surface();
    let negative_dic = InputPair::AlkalinityDic {
        alkalinity: 2300.0,
        dic: -1.0,
    };
    let error = solve(negative_dic, &c, &choice).unwrap_err();
    assert!(
        error.to_string().contains("dic") && error.to_string().contains("µmol kg-1"),
        "{error}"
    );
    assert_eq!(
        field_of(
            solve(
                InputPair::DicPh {
                    dic: 2000.0,
                    ph_total: 15.0
                },
                &c,
                &choice
            )
            .unwrap_err()
        ),
        "ph_total"
    );
    assert_eq!(
        field_of(
            solve(
                InputPair::DicPco2 {
                    dic: 2000.0,
                    pco2_uatm: 0.0
                },
                &c,
                &choice
            )
            .unwrap_err()
        ),
        "pco2_uatm"
    );
}

#[test]
fn inconsistent_pairs_have_no_solution() {
    let choice = ConstantChoice::default();
    let c = surface();
    // 1 atm of CO2 dissolves ~45 mmol kg-1 at 15 °C: more than this DIC (Weiss 1974).
    let e = solve(
        InputPair::DicPco2 {
            dic: 2000.0,
            pco2_uatm: 999_999.0,
        },
        &c,
        &choice,
    )
    .unwrap_err();
    assert!(matches!(e, ChemError::NoSolution { .. }), "{e}");
    // At pH 9.5 borate and hydroxide alone exceed 100 µmol kg-1 of alkalinity.
    let e = solve(
        InputPair::AlkalinityPh {
            alkalinity: 100.0,
            ph_total: 9.5,
        },
        &c,
        &choice,
    )
    .unwrap_err();
    assert!(matches!(e, ChemError::NoSolution { .. }), "{e}");
    // Alkalinity far above what the DIC can carry: the water would be above pH 12.
    // Alkalinity 2300 at pH 4 would need about 0.19 mol kg-1 of DIC (K1/[H+] ≈ 0.013 at 15 °C).
    let e = solve(
        InputPair::AlkalinityPh {
            alkalinity: 2300.0,
            ph_total: 4.0,
        },
        &c,
        &choice,
    )
    .unwrap_err();
    assert!(e.to_string().contains("DIC"), "{e}");
    let e = solve(
        InputPair::AlkalinityDic {
            alkalinity: 40_000.0,
            dic: 10.0,
        },
        &c,
        &choice,
    )
    .unwrap_err();
    assert!(e.to_string().contains("pH"), "{e}");
}
