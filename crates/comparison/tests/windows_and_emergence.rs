//! Window statistics, differences, calendars and time of emergence through the whole
//! comparison, on synthetic outputs with known answers.

mod common;

use common::*;

/// Ω at the surface of four columns, per year from 2015:
/// col 0 declines linearly and crosses 1 for good in 2040 (1.5 − (y − 2015)/48, below 1 from
/// y − 2015 > 24; the values are exact in binary);
/// col 1 never falls below 1;
/// col 2 falls below 1 in 2030–2039 and recovers (not emerged by 2049);
/// col 3 is below 1 from the first year.
fn omega(year: i64, col: usize) -> f64 {
    let t = (year - 2015) as f64;
    match col {
        0 => 1.5 - t / 48.0,
        1 => 1.2,
        2 => {
            if (2030..2040).contains(&year) {
                0.9
            } else {
                1.1
            }
        }
        _ => 0.9 - t / 1000.0,
    }
}

fn emergence_run(dir: &std::path::Path, time: Time) -> std::path::PathBuf {
    let run = dir.join(format!("run-{}-{}.nc", time.calendar, time.steps_per_year));
    let t = time.clone();
    let mut s = Synthetic::new(200.0, 30.0, 4, 1, 2, time).with(Field::cells(
        "omega_aragonite",
        "1",
        move |step, k, _, i| omega(t.year_of(step), i) - 0.25 * k as f64,
    ));
    s.cell_area = Some(vec![1.0; 4]);
    s.write(&run);
    run
}

#[test]
fn time_of_emergence_by_a_threshold_per_cell_and_region() {
    let dir = tempfile::tempdir().unwrap();
    let run = emergence_run(dir.path(), Time::annual(2015, 35));
    let regions = region_file(dir.path(), "[[region]]\nname = \"declining column\"\nbox = { west = 200.0, east = 201.0, south = 30.0, north = 31.0 }\n[[region]]\nname = \"recovering column\"\nbox = { west = 202.0, east = 203.0, south = 30.0, north = 31.0 }\n");
    let mut req = request(
        dir.path(),
        &[("a", &run)],
        &["reference=2015-2019", "late=2045-2049"],
    );
    req.emergence = Some("omega_aragonite<1".into());
    req.regions = Some(regions.clone());
    let summary = compare(&req);
    let years = read(&summary.output, "emergence_year_a");
    let status = read(&summary.output, "emergence_status_a");
    // Years 2040, none, none, 2015 (from the first year); statuses emerged (0),
    // not_emerged_by_end_of_run (2), not emerged (2), emerged_from_first_year (1).
    assert_eq!(years[0], 2040.0);
    assert!(years[1].is_nan() && years[2].is_nan());
    assert_eq!(years[3], 2015.0);
    assert_eq!(status, vec![0.0, 2.0, 2.0, 1.0]);
    let rule = text_attribute(&summary.output, None, "emergence_rule");
    assert!(
        rule.contains("stays below 1") && rule.contains("surface"),
        "{rule}"
    );
    // Per region, from the regional annual means (one column each).
    let region_row = |region: &str| {
        summary
            .rows
            .iter()
            .find(|r| r.region == region && r.statistic == "emergence_year")
            .unwrap()
            .clone()
    };
    let declining = region_row("declining column");
    assert_eq!(
        (declining.year, declining.note.as_str()),
        (Some(2040), "emerged")
    );
    let recovering = region_row("recovering column");
    assert_eq!(
        (recovering.value, recovering.note.as_str()),
        (None, "not_emerged_by_end_of_run")
    );
}

#[test]
fn time_of_emergence_by_departure_from_the_reference_window() {
    // Reference 2015–2019 of column 0: 1.5 .. 1.4167; its range's low end is 1.5 − 4/48.
    // Below the range from 2020 on for good. Column 1 is constant: never below its range.
    // Column 2 dips below in 2030–2039 and comes back: not emerged.
    let dir = tempfile::tempdir().unwrap();
    let run = emergence_run(dir.path(), Time::annual(2015, 35));
    let mut req = request(
        dir.path(),
        &[("a", &run)],
        &["reference=2015-2019", "late=2045-2049"],
    );
    req.emergence = Some("omega_aragonite:range:below".into());
    let summary = compare(&req);
    let years = read(&summary.output, "emergence_year_a");
    let status = read(&summary.output, "emergence_status_a");
    assert_eq!(years[0], 2020.0);
    assert_eq!(status[1], 2.0);
    assert_eq!(status[2], 2.0);
    // Column 3 declines slowly (0.001 a year): below its reference range from 2020 too.
    assert_eq!(years[3], 2020.0);
    // Mean ± k standard deviations: column 1 has no spread (band of zero width) and a constant
    // value, never strictly below; column 0's band: mean 1.4583, sd of 0, 1, 2, 3, 4 / 48.
    let mut req = request(dir.path(), &[("a", &run)], &["reference=2015-2019"]);
    req.emergence = Some("omega_aragonite:2sd:below".into());
    req.output = dir.path().join("sd.nc");
    let summary = compare(&req);
    let years = read(&summary.output, "emergence_year_a");
    // Band low end: 1.5 − 2/48 − 2 sd, sd = sqrt(2.5)/48 (sample sd of 0..4 is sqrt(2.5));
    // below it when (y − 2015) > 2 + 2 sqrt(2.5) = 5.16, i.e. from 2021.
    assert_eq!(years[0], 2021.0);
    assert!(years[1].is_nan());
}

#[test]
fn windows_select_the_same_years_on_every_calendar() {
    // The same values, annual and monthly, on noleap, 360_day and proleptic_gregorian: every
    // window mean is the same (the values are constant within a year).
    let dir = tempfile::tempdir().unwrap();
    let mut means = Vec::new();
    for calendar in ["noleap", "360_day", "proleptic_gregorian"] {
        for steps_per_year in [1, 12] {
            let time = Time {
                first_year: 2015,
                years: 12,
                steps_per_year,
                calendar,
            };
            let run = emergence_run(dir.path(), time);
            let mut req = request(
                dir.path(),
                &[("a", &run)],
                &["early=2016-2018", "late=2024-2026"],
            );
            req.output = dir.path().join(format!("{calendar}-{steps_per_year}.nc"));
            let summary = compare(&req);
            means.push(read(&summary.output, "omega_aragonite_a"));
        }
    }
    for other in &means[1..] {
        for (a, b) in means[0].iter().zip(other) {
            assert!((a - b).abs() <= 1e-6, "{a} vs {b}");
        }
    }
    // Column 0 at the surface, window 2016–2018: mean of 1.5 − t/48 for t = 1, 2, 3.
    let expected = 1.5 - 2.0 / 48.0;
    assert!((means[0][0] - expected).abs() < 1e-6, "{}", means[0][0]);
}

#[test]
fn monthly_steps_give_annual_means_weighted_by_step_length() {
    // Value = the month's length in days (noleap): the annual mean weighted by length is
    // Σ d² / Σ d = (7·31² + 4·30² + 28²) / 365 = 11 111 / 365 (hand evaluation); an unweighted mean would give 365/12.
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("monthly.nc");
    let lengths = [
        31.0, 28.0, 31.0, 30.0, 31.0, 30.0, 31.0, 31.0, 30.0, 31.0, 30.0, 31.0,
    ];
    let time = Time {
        first_year: 2015,
        years: 2,
        steps_per_year: 12,
        calendar: "noleap",
    };
    Synthetic::new(200.0, 30.0, 1, 1, 1, time)
        .with(Field::columns("days", "1", move |s, _, _| lengths[s % 12]))
        .write(&run);
    let summary = compare(&request(dir.path(), &[("a", &run)], &["both=2015-2016"]));
    let mean = read(&summary.output, "days_a")[0];
    assert!((mean - 11_111.0 / 365.0).abs() < 1e-5, "{mean}");
    let regional = pick(&summary, "a/whole domain//both/days/mean").unwrap();
    assert!((regional - 11_111.0 / 365.0).abs() < 1e-12, "{regional}");
}

#[test]
fn statistics_changes_differences_and_shoaling() {
    // Two runs on one grid: run b = run a + 0.25 in Ω; horizons 1000 m in a, 1000 − 10 t m in b.
    let dir = tempfile::tempdir().unwrap();
    let write = |name: &str, offset: f64, shoal: f64| {
        let path = dir.path().join(name);
        Synthetic::new(200.0, 30.0, 2, 2, 2, Time::annual(2015, 10))
            .with(Field::cells("omega_aragonite", "1", move |s, _, _, i| {
                2.0 + offset + 0.125 * s as f64 + i as f64
            }))
            .with(Field::columns(
                "horizon_depth_aragonite",
                "m",
                move |s, _, _| 1000.0 - shoal * s as f64,
            ))
            .write(&path);
        path
    };
    let (a, b) = (write("a.nc", 0.0, 0.0), write("b.nc", 0.25, 10.0));
    let mut req = request(
        dir.path(),
        &[("a", &a), ("b", &b)],
        &["early=2015-2019", "late=2020-2024"],
    );
    req.statistics = Some("min,max,p50,p90".into());
    let summary = compare(&req);
    let out = &summary.output;
    // Annual values of a, column 0: 2 + t/8, t = 0..4 in the early window.
    let mean = read(out, "omega_aragonite_a");
    assert_eq!(mean[0], 2.25);
    assert_eq!(read(out, "omega_aragonite_a_min")[0], 2.0);
    assert_eq!(read(out, "omega_aragonite_a_max")[0], 2.5);
    assert_eq!(read(out, "omega_aragonite_a_p50")[0], 2.25);
    // 90th percentile of 2, 2.125, 2.25, 2.375, 2.5 (linear, Hyndman & Fan 1996 def. 7):
    // h = 4 × 0.9 = 3.6, 2.375 + 0.6 × 0.125 = 2.45.
    assert!((read(out, "omega_aragonite_a_p90")[0] - 2.45).abs() < 1e-6);
    // Change late − early: 5/8 in every cell; b − a: 0.25 in every cell and window.
    let cells = 2 * 2 * 2;
    let change = read(out, "omega_aragonite_a_change");
    assert!(change[..cells].iter().all(|&c| c == 0.0));
    assert!(change[cells..].iter().all(|&c| c == 0.625));
    assert!(read(out, "omega_aragonite_b_minus_a")
        .iter()
        .all(|&d| (d - 0.25).abs() < 1e-6));
    // Shoaling (positive = shallower): within b, early mean 980 m, late 930 m: 50 m;
    // b against a: 20 m early, 70 m late.
    let within = read(out, "horizon_shoaling_aragonite_b");
    assert_eq!((within[0], within[4]), (0.0, 50.0));
    let versus = read(out, "horizon_shoaling_aragonite_b_versus_a");
    assert_eq!((versus[0], versus[4]), (20.0, 70.0));
    assert!(netcdf::open(out)
        .unwrap()
        .variable("horizon_shoaling_aragonite_a_versus_a")
        .is_none());
}

#[test]
fn a_run_compared_with_itself_gives_exactly_zero() {
    let dir = tempfile::tempdir().unwrap();
    let run = emergence_run(dir.path(), Time::annual(2015, 12));
    let summary = compare(&request(
        dir.path(),
        &[("a", &run), ("again", &run)],
        &["one=2015-2018", "two=2023-2026"],
    ));
    let d = read(&summary.output, "omega_aragonite_again_minus_a");
    assert!(
        !d.is_empty() && d.iter().all(|&x| x.to_bits() == 0f64.to_bits()),
        "{d:?}"
    );
}

#[test]
fn a_small_memory_budget_gives_the_same_results_in_blocks() {
    let (dir, run) = scratch();
    let mut s = Synthetic::new(200.0, 30.0, 3, 7, 2, Time::annual(2015, 4)).with(Field::cells(
        "omega_aragonite",
        "1",
        |s, k, j, i| 1.0 + 0.1 * (s + k + j * i) as f64,
    ));
    s.land = vec![(2, 1)];
    s.write(&run);
    let whole = compare(&request(dir.path(), &[("a", &run)], &["w=2015-2018"]));
    let mut req = request(dir.path(), &[("a", &run)], &["w=2015-2018"]);
    req.output = dir.path().join("blocks.nc");
    req.memory_budget_bytes = 1; // one row per block
    req.emergence = Some("omega_aragonite:1sd".into());
    let plan = acidscape_comparison::ComparisonPlan::new(&req).unwrap();
    let mut lines = Vec::new();
    let blocks =
        acidscape_comparison::run_comparison(&plan, &mut |l| lines.push(l.to_string())).unwrap();
    assert!(
        lines.iter().any(|l| l.contains("7 of 7 blocks")),
        "{lines:?}"
    );
    let bits = |v: Vec<f64>| v.into_iter().map(f64::to_bits).collect::<Vec<_>>();
    assert_eq!(
        bits(read(&whole.output, "omega_aragonite_a")),
        bits(read(&blocks.output, "omega_aragonite_a"))
    );
    let same_rows = whole
        .rows
        .iter()
        .filter(|r| r.statistic != "emergence_year")
        .all(|r| blocks.rows.contains(r));
    assert!(
        same_rows,
        "regional rows do not depend on the split into blocks"
    );
}
