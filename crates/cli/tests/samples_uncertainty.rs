//! `samples` with uncertainties: options and columns, absolute and relative, units, the
//! constants' defaults and their removal, the per-source breakdown, and clear refusals. The
//! propagation itself is checked against the solver and a Monte Carlo in the chemistry crate.

use acidscape_chem::{
    equilibrium_constants, solve_with_constants, standard_uncertainties, Conditions,
    ConstantChoice, ConstantUncertainties, InputPair, InputUncertainties, Output, SolvedSample,
    Uncertainties,
};
mod common;

use common::{column, read_table};
use std::path::PathBuf;
use std::process::{Command, Output as Run};

fn acidscape(args: &[&str]) -> Run {
    Command::new(env!("CARGO_BIN_EXE_acidscape"))
        .arg("samples")
        .args(args)
        .output()
        .unwrap()
}

/// Writes `table` to a fresh directory and runs `samples` on it with `options`; returns the
/// header and rows of the result.
fn run(table: &str, options: &[&str]) -> (Vec<String>, Vec<Vec<String>>) {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("in.csv");
    std::fs::write(&input, table).unwrap();
    let output = dir.path().join("out.csv");
    let mut args = vec![input.to_str().unwrap(), "-o", output.to_str().unwrap()];
    args.extend(options);
    let done = acidscape(&args);
    assert!(
        done.status.success(),
        "{}",
        String::from_utf8_lossy(&done.stderr)
    );
    read_table(&output)
}

fn value(header: &[String], row: &[String], name: &str) -> f64 {
    let i = column(header, name);
    row[i]
        .parse()
        .unwrap_or_else(|_| panic!("{name} = '{}'", row[i]))
}

/// A synthetic surface sample of the Varnholm Gulf (invented values).
const TABLE: &str = "temperature,salinity,pressure,alkalinity,dic,phosphate,silicate\n\
                     12,34.5,0,2290,2060,0.8,6\n";

fn conditions() -> Conditions {
    Conditions {
        temperature_c: 12.0,
        salinity: 34.5,
        pressure_dbar: 0.0,
        phosphate: 0.8,
        silicate: 6.0,
    }
}

/// The chemistry crate's combined standard uncertainties for the sample of [`TABLE`].
fn expected(u: &Uncertainties) -> acidscape_chem::PerOutput {
    let (c, choice) = (conditions(), ConstantChoice::default());
    let pair = InputPair::AlkalinityDic {
        alkalinity: 2290.0,
        dic: 2060.0,
    };
    let k = equilibrium_constants(&c, &choice).unwrap();
    let s = solve_with_constants(pair, &c, &k).unwrap();
    let sample = SolvedSample {
        pair: &pair,
        conditions: &c,
        choice: &choice,
        constants: &k,
        solution: &s,
    };
    standard_uncertainties(&sample, u)
}

/// The options giving alkalinity and DIC 2 µmol kg-1 each.
const CARBON_OPTIONS: [&str; 4] = ["--uncertainty", "dic=2", "--uncertainty", "alkalinity=2"];

/// Alkalinity and DIC at 2 µmol kg-1, with the given constants' uncertainties.
fn carbon_inputs(constants: ConstantUncertainties) -> Uncertainties {
    Uncertainties {
        inputs: InputUncertainties {
            alkalinity: 2.0,
            dic: 2.0,
            ..Default::default()
        },
        constants,
    }
}

/// Agreement to the four significant digits the table prints.
fn close(got: f64, expected: f64) -> bool {
    (got - expected).abs() <= 1e-3 * expected.abs()
}

#[test]
fn options_give_the_chemistry_crates_uncertainties() {
    let mut options = CARBON_OPTIONS.to_vec();
    options.extend([
        "--uncertainty",
        "temperature=0.1",
        "--uncertainty",
        "phosphate=10%",
    ]);
    let (header, rows) = run(TABLE, &options);
    let mut u = carbon_inputs(ConstantUncertainties::ORR_2018);
    (u.inputs.temperature, u.inputs.phosphate) = (0.1, 0.08);
    let want = expected(&u);
    for (name, output) in [
        ("ph_total_uncertainty", Output::PhTotal),
        ("carbonate_uncertainty [umol/kg]", Output::Carbonate),
        ("pco2_uncertainty [uatm]", Output::Pco2),
        ("omega_aragonite_uncertainty", Output::OmegaAragonite),
        ("revelle_factor_uncertainty", Output::RevelleFactor),
    ] {
        let got = value(&header, &rows[0], name);
        assert!(
            close(got, want.get(output)),
            "{name}: {got} vs {}",
            want.get(output)
        );
    }
}

#[test]
fn a_column_takes_precedence_over_the_option_and_constants_can_be_left_out() {
    // The column says 4 µmol kg-1 where the option says 2; constants left out, so the DIC
    // result's own uncertainty is exactly the column's.
    let table = "temperature,salinity,pressure,alkalinity,dic,dic_uncertainty,phosphate,silicate\n\
                 12,34.5,0,2290,2060,4,0.8,6\n\
                 12,34.5,0,2290,2060,,0.8,6\n";
    let (header, rows) = run(
        table,
        &["--uncertainty", "dic=2", "--no-constant-uncertainty"],
    );
    let dic = |row: &[String]| value(&header, row, "dic_result_uncertainty [umol/kg]");
    assert_eq!(dic(&rows[0]), 4.0);
    assert_eq!(dic(&rows[1]), 2.0, "an empty cell falls back to the option");
    let ph = value(&header, &rows[0], "ph_total_uncertainty");
    let want = expected(&Uncertainties {
        inputs: InputUncertainties {
            dic: 4.0,
            ..Default::default()
        },
        constants: ConstantUncertainties::NONE,
    });
    assert!(close(ph, want.get(Output::PhTotal)));
}

#[test]
fn per_volume_uncertainties_use_the_samples_density_and_relative_ones_the_value() {
    // DIC and its uncertainty in mol m-3 (density 1026.6 kg m-3 assumed for the numbers only;
    // the tool uses its own TEOS-10 density for both, so the ratio is what matters), and
    // alkalinity's as a percentage column.
    let rho = 1026.6_f64;
    let table = format!(
        "temperature,salinity,pressure,alkalinity,alkalinity_uncertainty [%],dic [mol m-3],dic_uncertainty\n\
         12,34.5,0,2290,0.1,{},{}\n",
        2060e-6 * rho,
        3e-6 * rho
    );
    let (header, rows) = run(&table, &["--no-constant-uncertainty"]);
    let dic = value(&header, &rows[0], "dic_result [umol/kg]");
    let u_dic = value(&header, &rows[0], "dic_result_uncertainty [umol/kg]");
    // Same per-volume factor on value and uncertainty: their ratio is kept.
    assert!(
        ((u_dic / dic) - 3.0 / 2060.0).abs() < 1e-3 * 3.0 / 2060.0,
        "{u_dic} of {dic}"
    );
    // 0.1 % of 2290 µmol kg-1.
    let u_ta = value(&header, &rows[0], "alkalinity_result_uncertainty [umol/kg]");
    assert!(close(u_ta, 2.29), "{u_ta}");
}

#[test]
fn the_breakdown_adds_up_to_the_combined_uncertainty() {
    let mut options = CARBON_OPTIONS.to_vec();
    options.extend([
        "--constant-uncertainty",
        "pk2=0.03",
        "--constant-uncertainty",
        "total_boron=3%",
        "--uncertainty-breakdown",
    ]);
    let (header, rows) = run(TABLE, &options);
    let row = &rows[0];
    let parts: Vec<f64> = header
        .iter()
        .enumerate()
        .filter(|(_, h)| h.starts_with("omega_aragonite_uncertainty_from_"))
        .map(|(i, _)| row[i].parse().unwrap())
        .collect();
    // alkalinity, dic and the eight constants.
    assert_eq!(parts.len(), 10, "{header:?}");
    let total = value(&header, row, "omega_aragonite_uncertainty");
    let root_sum_square = parts.iter().map(|p| p * p).sum::<f64>().sqrt();
    assert!(
        close(root_sum_square, total),
        "{root_sum_square} vs {total}"
    );
    // The overrides reached the chemistry.
    let want = expected(&carbon_inputs(ConstantUncertainties {
        pk2: 0.03,
        total_boron: 0.03,
        ..ConstantUncertainties::ORR_2018
    }));
    assert!(close(total, want.get(Output::OmegaAragonite)));
    let pk2 = value(&header, row, "omega_aragonite_uncertainty_from_pk2");
    assert!(pk2.abs() > 0.0);
}

#[test]
fn without_any_uncertainty_option_the_table_is_unchanged() {
    let (header, _) = run(TABLE, &[]);
    assert!(
        !header.iter().any(|h| h.contains("uncertainty")),
        "{header:?}"
    );
    // --with-uncertainty alone gives the constants' part.
    let (header, rows) = run(TABLE, &["--with-uncertainty"]);
    let want = expected(&Uncertainties::default());
    let got = value(&header, &rows[0], "ph_total_uncertainty");
    assert!(close(got, want.get(Output::PhTotal)));
}

#[test]
fn a_bad_uncertainty_cell_makes_a_missing_input_row_only() {
    let table =
        "temperature,temperature_uncertainty,salinity,pressure,alkalinity,dic,dic_uncertainty\n\
                 12,0.1,34.5,0,2290,2060,lots\n\
                 12,0.1,34.5,0,2290,2060,-1\n\
                 12,1%,34.5,0,2290,2060,2\n\
                 12,,34.5,0,2290,2060,2\n";
    let (header, rows) = run(table, &[]);
    let status = header.iter().position(|h| h == "status").unwrap();
    let detail = header.iter().position(|h| h == "status_detail").unwrap();
    assert_eq!(rows[0][status], "missing_input");
    assert!(
        rows[0][detail].contains("dic_uncertainty"),
        "{}",
        rows[0][detail]
    );
    assert_eq!(rows[1][status], "missing_input");
    assert!(
        rows[1][detail].contains("at least 0"),
        "{}",
        rows[1][detail]
    );
    assert_eq!(rows[2][status], "missing_input");
    assert!(
        rows[2][detail].contains("temperature"),
        "{}",
        rows[2][detail]
    );
    assert_eq!(rows[3][status], "ok");
}

fn refused(table: &str, options: &[&str]) -> String {
    let dir = tempfile::tempdir().unwrap();
    let input: PathBuf = dir.path().join("in.csv");
    std::fs::write(&input, table).unwrap();
    let output = dir.path().join("out.csv");
    let mut args = vec![input.to_str().unwrap(), "-o", output.to_str().unwrap()];
    args.extend(options);
    let done = acidscape(&args);
    assert!(!done.status.success(), "{options:?} was accepted");
    assert!(!output.exists());
    String::from_utf8_lossy(&done.stderr).into_owned()
}

#[test]
fn uncertainties_the_chemistry_cannot_use_are_refused_by_name() {
    let message = refused(TABLE, &["--uncertainty", "ph=0.01"]);
    assert!(
        message.contains("ph") && message.contains("computed"),
        "{message}"
    );
    let message = refused(TABLE, &["--uncertainty", "temperature=1%"]);
    assert!(message.contains("temperature"), "{message}");
    let message = refused(TABLE, &["--constant-uncertainty", "pk9=0.01"]);
    assert!(
        message.contains("pk9") && message.contains("pksp_aragonite"),
        "{message}"
    );
    let message = refused(TABLE, &["--constant-uncertainty", "pk1=1%"]);
    assert!(message.contains("pK units"), "{message}");
    let message = refused(
        TABLE,
        &[
            "--no-constant-uncertainty",
            "--constant-uncertainty",
            "pk1=0.01",
        ],
    );
    assert!(message.contains("contradict"), "{message}");
}
