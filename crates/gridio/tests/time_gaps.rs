//! Gaps are gaps: daily, monthly and yearly runs in the noleap, 360_day and standard
//! calendars, with and without time bounds, refuse a missing step wherever it lies, and
//! open when the user states the run is irregular. All data synthetic (tests/common).

mod common;

use acidscape_gridio::calendar::{Calendar, DateTime, TimeAxis};
use acidscape_gridio::{InputChecks, Run};
use common::*;
use std::path::Path;
use tempfile::tempdir;

#[derive(Clone, Copy, Debug)]
enum Every {
    Day,
    Month,
    Year,
}

/// (start, middle, end) of step `i` from 2015-01-01 in `calendar`.
fn step_dates(every: Every, i: usize, calendar: Calendar) -> (DateTime, DateTime, DateTime) {
    let at = |y: i64, m: u32, d: u32, h: u32| DateTime {
        hour: h,
        ..DateTime::date(y, m, d)
    };
    match every {
        Every::Month => {
            let (y, m) = (2015 + (i / 12) as i64, (i % 12) as u32 + 1);
            let (ny, nm) = if m == 12 { (y + 1, 1) } else { (y, m + 1) };
            (at(y, m, 1, 0), at(y, m, 15, 12), at(ny, nm, 1, 0))
        }
        Every::Year => {
            let y = 2015 + i as i64;
            (at(y, 1, 1, 0), at(y, 7, 1, 0), at(y + 1, 1, 1, 0))
        }
        Every::Day => {
            // Day i counted through the calendar's own months.
            let mut y = 2015;
            let mut m = 1;
            let mut d = i as u32 + 1;
            while d > calendar.days_in_month(y, m) {
                d -= calendar.days_in_month(y, m);
                m += 1;
                if m > 12 {
                    m = 1;
                    y += 1;
                }
            }
            let next = {
                let (mut ny, mut nm, mut nd) = (y, m, d + 1);
                if nd > calendar.days_in_month(ny, nm) {
                    nd = 1;
                    nm += 1;
                    if nm > 12 {
                        nm = 1;
                        ny += 1;
                    }
                }
                at(ny, nm, nd, 0)
            };
            (at(y, m, d, 0), at(y, m, d, 12), next)
        }
    }
}

/// Writes `steps` (indices into the sampling) in three files of all four inputs.
fn write_run(dir: &Path, every: Every, calendar: &str, steps: &[usize], bounds: bool) {
    let units = "days since 2015-01-01 00:00:00";
    let axis = TimeAxis::parse(units, Some(calendar)).unwrap();
    let value = |d: &DateTime| axis.from_datetime(d).unwrap();
    let third = steps.len().div_ceil(3);
    for (k, chunk) in steps.chunks(third).enumerate() {
        let dates: Vec<_> = chunk
            .iter()
            .map(|i| step_dates(every, *i, axis.calendar))
            .collect();
        let times: Vec<f64> = dates.iter().map(|(_, mid, _)| value(mid)).collect();
        let mut vars = coordinates(GRID, &times, units, calendar);
        let mut file_dims = dims(GRID, chunk.len());
        if bounds {
            vars[0] = vars[0].clone().attr("bounds", "time_bnds");
            let b: Vec<f64> = dates
                .iter()
                .flat_map(|(s, _, e)| [value(s), value(e)])
                .collect();
            vars.push(Var::new("time_bnds", &["time", "bnds"], b));
            file_dims.push(("bnds", 2));
        }
        // The synthetic fields of the first steps (values need not follow the dates).
        vars.extend(required_vars("tzyx", 0..chunk.len(), GRID));
        write_nc(&dir.join(format!("run_{k}.nc")), &file_dims, &vars);
    }
}

fn open(dir: &Path, irregular: bool) -> Result<Run, String> {
    open_dir(
        dir,
        InputChecks {
            irregular_time: irregular,
            ..Default::default()
        },
    )
}

const CALENDARS: [&str; 3] = ["noleap", "360_day", "standard"];

#[test]
fn complete_runs_open_and_report_their_sampling() {
    for (every, n, word) in [
        (Every::Day, 70, "daily"),
        (Every::Month, 26, "monthly"),
        (Every::Year, 9, "yearly"),
    ] {
        for calendar in CALENDARS {
            for bounds in [false, true] {
                let what = format!("{every:?} {calendar} bounds={bounds}");
                let dir = tempdir().unwrap();
                let steps: Vec<usize> = (0..n).collect();
                write_run(dir.path(), every, calendar, &steps, bounds);
                let run = open(dir.path(), false).unwrap_or_else(|e| panic!("{what}: {e}"));
                assert_eq!(run.time_steps(), n, "{what}");
                assert_eq!(run.time_sampling().as_deref(), Some(word), "{what}");
                let report = run.report();
                let how = if bounds {
                    "checked against the run's time bounds"
                } else {
                    "inferred from the time steps"
                };
                assert!(
                    report.contains(how) && report.contains("no gaps"),
                    "{what}:\n{report}"
                );
            }
        }
    }
}

#[test]
fn a_missing_step_is_refused_wherever_it_lies_unless_declared_irregular() {
    // (sampling, steps written, missing index); the missing step is inside a file for some,
    // between two files for others.
    for (every, n, missing) in [
        (Every::Day, 40, 13),
        (Every::Month, 26, 14),
        (Every::Month, 26, 9),
        (Every::Year, 9, 3),
    ] {
        for calendar in CALENDARS {
            for bounds in [false, true] {
                let what = format!("{every:?} {calendar} bounds={bounds} missing {missing}");
                let dir = tempdir().unwrap();
                let steps: Vec<usize> = (0..n).filter(|i| *i != missing).collect();
                write_run(dir.path(), every, calendar, &steps, bounds);
                let e = open(dir.path(), false)
                    .err()
                    .unwrap_or_else(|| panic!("{what}: opened"));
                assert!(
                    e.contains("time gap") && e.contains("run_") && e.contains("--irregular-time"),
                    "{what}: {e}"
                );
                if bounds {
                    assert!(
                        e.contains("by its time bounds") && e.contains("uncovered"),
                        "{what}: {e}"
                    );
                }
                let run = open(dir.path(), true).unwrap_or_else(|e| panic!("{what}: {e}"));
                assert!(
                    run.report().contains("1 break(s) accepted as intended"),
                    "{what}"
                );
                assert!(
                    run.provenance().iter().any(|(k, _)| k == "time_sampling"),
                    "{what}"
                );
            }
        }
    }
}

#[test]
fn a_missing_month_among_three_steps_is_found_whatever_the_median_step() {
    // January, March and April: the median step (about 45 days) would pass March.
    for calendar in CALENDARS {
        let dir = tempdir().unwrap();
        write_run(dir.path(), Every::Month, calendar, &[0, 2, 3], false);
        let e = open(dir.path(), false).err().unwrap();
        assert!(e.contains("2 calendar month(s) apart"), "{calendar}: {e}");
    }
}

#[test]
fn a_missing_year_among_many_is_found() {
    // Half the years missing: the shortest step still says yearly.
    let dir = tempdir().unwrap();
    write_run(
        dir.path(),
        Every::Year,
        "noleap",
        &[0, 1, 3, 5, 7, 9],
        false,
    );
    let e = open(dir.path(), false).err().unwrap();
    // Breaks after 2016, 2018, 2020 and 2022: the first is named, the others counted.
    assert!(
        e.contains("sampled yearly") && e.contains("3 more break(s)"),
        "{e}"
    );
}

#[test]
fn time_bounds_that_overlap_are_refused() {
    let dir = tempdir().unwrap();
    write_run(
        dir.path(),
        Every::Month,
        "noleap",
        &(0..6).collect::<Vec<_>>(),
        true,
    );
    // The second file's first upper bound moved a day back into the month before.
    let path = dir.path().join("run_1.nc");
    acidscape_gridio::prepare_hdf5();
    let mut file = netcdf::append(&path).unwrap();
    let mut b = file.variable_mut("time_bnds").unwrap();
    let mut values: Vec<f64> = b.get_values(..).unwrap();
    values[0] -= 1.0;
    b.put_values(&values, ..).unwrap();
    file.close().unwrap();
    let e = open(dir.path(), false).err().unwrap();
    assert!(
        e.contains("overlap by 1 days") && e.contains("run_0.nc") && e.contains("run_1.nc"),
        "{e}"
    );
}
