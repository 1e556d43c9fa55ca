//! `samples`: the chemistry for a table of water samples (bottle data, mooring records, what-if cases).
//! Each row gets a status naming the same reasons as the quality flag of grids; a bad row never
//! stops the others.

mod columns;

pub(crate) mod uncertainty;

use crate::run_options::ConstantOptions;
use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair, Solution, Validity};
use acidscape_gridio::seawater;
use acidscape_gridio::units;
use acidscape_pipeline::flags::{
    error_flag, meanings_of, range_flag, Flag, FlagCounts, FLAG_BITS, MISSING_INPUT,
};
use clap::{Args, ValueEnum};
use columns::{
    conversion_for, locate_columns, role_options, split_header, Column, Conversion, Role,
};
use std::collections::BTreeMap;
use std::error::Error;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use uncertainty::{Propagation, UncertaintyOptions};

#[derive(Args, Debug)]
pub struct SamplesArgs {
    /// CSV table of samples, one row each, with a header row
    #[arg(value_name = "TABLE")]
    pub input: PathBuf,

    /// Where to write the results (CSV); refused if it exists unless --overwrite
    #[arg(short, long, value_name = "FILE")]
    pub output: PathBuf,

    /// Which two carbonate quantities fix the system (default: alkalinity and DIC when both
    /// columns exist, else the only complete pair)
    #[arg(long, value_enum)]
    pub pair: Option<PairChoice>,

    /// Read a role from a differently named column, e.g. --column dic=TCO2 (roles: alkalinity,
    /// dic, ph, pco2, temperature, salinity, pressure, depth, latitude, phosphate, silicate)
    #[arg(long = "column", value_name = "ROLE=HEADER")]
    pub columns: Vec<String>,

    /// Units of a role's column when the header does not state them in brackets,
    /// e.g. --units dic=mol/m3 (defaults: umol/kg, degC, dbar, m, practical salinity, uatm)
    #[arg(long = "units", value_name = "ROLE=UNITS")]
    pub units: Vec<String>,

    /// Latitude [degrees north] for turning depth into pressure when the table has no latitude column
    #[arg(long, value_name = "DEG")]
    pub latitude: Option<f64>,

    /// Replace the output file if it exists
    #[arg(long)]
    pub overwrite: bool,

    #[command(flatten)]
    pub constants: ConstantOptions,

    #[command(flatten)]
    pub uncertainty: UncertaintyOptions,
}

/// Input pairs offered on the command line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum PairChoice {
    AlkalinityDic,
    AlkalinityPh,
    DicPh,
    AlkalinityPco2,
    DicPco2,
}

impl PairChoice {
    fn roles(self) -> [Role; 2] {
        match self {
            Self::AlkalinityDic => [Role::Alkalinity, Role::Dic],
            Self::AlkalinityPh => [Role::Alkalinity, Role::Ph],
            Self::DicPh => [Role::Dic, Role::Ph],
            Self::AlkalinityPco2 => [Role::Alkalinity, Role::Pco2],
            Self::DicPco2 => [Role::Dic, Role::Pco2],
        }
    }

    /// The chemistry's input pair from the values of the two roles, in `roles()` order.
    fn input_pair(self, a: f64, b: f64) -> InputPair {
        match self {
            PairChoice::AlkalinityDic => InputPair::AlkalinityDic {
                alkalinity: a,
                dic: b,
            },
            PairChoice::AlkalinityPh => InputPair::AlkalinityPh {
                alkalinity: a,
                ph_total: b,
            },
            PairChoice::DicPh => InputPair::DicPh {
                dic: a,
                ph_total: b,
            },
            PairChoice::AlkalinityPco2 => InputPair::AlkalinityPco2 {
                alkalinity: a,
                pco2_uatm: b,
            },
            PairChoice::DicPco2 => InputPair::DicPco2 {
                dic: a,
                pco2_uatm: b,
            },
        }
    }
}

fn choose_pair(args: &SamplesArgs, columns: &BTreeMap<Role, Column>) -> Result<PairChoice, String> {
    let has = |choice: PairChoice| choice.roles().iter().all(|r| columns.contains_key(r));
    if let Some(choice) = args.pair {
        return if has(choice) {
            Ok(choice)
        } else {
            let [a, b] = choice.roles();
            Err(format!(
                "--pair needs columns for '{}' and '{}'",
                a.key(),
                b.key()
            ))
        };
    }
    PairChoice::value_variants()
        .iter()
        .copied()
        .find(|&c| has(c))
        .ok_or_else(|| {
            "the table has no complete input pair: it needs two of alkalinity, dic, ph, pco2 \
             (with alkalinity or dic among them); name columns with --column ROLE=HEADER"
                .to_string()
        })
}

/// One row's physical state and pair, in the chemistry's units, or why the row cannot be used.
struct RowInputs {
    pair: InputPair,
    conditions: Conditions,
}

/// Reads a role's raw value from a row; empty cells are `None`.
fn raw_value(
    record: &csv::StringRecord,
    column: &Column,
    role: Role,
) -> Result<Option<f64>, String> {
    let text = record.get(column.index).unwrap_or("").trim();
    if text.is_empty() || text.eq_ignore_ascii_case("nan") || text.eq_ignore_ascii_case("na") {
        return Ok(None);
    }
    text.parse::<f64>()
        .map(Some)
        .map_err(|_| format!("{} is '{text}', not a number", role.key()))
}

fn row_inputs(
    record: &csv::StringRecord,
    columns: &BTreeMap<Role, Column>,
    pair_choice: PairChoice,
    latitude_option: Option<f64>,
) -> Result<RowInputs, String> {
    let value = |role: Role| -> Result<Option<f64>, String> {
        match columns.get(&role) {
            Some(column) => raw_value(record, column, role),
            None => Ok(None),
        }
    };
    let required = |role: Role| -> Result<f64, String> {
        value(role)?.ok_or_else(|| format!("{} is missing", role.key()))
    };
    let scale = |role: Role, raw: f64| match columns[&role].conversion {
        Conversion::Scale(factor) => raw * factor,
        _ => raw,
    };

    let temperature = match columns.get(&Role::Temperature).map(|c| c.conversion) {
        Some(Conversion::Temperature(u)) => u.to_celsius(required(Role::Temperature)?),
        _ => return Err("temperature is missing".into()),
    };
    let salinity = match columns.get(&Role::Salinity).map(|c| c.conversion) {
        Some(Conversion::Salinity(units::SalinityUnits::Practical)) => required(Role::Salinity)?,
        Some(Conversion::Salinity(units::SalinityUnits::Absolute { to_g_per_kg })) => {
            seawater::practical_from_absolute(required(Role::Salinity)? * to_g_per_kg)
        }
        _ => return Err("salinity is missing".into()),
    };
    let pressure = match value(Role::Pressure)? {
        Some(p) => scale(Role::Pressure, p),
        None => {
            let depth = value(Role::Depth)?
                .map(|d| scale(Role::Depth, d))
                .ok_or("neither pressure nor depth is given (surface samples: pressure 0)")?;
            let latitude = value(Role::Latitude)?.or(latitude_option).ok_or(
                "depth needs a latitude (a latitude column or --latitude) to become pressure",
            )?;
            seawater::sea_pressure_from_depth(depth, latitude).map_err(|e| e.to_string())?
        }
    };
    // Per-volume concentrations need the sample's own density (in-situ, TEOS-10).
    let density =
        || seawater::in_situ_density(salinity, temperature, pressure).map_err(|e| e.to_string());
    let concentration = |role: Role, raw: f64| -> Result<f64, String> {
        match columns[&role].conversion {
            Conversion::Concentration(c) => Ok(match c.basis {
                units::ConcentrationBasis::PerMass => c.to_umol_per_kg(raw, f64::NAN),
                units::ConcentrationBasis::PerVolume => c.to_umol_per_kg(raw, density()?),
            }),
            _ => Ok(raw),
        }
    };
    let nutrient = |role: Role| -> Result<f64, String> {
        match value(role)? {
            Some(raw) => concentration(role, raw),
            None => Ok(0.0),
        }
    };
    let member = |role: Role| -> Result<f64, String> {
        let raw = required(role)?;
        match role {
            Role::Alkalinity | Role::Dic => concentration(role, raw),
            _ => Ok(scale(role, raw)),
        }
    };
    let [first, second] = pair_choice.roles();
    let pair = pair_choice.input_pair(member(first)?, member(second)?);
    Ok(RowInputs {
        pair,
        conditions: Conditions {
            temperature_c: temperature,
            salinity,
            pressure_dbar: pressure,
            phosphate: nutrient(Role::Phosphate)?,
            silicate: nutrient(Role::Silicate)?,
        },
    })
}

/// Reads one computed quantity from a solution.
type Field = fn(&Solution) -> f64;

/// The computed columns, in output order: header and how to read it from a solution.
const RESULT_COLUMNS: &[(&str, Field)] = &[
    ("ph_total", |s| s.ph_total),
    ("ph_seawater", |s| s.ph_seawater),
    ("ph_free", |s| s.ph_free),
    ("dic_result [umol/kg]", |s| s.dic),
    ("alkalinity_result [umol/kg]", |s| s.alkalinity),
    ("co2 [umol/kg]", |s| s.co2),
    ("bicarbonate [umol/kg]", |s| s.bicarbonate),
    ("carbonate [umol/kg]", |s| s.carbonate),
    ("pco2 [uatm]", |s| s.pco2_uatm),
    ("fco2 [uatm]", |s| s.fco2_uatm),
    ("omega_aragonite", |s| s.omega_aragonite),
    ("omega_calcite", |s| s.omega_calcite),
    ("revelle_factor", |s| s.revelle_factor),
    ("borate_alkalinity [umol/kg]", |s| s.alk_borate),
    ("hydroxide_alkalinity [umol/kg]", |s| s.alk_hydroxide),
    ("phosphate_alkalinity [umol/kg]", |s| s.alk_phosphate),
    ("silicate_alkalinity [umol/kg]", |s| s.alk_silicate),
    ("hydrogen_sulfate_alkalinity [umol/kg]", |s| {
        s.alk_hydrogen_sulfate
    }),
    ("hydrogen_fluoride_alkalinity [umol/kg]", |s| {
        s.alk_hydrogen_fluoride
    }),
    ("free_hydrogen_alkalinity [umol/kg]", |s| {
        s.alk_free_hydrogen
    }),
];

/// What became of one row: the same bits as the quality flag of grids, a plain-language
/// detail, and the solution when there is one.
struct RowOutcome {
    flag: Flag,
    detail: String,
    solved: Option<(RowInputs, Solution)>,
}

impl RowOutcome {
    /// The `status` column: the flag's meanings (space-separated), or `ok` when none is set.
    fn status(&self) -> String {
        match meanings_of(self.flag) {
            none if none.is_empty() => "ok".to_string(),
            meanings => meanings,
        }
    }
}

fn compute_row(
    record: &csv::StringRecord,
    columns: &BTreeMap<Role, Column>,
    pair: PairChoice,
    latitude: Option<f64>,
    choice: &ConstantChoice,
) -> RowOutcome {
    let inputs = match row_inputs(record, columns, pair, latitude) {
        Ok(inputs) => inputs,
        Err(why) => {
            return RowOutcome {
                flag: MISSING_INPUT,
                detail: why,
                solved: None,
            }
        }
    };
    let c = &inputs.conditions;
    let (t, s, p) = (c.temperature_c, c.salinity, c.pressure_dbar);
    match solve(inputs.pair, c, choice) {
        // Breaches that cannot move the results (KF's) set no bit but are still described.
        Ok(solution) => RowOutcome {
            flag: range_flag(solution.validity.out_of_range(t, s, p)),
            detail: solution.validity.describe(),
            solved: Some((inputs, solution)),
        },
        Err(error) => {
            let validity = Validity::assess(t, s, p, choice);
            let detail = [error.to_string(), validity.describe()]
                .into_iter()
                .filter(|d| !d.is_empty())
                .collect::<Vec<_>>()
                .join("; ");
            RowOutcome {
                flag: error_flag(&error) | range_flag(validity.out_of_range(t, s, p)),
                detail,
                solved: None,
            }
        }
    }
}

fn write_table(
    args: &SamplesArgs,
    destination: &Path,
    choice: &ConstantChoice,
) -> Result<FlagCounts, Box<dyn Error>> {
    let mut reader = csv::ReaderBuilder::new()
        .flexible(true)
        .from_path(&args.input)
        .map_err(|e| format!("{}: cannot read the table: {e}", args.input.display()))?;
    let header = reader
        .headers()
        .map_err(|e| format!("{}: cannot read the header row: {e}", args.input.display()))?
        .clone();
    let columns = locate_columns(&header, &args.columns, &args.units)
        .map_err(|e| format!("{}: {e}", args.input.display()))?;
    let pair = choose_pair(args, &columns).map_err(|e| format!("{}: {e}", args.input.display()))?;
    let renames = role_options(&args.columns, "--column")?;
    let propagation = Propagation::plan(&args.uncertainty, &header, &columns, &renames, pair)
        .map_err(|e| format!("{}: {e}", args.input.display()))?;

    let mut writer = csv::Writer::from_path(destination)
        .map_err(|e| format!("{}: cannot write: {e}", destination.display()))?;
    let mut out_header: Vec<String> = header.iter().map(str::to_string).collect();
    out_header.extend(["status", "status_detail", "pressure_used [dbar]"].map(String::from));
    out_header.extend(RESULT_COLUMNS.iter().map(|(name, _)| name.to_string()));
    out_header.push("solver_iterations".into());
    let result_headers: Vec<&str> = RESULT_COLUMNS.iter().map(|(name, _)| *name).collect();
    if let Some(propagation) = &propagation {
        out_header.extend(propagation.headers(&result_headers));
    }
    writer.write_record(&out_header)?;

    let mut counts = FlagCounts::default();
    for record in reader.records() {
        // An unreadable row (e.g. invalid UTF-8) becomes an empty missing-input row; the rest go on.
        let (record, mut outcome) = match record {
            Ok(record) => {
                let outcome = compute_row(&record, &columns, pair, args.latitude, choice);
                (record, outcome)
            }
            Err(e) => (
                csv::StringRecord::from(vec![""; header.len()]),
                RowOutcome {
                    flag: MISSING_INPUT,
                    detail: format!("row cannot be read: {e}"),
                    solved: None,
                },
            ),
        };
        let uncertainty_cells = propagation
            .as_ref()
            .map(|p| p.cells(&record, &columns, &mut outcome, choice));
        counts.record(outcome.flag);
        let mut row: Vec<String> = record.iter().map(str::to_string).collect();
        row.push(outcome.status());
        row.push(outcome.detail.clone());
        match &outcome.solved {
            Some((inputs, solution)) => {
                row.push(format!("{:.3}", inputs.conditions.pressure_dbar));
                row.extend(
                    RESULT_COLUMNS
                        .iter()
                        .map(|(_, get)| format!("{:.6}", get(solution))),
                );
                row.push(solution.iterations.to_string());
            }
            None => row.extend(std::iter::repeat_n(String::new(), RESULT_COLUMNS.len() + 2)),
        }
        row.extend(uncertainty_cells.into_iter().flatten());
        writer.write_record(&row)?;
    }
    writer.flush()?;
    let file = writer
        .into_inner()
        .map_err(|e| format!("{}: cannot finish writing: {e}", destination.display()))?;
    file.sync_all()?;
    Ok(counts)
}

/// A sibling path to write into before the final rename, so no half-written table looks complete.
fn partial_path(output: &Path) -> PathBuf {
    let name = output
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "samples.csv".into());
    output.with_file_name(format!(".{name}.partial"))
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (fs::canonicalize(a), fs::canonicalize(b)) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}

pub fn run(args: &SamplesArgs) -> Result<(), Box<dyn Error>> {
    let choice = args.constants.choice()?;
    if !args.input.is_file() {
        return Err(format!("{}: no such table", args.input.display()).into());
    }
    if same_file(&args.input, &args.output) {
        return Err(format!(
            "{}: the output would overwrite the input table; choose another -o",
            args.output.display()
        )
        .into());
    }
    if args.output.exists() && !args.overwrite {
        return Err(format!(
            "{}: exists; pass --overwrite to replace it",
            args.output.display()
        )
        .into());
    }
    let partial = partial_path(&args.output);
    let counts = match write_table(args, &partial, &choice) {
        Ok(counts) => counts,
        Err(error) => {
            let _ = fs::remove_file(&partial);
            return Err(error);
        }
    };
    fs::rename(&partial, &args.output).map_err(|e| {
        let _ = fs::remove_file(&partial);
        format!(
            "{}: cannot put the results in place: {e}",
            args.output.display()
        )
    })?;

    let mut stdout = std::io::stdout().lock();
    writeln!(
        stdout,
        "{} samples -> {}",
        counts.wet,
        args.output.display()
    )?;
    writeln!(stdout, "  {:<34}{}", "ok", counts.no_flag)?;
    for bit in FLAG_BITS {
        writeln!(stdout, "  {:<34}{}", bit.meaning, counts.of(bit.mask))?;
    }
    writeln!(stdout, "constants: {}", choice.describe())?;
    Ok(())
}
