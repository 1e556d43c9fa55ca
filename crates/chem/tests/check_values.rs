//! Constants at S = 35, 25 °C, surface, against published check values
//! (/work/shared/reference/check-values.md, each source named beside its check).

use acidscape_chem::constants::{millero2006, millero2010, totals, waters2014, SampleTerms};
use acidscape_chem::{
    equilibrium_constants, BoronTotal, CarbonicSet, Conditions, ConstantChoice, FluorideSet,
};

fn standard_seawater() -> Conditions {
    Conditions {
        temperature_c: 25.0,
        salinity: 35.0,
        pressure_dbar: 0.0,
        phosphate: 0.0,
        silicate: 0.0,
    }
}

fn assert_close(what: &str, got: f64, expected: f64, tolerance: f64) {
    assert!(
        (got - expected).abs() <= tolerance,
        "{what}: got {got}, expected {expected} ± {tolerance}"
    );
}

#[test]
fn default_set_matches_the_guide_check_values() {
    let k = equilibrium_constants(&standard_seawater(), &ConstantChoice::default()).unwrap();
    // Dickson, Sabine & Christian 2007 (Guide), ch. 5; check values from memory, to the printed digits.
    assert_close("ln K0 (Weiss 1974)", k.k0.ln(), -3.5617, 5e-5);
    assert_close("log10 K1 (Lueker et al. 2000)", k.k1.log10(), -5.8472, 5e-5);
    assert_close("log10 K2 (Lueker et al. 2000)", k.k2.log10(), -8.9660, 5e-5);
    // Roy et al. 1993 agree with Dickson 1990 to ±0.0004 in ln KB (verified abstract); the printed
    // check value has four decimals.
    assert_close("ln KB (Dickson 1990)", k.kb.ln(), -19.7964, 5e-5);
    assert_close("ln KW (Millero 1995)", k.kw.ln(), -30.434, 5e-4);
    assert_close("ln KS free (Dickson 1990)", k.ks_free.ln(), -2.30, 5e-3);
    assert_close("ln KF total (Perez & Fraga 1987)", k.kf.ln(), -6.09, 5e-3);
    assert_close("ln K1P (Millero 1995)", k.k1p.ln(), -3.71, 5e-3);
    assert_close("ln K2P (Millero 1995)", k.k2p.ln(), -13.727, 5e-4);
    assert_close("ln K3P (Millero 1995)", k.k3p.ln(), -20.24, 5e-3);
    assert_close("ln KSi (Millero 1995)", k.ksi.ln(), -21.61, 5e-3);
    // Mucci 1983 (from memory): calcite 4.27e-7 (log10 -6.3693), aragonite 6.48e-7 (log10 -6.1883).
    assert_close("log10 Ksp calcite", k.ksp_calcite.log10(), -6.3693, 5e-5);
    assert_close(
        "log10 Ksp aragonite",
        k.ksp_aragonite.log10(),
        -6.1883,
        5e-5,
    );
    assert_close("Ksp calcite", k.ksp_calcite, 4.27e-7, 5e-10);
    assert_close("Ksp aragonite", k.ksp_aragonite, 6.48e-7, 5e-10);
}

#[test]
fn totals_from_salinity_match_their_sources() {
    let k = equilibrium_constants(&standard_seawater(), &ConstantChoice::default()).unwrap();
    // Uppström 1974 as quoted by Lee et al. 2010 (verified): 4.157e-4 mol kg-1. The ratio itself
    // gives 0.232/10.811 · 35/1.80655 = 4.1576e-4: the quoted figure is truncated, not rounded.
    assert_close("total boron, Uppström", k.total_boron, 4.1576e-4, 5e-9);
    assert_close(
        "total boron, Uppström, printed",
        k.total_boron,
        4.157e-4,
        1e-7,
    );
    // Morris & Riley 1966 (from memory): 0.02824; Riley 1965 (from memory): 6.83e-5;
    // Riley & Tongudai 1967 (from memory): 0.01028.
    assert_close("total sulfate", k.total_sulfate, 0.02824, 5e-6);
    assert_close("total fluoride", k.total_fluoride, 6.83e-5, 5e-8);
    assert_close("calcium", k.calcium, 0.01028, 5e-6);
    // Lee et al. 2010 (verified abstract): 4.326e-4 mol kg-1.
    let lee = ConstantChoice {
        boron: BoronTotal::Lee2010,
        ..Default::default()
    };
    let k = equilibrium_constants(&standard_seawater(), &lee).unwrap();
    assert_close("total boron, Lee", k.total_boron, 4.326e-4, 5e-8);
    assert_close(
        "total boron, Lee, direct",
        totals::boron(35.0, BoronTotal::Lee2010),
        4.326e-4,
        5e-8,
    );
}

#[test]
fn millero_2006_check_values_verified_in_abstract() {
    // Millero et al. 2006, Marine Chemistry 100, 80-94, abstract: pK1* = 5.8401, pK2* = 8.9636 (seawater scale).
    let terms = SampleTerms::new(25.0, 35.0);
    assert_close("pK1 Millero 2006", millero2006::pk1(&terms), 5.8401, 5e-5);
    assert_close("pK2 Millero 2006", millero2006::pk2(&terms), 8.9636, 5e-5);
}

#[test]
fn millero_2010_and_waters_2014_stay_within_the_2006_fit_uncertainty() {
    // Millero 2010 and Waters et al. 2014 refit the measurements of Millero et al. 2006, whose fit
    // has σ = 0.0054 (pK1) and 0.011 (pK2) (verified abstract). Their coefficients are from memory:
    // a wrong digit would move pK by far more than σ somewhere on this grid.
    for t_step in 0..=8 {
        for s_step in 0..=6 {
            let (t, s) = (5.0 * t_step as f64, 10.0 + 5.0 * s_step as f64);
            let terms = SampleTerms::new(t, s);
            let (pk1, pk2) = (millero2006::pk1(&terms), millero2006::pk2(&terms));
            for (name, k1, k2) in [
                (
                    "Millero 2010",
                    millero2010::pk1(&terms),
                    millero2010::pk2(&terms),
                ),
                (
                    "Waters 2014",
                    waters2014::pk1(&terms),
                    waters2014::pk2(&terms),
                ),
            ] {
                assert!(
                    (k1 - pk1).abs() < 0.0054,
                    "{name} pK1 at {t} °C, S {s}: {k1} vs {pk1}"
                );
                assert!(
                    (k2 - pk2).abs() < 0.011,
                    "{name} pK2 at {t} °C, S {s}: {k2} vs {pk2}"
                );
            }
        }
    }
}

#[test]
fn seawater_scale_sets_are_converted_to_the_total_scale() {
    for set in [
        CarbonicSet::Millero2010,
        CarbonicSet::WatersMilleroWoosley2014,
    ] {
        let choice = ConstantChoice {
            carbonic: set,
            ..Default::default()
        };
        let k = equilibrium_constants(&standard_seawater(), &choice).unwrap();
        let terms = SampleTerms::new(25.0, 35.0);
        let pk1_seawater = match set {
            CarbonicSet::Millero2010 => millero2010::pk1(&terms),
            _ => waters2014::pk1(&terms),
        };
        // K_total = K_seawater · [H]T/[H]SWS; at S = 35 the scales differ by about 0.01 in pH
        // (Dickson, Sabine & Christian 2007, ch. 5: total and seawater scales differ by ~0.01; common practice).
        let total_minus_seawater = -k.k1.log10() - pk1_seawater;
        assert_close(
            "pK1 total - pK1 seawater",
            total_minus_seawater,
            -k.seawater_to_total.log10(),
            1e-12,
        );
        assert!(
            (0.005..0.02).contains(&total_minus_seawater),
            "{total_minus_seawater}"
        );
    }
}

#[test]
fn dickson_riley_fluoride_is_free_scale_and_close_to_perez_fraga() {
    let dr = ConstantChoice {
        fluoride: FluorideSet::DicksonRiley1979,
        ..Default::default()
    };
    let k_dr = equilibrium_constants(&standard_seawater(), &dr).unwrap();
    let k_pf = equilibrium_constants(&standard_seawater(), &ConstantChoice::default()).unwrap();
    // Hand evaluation of Dickson & Riley 1979 at S = 35, 25 °C: ln KF(free) = -6.046766 (see the doctest).
    assert_close(
        "ln KF free, Dickson & Riley",
        k_dr.kf_free.ln(),
        -6.046766,
        2e-6,
    );
    assert_close(
        "KF total = KF free · (1 + ST/KS)",
        k_dr.kf,
        k_dr.kf_free * k_dr.free_to_total,
        1e-15,
    );
    // The two HF constants differ (by about 0.3 in ln on the total scale) but both are of order 1e-3.
    assert!((k_dr.kf.ln() - k_pf.kf.ln()).abs() < 0.5);
}
