//! User keys, citations and validity descriptions.

use acidscape_chem::{
    solve, BoronTotal, CarbonicSet, Conditions, ConstantChoice, FluorideSet, InputPair, Solution,
    Validity,
};

fn solve_ta_dic(alkalinity: f64, dic: f64, c: &Conditions, choice: &ConstantChoice) -> Solution {
    solve(InputPair::AlkalinityDic { alkalinity, dic }, c, choice).unwrap()
}

#[test]
fn keys_parse_case_insensitively_and_round_trip() {
    for set in CarbonicSet::ALL {
        assert_eq!(set.key().parse::<CarbonicSet>().unwrap(), *set);
        assert_eq!(
            set.key().to_uppercase().parse::<CarbonicSet>().unwrap(),
            *set
        );
        assert_eq!(set.to_string(), set.key());
        assert!(set.citation().contains("Mar") && set.citation().contains("20"));
    }
    for set in FluorideSet::ALL {
        assert_eq!(set.key().parse::<FluorideSet>().unwrap(), *set);
        assert!(set.citation().contains("Marine Chemistry"));
    }
    for set in BoronTotal::ALL {
        assert_eq!(set.key().parse::<BoronTotal>().unwrap(), *set);
        assert!(!set.citation().is_empty());
    }
    assert_eq!(CarbonicSet::ALL[0], CarbonicSet::default());
    assert_eq!(
        "lueker2000".parse::<CarbonicSet>().unwrap(),
        CarbonicSet::Lueker2000
    );
    assert_eq!(
        "Perez-Fraga1987".parse::<FluorideSet>().unwrap(),
        FluorideSet::PerezFraga1987
    );
    assert_eq!(
        "uppstrom1974".parse::<BoronTotal>().unwrap(),
        BoronTotal::Uppstrom1974
    );
}

#[test]
fn unknown_key_lists_the_valid_ones() {
    let message = "mehrbach".parse::<CarbonicSet>().unwrap_err().to_string();
    for key in ["lueker2000", "millero2010", "waters2014", "mehrbach"] {
        assert!(message.contains(key), "{message}");
    }
}

#[test]
fn describe_names_every_constant() {
    let text = ConstantChoice::default().describe();
    for needle in [
        "Lueker",
        "Perez",
        "Uppström",
        "Weiss 1974",
        "Dickson 1990",
        "Millero 1995",
        "Mucci 1983",
        "Munhoven 2013",
    ] {
        assert!(text.contains(needle), "{needle} missing from {text}");
    }
    assert!(!text.contains('\n'));
}

#[test]
fn cold_water_is_flagged_but_still_solved() {
    // Lueker et al. 2000 range: 2-35 °C, S 19-43 (check-values.md); Mucci 1983: 5-40 °C (from memory).
    let cold = Conditions {
        temperature_c: -1.5,
        salinity: 34.0,
        pressure_dbar: 0.0,
        phosphate: 1.0,
        silicate: 20.0,
    };
    let s = solve_ta_dic(2300.0, 2150.0, &cold, &ConstantChoice::default());
    assert!(!s.validity.is_within());
    assert!(s.validity.contains(Validity::LUEKER2000_TEMPERATURE));
    assert!(!s.validity.contains(Validity::LUEKER2000_SALINITY));
    let text = s.validity.describe();
    assert!(
        text.contains("temperature outside 2-35 °C for Lueker et al. 2000"),
        "{text}"
    );
    assert!(s.ph_total.is_finite());
    // Waters et al. 2014 extends to 0 °C only; -1.5 °C is outside it too (from memory).
    let waters = ConstantChoice {
        carbonic: CarbonicSet::WatersMilleroWoosley2014,
        ..Default::default()
    };
    let s = solve_ta_dic(2300.0, 2150.0, &cold, &waters);
    assert!(s.validity.contains(Validity::WATERS2014_TEMPERATURE));
    assert!(!s.validity.contains(Validity::LUEKER2000_TEMPERATURE));
}

#[test]
fn typical_water_is_within_every_range() {
    let c = Conditions {
        temperature_c: 18.0,
        salinity: 35.0,
        pressure_dbar: 1000.0,
        phosphate: 1.0,
        silicate: 10.0,
    };
    let s = solve_ta_dic(2300.0, 2100.0, &c, &ConstantChoice::default());
    assert!(s.validity.is_within(), "{}", s.validity.describe());
    assert_eq!(s.validity.describe(), "");
}

/// Why KF's validity range is not a material breach: the HF term of alkalinity (Dickson 1981)
/// stays far below reporting precision across the ocean's range of T, S, P and carbon.
#[test]
fn hydrogen_fluoride_alkalinity_is_negligible_in_seawater() {
    use acidscape_chem::{solve, Conditions, ConstantChoice, FluorideSet, InputPair, Validity};
    let mut largest: f64 = 0.0;
    for fluoride in FluorideSet::ALL {
        let choice = ConstantChoice {
            fluoride: *fluoride,
            ..ConstantChoice::default()
        };
        for t in [-1.5, 2.0, 10.0, 25.0, 33.0] {
            for p in [0.0, 2000.0, 6000.0] {
                for dic in [1900.0, 2200.0, 2350.0] {
                    let conditions = Conditions {
                        temperature_c: t,
                        salinity: 35.0,
                        pressure_dbar: p,
                        phosphate: 1.0,
                        silicate: 20.0,
                    };
                    let s = solve(
                        InputPair::AlkalinityDic {
                            alkalinity: 2350.0,
                            dic,
                        },
                        &conditions,
                        &choice,
                    )
                    .unwrap();
                    largest = largest.max(s.alk_hydrogen_fluoride.abs());
                    let kf_only = Validity(s.validity.bits() & !Validity::MATERIAL);
                    assert!(!kf_only.is_material());
                }
            }
        }
    }
    assert!(largest < 1e-2, "largest HF alkalinity {largest} µmol/kg");
}

/// The Millero et al. 2006 set as `solve` uses it: at S = 35, 25 °C, surface, K1 and K2 brought
/// back to the seawater scale equal the check values printed in the paper's abstract,
/// pK1* = 5.8401 and pK2* = 8.9636 (Millero et al. 2006, Marine Chemistry 100, 80-94; verified).
#[test]
fn millero2006_constants_in_use_match_the_published_check_values() {
    use acidscape_chem::equilibrium_constants;
    let choice = ConstantChoice {
        carbonic: "millero2006".parse().unwrap(),
        ..ConstantChoice::default()
    };
    let surface = Conditions {
        temperature_c: 25.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.0,
        silicate: 0.0,
    };
    let k = equilibrium_constants(&surface, &choice).unwrap();
    let pk1_seawater = -(k.k1 / k.seawater_to_total).log10();
    let pk2_seawater = -(k.k2 / k.seawater_to_total).log10();
    assert!((pk1_seawater - 5.8401).abs() < 5e-5, "pK1* {pk1_seawater}");
    assert!((pk2_seawater - 8.9636).abs() < 5e-5, "pK2* {pk2_seawater}");
    // Its validity range is its own, not Lueker's: 1 °C is inside 0-50 °C.
    let cold = Conditions {
        temperature_c: 1.0,
        ..surface
    };
    let s = solve_ta_dic(2300.0, 2100.0, &cold, &choice);
    assert!(!s.validity.contains(Validity::MILLERO2006_TEMPERATURE));
    assert!(!s.validity.contains(Validity::LUEKER2000_TEMPERATURE));
}
