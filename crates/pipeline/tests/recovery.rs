//! Failures a user can recover from, on SYNTHETIC runs written by the test (tests/common):
//! a damaged or vanished input found mid-run, then fixed; inputs copied or touched between
//! runs; inputs whose content changed; every state an interrupted run can leave; a stop
//! request (what SIGINT/SIGTERM set). Each must end in an output identical, bit for bit, to an
//! uninterrupted run, or in one message that names the way out.

mod common;

use acidscape_pipeline::{
    partial_path, progress_path, run_job, JobOptions, JobSummary, NoProgress, PipelineError,
    Progress, StopRequest,
};
use common::*;
use std::path::{Path, PathBuf};

/// 9 monthly steps in 3 files (steps 0-2, 3-5, 6-8), deflated like model output.
const STEPS: usize = 9;
const FILES: usize = 3;

fn run_to(inputs: &[PathBuf], output: &Path) -> Result<JobSummary, PipelineError> {
    run_with(inputs, output, |_| {})
}

fn run_with(
    inputs: &[PathBuf],
    output: &Path,
    adjust: impl FnOnce(&mut JobOptions),
) -> Result<JobSummary, PipelineError> {
    let mut job = options(output, every_indicator());
    adjust(&mut job);
    run_job(&open_run(inputs), &job, &mut NoProgress)
}

fn resume(inputs: &[PathBuf], output: &Path) -> Result<JobSummary, PipelineError> {
    run_with(inputs, output, |o| o.resume = true)
}

/// An uninterrupted run of the same inputs, for comparison.
fn whole_run(dir: &Path, inputs: &[PathBuf]) -> (PathBuf, JobSummary) {
    let whole = dir.join("whole.nc");
    let summary = run_to(inputs, &whole).unwrap();
    (whole, summary)
}

fn assert_kept_and_resumable(err: &PipelineError, steps_done: usize, output: &Path) {
    let message = err.to_string();
    assert!(
        matches!(err, PipelineError::Interrupted { steps_done: s, .. } if *s == steps_done),
        "{message}"
    );
    assert!(
        message.contains(&format!("{steps_done} of {STEPS} time steps are finished"))
            && message.contains("--resume")
            && message.contains("--overwrite"),
        "{message}"
    );
    assert!(!output.exists(), "nothing complete-looking: {message}");
    assert!(partial_path(output).exists() && progress_path(output).exists());
}

#[test]
fn a_damaged_chunk_found_mid_run_resumes_after_the_file_is_replaced() {
    // (variable, step whose chunk is damaged): steps inside a later file (read in part), a step
    // inside the first file. The first step of every file is read when the run is opened, so
    // damage there stops the job before any work (see the next test).
    for (variable, step) in [("thetao", 4), ("dissic", 7), ("so", 5), ("talk", 1)] {
        let dir = tempfile::tempdir().unwrap();
        let inputs = write_compressed_run(dir.path(), STEPS, FILES);
        let (whole, full) = whole_run(dir.path(), &inputs);
        let file = step / 3;
        corrupt_step(&inputs[file], variable, step);

        let output = dir.path().join("out.nc");
        let err = run_to(&inputs, &output).unwrap_err();
        assert_kept_and_resumable(&err, step, &output);
        let message = err.to_string();
        assert!(
            message.contains(&inputs[file].display().to_string()) && message.contains(variable),
            "the message names the file and variable: {message}"
        );
        // Until the file is fixed, resuming fails the same way and keeps the work.
        let err = resume(&inputs, &output).unwrap_err();
        assert_kept_and_resumable(&err, step, &output);

        rewrite_file(&inputs[file], file * 3..file * 3 + 3, true);
        if file == 0 {
            // The first file holds the coordinates read at every step: no resume once it
            // changed; the message says so and --overwrite starts over.
            assert_refused_by_name(&inputs, &output, &inputs[0], "every finished time step");
            run_with(&inputs, &output, |o| o.overwrite = true).unwrap();
            assert_same_output(&whole, &output);
            continue;
        }
        let resumed = resume(&inputs, &output).unwrap();
        // The replaced file had been read in part: its steps are computed again.
        assert_eq!(resumed.first_step, step.min(file * 3), "{variable} {step}");
        assert_eq!(resumed.counts, full.counts);
        assert_same_output(&whole, &output);
        assert!(!partial_path(&output).exists() && !progress_path(&output).exists());
    }
}

#[test]
fn a_damaged_first_step_of_a_later_file_is_refused_before_any_work() {
    for (variable, step) in [("thetao", 3), ("talk", 6)] {
        let dir = tempfile::tempdir().unwrap();
        let inputs = write_compressed_run(dir.path(), STEPS, FILES);
        let file = step / 3;
        corrupt_step(&inputs[file], variable, step);
        let spec = acidscape_gridio::RunSpec {
            inputs: inputs.iter().map(|p| p.display().to_string()).collect(),
            ..Default::default()
        };
        let message = match acidscape_gridio::Run::open(&spec) {
            Ok(_) => panic!("{variable} step {step}: a damaged file opened"),
            Err(e) => e.to_string(),
        };
        assert!(
            message.contains(&inputs[file].display().to_string()) && message.contains(variable),
            "the message names the file and variable: {message}"
        );
        let output = dir.path().join("out.nc");
        assert!(!output.exists() && !partial_path(&output).exists());
    }
}

#[test]
fn a_file_that_vanishes_mid_run_resumes_once_it_is_back() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_compressed_run(dir.path(), STEPS, FILES);
    let (whole, _) = whole_run(dir.path(), &inputs);
    let output = dir.path().join("out.nc");
    // The last file disappears once two steps are done, as on a scratch file system purged
    // during the job.
    let kept = dir.path().join("kept.nc");
    let mut vanish = AtStep {
        step: 2,
        action: || std::fs::rename(&inputs[2], &kept).unwrap(),
    };
    let job = options(&output, every_indicator());
    let err = run_job(&open_run(&inputs), &job, &mut vanish).unwrap_err();
    assert_kept_and_resumable(&err, 6, &output);
    assert!(err.to_string().contains("synthetic_run_part2.nc"), "{err}");

    std::fs::rename(&kept, &inputs[2]).unwrap();
    let resumed = resume(&inputs, &output).unwrap();
    assert_eq!(resumed.first_step, 6);
    assert_same_output(&whole, &output);
}

/// Does something once `step` steps are durable (on the job's writing thread).
struct AtStep<F: FnMut()> {
    step: usize,
    action: F,
}

impl<F: FnMut()> Progress for AtStep<F> {
    fn step_finished(&mut self, steps_done: usize, _steps_total: usize) {
        if steps_done == self.step {
            (self.action)();
        }
    }
}

fn stop_after(inputs: &[PathBuf], output: &Path, steps: usize) {
    let err = run_with(inputs, output, |o| o.stop_after_steps = Some(steps)).unwrap_err();
    assert_kept_and_resumable(&err, steps, output);
}

/// Copies of `inputs` in `dir`, with modification times an hour later.
fn copied_and_touched(inputs: &[PathBuf], dir: &Path) -> Vec<PathBuf> {
    std::fs::create_dir_all(dir).unwrap();
    let later = std::time::SystemTime::now() + std::time::Duration::from_secs(3600);
    inputs
        .iter()
        .map(|source| {
            let copy = dir.join(source.file_name().unwrap());
            std::fs::copy(source, &copy).unwrap();
            let file = std::fs::File::options().write(true).open(&copy).unwrap();
            file.set_modified(later).unwrap();
            copy
        })
        .collect()
}

#[test]
fn copied_or_touched_inputs_keep_their_identity() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_compressed_run(dir.path(), STEPS, FILES);
    let (whole, _) = whole_run(dir.path(), &inputs);

    // Copied to another scratch folder, with new modification times.
    let output = dir.path().join("copied.nc");
    stop_after(&inputs, &output, 4);
    let copies = copied_and_touched(&inputs, &dir.path().join("scratch-again"));
    let resumed = resume(&copies, &output).unwrap();
    assert_eq!(resumed.first_step, 4);
    assert_same_output(&whole, &output);

    // Touched in place.
    let output = dir.path().join("touched.nc");
    stop_after(&inputs, &output, 5);
    let touched = copied_and_touched(&inputs, &dir.path().join("in-place"));
    for (copy, original) in touched.iter().zip(&inputs) {
        std::fs::rename(copy, original).unwrap();
    }
    let resumed = resume(&inputs, &output).unwrap();
    assert_eq!(resumed.first_step, 5);
    assert_same_output(&whole, &output);
}

/// Writes another DIC value into one cell of `path` at local time index `index`.
fn change_a_value(path: &Path, index: usize) {
    let mut file = netcdf::append(path).unwrap();
    let mut dic = file.variable_mut("dissic").unwrap();
    dic.put_values(&[2.5f32], (index, 1, 2, 3)).unwrap();
}

fn assert_refused_by_name(inputs: &[PathBuf], output: &Path, file: &Path, why: &str) {
    let err = resume(inputs, output).unwrap_err().to_string();
    assert!(
        err.contains(&file.display().to_string())
            && err.contains(why)
            && err.contains("--overwrite"),
        "{err}"
    );
    assert!(partial_path(output).exists() && progress_path(output).exists());
}

#[test]
fn inputs_with_other_content_are_refused_by_name_once_read() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_compressed_run(dir.path(), STEPS, FILES);

    // A file whose steps are all finished (steps 3-5 of 6 done): refused, the work kept.
    let output = dir.path().join("finished.nc");
    stop_after(&inputs, &output, 6);
    change_a_value(&inputs[1], 1);
    assert_refused_by_name(&inputs, &output, &inputs[1], "already finished");
    // --overwrite starts over with the inputs as they are.
    run_with(&inputs, &output, |o| o.overwrite = true).unwrap();

    // The first file holds the run's coordinates (latitude is read for every step).
    let output = dir.path().join("first.nc");
    stop_after(&inputs, &output, 4);
    change_a_value(&inputs[0], 1);
    assert_refused_by_name(
        &inputs,
        &output,
        &inputs[0],
        "every finished time step used it",
    );

    // A file read in part (steps 3-5, 4 done): its steps are computed again.
    let output = dir.path().join("in-part.nc");
    stop_after(&inputs, &output, 4);
    change_a_value(&inputs[1], 2);
    assert_eq!(resume(&inputs, &output).unwrap().first_step, 3);
    let (whole, _) = whole_run(dir.path(), &inputs);
    assert_same_output(&whole, &output);

    // A file the finished steps have not read yet: used as it is now.
    let output = dir.path().join("later.nc");
    stop_after(&inputs, &output, 4);
    change_a_value(&inputs[2], 0);
    assert_eq!(resume(&inputs, &output).unwrap().first_step, 4);
    std::fs::remove_file(&whole).unwrap();
    let (whole, _) = whole_run(dir.path(), &inputs);
    assert_same_output(&whole, &output);
}

#[test]
fn every_state_an_interrupted_run_leaves_has_one_way_out() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_compressed_run(dir.path(), STEPS, FILES);
    let (whole, _) = whole_run(dir.path(), &inputs);
    let output = dir.path().join("out.nc");
    let plain = |output: &Path| run_to(&inputs, output).unwrap_err().to_string();

    // Stopped right after the output was set up (the first progress record, no step done).
    stop_after(&inputs, &output, 0);
    let err = plain(&output);
    assert!(
        err.contains("0 of 9 time steps finished") && err.contains("--resume"),
        "{err}"
    );
    assert_eq!(resume(&inputs, &output).unwrap().first_step, 0);
    assert_same_output(&whole, &output);
    std::fs::remove_file(&output).unwrap();

    // Killed while setting up the output, before the first progress record: an empty or a
    // truncated partial file. Both options start again.
    let real = std::fs::read(&whole).unwrap();
    for (leftover, option) in [(&real[..0], "--resume"), (&real[..4096], "--overwrite")] {
        std::fs::write(partial_path(&output), leftover).unwrap();
        let err = plain(&output);
        assert!(
            err.contains("before finishing any time step")
                && err.contains("--resume")
                && err.contains("--overwrite"),
            "{err}"
        );
        let finished = run_with(&inputs, &output, |o| {
            o.resume = option == "--resume";
            o.overwrite = option == "--overwrite";
        });
        assert_eq!(finished.unwrap().first_step, 0);
        assert_same_output(&whole, &output);
        std::fs::remove_file(&output).unwrap();
    }

    // A progress record whose partial output is gone.
    stop_after(&inputs, &output, 2);
    std::fs::remove_file(partial_path(&output)).unwrap();
    for err in [
        plain(&output),
        resume(&inputs, &output).unwrap_err().to_string(),
    ] {
        assert!(
            err.contains("is gone") && err.contains("--overwrite"),
            "{err}"
        );
    }
    run_with(&inputs, &output, |o| o.overwrite = true).unwrap();

    // A finished output and a stale record (killed between the rename and the clean-up).
    std::fs::write(progress_path(&output), "acidscape-progress 2\n").unwrap();
    assert!(plain(&output).contains("already exists; pass --overwrite"));
    let err = resume(&inputs, &output).unwrap_err().to_string();
    assert!(
        err.contains("nothing to resume") && err.contains("complete"),
        "{err}"
    );
    std::fs::remove_file(&output).unwrap();
    std::fs::remove_file(progress_path(&output)).unwrap();

    // A damaged progress record or partial output: start over.
    stop_after(&inputs, &output, 3);
    let record = std::fs::read(progress_path(&output)).unwrap();
    std::fs::write(progress_path(&output), &record[..record.len() / 3]).unwrap();
    for err in [
        plain(&output),
        resume(&inputs, &output).unwrap_err().to_string(),
    ] {
        assert!(
            err.contains("damaged") && err.contains("--overwrite"),
            "{err}"
        );
    }
    std::fs::write(progress_path(&output), &record).unwrap();
    let partial = std::fs::read(partial_path(&output)).unwrap();
    std::fs::write(partial_path(&output), &partial[..2048]).unwrap();
    let err = resume(&inputs, &output).unwrap_err().to_string();
    assert!(
        err.contains("cannot be opened") && err.contains("--overwrite"),
        "{err}"
    );
    run_with(&inputs, &output, |o| o.overwrite = true).unwrap();
    assert_same_output(&whole, &output);
}

/// Asks the job to stop, as a signal handler would, once `after` steps are durable.
struct StopAfter {
    stop: StopRequest,
    after: usize,
    signal: usize,
}

impl Progress for StopAfter {
    fn step_finished(&mut self, steps_done: usize, _steps_total: usize) {
        if steps_done == self.after {
            self.stop.request(self.signal);
        }
    }
}

#[test]
fn a_stop_request_ends_the_job_cleanly_and_resumably() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_compressed_run(dir.path(), STEPS, FILES);
    let (whole, _) = whole_run(dir.path(), &inputs);
    for (signal, name, after) in [(15, "SIGTERM", 1), (2, "SIGINT", 5)] {
        let output = dir.path().join(format!("{name}.nc"));
        let mut job = options(&output, every_indicator());
        job.max_rows_per_slab = Some(2);
        let mut progress = StopAfter {
            stop: job.stop.clone(),
            after,
            signal,
        };
        let err = run_job(&open_run(&inputs), &job, &mut progress).unwrap_err();
        assert_eq!(err.signal(), Some(signal));
        assert_kept_and_resumable(&err, after, &output);
        assert!(err.to_string().contains(name), "{err}");
        let resumed = resume(&inputs, &output).unwrap();
        assert_eq!(resumed.first_step, after);
        assert_same_output(&whole, &output);
    }

    // A stop asked before the job starts writing leaves nothing at all.
    let output = dir.path().join("early.nc");
    let job = options(&output, every_indicator());
    job.stop.request(15);
    let err = run_job(&open_run(&inputs), &job, &mut NoProgress).unwrap_err();
    assert!(matches!(err, PipelineError::Signal { signal: 15 }), "{err}");
    assert!(!output.exists() && !partial_path(&output).exists());
    assert!(!progress_path(&output).exists());
}
