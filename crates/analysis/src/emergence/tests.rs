use super::*;
use proptest::prelude::*;

const NAN: f64 = f64::NAN;

fn below(threshold: f64) -> EmergenceTest {
    EmergenceRule::Threshold {
        threshold,
        direction: Direction::Below,
    }
    .test_for(&[])
    .unwrap()
    .unwrap()
}

fn years(first: i64, n: usize) -> Vec<i64> {
    (first..first + n as i64).collect()
}

/// Independent brute force: the smallest year index from which every later valid value is
/// beyond (O(n²), straight from the definition).
fn brute_force(values: &[f64], beyond: impl Fn(f64) -> bool) -> Option<usize> {
    let valid: Vec<usize> = (0..values.len()).filter(|&i| !values[i].is_nan()).collect();
    valid.iter().copied().find(|&i| {
        valid
            .iter()
            .filter(|&&j| j >= i)
            .all(|&j| beyond(values[j]))
    })
}

#[test]
fn threshold_rule_on_a_linear_decline() {
    // Ω = 1.5 − (y − 2015) / 64 (exact in binary): below 1 from y − 2015 > 32, i.e. 2048.
    let y = years(2015, 86);
    let v: Vec<f64> = y.iter().map(|&y| 1.5 - (y - 2015) as f64 / 64.0).collect();
    let e = time_of_emergence(&y, &v, Some(&below(1.0))).unwrap();
    assert_eq!(e, Emergence::Year(2048));
    assert_eq!((e.year(), e.flag_value()), (Some(2048), 0));
}

#[test]
fn never_emerging_and_no_data() {
    let y = years(2015, 10);
    let e = time_of_emergence(&y, &[1.2; 10], Some(&below(1.0))).unwrap();
    assert_eq!(e, Emergence::NotEmerged);
    assert_eq!((e.year(), e.flag_value()), (None, 2));
    let e = time_of_emergence(&y, &[NAN; 10], Some(&below(1.0))).unwrap();
    assert_eq!(e, Emergence::NoData);
    assert_eq!(
        time_of_emergence(&y, &[1.2; 10], None).unwrap(),
        Emergence::NoData
    );
}

#[test]
fn emerging_then_recovering() {
    // Below 1 in 2040–2059, above again from 2060: not emerged. Below again from 2080 on:
    // emerged in 2080, not 2040.
    let y = years(2015, 86);
    let mut v: Vec<f64> = y
        .iter()
        .map(|&y| if (2040..2060).contains(&y) { 0.9 } else { 1.1 })
        .collect();
    assert_eq!(
        time_of_emergence(&y, &v, Some(&below(1.0))).unwrap(),
        Emergence::NotEmerged
    );
    for (i, &year) in y.iter().enumerate() {
        if year >= 2080 {
            v[i] = 0.95;
        }
    }
    assert_eq!(
        time_of_emergence(&y, &v, Some(&below(1.0))).unwrap(),
        Emergence::Year(2080)
    );
}

#[test]
fn already_beyond_in_the_first_year() {
    let y = years(2015, 5);
    let e = time_of_emergence(&y, &[0.9, 0.8, 0.85, 0.7, 0.6], Some(&below(1.0))).unwrap();
    assert_eq!(e, Emergence::FromFirstYear(2015));
    assert_eq!(e.flag_value(), 1);
    // The first year with a value counts as first when earlier years are missing.
    let e = time_of_emergence(&y, &[NAN, 0.8, 0.85, 0.7, 0.6], Some(&below(1.0))).unwrap();
    assert_eq!(e, Emergence::FromFirstYear(2016));
}

#[test]
fn noisy_series_matches_the_definition() {
    // pH falling 0.002 per year from 8.10 with a fixed ±0.03 wiggle; threshold 7.95.
    let y = years(2015, 86);
    let v: Vec<f64> = y
        .iter()
        .map(|&y| {
            let t = (y - 2015) as f64;
            8.10 - 0.002 * t + 0.03 * (t * 2.3).sin()
        })
        .collect();
    let expected = brute_force(&v, |x| x < 7.95).map(|i| y[i]);
    let got = time_of_emergence(&y, &v, Some(&below(7.95))).unwrap();
    assert_eq!(got.year(), expected);
    assert!(matches!(got, Emergence::Year(_)));
    // The wiggle delays emergence past the year the trend alone crosses (2090).
    assert!(got.year().unwrap() > 2090);
}

#[test]
fn missing_years_are_skipped() {
    // A gap (NaN, or a year absent from the list) inside the emerged period changes nothing.
    let y = [2015, 2016, 2017, 2019, 2020, 2021];
    let v = [1.2, 0.9, NAN, 0.8, 0.85, 0.7];
    assert_eq!(
        time_of_emergence(&y, &v, Some(&below(1.0))).unwrap(),
        Emergence::Year(2016)
    );
    // A last year without a value: the last valid year decides.
    let v = [1.2, 1.1, 0.9, 0.8, 0.85, NAN];
    assert_eq!(
        time_of_emergence(&y, &v, Some(&below(1.0))).unwrap(),
        Emergence::Year(2017)
    );
    assert!(matches!(
        time_of_emergence(&[2016, 2015], &[1.0, 1.0], Some(&below(1.0))),
        Err(EmergenceError::YearsOutOfOrder { .. })
    ));
    assert!(time_of_emergence(&[2015], &[], Some(&below(1.0))).is_err());
}

fn reference_rule(band: ReferenceBand, departure: Departure) -> EmergenceRule {
    EmergenceRule::Reference {
        window: crate::windows::TimeWindow::parse("reference=2015-2018").unwrap(),
        band,
        departure,
    }
}

#[test]
fn reference_range_rule() {
    // Reference 2015–2018 annual means 8.08, 8.10, 8.06, 8.09: range 8.06–8.10. Then a decline.
    let y = years(2015, 12);
    let v = [
        8.08, 8.10, 8.06, 8.09, 8.07, 8.05, 8.065, 8.04, 8.03, 8.055, 8.02, 8.01,
    ];
    let rule = reference_rule(ReferenceBand::Range, Departure::Either);
    let test = rule.test_for(&v[..4]).unwrap().unwrap();
    assert_eq!((test.below, test.above), (Some(8.06), Some(8.10)));
    // 2020 (8.05) is outside, 2021 back inside, 2022 on outside: 2022.
    assert_eq!(
        time_of_emergence(&y, &v, Some(&test)).unwrap(),
        Emergence::Year(2022)
    );
    // Rising instead: only "above" or "either" sees it.
    let up: Vec<f64> = v.iter().map(|x| 16.16 - x).collect();
    let test_up = rule.test_for(&up[..4]).unwrap().unwrap();
    assert_eq!(
        time_of_emergence(&y, &up, Some(&test_up)).unwrap(),
        Emergence::Year(2022)
    );
    let only_below = reference_rule(ReferenceBand::Range, Departure::Below);
    let t = only_below.test_for(&up[..4]).unwrap().unwrap();
    assert_eq!(
        time_of_emergence(&y, &up, Some(&t)).unwrap(),
        Emergence::NotEmerged
    );
}

#[test]
fn reference_standard_deviation_rule() {
    // Reference 1, 3, 1, 3: mean 2, sample standard deviation sqrt(4 / 3) (hand evaluation).
    let rule = reference_rule(ReferenceBand::StandardDeviations(1.5), Departure::Either);
    let test = rule.test_for(&[1.0, 3.0, NAN, 1.0, 3.0]).unwrap().unwrap();
    let spread = 1.5 * (4.0f64 / 3.0).sqrt();
    assert!((test.below.unwrap() - (2.0 - spread)).abs() < 1e-12);
    assert!((test.above.unwrap() - (2.0 + spread)).abs() < 1e-12);
    // Too little reference data: no band, no data.
    assert_eq!(rule.test_for(&[1.0, NAN]).unwrap(), None);
    let range = reference_rule(ReferenceBand::Range, Departure::Either);
    assert_eq!(range.test_for(&[]).unwrap(), None);
    let bad = reference_rule(ReferenceBand::StandardDeviations(-1.0), Departure::Either);
    assert!(bad.test_for(&[1.0, 2.0]).is_err());
    let bad = EmergenceRule::Threshold {
        threshold: NAN,
        direction: Direction::Above,
    };
    assert!(bad.check().is_err());
}

#[test]
fn rules_in_words() {
    let t = EmergenceRule::Threshold {
        threshold: 1.0,
        direction: Direction::Below,
    };
    let words = t.description("omega_aragonite", "1");
    assert!(words.starts_with(
        "first year from which the annual mean of omega_aragonite stays below 1 in every later year of the run"
    ));
    let r = reference_rule(ReferenceBand::StandardDeviations(2.0), Departure::Either);
    let words = r.description("ph", "1");
    assert!(words.contains("outside the mean plus or minus 2 sample standard deviations"));
    assert!(words.contains("'reference' (2015-2018)"));
    let p = EmergenceRule::Threshold {
        threshold: 600.0,
        direction: Direction::Above,
    };
    assert!(p.description("pco2", "uatm").contains("above 600 uatm"));
    assert_eq!(
        Emergence::FLAG_MEANINGS.split(' ').count(),
        Emergence::FLAG_VALUES.len()
    );
}

fn series() -> impl Strategy<Value = Vec<f64>> {
    prop::collection::vec(prop_oneof![8 => 0.5f64..1.5, 1 => Just(NAN)], 1..60)
}

proptest! {
    #[test]
    fn agrees_with_the_definition(v in series()) {
        let y = years(2015, v.len());
        let got = time_of_emergence(&y, &v, Some(&below(1.0))).unwrap();
        let first_valid = v.iter().position(|x| !x.is_nan());
        let expected = match (first_valid, brute_force(&v, |x| x < 1.0)) {
            (None, _) => Emergence::NoData,
            (Some(_), None) => Emergence::NotEmerged,
            (Some(f), Some(i)) if f == i => Emergence::FromFirstYear(y[i]),
            (Some(_), Some(i)) => Emergence::Year(y[i]),
        };
        prop_assert_eq!(got, expected);
    }

    #[test]
    fn pushing_later_values_further_beyond_changes_nothing(
        v in series(),
        push in prop::collection::vec(0.0f64..2.0, 60),
        extra in prop::collection::vec(0.0f64..0.99, 0..10),
    ) {
        let y = years(2015, v.len());
        let test = below(1.0);
        let e = time_of_emergence(&y, &v, Some(&test)).unwrap();
        if let Some(year) = e.year() {
            // Lower every value from the emergence year on, and append more years below 1.
            let mut w: Vec<f64> = v
                .iter()
                .zip(&y)
                .zip(&push)
                .map(|((&x, &yr), &p)| if yr >= year { x - p } else { x })
                .collect();
            w.extend(&extra);
            let y2 = years(2015, w.len());
            prop_assert_eq!(time_of_emergence(&y2, &w, Some(&test)).unwrap(), e);
        }
    }
}
