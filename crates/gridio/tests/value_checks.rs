//! Implausible inputs stop a run when it is opened, before any long work, unless the user
//! accepts them; a few bad cells do not. All data synthetic (tests/common).

mod common;

use acidscape_gridio::{InputChecks, Run};
use common::*;
use std::path::Path;
use tempfile::tempdir;

const STEPS: usize = 4;

/// Four monthly steps in two files per variable (plus phosphate); `alter` may rewrite the
/// second file's variable.
fn run_with(dir: &Path, alter: &dyn Fn(&str, Var) -> Var) {
    split_run(
        dir,
        &["dissic", "talk", "thetao", "so", "po4"],
        STEPS,
        alter,
    );
}

fn open(dir: &Path, accept: bool) -> Result<Run, String> {
    open_dir(
        dir,
        InputChecks {
            accept_implausible: accept,
            ..Default::default()
        },
    )
}

fn each(v: Var, f: impl Fn(f64) -> f64) -> Var {
    map_values(v, f)
}

/// The error opening a run whose second `name` file is rewritten, and the run's folder.
fn refused(name: &str, rewrite: &dyn Fn(Var) -> Var, what: &str) -> (tempfile::TempDir, String) {
    let dir = tempdir().unwrap();
    run_with(dir.path(), &only(name, rewrite));
    let e = open(dir.path(), false)
        .err()
        .unwrap_or_else(|| panic!("{what}: opened"));
    (dir, e)
}

type Rewrite = Box<dyn Fn(Var) -> Var>;

#[test]
fn entirely_missing_inputs_are_refused_unless_accepted() {
    let variants: [(&str, &str, Rewrite); 3] = [
        (
            "DIC all _FillValue",
            "dissic",
            Box::new(|v| each(v, |_| 1e20)),
        ),
        (
            "salinity all missing_value",
            "so",
            Box::new(|v| each(v.attr("missing_value", -1.0_f32), |_| -1.0)),
        ),
        (
            "phosphate all NaN",
            "po4",
            Box::new(|v| each(v, |_| f64::NAN)),
        ),
    ];
    for (what, name, rewrite) in variants {
        let (dir, e) = refused(name, &rewrite, what);
        let file = dir.path().join(format!("{name}_b.nc"));
        assert!(
            e.contains(&file.display().to_string())
                && e.contains("time step 3")
                && e.contains("no value at any of the")
                && e.contains("--accept-implausible-inputs"),
            "{what}: {e}"
        );
        let run = open(dir.path(), true).unwrap_or_else(|e| panic!("{what}: {e}"));
        assert!(
            run.report()
                .contains("accepted with --accept-implausible-inputs"),
            "{what}"
        );
        assert!(
            run.provenance()
                .iter()
                .any(|(k, v)| k == "implausible_inputs_accepted"
                    && v.contains(&format!("{name}_b.nc"))),
            "{what}"
        );
    }
}

#[test]
fn values_far_outside_their_range_are_refused_with_the_likely_cause() {
    let variants: [(&str, &str, Rewrite, &str); 5] = [
        (
            "alkalinity in mol m-3 labelled mmol m-3",
            "talk",
            Box::new(|v| v.with("units", "mmol m-3")),
            "1000 times too small",
        ),
        (
            "DIC in mmol m-3 labelled mol m-3",
            "dissic",
            Box::new(|v| each(v, |x| x * 1000.0)),
            "1000 times too large",
        ),
        (
            "kelvin labelled degC",
            "thetao",
            Box::new(|v| each(v, |x| x + 273.15)),
            "look like kelvin",
        ),
        (
            "salinity all zero",
            "so",
            Box::new(|v| each(v, |_| 0.0)),
            "zero or near zero",
        ),
        (
            "negative DIC",
            "dissic",
            Box::new(|v| each(v, |x| -x)),
            "outside 100 to 10000",
        ),
    ];
    for (what, name, rewrite, says) in variants {
        let (dir, e) = refused(name, &rewrite, what);
        assert!(
            e.contains(&format!("{name}_b.nc"))
                && e.contains("100.0 % of the 60 sampled cells")
                && e.contains(says),
            "{what}: {e}"
        );
        assert!(
            open(dir.path(), true).is_ok(),
            "{what}: not accepted with the option"
        );
    }
}

#[test]
fn a_few_bad_cells_are_left_to_the_quality_flag() {
    let dir = tempdir().unwrap();
    // One cell of 60 in the second file's first step for each of DIC (negative), salinity
    // (0) and temperature (60 °C): 1 of the 120 sampled cells of each, 0.8 %.
    run_with(dir.path(), &|var, v| {
        let mut v = v;
        match var {
            "dissic" => v.values[0] = -1.0,
            "so" => v.values[10] = 0.0,
            "thetao" => v.values[20] = 60.0,
            _ => {}
        }
        v
    });
    let run = open(dir.path(), false).unwrap();
    assert!(run.implausible_inputs().is_empty());
    let report = run.report();
    assert_eq!(report.matches("0.8 % outside").count(), 3, "{report}");
}

#[test]
fn long_runs_are_sampled_in_bounded_steps_but_files_that_differ_always() {
    let dir = tempdir().unwrap();
    let n = 40;
    let times = noleap_months(n);
    for var in REQUIRED {
        for step in 0..n {
            let mut vars = coordinates(
                GRID,
                &times[step..step + 1],
                "days since 2015-01-01",
                "noleap",
            );
            let mut data = cmip_var(var, "tzyx", step..step + 1, GRID);
            // One month of alkalinity in the middle labelled in other (wrong) units.
            if var == "talk" && step == 23 {
                data = data.with("units", "mmol m-3");
            }
            vars.push(data);
            write_nc(
                &dir.path().join(format!("{var}_{step:03}.nc")),
                &dims(GRID, 1),
                &vars,
            );
        }
    }
    let e = open(dir.path(), false).err().unwrap();
    assert!(
        e.contains("talk_023.nc") && e.contains("1000 times too small"),
        "{e}"
    );
    let run = open(dir.path(), true).unwrap();
    let report = run.report();
    assert!(
        report.contains("24 time step(s) sampled") && report.contains("thinned evenly"),
        "{report}"
    );
}
