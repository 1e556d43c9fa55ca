use super::*;
use proptest::prelude::*;

const NAN: f64 = f64::NAN;

/// Days per month in the `noleap` calendar (CF Conventions 1.10, section 4.4.1).
const NOLEAP: [f64; 12] = [
    31.0, 28.0, 31.0, 30.0, 31.0, 30.0, 31.0, 31.0, 30.0, 31.0, 30.0, 31.0,
];

#[test]
fn window_mean_is_weighted_by_step_length() {
    // Two steps of 31 and 28 days with values 1 and 2: (31 + 56) / 59 (hand evaluation).
    let mut s = WindowStats::new(3, true);
    s.add_step(&[1.0, 5.0, NAN], 31.0).unwrap();
    s.add_step(&[2.0, NAN, NAN], 28.0).unwrap();
    let mean = s.mean();
    assert_eq!(mean[0], 87.0 / 59.0);
    assert_eq!(mean[1], 5.0);
    assert!(mean[2].is_nan());
    assert_eq!(s.count(), &[2, 1, 0]);
    let (min, max) = (s.min().unwrap(), s.max().unwrap());
    assert_eq!((min[0], max[0], min[1], max[1]), (1.0, 2.0, 5.0, 5.0));
    assert!(min[2].is_nan() && max[2].is_nan());
    assert_eq!(WindowStats::new(1, false).min(), None);
    assert_eq!(WindowStats::bytes_per_cell(false), 20);
}

#[test]
fn window_inputs_are_checked() {
    let mut s = WindowStats::new(2, false);
    assert!(matches!(
        s.add_step(&[1.0], 1.0),
        Err(WindowError::Length(_))
    ));
    assert_eq!(
        s.add_step(&[1.0, 2.0], 0.0),
        Err(WindowError::StepLength(0.0))
    );
}

#[test]
fn annual_means_from_monthly_steps() {
    // Two noleap years of monthly steps: value = month number (1..12) in 2015, 10 in 2016.
    // 2015: Σ days × month / 365 = 2382 / 365 (hand evaluation); 2016: 10.
    let mut acc = AnnualMeans::new(2);
    let mut finished = Vec::new();
    for year in [2015, 2016] {
        for (m, days) in NOLEAP.iter().enumerate() {
            let v = if year == 2015 { (m + 1) as f64 } else { 10.0 };
            let second = if year == 2016 && m == 6 { NAN } else { v };
            finished.extend(acc.add_step(year, &[v, second], *days).unwrap());
        }
    }
    finished.extend(acc.finish());
    assert_eq!(finished.len(), 2);
    assert_eq!(finished[0].year, 2015);
    assert_eq!(finished[0].covered_days, 365.0);
    assert!((finished[0].means[0] - 2382.0 / 365.0).abs() < 1e-12);
    assert_eq!(finished[0].means[0], finished[0].means[1]);
    assert!((finished[1].means[0] - 10.0).abs() < 1e-12);
    assert!(
        finished[1].means[1].is_nan(),
        "a missing month leaves no annual mean"
    );
    assert_eq!(acc.finish(), None);
}

#[test]
fn annual_steps_must_come_in_order() {
    let mut acc = AnnualMeans::new(1);
    acc.add_step(2020, &[1.0], 365.0).unwrap();
    assert_eq!(
        acc.add_step(2019, &[1.0], 365.0),
        Err(WindowError::YearsOutOfOrder {
            previous: 2020,
            next: 2019
        })
    );
}

#[test]
fn annual_series_of_a_regional_mean() {
    // Five-day and ten-day steps: (5 × 1 + 10 × 4) / 15 = 3 in 2020, 7 in 2021.
    let years = [2020, 2020, 2021];
    let s = annual_series(&years, &[1.0, 4.0, 7.0], &[5.0, 10.0, 365.0]).unwrap();
    assert_eq!(s, vec![(2020, 3.0, 15.0), (2021, 7.0, 365.0)]);
    assert!(annual_series(&years, &[1.0], &[1.0; 3]).is_err());
}

#[test]
fn differences_and_shoaling() {
    let d = difference(&[3.0, NAN, 1.0], &[1.0, 2.0, 1.0]).unwrap();
    assert_eq!(d[0], 2.0);
    assert!(d[1].is_nan());
    assert_eq!(d[2].to_bits(), 0f64.to_bits());
    // The horizon rose from 1000 m to 800 m: 200 m of shoaling (positive = shallower).
    assert_eq!(
        shoaling_m(&[1000.0, 500.0], &[800.0, 650.0]).unwrap(),
        vec![200.0, -150.0]
    );
    assert!(difference(&[1.0], &[]).is_err());
}

#[test]
fn percentiles_match_the_linear_definition() {
    // Expected values from numpy.percentile 2.4 (default method "linear", Hyndman & Fan 1996
    // definition 7) on the same eleven values.
    let data = [3.2, -1.0, 7.5, 0.25, 12.0, 4.4, 4.4, 9.9, 2.0, 5.5, -3.75];
    let expected = [
        (0.0, -3.75),
        (5.0, -2.375),
        (10.0, -1.0),
        (25.0, 1.125),
        (50.0, 4.4),
        (62.5, 4.675000000000001),
        (90.0, 9.9),
        (95.0, 10.95),
        (99.0, 11.790000000000001),
        (100.0, 12.0),
    ];
    for (p, x) in expected {
        let mut v = data.to_vec();
        let got = percentile(&mut v, p).unwrap().unwrap();
        assert!((got - x).abs() <= 1e-12, "p {p}: {got} vs {x}");
    }
    let mut with_gaps = vec![NAN, 1.0, NAN, 2.0];
    assert_eq!(percentile(&mut with_gaps, 50.0).unwrap(), Some(1.5));
    assert_eq!(percentile(&mut [NAN, NAN], 50.0).unwrap(), None);
    assert_eq!(
        percentile(&mut [1.0], 101.0),
        Err(WindowError::Percentile(101.0))
    );
}

#[test]
fn percentile_buffer_per_cell() {
    let mut b = PercentileBuffer::new(2, 3);
    for step in [[1.0, 10.0], [3.0, NAN], [2.0, 30.0]] {
        b.add_step(&step).unwrap();
    }
    assert_eq!(b.percentile(50.0).unwrap(), vec![2.0, 20.0]);
    assert_eq!(b.add_step(&[0.0, 0.0]), Err(WindowError::TooManySteps(3)));
    // 2 GiB for a 20-year window of monthly steps: 2^31 / (8 × 240) cells per pass.
    assert_eq!(cells_per_pass(1 << 31, 240), 1_118_481);
    assert_eq!(cells_per_pass(10, 240), 1);
}

proptest! {
    #[test]
    fn a_run_compared_with_itself_gives_exactly_zero(
        steps in prop::collection::vec(prop::collection::vec(prop_oneof![4 => -1e3f64..1e3, 1 => Just(NAN)], 6), 1..30),
    ) {
        let run = |s: &mut WindowStats| {
            for (i, values) in steps.iter().enumerate() {
                s.add_step(values, 28.0 + (i % 4) as f64).unwrap();
            }
        };
        let (mut a, mut b) = (WindowStats::new(6, false), WindowStats::new(6, false));
        run(&mut a);
        run(&mut b);
        for (d, n) in difference(&a.mean(), &b.mean()).unwrap().iter().zip(a.count()) {
            if *n > 0 {
                prop_assert_eq!(d.to_bits(), 0f64.to_bits());
            } else {
                prop_assert!(d.is_nan());
            }
        }
    }

    #[test]
    fn percentiles_are_ordered_and_bounded(
        values in prop::collection::vec(-1e6f64..1e6, 1..50),
        p in 0.0f64..100.0,
        q in 0.0f64..100.0,
    ) {
        let (lo, hi) = (p.min(q), p.max(q));
        let at = |p: f64| percentile(&mut values.clone(), p).unwrap().unwrap();
        let min = values.iter().copied().fold(f64::INFINITY, f64::min);
        let max = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        prop_assert_eq!(at(0.0), min);
        prop_assert_eq!(at(100.0), max);
        prop_assert!(min <= at(lo) && at(lo) <= at(hi) && at(hi) <= max);
    }

    #[test]
    fn window_mean_lies_within_min_and_max(
        steps in prop::collection::vec((-50.0f64..50.0, 1.0f64..31.0), 1..40),
    ) {
        let mut s = WindowStats::new(1, true);
        for (v, w) in &steps {
            s.add_step(&[*v], *w).unwrap();
        }
        let (mean, min, max) = (s.mean()[0], s.min().unwrap()[0], s.max().unwrap()[0]);
        prop_assert!(min - 1e-9 <= mean && mean <= max + 1e-9);
    }
}
