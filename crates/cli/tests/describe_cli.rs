//! The `describe` subcommand on the bundled SYNTHETIC sample runs.

use std::path::{Path, PathBuf};
use std::process::Command;

fn sample_folder(run: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../sample-grids")
        .join(run)
        .join("pathway-moderate")
}

fn describe(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_acidscape"))
        .arg("describe")
        .args(args)
        .output()
        .unwrap()
}

/// Wet cells counted straight from the file: values of dissic at the first time step that are
/// not the CF `_FillValue` (CF conventions, section 2.5.1).
fn wet_cells_in_file(path: &Path) -> usize {
    let file = netcdf::open(path).unwrap();
    let variable = file.variable("dissic").unwrap();
    let fill: f32 = match variable.attribute_value("_FillValue").unwrap().unwrap() {
        netcdf::AttributeValue::Float(v) => v,
        other => panic!("unexpected _FillValue {other:?}"),
    };
    let first_step: Vec<f32> = variable.get_values((0, .., .., ..)).unwrap();
    first_step.iter().filter(|v| **v != fill).count()
}

#[test]
fn explains_a_cmip_style_run_and_its_work_split() {
    let folder = sample_folder("cmip-style");
    let pattern = format!("{}/*.nc", folder.display());
    let out = describe(&[&pattern, "--memory-budget", "1GiB"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    for expected in [
        "dissic",
        "talk",
        "thetao",
        "mol m-3",
        "noleap",
        "12 steps",
        "slab",
        // The geometry the horizons and volumes would use (sample-grids/README.md).
        "cell areas: the run's 'areacello'",
        "sea floor: the run's 'deptho'",
        "level bounds: level bounds 'lev_bnds' of 'lev'",
    ] {
        assert!(
            text.contains(expected),
            "'{expected}' missing from:\n{text}"
        );
    }
    let wet = wet_cells_in_file(&folder.join("dissic_pathway-moderate_201501-201506.nc"));
    assert!(
        text.contains(&format!("Wet cells per time step: {wet} of")),
        "expected {wet} wet cells in:\n{text}"
    );
}

#[test]
fn a_run_without_carbon_is_refused_with_what_was_found() {
    let folder = sample_folder("cmip-style");
    let pattern = format!("{}/thetao_*.nc", folder.display());
    let out = describe(&[&pattern]);
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(
        message.contains("dic") && message.contains("thetao"),
        "{message}"
    );
}

#[test]
fn a_budget_too_small_for_one_row_is_refused() {
    let pattern = format!("{}/*.nc", sample_folder("curvilinear").display());
    let out = describe(&[&pattern, "--memory-budget", "1MiB"]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("--memory-budget"));
}

#[test]
fn every_help_page_carries_the_cautions() {
    for args in [
        vec!["--help"],
        vec!["compute", "--help"],
        vec!["describe", "--help"],
        vec!["samples", "--help"],
    ] {
        let out = Command::new(env!("CARGO_BIN_EXE_acidscape"))
            .args(&args)
            .output()
            .unwrap();
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(out.status.success(), "{args:?}");
        assert!(
            text.contains("not measurements") && text.contains("validity range"),
            "{args:?}: {text}"
        );
    }
}
