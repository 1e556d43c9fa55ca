//! Round trips between input pairs, monotonic properties, facts of the trade, and agreement with
//! an independent bisection solver in the tolerance class of Orr et al. 2015.

use acidscape_chem::{
    equilibrium_constants, solve, CarbonicSet, Conditions, ConstantChoice, InputPair, Solution,
};
use proptest::prelude::*;

fn relative(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

fn ocean_conditions() -> impl Strategy<Value = Conditions> {
    (
        -2.0..35.0f64,
        20.0..42.0f64,
        0.0..6000.0f64,
        0.0..3.0f64,
        0.0..150.0f64,
    )
        .prop_map(
            |(temperature_c, salinity, pressure_dbar, phosphate, silicate)| Conditions {
                temperature_c,
                salinity,
                pressure_dbar,
                phosphate,
                silicate,
            },
        )
}

/// (TA, DIC) with TA - DIC from 20 to 500 µmol kg-1, the range of real seawater (common practice).
fn ocean_alkalinity_dic() -> impl Strategy<Value = (f64, f64)> {
    (1800.0..2400.0f64, 20.0..500.0f64)
        .prop_map(|(dic, excess)| ((dic + excess).clamp(2000.0, 2500.0), dic))
        .prop_filter("TA above DIC", |(ta, dic)| ta - dic >= 20.0)
}

fn any_choice() -> impl Strategy<Value = ConstantChoice> {
    (0..3usize).prop_map(|i| ConstantChoice {
        carbonic: CarbonicSet::ALL[i],
        ..Default::default()
    })
}

fn from_alkalinity_dic(ta: f64, dic: f64, c: &Conditions, choice: &ConstantChoice) -> Solution {
    solve(
        InputPair::AlkalinityDic {
            alkalinity: ta,
            dic,
        },
        c,
        choice,
    )
    .unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn round_trip_through_ph(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic(), choice in any_choice()) {
        let first = from_alkalinity_dic(ta, dic, &c, &choice);
        prop_assert!(relative(first.alkalinity, ta) < 1e-9);
        let back = solve(InputPair::AlkalinityPh { alkalinity: ta, ph_total: first.ph_total }, &c, &choice).unwrap();
        prop_assert!(relative(back.dic, dic) < 1e-9, "DIC {} -> {}", dic, back.dic);
        let back = solve(InputPair::DicPh { dic, ph_total: first.ph_total }, &c, &choice).unwrap();
        prop_assert!(relative(back.alkalinity, ta) < 1e-9, "TA {} -> {}", ta, back.alkalinity);
    }

    #[test]
    fn round_trip_through_pco2(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic(), choice in any_choice()) {
        let first = from_alkalinity_dic(ta, dic, &c, &choice);
        let back = solve(InputPair::AlkalinityPco2 { alkalinity: ta, pco2_uatm: first.pco2_uatm }, &c, &choice).unwrap();
        prop_assert!(relative(back.dic, dic) < 1e-9, "DIC {} -> {}", dic, back.dic);
        prop_assert!(relative(back.h_total, first.h_total) < 1e-9);
        let back = solve(InputPair::DicPco2 { dic, pco2_uatm: first.pco2_uatm }, &c, &choice).unwrap();
        prop_assert!(relative(back.alkalinity, ta) < 1e-9, "TA {} -> {}", ta, back.alkalinity);
    }

    #[test]
    fn more_dic_at_fixed_alkalinity_lowers_ph_and_omega(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic(), extra in 1.0..50.0f64) {
        let low = from_alkalinity_dic(ta, dic - extra, &c, &ConstantChoice::default());
        let high = from_alkalinity_dic(ta, dic, &c, &ConstantChoice::default());
        prop_assert!(high.ph_total < low.ph_total);
        prop_assert!(high.omega_aragonite < low.omega_aragonite);
        prop_assert!(high.omega_calcite < low.omega_calcite);
        prop_assert!(high.pco2_uatm > low.pco2_uatm);
    }

    #[test]
    fn omega_is_calcium_times_carbonate_over_ksp(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic()) {
        let choice = ConstantChoice::default();
        let s = from_alkalinity_dic(ta, dic, &c, &choice);
        let k = equilibrium_constants(&c, &choice).unwrap();
        prop_assert!(relative(s.omega_aragonite, k.calcium * s.carbonate * 1e-6 / k.ksp_aragonite) < 1e-12);
        prop_assert!(relative(s.omega_calcite, k.calcium * s.carbonate * 1e-6 / k.ksp_calcite) < 1e-12);
    }

    #[test]
    fn species_add_up(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic()) {
        let s = from_alkalinity_dic(ta, dic, &c, &ConstantChoice::default());
        prop_assert!(relative(s.co2 + s.bicarbonate + s.carbonate, dic) < 1e-12);
        let parts = s.bicarbonate + 2.0 * s.carbonate + s.alk_borate + s.alk_hydroxide + s.alk_phosphate
            + s.alk_silicate + s.alk_hydrogen_sulfate + s.alk_hydrogen_fluoride + s.alk_free_hydrogen;
        prop_assert!(relative(parts, ta) < 1e-9);
        prop_assert!(s.alk_hydrogen_sulfate <= 0.0 && s.alk_hydrogen_fluoride <= 0.0 && s.alk_free_hydrogen < 0.0);
        // Scale ordering (Dickson, Sabine & Christian 2007, ch. 5): pH free > total > seawater.
        prop_assert!(s.ph_free > s.ph_total && s.ph_total > s.ph_seawater);
        prop_assert!(s.iterations >= 1 && s.iterations <= 50);
    }

    #[test]
    fn agrees_with_an_independent_bisection_in_the_orr_2015_class(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic()) {
        // Orr et al. 2015 (verified abstract): implementations of the same constants agree to about
        // 0.0002 in pH, 0.2 µatm in pCO2 and 0.1 µmol kg-1 in CO3--.
        let choice = ConstantChoice::default();
        let s = from_alkalinity_dic(ta, dic, &c, &choice);
        let reference = independent_bisection(ta, dic, &c, &choice);
        prop_assert!((s.ph_total - reference.ph).abs() < 2e-4);
        prop_assert!((s.pco2_uatm - reference.pco2).abs() < 0.2);
        prop_assert!((s.carbonate - reference.carbonate).abs() < 0.1);
        // Our own solver is far tighter than that class: [H+] to 1e-10 relative or better.
        prop_assert!(relative(s.h_total, 10f64.powf(-reference.ph)) < 1e-10, "{} vs {}", s.ph_total, reference.ph);
    }

    #[test]
    fn converges_far_inside_the_promised_tolerance(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic(), choice in any_choice()) {
        // The solver stops after a Halley step below 1e-5 relative, leaving an error of order its
        // cube; against a 200-step bisection (pH resolved to f64 round-off, ~5e-15 relative in
        // [H+]) the root agrees to 1e-12, a hundred times inside the 1e-10 it promises.
        let s = from_alkalinity_dic(ta, dic, &c, &choice);
        let reference = independent_bisection(ta, dic, &c, &choice);
        prop_assert!(relative(s.h_total, 10f64.powf(-reference.ph)) < 1e-12, "{} vs {}", s.ph_total, reference.ph);
        prop_assert!(s.iterations <= 4, "{} iterations", s.iterations);
    }

    #[test]
    fn revelle_factor_matches_a_central_difference(c in ocean_conditions(), (ta, dic) in ocean_alkalinity_dic()) {
        let choice = ConstantChoice::default();
        let s = from_alkalinity_dic(ta, dic, &c, &choice);
        let step = 1e-3;
        let up = from_alkalinity_dic(ta, dic + step, &c, &choice);
        let down = from_alkalinity_dic(ta, dic - step, &c, &choice);
        let numeric = (up.pco2_uatm.ln() - down.pco2_uatm.ln()) / ((dic + step).ln() - (dic - step).ln());
        prop_assert!(relative(s.revelle_factor, numeric) < 1e-5, "{} vs {}", s.revelle_factor, numeric);
    }
}

struct Reference {
    ph: f64,
    pco2: f64,
    carbonate: f64,
}

/// Plain bisection on pH of the Dickson 1981 alkalinity equation, written out independently of the
/// crate's solver (same published constants).
fn independent_bisection(
    ta_umol: f64,
    dic_umol: f64,
    c: &Conditions,
    choice: &ConstantChoice,
) -> Reference {
    let k = equilibrium_constants(c, choice).unwrap();
    let (ta, dic, pt, sit) = (
        ta_umol * 1e-6,
        dic_umol * 1e-6,
        c.phosphate * 1e-6,
        c.silicate * 1e-6,
    );
    let alkalinity_at = |ph: f64| {
        let h = 10f64.powf(-ph);
        let hf = h / (1.0 + k.total_sulfate / k.ks_free);
        let carbonate = dic * (k.k1 * h + 2.0 * k.k1 * k.k2) / (h * h + k.k1 * h + k.k1 * k.k2);
        let borate = k.total_boron / (1.0 + h / k.kb);
        let phosphate_den = h * h * h + k.k1p * h * h + k.k1p * k.k2p * h + k.k1p * k.k2p * k.k3p;
        let phosphate =
            pt * (k.k1p * k.k2p * h + 2.0 * k.k1p * k.k2p * k.k3p - h * h * h) / phosphate_den;
        let silicate = sit / (1.0 + h / k.ksi);
        let sulfate = k.total_sulfate / (1.0 + k.ks_free / hf);
        let fluoride = k.total_fluoride / (1.0 + k.kf_free / hf);
        carbonate + borate + k.kw / h + phosphate + silicate - hf - sulfate - fluoride
    };
    let (mut low, mut high) = (4.0, 10.0);
    for _ in 0..200 {
        let mid = 0.5 * (low + high);
        if alkalinity_at(mid) > ta {
            high = mid;
        } else {
            low = mid;
        }
    }
    let ph = 0.5 * (low + high);
    let h = 10f64.powf(-ph);
    let den = h * h + k.k1 * h + k.k1 * k.k2;
    let co2 = dic * h * h / den;
    Reference {
        ph,
        pco2: co2 / k.k0 / k.fugacity_factor * 1e6,
        carbonate: dic * k.k1 * k.k2 / den * 1e6,
    }
}

fn surface(temperature_c: f64) -> Conditions {
    Conditions {
        temperature_c,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.0,
        silicate: 0.0,
    }
}

#[test]
fn ph_fall_of_a_tenth_is_about_26_percent_more_hydrogen_ions() {
    // Common practice: pH is -log10[H+], so 8.2 -> 8.1 multiplies [H+] by 10^0.1 ≈ 1.26.
    let choice = ConstantChoice::default();
    let before = solve(
        InputPair::DicPh {
            dic: 2000.0,
            ph_total: 8.2,
        },
        &surface(15.0),
        &choice,
    )
    .unwrap();
    let after = solve(
        InputPair::DicPh {
            dic: 2000.0,
            ph_total: 8.1,
        },
        &surface(15.0),
        &choice,
    )
    .unwrap();
    let increase = after.h_total / before.h_total - 1.0;
    assert!((increase - 0.2589).abs() < 1e-3, "{increase}");
}

#[test]
fn preindustrial_to_modern_co2_lowers_surface_ph_by_about_a_tenth() {
    // Common practice: surface pH fell by about 0.1 as atmospheric CO2 rose from ~280 ppm.
    // Reasoning for the band: log10(410/280) = 0.166; with DIC free to change at fixed TA the
    // buffer turns that into a pH change of roughly 0.8-0.9 of it, ~0.13-0.15; allow 0.1-0.2.
    for temperature_c in [15.0, 25.0] {
        for set in CarbonicSet::ALL {
            let choice = ConstantChoice {
                carbonic: *set,
                ..Default::default()
            };
            let c = surface(temperature_c);
            let old = solve(
                InputPair::AlkalinityPco2 {
                    alkalinity: 2300.0,
                    pco2_uatm: 280.0,
                },
                &c,
                &choice,
            )
            .unwrap();
            let new = solve(
                InputPair::AlkalinityPco2 {
                    alkalinity: 2300.0,
                    pco2_uatm: 410.0,
                },
                &c,
                &choice,
            )
            .unwrap();
            let drop = old.ph_total - new.ph_total;
            assert!(
                (0.1..0.2).contains(&drop),
                "{temperature_c} °C {set}: pH drop {drop}"
            );
            // Surface water stays supersaturated for aragonite, and the Revelle factor is the
            // familiar 8-16 (common practice).
            assert!(new.omega_aragonite > 1.0);
            assert!(
                (8.0..16.0).contains(&new.revelle_factor),
                "{}",
                new.revelle_factor
            );
        }
    }
}

#[test]
fn a_step_that_lands_on_the_root_ends_the_iteration() {
    // Synthetic cell (invented inputs) whose third step finds the root to round-off: the step
    // then leaves [H+] unchanged, on the bracket bound just moved there. Once, that forced a
    // bisection and a dozen needless iterations; it must end the iteration instead.
    let c = Conditions {
        temperature_c: 33.544039016754375,
        salinity: 22.033594866010176,
        pressure_dbar: 1040.8533508770054,
        phosphate: 2.1937744716526266,
        silicate: 145.01750031343386,
    };
    let s = from_alkalinity_dic(
        2417.3364503992757,
        1967.6550762386357,
        &c,
        &ConstantChoice::default(),
    );
    assert!(s.iterations <= 3, "{} iterations", s.iterations);
    let reference = independent_bisection(
        2417.3364503992757,
        1967.6550762386357,
        &c,
        &ConstantChoice::default(),
    );
    assert!(relative(s.h_total, 10f64.powf(-reference.ph)) < 1e-12);
}

#[test]
fn warm_surface_water_has_familiar_values() {
    // Common practice: TA 2300, DIC 2000 at 25 °C, S 35 is near-modern surface water, pH ≈ 8.05,
    // pCO2 near 400 µatm, Ω aragonite ≈ 3.4.
    let s = solve(
        InputPair::AlkalinityDic {
            alkalinity: 2300.0,
            dic: 2000.0,
        },
        &surface(25.0),
        &ConstantChoice::default(),
    )
    .unwrap();
    assert!((8.0..8.1).contains(&s.ph_total), "{}", s.ph_total);
    assert!((350.0..450.0).contains(&s.pco2_uatm), "{}", s.pco2_uatm);
    assert!(
        (3.0..3.8).contains(&s.omega_aragonite),
        "{}",
        s.omega_aragonite
    );
    assert!(s.fco2_uatm < s.pco2_uatm && s.fco2_uatm > 0.99 * s.pco2_uatm);
    assert!(s.validity.is_within());
}
