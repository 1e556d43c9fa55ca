//! `describe` and `compute` on runs that fail the input checks, as a user meets them: a
//! copy of the bundled SYNTHETIC cmip-style sample run, altered in the test.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const BIN: &str = env!("CARGO_BIN_EXE_acidscape");

fn sample_copy(dir: &Path) -> Vec<PathBuf> {
    common::copy_sample_run(dir)
}

/// Relabels a variable's units in one file (values untouched).
fn relabel(path: &Path, variable: &str, units: &str) {
    let mut file = netcdf::append(path).unwrap();
    let mut var = file.variable_mut(variable).unwrap();
    var.put_attribute("units", units).unwrap();
    file.close().unwrap();
}

fn acidscape(args: &[&str], inputs: &[PathBuf]) -> Output {
    Command::new(BIN).args(args).args(inputs).output().unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

#[test]
fn describe_reports_implausible_inputs_and_compute_refuses_them_unless_accepted() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_copy(dir.path());
    // The second half-year of alkalinity labelled mmol m-3 while it holds mol m-3.
    let relabelled = dir.path().join("talk_pathway-moderate_201507-201512.nc");
    relabel(&relabelled, "talk", "mmol m-3");

    let out = acidscape(&["describe"], &inputs);
    assert!(!out.status.success());
    let (stdout, stderr) = (text(&out.stdout), text(&out.stderr));
    assert!(
        stdout.contains("Checks:")
            && stdout.contains("IMPLAUSIBLE")
            && stdout.contains("1000 times too small"),
        "{stdout}\n{stderr}"
    );
    assert!(stdout.contains("files differ"), "{stdout}");
    assert!(stderr.contains("compute would refuse this run"), "{stderr}");

    let out = acidscape(&["describe", "--accept-implausible-inputs"], &inputs);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains("accepted with --accept-implausible-inputs"));

    let output = dir.path().join("indicators.nc");
    let out = acidscape(&["compute", "-o", output.to_str().unwrap()], &inputs);
    assert!(!out.status.success());
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains(&relabelled.display().to_string())
            && stderr.contains("--accept-implausible-inputs"),
        "{stderr}"
    );
    assert!(!output.exists());

    let out = acidscape(
        &[
            "compute",
            "-o",
            output.to_str().unwrap(),
            "--accept-implausible-inputs",
        ],
        &inputs,
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    let file = netcdf::open(&output).unwrap();
    let processing: String = file
        .attribute("input_processing")
        .unwrap()
        .value()
        .unwrap()
        .try_into()
        .unwrap();
    assert!(
        processing.contains("implausible_inputs_accepted"),
        "{processing}"
    );
}

#[test]
fn describe_shows_the_sampling_and_absent_nutrients() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let inputs: Vec<PathBuf> = sample_copy(dir.path())
        .into_iter()
        .filter(|p| !p.file_name().unwrap().to_string_lossy().starts_with("si_"))
        .collect();
    let out = acidscape(&["describe"], &inputs);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    assert!(stdout.contains("sampling: monthly"), "{stdout}");
    assert!(
        stdout.contains("silicate         not in the run: assumed zero"),
        "{stdout}"
    );
}

/// Adds `days` to the time coordinate and its bounds in one file.
fn shift_time(path: &Path, days: f64) {
    let mut file = netcdf::append(path).unwrap();
    for name in ["time", "time_bnds"] {
        let mut var = file.variable_mut(name).unwrap();
        let values: Vec<f64> = var.get_values(..).unwrap();
        let shifted: Vec<f64> = values.iter().map(|v| v + days).collect();
        var.put_values(&shifted, ..).unwrap();
    }
    file.close().unwrap();
}

#[test]
fn a_gap_is_refused_unless_the_run_is_declared_irregular() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_copy(dir.path());
    // The second half-year of every variable moved on by 61 days: July and August are
    // missing between the two files.
    for path in inputs
        .iter()
        .filter(|p| p.to_string_lossy().contains("201507-201512"))
    {
        shift_time(path, 61.0);
    }
    let out = acidscape(&["describe"], &inputs);
    assert!(!out.status.success());
    let stderr = text(&out.stderr);
    assert!(
        stderr.contains("time gap")
            && stderr.contains("201501-201506.nc")
            && stderr.contains("201507-201512.nc")
            && stderr.contains("monthly (by its time bounds)")
            && stderr.contains("--irregular-time"),
        "{stderr}"
    );
    let out = acidscape(&["describe", "--irregular-time"], &inputs);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(text(&out.stdout).contains("1 break(s) accepted as intended"));
}
