//! The `samples` subcommand end to end: a table in, a table out, one status per row.

mod common;

use common::{column, read_table};
use std::path::{Path, PathBuf};
use std::process::Command;

fn acidscape() -> Command {
    Command::new(env!("CARGO_BIN_EXE_acidscape"))
}

fn bundled_table() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../sample-grids/bottle-samples.csv")
}

/// Statuses whose rows carry no computed values.
fn rows_without_values(status: &str) -> bool {
    [
        "input_outside_seawater_limits",
        "no_physical_solution",
        "missing_input",
    ]
    .iter()
    .any(|word| status.split(' ').any(|w| w == *word))
}

#[test]
fn every_row_gets_a_status_and_bad_rows_do_not_stop_the_others() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("results.csv");
    let status = acidscape()
        .args([
            "samples",
            bundled_table().to_str().unwrap(),
            "-o",
            out.to_str().unwrap(),
        ])
        .status()
        .unwrap();
    assert!(status.success());
    let (header, rows) = read_table(&out);
    assert_eq!(rows.len(), 10, "one output row per input row");
    let status_col = column(&header, "status");
    let ph_col = column(&header, "ph_total");
    let statuses: Vec<&str> = rows.iter().map(|r| r[status_col].as_str()).collect();
    // Rows 8 and 10 of the synthetic table are broken on purpose (no temperature; negative DIC).
    assert_eq!(statuses[7], "missing_input");
    assert_eq!(statuses[9], "input_outside_seawater_limits");
    assert!(rows[7][ph_col].is_empty() && rows[9][ph_col].is_empty());
    // Row 9 is at 37.5 °C, above the 35 °C limit of Lueker et al. 2000 (check-values.md).
    assert_eq!(statuses[8], "temperature_above_validity_range");
    assert!(rows[8][column(&header, "status_detail")].contains("Lueker"));
    // Every other row has a plausible seawater pH (common practice: 7.3-8.5 in the open ocean).
    for (row, status) in rows.iter().zip(&statuses) {
        if !rows_without_values(status) {
            let ph: f64 = row[ph_col].parse().unwrap();
            assert!((7.3..8.5).contains(&ph), "pH {ph} implausible");
        }
    }
    // Nothing half-written is left beside the output.
    let leftovers: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(leftovers.len(), 1);
}

#[test]
fn per_volume_units_use_the_samples_density() {
    // One sample in µmol kg-1, and the same sample in mol m-3 converted with a hand-computed
    // TEOS-10 density; both must give the same pH.
    // In-situ density at SP = 35, t = 10 °C, p = 0: 1026.95 kg m-3 (TEOS-10, computed with the
    // gsw 75-term rho at SA = 35.16504, CT = 10.0 ± 0.01; from memory to 0.01 kg m-3).
    let dir = tempfile::tempdir().unwrap();
    let mass = dir.path().join("mass.csv");
    let volume = dir.path().join("volume.csv");
    let rho = 1026.95_f64;
    std::fs::write(
        &mass,
        "temperature,salinity,pressure,alkalinity [umol/kg],dic [umol/kg]\n10,35,0,2300,2100\n",
    )
    .unwrap();
    std::fs::write(
        &volume,
        format!(
            "temperature,salinity,pressure,alkalinity [mol m-3],dic [mol m-3]\n10,35,0,{},{}\n",
            2300e-6 * rho,
            2100e-6 * rho
        ),
    )
    .unwrap();
    let mut ph = Vec::new();
    for input in [&mass, &volume] {
        let out = input.with_extension("out.csv");
        let ok = acidscape()
            .args([
                "samples",
                input.to_str().unwrap(),
                "-o",
                out.to_str().unwrap(),
            ])
            .status()
            .unwrap()
            .success();
        assert!(ok);
        let (header, rows) = read_table(&out);
        let dic: f64 = rows[0][column(&header, "dic_result [umol/kg]")]
            .parse()
            .unwrap();
        assert!(
            (dic - 2100.0).abs() < 0.05,
            "DIC {dic} after density conversion"
        );
        ph.push(rows[0][column(&header, "ph_total")].parse::<f64>().unwrap());
    }
    // Orr et al. 2015 tolerance class: 0.0002 in pH.
    assert!((ph[0] - ph[1]).abs() < 2e-4, "{ph:?}");
}

#[test]
fn refuses_to_overwrite_the_input_or_an_existing_output() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("t.csv");
    std::fs::copy(bundled_table(), &table).unwrap();
    let original = std::fs::read(&table).unwrap();
    let over_input = acidscape()
        .args([
            "samples",
            table.to_str().unwrap(),
            "-o",
            table.to_str().unwrap(),
            "--overwrite",
        ])
        .output()
        .unwrap();
    assert!(!over_input.status.success());
    assert!(String::from_utf8_lossy(&over_input.stderr).contains("overwrite the input"));
    assert_eq!(std::fs::read(&table).unwrap(), original, "input untouched");

    let existing = dir.path().join("old.csv");
    std::fs::write(&existing, "keep me").unwrap();
    let refused = acidscape()
        .args([
            "samples",
            table.to_str().unwrap(),
            "-o",
            existing.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert!(!refused.status.success());
    assert!(String::from_utf8_lossy(&refused.stderr).contains("--overwrite"));
    assert_eq!(std::fs::read_to_string(&existing).unwrap(), "keep me");
}

#[test]
fn a_table_without_an_input_pair_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("t.csv");
    std::fs::write(
        &table,
        "temperature,salinity,pressure,alkalinity\n10,35,0,2300\n",
    )
    .unwrap();
    let out = acidscape()
        .args([
            "samples",
            table.to_str().unwrap(),
            "-o",
            dir.path().join("o.csv").to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let message = String::from_utf8_lossy(&out.stderr);
    assert!(
        message.contains("t.csv") && message.contains("input pair"),
        "{message}"
    );
    assert!(!dir.path().join("o.csv").exists());
}

#[test]
fn other_pairs_and_renamed_columns_reproduce_the_alkalinity_dic_result() {
    // (TA, DIC) -> pH, then (DIC, pH) with renamed columns must return the same alkalinity.
    let dir = tempfile::tempdir().unwrap();
    let first = dir.path().join("first.csv");
    std::fs::write(&first, "T,S,P,TA,DIC\n4,34.7,1000,2340,2240\n").unwrap();
    let first_out = dir.path().join("first.out.csv");
    assert!(acidscape()
        .args([
            "samples",
            first.to_str().unwrap(),
            "-o",
            first_out.to_str().unwrap()
        ])
        .status()
        .unwrap()
        .success());
    let (header, rows) = read_table(&first_out);
    let ph = &rows[0][column(&header, "ph_total")];

    let second = dir.path().join("second.csv");
    std::fs::write(
        &second,
        format!("temp_c,sal,depth_dbar,carbon,acidity\n4,34.7,1000,2240,{ph}\n"),
    )
    .unwrap();
    let second_out = dir.path().join("second.out.csv");
    let ok = acidscape()
        .args([
            "samples",
            second.to_str().unwrap(),
            "-o",
            second_out.to_str().unwrap(),
            "--pair",
            "dic-ph",
            "--column",
            "temperature=temp_c",
            "--column",
            "salinity=sal",
            "--column",
            "pressure=depth_dbar",
            "--column",
            "dic=carbon",
            "--column",
            "ph=acidity",
        ])
        .output()
        .unwrap();
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
    let (header, rows) = read_table(&second_out);
    let ta: f64 = rows[0][column(&header, "alkalinity_result [umol/kg]")]
        .parse()
        .unwrap();
    // pH printed to 6 decimals: 1e-6 in pH moves TA by well under 0.01 µmol kg-1.
    assert!((ta - 2340.0).abs() < 0.02, "alkalinity {ta}");
}

/// The status names the same bits as the grid flag (README, "Quality flag"): one row per
/// reason, each known to breach one published range or to have no solution. Ranges: Lueker et
/// al. 2000, 2-35 °C and S 19-43 (check-values.md); Mucci 1983 from 5 °C, Millero 1995
/// pressure corrections to 1000 bar, Perez & Fraga 1987 KF from 9 °C (from memory).
#[test]
fn statuses_name_each_reason_and_the_summary_counts_them() {
    let dir = tempfile::tempdir().unwrap();
    let table = dir.path().join("reasons.csv");
    std::fs::write(
        &table,
        "case,temperature,salinity,pressure,alkalinity,dic\n\
         typical,18,35,100,2300,2050\n\
         cold-deep,1.5,34.7,4000,2350,2250\n\
         brine,20,50,0,2300,2000\n\
         hot,40,35,0,2300,2000\n\
         trench,6,34.7,10500,2350,2250\n\
         negative-alkalinity,10,35,0,-5,2000\n\
         missing-dic,10,35,0,2300,\n\
         no-solution,10,35,100,49000,0.001\n\
         kf-only,7,35,0,2300,2100\n",
    )
    .unwrap();
    let out = dir.path().join("reasons.out.csv");
    let run = acidscape()
        .arg("samples")
        .args([&table, Path::new("-o"), &out])
        .output()
        .unwrap();
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let (header, rows) = read_table(&out);
    let (status, detail, ph) = (
        column(&header, "status"),
        column(&header, "status_detail"),
        column(&header, "ph_total"),
    );
    let expected = [
        ("typical", "ok"),
        ("cold-deep", "temperature_below_validity_range"),
        ("brine", "salinity_above_validity_range"),
        ("hot", "temperature_above_validity_range"),
        ("trench", "pressure_above_validity_range"),
        ("negative-alkalinity", "input_outside_seawater_limits"),
        ("missing-dic", "missing_input"),
        ("no-solution", "no_physical_solution"),
        ("kf-only", "ok"),
    ];
    for (row, (case, want)) in rows.iter().zip(expected) {
        assert_eq!(row[0], case);
        assert_eq!(row[status], want, "{case}: {}", row[detail]);
        // Flags never change values: flagged rows that were solved keep their numbers.
        assert_eq!(row[ph].is_empty(), rows_without_values(want), "{case}");
    }
    // KF's range (Perez & Fraga 1987) is noted but sets no bit: its alkalinity term is negligible.
    for (row, words) in [
        (1, "Lueker et al. 2000 (K1, K2)"),
        (4, "Millero 1995"),
        (5, "alkalinity"),
        (6, "dic is missing"),
        (8, "Perez & Fraga 1987"),
    ] {
        assert!(rows[row][detail].contains(words), "{}", rows[row][detail]);
    }

    let summary = String::from_utf8_lossy(&run.stdout);
    assert!(summary.contains("9 samples"), "{summary}");
    for (word, count) in [
        ("ok", 2),
        ("temperature_below_validity_range", 1),
        ("salinity_above_validity_range", 1),
        ("input_outside_seawater_limits", 1),
        ("no_physical_solution", 1),
        ("missing_input", 1),
    ] {
        let line = summary
            .lines()
            .find(|l| l.split_whitespace().next() == Some(word))
            .unwrap_or_else(|| panic!("no line for {word} in {summary}"));
        assert!(line.trim_end().ends_with(&format!(" {count}")), "{line}");
    }
}
