//! Helpers shared by the `samples` tests.

use std::path::Path;

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
