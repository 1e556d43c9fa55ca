//! The `compute` subcommand as a user runs it, on a copy of the bundled SYNTHETIC cmip-style
//! sample run (sample-grids/cmip-style/pathway-moderate: 12 monthly steps in two files per
//! variable), with outputs compared value by value at full float precision.

mod common;

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

const BIN: &str = env!("CARGO_BIN_EXE_acidscape");
const VARIABLES: [&str; 6] = [
    "ph",
    "co3",
    "pco2",
    "omega_aragonite",
    "omega_calcite",
    "quality_flag",
];
const SAMPLE_STEPS: usize = 12;

/// Copies the bundled cmip-style run (one pathway) into `dir` and returns the copies, so a test
/// that tries to write over an input can only ever touch a copy.
fn sample_run(dir: &Path) -> Vec<PathBuf> {
    common::copy_sample_run(dir)
}

fn compute(inputs: &[PathBuf], output: &Path, extra: &[&str], env: &[(&str, &str)]) -> Output {
    let mut command = Command::new(BIN);
    command
        .arg("compute")
        .args(inputs)
        .arg("-o")
        .arg(output)
        .args(extra);
    for (key, value) in env {
        command.env(key, value);
    }
    command.output().unwrap()
}

/// Every value of the chosen variables, as raw bits (fill values included), for bitwise checks.
fn data_bits(path: &Path) -> Vec<(String, Vec<u32>)> {
    let file = netcdf::open(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    VARIABLES
        .iter()
        .map(|name| {
            let variable = file
                .variable(name)
                .unwrap_or_else(|| panic!("{} has no {name}", path.display()));
            let bits = if *name == "quality_flag" {
                let values: Vec<i8> = variable.get_values(..).unwrap();
                values.into_iter().map(|v| v as u8 as u32).collect()
            } else {
                let values: Vec<f32> = variable.get_values(..).unwrap();
                values.into_iter().map(f32::to_bits).collect()
            };
            (name.to_string(), bits)
        })
        .collect()
}

fn partial(output: &Path) -> PathBuf {
    let name = output.file_name().unwrap().to_string_lossy();
    output.with_file_name(format!(".{name}.partial"))
}

#[test]
fn stopped_run_leaves_no_output_and_resume_matches_a_whole_run() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let whole = dir.path().join("whole.nc");
    let out = compute(&inputs, &whole, &[], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("quality flags"));

    let pieces = dir.path().join("pieces.nc");
    let out = compute(
        &inputs,
        &pieces,
        &[],
        &[("ACIDSCAPE_STOP_AFTER_STEPS", "2")],
    );
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("--resume"), "{stderr}");
    assert!(
        !pieces.exists(),
        "a stopped run must not leave a complete-looking output"
    );
    assert!(partial(&pieces).exists());

    let out = compute(&inputs, &pieces, &["--resume"], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!partial(&pieces).exists());
    assert_eq!(data_bits(&whole), data_bits(&pieces));
}

#[test]
fn killed_run_resumes_to_identical_values() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let whole = dir.path().join("whole.nc");
    let out = compute(&inputs, &whole, &[], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    // SIGKILL as soon as the first time step is reported durable.
    let killed = dir.path().join("killed.nc");
    let mut child = Command::new(BIN)
        .arg("compute")
        .args(&inputs)
        .arg("-o")
        .arg(&killed)
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let stderr = child.stderr.take().unwrap();
    let mut finished_early = true;
    for line in BufReader::new(stderr).lines() {
        if line
            .unwrap()
            .contains(&format!("1/{SAMPLE_STEPS} time steps written"))
        {
            child.kill().unwrap();
            finished_early = false;
            break;
        }
    }
    let status = child.wait().unwrap();
    assert!(!finished_early, "the run never reported a finished step");
    assert!(
        !status.success(),
        "the run finished before it could be killed"
    );
    assert!(
        !killed.exists(),
        "a killed run must not leave a complete-looking output"
    );
    let out = compute(&inputs, &killed, &["--resume"], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(data_bits(&whole), data_bits(&killed));
}

#[test]
fn bad_inputs_and_options_fail_before_any_output() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let output = dir.path().join("out.nc");
    let check_nothing_written = |out: &Output, expect: &str| {
        assert!(!out.status.success());
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(stderr.contains(expect), "expected '{expect}' in: {stderr}");
        assert!(!output.exists() && !partial(&output).exists(), "{stderr}");
    };

    let missing = vec![dir.path().join("no-such-file.nc")];
    check_nothing_written(&compute(&missing, &output, &[], &[]), "no-such-file.nc");

    // Only temperature files: no DIC in the run.
    let temperature_only: Vec<PathBuf> = inputs
        .iter()
        .filter(|p| {
            p.file_name()
                .unwrap()
                .to_string_lossy()
                .starts_with("thetao")
        })
        .cloned()
        .collect();
    check_nothing_written(&compute(&temperature_only, &output, &[], &[]), "dic");

    check_nothing_written(
        &compute(&inputs, &output, &["--indicators", "ph,omega"], &[]),
        "omega-aragonite",
    );
    check_nothing_written(
        &compute(&inputs, &output, &["--memory-budget", "lots"], &[]),
        "--memory-budget",
    );

    // An output directory that cannot exist (its parent is a file) fails before compute.
    let blocker = dir.path().join("a-file");
    std::fs::write(&blocker, b"").unwrap();
    let out = compute(&inputs, &blocker.join("out.nc"), &[], &[]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("a-file"));
    assert!(String::from_utf8_lossy(&out.stdout).is_empty());
}

#[test]
fn never_replaces_an_input_or_an_existing_output() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let before = std::fs::read(&inputs[0]).unwrap();
    let out = compute(&inputs, &inputs[0], &["--overwrite"], &[]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("is an input"));
    assert_eq!(std::fs::read(&inputs[0]).unwrap(), before);

    let output = dir.path().join("out.nc");
    std::fs::write(&output, b"precious").unwrap();
    let out = compute(&inputs, &output, &[], &[]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("--overwrite"));
    assert_eq!(std::fs::read(&output).unwrap(), b"precious");
    let out = compute(&inputs, &output, &["--overwrite"], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(netcdf_magic(&output));
}

/// NetCDF-4 files are HDF5 files: they start with the HDF5 signature.
fn netcdf_magic(path: &Path) -> bool {
    std::fs::read(path).is_ok_and(|bytes| bytes.starts_with(b"\x89HDF\r\n\x1a\n"))
}
