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
                let values: Vec<i16> = variable.get_values(..).unwrap();
                values.into_iter().map(|v| v as u16 as u32).collect()
            } else {
                let values: Vec<f32> = variable.get_values(..).unwrap();
                values.into_iter().map(f32::to_bits).collect()
            };
            (name.to_string(), bits)
        })
        .collect()
}

/// Starts `compute` in the background, its stderr piped or dropped.
fn spawn_compute(inputs: &[PathBuf], output: &Path, stderr: Stdio) -> std::process::Child {
    Command::new(BIN)
        .arg("compute")
        .args(inputs)
        .arg("-o")
        .arg(output)
        .stdout(Stdio::null())
        .stderr(stderr)
        .spawn()
        .unwrap()
}

fn partial(output: &Path) -> PathBuf {
    let name = output.file_name().unwrap().to_string_lossy();
    output.with_file_name(format!(".{name}.partial"))
}

#[test]
fn stopped_run_leaves_no_output_and_resume_matches_a_whole_run() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let whole = dir.path().join("whole.nc");
    let out = compute(&inputs, &whole, &[], &[]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(String::from_utf8_lossy(&out.stdout).contains("quality_flag"));

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
    let _serial = common::one_at_a_time();
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
    let mut child = spawn_compute(&inputs, &killed, Stdio::piped());
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
    let _serial = common::one_at_a_time();
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
    check_nothing_written(
        &compute(&inputs, &output, &["--omega-thresholds", "quartz=1.5"], &[]),
        "unknown mineral 'quartz'",
    );
    check_nothing_written(
        &compute(
            &inputs,
            &output,
            &[
                "--indicators",
                "ph,omega-aragonite",
                "--omega-thresholds",
                "calcite=2",
            ],
            &[],
        ),
        "omega-calcite is not among the indicators computed",
    );
    check_nothing_written(
        &compute(
            &inputs,
            &output,
            &["--no-horizons", "--omega-thresholds", "aragonite=1.5"],
            &[],
        ),
        "--no-horizons",
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
    let _serial = common::one_at_a_time();
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

/// A copy of the sample run in a temporary folder, and an uninterrupted output of it.
fn sample_and_whole_run() -> (tempfile::TempDir, Vec<PathBuf>, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let whole = dir.path().join("whole.nc");
    assert_success(&compute(&inputs, &whole, &[], &[]));
    (dir, inputs, whole)
}

fn assert_success(out: &Output) {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// `compute` under a file-size limit (`ulimit -f`, in the shell's blocks of 512 bytes), with
/// SIGXFSZ ignored so that writes past it fail with EFBIG, as on a full disk or quota.
fn compute_with_size_limit(inputs: &[PathBuf], output: &Path, blocks: u64) -> Output {
    Command::new("sh")
        .arg("-c")
        .arg(format!(
            "trap '' XFSZ; ulimit -f {blocks}; exec \"$0\" \"$@\""
        ))
        .arg(BIN)
        .arg("compute")
        .args(inputs)
        .arg("-o")
        .arg(output)
        .output()
        .unwrap()
}

#[test]
fn a_write_failure_mid_run_resumes_to_identical_values() {
    let _serial = common::one_at_a_time();
    let (dir, inputs, whole) = sample_and_whole_run();
    let size = std::fs::metadata(&whole).unwrap().len();

    // Failing while the output is being set up: nothing is kept, the same command runs again.
    let early = dir.path().join("early.nc");
    let out = compute_with_size_limit(&inputs, &early, 8);
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("nothing was kept"), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(!early.exists() && !partial(&early).exists(), "{stderr}");
    assert_success(&compute(&inputs, &early, &[], &[]));
    assert_eq!(data_bits(&whole), data_bits(&early));

    // Failing after some, most, or nearly all time steps.
    for fraction in [0.1, 0.3, 0.45] {
        let output = dir.path().join(format!("limited-{fraction}.nc"));
        let blocks = (size as f64 * fraction / 512.0) as u64;
        let out = compute_with_size_limit(&inputs, &output, blocks);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{stderr}");
        assert!(
            stderr.contains("time steps are finished and kept")
                && stderr.contains("--resume")
                && stderr.contains("full disk"),
            "{stderr}"
        );
        assert!(!output.exists() && partial(&output).exists(), "{stderr}");
        let out = compute(&inputs, &output, &["--resume"], &[]);
        assert_success(&out);
        assert_eq!(data_bits(&whole), data_bits(&output), "limit at {fraction}");
    }
}

/// Starts `compute` and sends `signal` (a `kill` option, e.g. "-TERM") once `steps` steps are
/// reported durable. Returns the exit status and what the job wrote to stderr, or `None` when the
/// job finished before the signal reached it.
fn signal_after(
    inputs: &[PathBuf],
    output: &Path,
    signal: &str,
    steps: usize,
) -> Option<(std::process::ExitStatus, String)> {
    let mut child = spawn_compute(inputs, output, Stdio::piped());
    let mut lines = BufReader::new(child.stderr.take().unwrap()).lines();
    let mut seen = String::new();
    let wanted = format!("{steps}/{SAMPLE_STEPS} time steps written");
    for line in lines.by_ref() {
        let line = line.unwrap();
        seen.push_str(&line);
        seen.push('\n');
        if line.contains(&wanted) {
            let sent = Command::new("kill")
                .arg(signal)
                .arg(child.id().to_string())
                .status()
                .unwrap();
            assert!(sent.success());
            break;
        }
    }
    for line in lines {
        seen.push_str(&line.unwrap());
        seen.push('\n');
    }
    let status = child.wait().unwrap();
    (!status.success()).then_some((status, seen))
}

#[test]
fn sigterm_and_sigint_end_the_job_cleanly_and_resumably() {
    let _serial = common::one_at_a_time();
    let (dir, inputs, whole) = sample_and_whole_run();
    for (signal, name, code, steps) in [("-TERM", "SIGTERM", 143, 1), ("-INT", "SIGINT", 130, 2)] {
        let output = dir.path().join(format!("{name}.nc"));
        // The job may, rarely, finish before the signal arrives: then try again.
        let (status, stderr) = (0..5)
            .find_map(|_| {
                let _ = std::fs::remove_file(&output);
                signal_after(&inputs, &output, signal, steps)
            })
            .expect("the job always finished before the signal");
        assert_eq!(status.code(), Some(code), "{stderr}");
        assert!(
            stderr.contains(&format!("stopped by {name}"))
                && stderr.contains("time steps are finished and kept")
                && stderr.contains("--resume"),
            "{stderr}"
        );
        assert!(!output.exists() && partial(&output).exists(), "{stderr}");
        assert_success(&compute(&inputs, &output, &["--resume"], &[]));
        assert_eq!(data_bits(&whole), data_bits(&output), "{name}");
    }
}

#[test]
fn a_kill_at_any_moment_leaves_one_way_on() {
    let _serial = common::one_at_a_time();
    let (dir, inputs, whole) = sample_and_whole_run();
    for delay_ms in [0, 2, 5, 10, 20, 40, 80, 160, 320] {
        let output = dir.path().join(format!("killed-{delay_ms}.nc"));
        let mut child = spawn_compute(&inputs, &output, Stdio::null());
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        let _ = child.kill();
        if child.wait().unwrap().success() {
            continue; // finished before the kill
        }
        assert!(
            !output.exists(),
            "a killed job left a complete-looking output"
        );
        // The same command again either just works (nothing was left) or says what to pass.
        let again = compute(&inputs, &output, &[], &[]);
        if !again.status.success() {
            let stderr = String::from_utf8_lossy(&again.stderr);
            assert!(
                stderr.contains("interrupted run left") && stderr.contains("--resume"),
                "after a kill at {delay_ms} ms: {stderr}"
            );
            assert!(!stderr.contains("HDF error"), "{stderr}");
            assert_success(&compute(&inputs, &output, &["--resume"], &[]));
        }
        assert_eq!(
            data_bits(&whole),
            data_bits(&output),
            "kill at {delay_ms} ms"
        );
    }
}

#[test]
fn copied_and_touched_inputs_resume_and_changed_ones_are_refused() {
    let _serial = common::one_at_a_time();
    let (dir, inputs, whole) = sample_and_whole_run();
    let stop = |output: &Path, steps: &str| {
        let out = compute(
            &inputs,
            output,
            &[],
            &[("ACIDSCAPE_STOP_AFTER_STEPS", steps)],
        );
        assert!(!out.status.success() && partial(output).exists());
    };

    // The run copied to another scratch folder, with new modification times.
    let output = dir.path().join("moved.nc");
    stop(&output, "3");
    let scratch = dir.path().join("scratch-again");
    std::fs::create_dir(&scratch).unwrap();
    let later = std::time::SystemTime::now() + std::time::Duration::from_secs(7200);
    let copies: Vec<PathBuf> = inputs
        .iter()
        .map(|source| {
            let copy = scratch.join(source.file_name().unwrap());
            std::fs::copy(source, &copy).unwrap();
            let file = std::fs::File::options().write(true).open(&copy).unwrap();
            file.set_modified(later).unwrap();
            copy
        })
        .collect();
    let out = compute(&copies, &output, &["--resume"], &[]);
    assert_success(&out);
    assert!(String::from_utf8_lossy(&out.stdout).contains("resumed at time step 4"));
    assert_eq!(data_bits(&whole), data_bits(&output));

    // A file whose steps are finished now holds other values: refused by name, work kept.
    let output = dir.path().join("changed.nc");
    stop(&output, "8");
    let first_half = inputs
        .iter()
        .find(|p| p.to_string_lossy().contains("talk_pathway-moderate_201501"))
        .unwrap();
    {
        let mut file = netcdf::append(first_half).unwrap();
        let mut talk = file.variable_mut("talk").unwrap();
        let values: Vec<f32> = talk.get_values((0..1, 0..1, 10..11, 10..11)).unwrap();
        talk.put_values(&[values[0] * 1.01], (0..1, 0..1, 10..11, 10..11))
            .unwrap();
    }
    let out = compute(&inputs, &output, &["--resume"], &[]);
    assert!(!out.status.success());
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains(&first_half.display().to_string()) && stderr.contains("--overwrite"),
        "{stderr}"
    );
    assert!(partial(&output).exists() && !output.exists());
}

/// The end-of-run summary counts every bit of the flag as the output holds it, and reports
/// the corrosive water as the extent table holds it.
#[test]
fn the_summary_counts_each_flag_bit() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let inputs = sample_run(dir.path());
    let output = dir.path().join("out.nc");
    let out = compute(&inputs, &output, &[], &[]);
    assert_success(&out);
    let stdout = String::from_utf8_lossy(&out.stdout);
    let flags: Vec<i16> = netcdf::open(&output)
        .unwrap()
        .variable("quality_flag")
        .unwrap()
        .get_values(..)
        .unwrap();
    let wet: Vec<i16> = flags.into_iter().filter(|f| *f != -1).collect();
    let printed = |word: &str| -> u64 {
        let line = stdout
            .lines()
            .find(|l| l.split_whitespace().nth(1) == Some(word))
            .unwrap_or_else(|| panic!("no line for {word}: {stdout}"));
        line.split_whitespace().nth(2).unwrap().parse().unwrap()
    };
    for (mask, word) in [
        (1, "temperature_below_validity_range"),
        (2, "temperature_above_validity_range"),
        (4, "salinity_below_validity_range"),
        (8, "salinity_above_validity_range"),
        (16, "pressure_above_validity_range"),
        (32, "input_outside_seawater_limits"),
        (64, "no_physical_solution"),
        (128, "missing_input"),
    ] {
        let in_file = wet.iter().filter(|f| *f & mask != 0).count() as u64;
        assert_eq!(printed(word), in_file, "{word}");
    }
    // The synthetic basin's deep water (about 2 °C) lies below Lueker et al. 2000's 2 °C and
    // Mucci 1983's 5 °C: the deep cells carry the temperature bit, and the summary says why.
    assert!(printed("temperature_below_validity_range") > 0);
    assert!(stdout.contains("below 5 °C (Mucci 1983: Ksp)"), "{stdout}");
    let no_flag = wet.iter().filter(|f| **f == 0).count();
    assert!(
        stdout.contains(&format!("and {no_flag} with no flag set")),
        "{stdout}"
    );
    assert_summary_reports_the_extent_table(&stdout, &output);
}

/// The end-of-run summary reports the corrosive water of the first and last step as the
/// table beside the output holds it.
fn assert_summary_reports_the_extent_table(stdout: &str, output: &Path) {
    let table = std::fs::read_to_string(output.with_extension("extent.csv")).unwrap();
    let value = |step: usize, quantity: &str| -> f64 {
        let prefix = format!(",{step},{quantity},aragonite,1,");
        let line = table
            .lines()
            .find(|l| l.contains(&prefix))
            .unwrap_or_else(|| panic!("no {quantity} at step {step}:\n{table}"));
        line.split(',').nth(5).unwrap().parse().unwrap()
    };
    for step in [1, SAMPLE_STEPS] {
        let fraction = 100.0 * value(step, "volume_fraction_below_threshold");
        let depth = value(step, "mean_horizon_depth");
        let line = stdout
            .lines()
            .find(|l| l.trim_start().starts_with(&format!("step {step} (")))
            .unwrap_or_else(|| panic!("no line for step {step}: {stdout}"));
        assert!(
            line.contains(&format!(
                "aragonite: {fraction:.1} % of the volume, mean horizon depth {depth:.0} m"
            )),
            "{line}"
        );
    }
    assert!(stdout.contains("out.extent.csv"), "{stdout}");
}
