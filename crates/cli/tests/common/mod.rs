//! Helpers shared by the command-line tests.
#![allow(dead_code)]

pub mod draw;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Runs the acidscape binary in the repository's root.
pub fn acidscape(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_acidscape"))
        .args(args)
        .current_dir(repository())
        .output()
        .unwrap()
}

/// `acidscape compute` on a bundled SYNTHETIC sample run (`sample-grids/RUN/PATHWAY`), written
/// as `RUN-PATHWAY.nc` in `out`.
pub fn compute(run: &str, pathway: &str, out: &Path) -> PathBuf {
    let output = out.join(format!("{run}-{pathway}.nc"));
    let inputs = format!("sample-grids/{run}/{pathway}/*.nc");
    let result = acidscape(&["compute", &inputs, "-o", output.to_str().unwrap()]);
    assert!(
        result.status.success(),
        "{}",
        String::from_utf8_lossy(&result.stderr)
    );
    output
}

/// Standard output and standard error as text.
pub fn text(output: &Output) -> (String, String) {
    (
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// Held for its whole length by each test that opens NetCDF files in this process and also
/// spawns acidscape: HDF5 does not open files close-on-exec, so a child spawned by one test
/// inherits the descriptor, and with it the HDF5 file lock, of a file another test has open,
/// and keeps that file locked after the test closes it (a later `compute` on it then fails
/// with "HDF error").
static ONE_AT_A_TIME: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Runs the calling test alone among those that take this guard.
pub fn one_at_a_time() -> std::sync::MutexGuard<'static, ()> {
    ONE_AT_A_TIME
        .lock()
        .unwrap_or_else(std::sync::PoisonError::into_inner)
}

/// The repository's root.
pub fn repository() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../..")
}

/// Copies the bundled SYNTHETIC cmip-style run (one pathway) into `dir` and returns the
/// copies, sorted, so a test that alters or tries to write over an input only ever touches
/// a copy.
pub fn copy_sample_run(dir: &Path) -> Vec<PathBuf> {
    let folder = repository().join("sample-grids/cmip-style/pathway-moderate");
    let mut files: Vec<PathBuf> = std::fs::read_dir(&folder)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "nc"))
        .map(|source| {
            let copy = dir.join(source.file_name().unwrap());
            std::fs::copy(&source, &copy).unwrap();
            copy
        })
        .collect();
    files.sort();
    files
}

/// Reads a CSV written by the tool into (header, rows).
pub fn read_table(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let mut reader = csv::Reader::from_path(path).expect("output table readable");
    let header = reader.headers().unwrap().iter().map(String::from).collect();
    let rows = reader
        .records()
        .map(|r| r.unwrap().iter().map(String::from).collect())
        .collect();
    (header, rows)
}

/// The index of a column, by its full header.
pub fn column(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
}
