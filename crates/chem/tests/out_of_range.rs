//! Which way a sample leaves the published ranges of the chosen constants (the per-cell
//! quality flag of grids). Ranges: Lueker et al. 2000, 2-35 °C and S 19-43 (check-values.md,
//! formula verified); Millero et al. 2006, 0-50 °C and S 0-50 (verified, abstract); Mucci 1983,
//! 5-40 °C and S 5-44; Weiss 1974, -1-40 °C and S 0-40; Millero 1995 pressure corrections to
//! 1000 bar; Perez & Fraga 1987 KF, 9-33 °C (these last four from memory).

use acidscape_chem::{ConstantChoice, OutOfRange, Validity};

fn defaults(t: f64, s: f64, p: f64) -> OutOfRange {
    OutOfRange::assess(t, s, p, &ConstantChoice::default())
}

#[test]
fn each_kind_of_breach_sets_its_own_bit() {
    // Cold deep water: below Lueker's 2 °C (and Mucci's 5 °C).
    assert_eq!(
        defaults(1.5, 34.7, 4000.0).bits(),
        OutOfRange::TEMPERATURE_BELOW
    );
    // Between 2 and 5 °C only Mucci 1983 (Ksp) is left: still below.
    assert_eq!(
        defaults(3.0, 34.7, 2000.0).bits(),
        OutOfRange::TEMPERATURE_BELOW
    );
    // 40 °C: above Lueker's 35 °C.
    assert_eq!(
        defaults(40.0, 35.0, 0.0).bits(),
        OutOfRange::TEMPERATURE_ABOVE
    );
    // S = 50: above Lueker's 43, Mucci's 44, Weiss's 40.
    assert_eq!(defaults(20.0, 50.0, 0.0).bits(), OutOfRange::SALINITY_ABOVE);
    // S = 10: below Lueker's 19.
    assert_eq!(defaults(20.0, 10.0, 0.0).bits(), OutOfRange::SALINITY_BELOW);
    // 11000 dbar (a trench): beyond the 1000 bar of the pressure corrections.
    assert_eq!(
        defaults(6.0, 34.7, 11_000.0).bits(),
        OutOfRange::PRESSURE_ABOVE
    );
    // Several at once.
    let both = defaults(1.0, 50.0, 11_000.0);
    assert!(both.contains(OutOfRange::TEMPERATURE_BELOW | OutOfRange::SALINITY_ABOVE));
    assert!(both.contains(OutOfRange::PRESSURE_ABOVE));
    assert!(!both.contains(OutOfRange::TEMPERATURE_ABOVE));
    // Typical water: nothing.
    assert!(defaults(18.0, 35.0, 1000.0).is_empty());
}

#[test]
fn breaches_that_cannot_move_the_indicators_set_no_bit() {
    // 7 °C is outside Perez & Fraga 1987's 9-33 °C for KF only (see Validity::MATERIAL).
    let choice = ConstantChoice::default();
    let validity = Validity::assess(7.0, 35.0, 0.0, &choice);
    assert!(validity.contains(Validity::PEREZ_FRAGA1987_TEMPERATURE));
    assert!(!validity.is_material());
    assert!(OutOfRange::assess(7.0, 35.0, 0.0, &choice).is_empty());
}

#[test]
fn the_chosen_sets_decide_the_limits() {
    let millero2006 = ConstantChoice {
        carbonic: "millero2006".parse().unwrap(),
        ..ConstantChoice::default()
    };
    // 1.5 °C is inside 0-50 °C of Millero et al. 2006 but still below Mucci's 5 °C.
    let cold = OutOfRange::assess(1.5, 35.0, 0.0, &millero2006);
    assert_eq!(cold.bits(), OutOfRange::TEMPERATURE_BELOW);
    let text = OutOfRange::limits(OutOfRange::TEMPERATURE_BELOW, &millero2006);
    assert!(
        text.contains("below 0 °C (Millero et al. 2006: K1, K2)"),
        "{text}"
    );
    assert!(text.contains("below 5 °C (Mucci 1983: Ksp)"), "{text}");
    assert!(!text.contains("Lueker"), "{text}");

    let text = OutOfRange::limits(OutOfRange::TEMPERATURE_BELOW, &ConstantChoice::default());
    assert!(
        text.contains("below 2 °C (Lueker et al. 2000: K1, K2)"),
        "{text}"
    );
    assert!(text.contains("below -1 °C (Weiss 1974: K0)"), "{text}");
    assert!(!text.contains("KF"), "KF's range sets no bit: {text}");
    let text = OutOfRange::limits(OutOfRange::PRESSURE_ABOVE, &ConstantChoice::default());
    assert_eq!(
        text,
        "above 10000 dbar (Millero 1995: pressure corrections)"
    );
}

#[test]
fn directions_follow_the_breached_ranges_only() {
    // Out of range is derived from the same Validity a solution carries.
    let choice = ConstantChoice::default();
    for (t, s, p) in [(1.0, 35.0, 0.0), (36.0, 45.0, 0.0), (25.0, 35.0, 10_500.0)] {
        let validity = Validity::assess(t, s, p, &choice);
        assert_eq!(
            validity.out_of_range(t, s, p),
            OutOfRange::assess(t, s, p, &choice)
        );
    }
    // No breach, no direction, whatever the conditions given.
    assert!(Validity(0).out_of_range(-5.0, 70.0, 20_000.0).is_empty());
}
