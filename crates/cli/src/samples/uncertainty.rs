//! Uncertainty columns for `samples`: standard uncertainties of the inputs (options or table
//! columns, absolute or relative) and of the constants (Orr et al. 2018 by default), propagated
//! to every result; on request, each source's contribution.

use super::{
    split_header, Column, Conversion, PairChoice, Role, RowInputs, RowOutcome, MISSING_INPUT,
};
use acidscape_chem::{
    equilibrium_constants, uncertainty_budget, ConstantChoice, ConstantUncertainties, InputPair,
    InputUncertainties, Output, PerSource, Solution, SolvedSample, Source, Uncertainties,
};
use acidscape_gridio::{seawater, units};
use acidscape_pipeline::{source_key, UncertaintyAmount as Amount};
use clap::Args;
use std::collections::BTreeMap;

/// Suffix of an input column holding a standard uncertainty, and of each uncertainty result.
const SUFFIX: &str = "_uncertainty";

#[derive(Args, Debug, Clone, Default)]
pub struct UncertaintyOptions {
    /// Standard uncertainty of an input, in its column's units (e.g. --uncertainty dic=2) or
    /// relative (--uncertainty phosphate=5%); roles: alkalinity, dic, ph, pco2, temperature,
    /// salinity, pressure, phosphate, silicate. A ROLE_uncertainty column takes precedence
    /// where it has a value. Adds an uncertainty column for every result
    #[arg(long = "uncertainty", value_name = "ROLE=U")]
    pub inputs: Vec<String>,

    /// Standard uncertainty of a constant instead of Orr et al. 2018's: pk0, pk1, pk2, pkb, pkw,
    /// pksp_aragonite, pksp_calcite (pK units) or total_boron (relative, e.g. 2%)
    #[arg(long = "constant-uncertainty", value_name = "KEY=U")]
    pub constants: Vec<String>,

    /// Leave the constants' uncertainties out, e.g. for differences between results computed
    /// with the same constants, which share their errors
    #[arg(long)]
    pub no_constant_uncertainty: bool,

    /// Add the uncertainty columns even when no input has an uncertainty (the constants' alone)
    #[arg(long)]
    pub with_uncertainty: bool,

    /// Also write each source's signed contribution to each uncertainty
    /// (RESULT_uncertainty_from_SOURCE)
    #[arg(long)]
    pub uncertainty_breakdown: bool,
}

/// The results that get an uncertainty column: their output and result-column stem.
const PROPAGATED: [(Output, &str); 13] = [
    (Output::PhTotal, "ph_total"),
    (Output::PhSeawater, "ph_seawater"),
    (Output::PhFree, "ph_free"),
    (Output::Dic, "dic_result"),
    (Output::Alkalinity, "alkalinity_result"),
    (Output::Co2, "co2"),
    (Output::Bicarbonate, "bicarbonate"),
    (Output::Carbonate, "carbonate"),
    (Output::Pco2, "pco2"),
    (Output::Fco2, "fco2"),
    (Output::OmegaAragonite, "omega_aragonite"),
    (Output::OmegaCalcite, "omega_calcite"),
    (Output::RevelleFactor, "revelle_factor"),
];

/// The source an input role is, if it can carry an uncertainty.
fn source_of(role: Role) -> Option<Source> {
    Some(match role {
        Role::Alkalinity => Source::Alkalinity,
        Role::Dic => Source::Dic,
        Role::Ph => Source::Ph,
        Role::Pco2 => Source::Pco2,
        Role::Temperature => Source::Temperature,
        Role::Salinity => Source::Salinity,
        Role::Pressure => Source::Pressure,
        Role::Phosphate => Source::Phosphate,
        Role::Silicate => Source::Silicate,
        Role::Depth | Role::Latitude => return None,
    })
}

/// Parses `2`, `0.01` or `5%` (an uncertainty in the units of its column or of the chemistry,
/// or relative to the value); `what` names it in messages.
pub(crate) fn parse_amount(text: &str, what: &str) -> Result<Amount, String> {
    let text = text.trim();
    let (number, relative) = match text.strip_suffix('%') {
        Some(number) => (number.trim(), true),
        None => (text, false),
    };
    let value: f64 = number
        .parse()
        .map_err(|_| format!("{what} is '{text}', not a number (or a percentage like 5%)"))?;
    if !(value.is_finite() && value >= 0.0) {
        return Err(format!(
            "{what} is '{text}': a standard uncertainty is a number of at least 0"
        ));
    }
    Ok(if relative {
        Amount::Relative(value / 100.0)
    } else {
        Amount::Absolute(value)
    })
}

/// Where one input's uncertainty comes from: an option, a column, or both (the column first).
#[derive(Clone, Copy, Debug)]
struct InputUncertainty {
    role: Role,
    option: Option<Amount>,
    /// Column index, and its units when the header states them (else the value column's).
    column: Option<(usize, Option<ColumnUnits>)>,
}

#[derive(Clone, Copy, Debug)]
enum ColumnUnits {
    Relative,
    Absolute(Conversion),
}

/// The validated plan for one table.
pub(super) struct Propagation {
    inputs: Vec<InputUncertainty>,
    constants: ConstantUncertainties,
    /// Sources with a contribution column, in [`Source::ALL`] order; empty without a breakdown.
    breakdown: Vec<Source>,
}

impl Propagation {
    /// The plan from the options and the table's header, or `None` when nothing asks for
    /// uncertainties.
    pub(super) fn plan(
        options: &UncertaintyOptions,
        header: &csv::StringRecord,
        columns: &BTreeMap<Role, Column>,
        renames: &BTreeMap<Role, String>,
        pair: PairChoice,
    ) -> Result<Option<Self>, String> {
        let mut inputs: BTreeMap<Role, InputUncertainty> = BTreeMap::new();
        let blank = |role| InputUncertainty {
            role,
            option: None,
            column: None,
        };
        for text in &options.inputs {
            let (key, value) = text
                .split_once('=')
                .ok_or_else(|| format!("--uncertainty expects ROLE=U, got '{text}'"))?;
            let role = Role::from_key(key)?;
            let amount = parse_amount(value, &format!("--uncertainty {key}"))?;
            inputs.entry(role).or_insert_with(|| blank(role)).option = Some(amount);
        }
        for (index, name) in header.iter().enumerate() {
            let (name, units) = split_header(name);
            let Some(stem) = name.strip_suffix(SUFFIX) else {
                continue;
            };
            let Some(role) = role_named(stem, renames) else {
                continue;
            };
            let units = match units.as_deref().map(str::trim) {
                None | Some("") => None,
                Some("%") => Some(ColumnUnits::Relative),
                Some(text) => Some(ColumnUnits::Absolute(
                    super::conversion_for(role, text)
                        .map_err(|e| format!("column '{}': {e}", &header[index]))?,
                )),
            };
            inputs.entry(role).or_insert_with(|| blank(role)).column = Some((index, units));
        }
        let constants =
            constant_uncertainties(&options.constants, options.no_constant_uncertainty)?;
        let asked = !inputs.is_empty()
            || options.with_uncertainty
            || options.uncertainty_breakdown
            || options.no_constant_uncertainty
            || !options.constants.is_empty();
        if !asked {
            return Ok(None);
        }
        for input in inputs.values() {
            check_input(input, columns, pair)?;
        }
        let inputs: Vec<InputUncertainty> = inputs.into_values().collect();
        let breakdown = if options.uncertainty_breakdown {
            let given = |source: Source| {
                inputs
                    .iter()
                    .any(|input| source_of(input.role) == Some(source))
            };
            let u = Uncertainties {
                inputs: InputUncertainties::default(),
                constants,
            };
            Source::ALL
                .into_iter()
                .filter(|&s| given(s) || (s.is_constant() && u.of(s) > 0.0))
                .collect()
        } else {
            Vec::new()
        };
        Ok(Some(Self {
            inputs,
            constants,
            breakdown,
        }))
    }

    /// The header cells this plan adds.
    pub(super) fn headers(&self, result_headers: &[&str]) -> Vec<String> {
        let named = |stem: &str, tail: &str| {
            // The units of the result column, e.g. "carbonate [umol/kg]" -> " [umol/kg]".
            let units = result_headers
                .iter()
                .find_map(|h| {
                    let (name, units) = split_header(h);
                    (name == stem).then_some(units)
                })
                .flatten()
                .map(|u| format!(" [{u}]"))
                .unwrap_or_default();
            format!("{stem}{SUFFIX}{tail}{units}")
        };
        let mut headers: Vec<String> = PROPAGATED.iter().map(|(_, stem)| named(stem, "")).collect();
        for (_, stem) in PROPAGATED {
            for source in &self.breakdown {
                headers.push(named(stem, &format!("_from_{}", source_key(*source))));
            }
        }
        headers
    }

    /// The cells of one row: empty for a failed row; a row whose uncertainty cannot be read
    /// becomes a missing-input row.
    pub(super) fn cells(
        &self,
        record: &csv::StringRecord,
        columns: &BTreeMap<Role, Column>,
        outcome: &mut RowOutcome,
        choice: &ConstantChoice,
    ) -> Vec<String> {
        let width = PROPAGATED.len() * (1 + self.breakdown.len());
        let Some((inputs, solution)) = &outcome.solved else {
            return vec![String::new(); width];
        };
        let budget = self
            .input_uncertainties(record, columns, inputs)
            .and_then(|u| budget(inputs, solution, choice, &u).map_err(|e| e.to_string()));
        let budget = match budget {
            Ok(budget) => budget,
            Err(why) => {
                *outcome = RowOutcome {
                    flag: MISSING_INPUT,
                    detail: format!("uncertainty: {why}"),
                    solved: None,
                };
                return vec![String::new(); width];
            }
        };
        let combined = budget.combined();
        let mut cells: Vec<String> = PROPAGATED
            .iter()
            .map(|(output, _)| significant(combined.get(*output)))
            .collect();
        for (output, _) in PROPAGATED {
            for source in &self.breakdown {
                cells.push(significant(budget.get(*source, output)));
            }
        }
        cells
    }

    /// Every source's standard uncertainty for this row, in the chemistry's units.
    fn input_uncertainties(
        &self,
        record: &csv::StringRecord,
        columns: &BTreeMap<Role, Column>,
        row: &RowInputs,
    ) -> Result<Uncertainties, String> {
        let mut u = Uncertainties {
            inputs: InputUncertainties::default(),
            constants: self.constants,
        };
        for input in &self.inputs {
            let what = format!("{}{SUFFIX}", input.role.key());
            let from_column = match input.column {
                Some((index, units)) => {
                    let text = record.get(index).unwrap_or("").trim();
                    let empty = text.is_empty()
                        || text.eq_ignore_ascii_case("nan")
                        || text.eq_ignore_ascii_case("na");
                    if empty {
                        None
                    } else {
                        Some((parse_amount(text, &what)?, units))
                    }
                }
                None => None,
            };
            let (amount, units) = match (from_column, input.option) {
                (Some((amount, units)), _) => (amount, units),
                (None, Some(amount)) => (amount, None),
                (None, None) => continue,
            };
            if matches!(amount, Amount::Relative(_)) {
                relative_allowed(input.role)?;
            }
            let value = in_chemistry_units(input.role, amount, units, columns, row)?;
            set(&mut u.inputs, input.role, value);
        }
        Ok(u)
    }
}

/// The role a `ROLE_uncertainty` stem names: a role's key or header name, or a `--column` name.
fn role_named(stem: &str, renames: &BTreeMap<Role, String>) -> Option<Role> {
    Role::ALL.into_iter().find(|role| {
        role.names().contains(&stem)
            || renames
                .get(role)
                .is_some_and(|name| split_header(name).0 == stem)
    })
}

/// Refuses uncertainties the chemistry cannot use, with a message naming them.
fn check_input(
    input: &InputUncertainty,
    columns: &BTreeMap<Role, Column>,
    pair: PairChoice,
) -> Result<(), String> {
    let key = input.role.key();
    let Some(source) = source_of(input.role) else {
        return Err(format!(
            "{key}{SUFFIX}: give the uncertainty of pressure instead (pressure=U, in dbar)"
        ));
    };
    let is_pair_member = matches!(
        source,
        Source::Alkalinity | Source::Dic | Source::Ph | Source::Pco2
    );
    if is_pair_member && !pair.roles().contains(&input.role) {
        return Err(format!(
            "{key}{SUFFIX}: {key} is not an input of the {} pair, it is computed",
            pair_name(pair)
        ));
    }
    let relative = matches!(input.option, Some(Amount::Relative(_)))
        || matches!(input.column, Some((_, Some(ColumnUnits::Relative))));
    if relative {
        relative_allowed(input.role)?;
    }
    if relative && !columns.contains_key(&input.role) {
        return Err(format!(
            "{key}{SUFFIX}: relative to what? the table has no {key} column"
        ));
    }
    Ok(())
}

/// Temperature and pH have no natural zero: a percentage of them means nothing.
fn relative_allowed(role: Role) -> Result<(), String> {
    let units = match role {
        Role::Temperature => "°C or K",
        Role::Ph => "pH units",
        _ => return Ok(()),
    };
    let key = role.key();
    Err(format!(
        "{key}{SUFFIX}: a relative uncertainty of {key} has no meaning; give it in {units}"
    ))
}

fn pair_name(pair: PairChoice) -> String {
    let [a, b] = pair.roles();
    format!("{}-{}", a.key(), b.key())
}

/// The constants' uncertainties: Orr et al. 2018, overridden (`KEY=U` texts), or none.
pub(crate) fn constant_uncertainties(
    overrides: &[String],
    leave_out: bool,
) -> Result<ConstantUncertainties, String> {
    if leave_out {
        if !overrides.is_empty() {
            return Err(
                "--no-constant-uncertainty and --constant-uncertainty contradict each other".into(),
            );
        }
        return Ok(ConstantUncertainties::NONE);
    }
    let mut c = ConstantUncertainties::ORR_2018;
    for text in overrides {
        let expected =
            "expected one of pk0, pk1, pk2, pkb, pkw, pksp_aragonite, pksp_calcite, total_boron";
        let (key, value) = text
            .split_once('=')
            .ok_or_else(|| format!("--constant-uncertainty expects KEY=U, got '{text}'"))?;
        let key = key.trim().to_ascii_lowercase();
        let what = format!("--constant-uncertainty {key}");
        let amount = parse_amount(value, &what)?;
        let slot = match key.as_str() {
            "pk0" => &mut c.pk0,
            "pk1" => &mut c.pk1,
            "pk2" => &mut c.pk2,
            "pkb" => &mut c.pkb,
            "pkw" => &mut c.pkw,
            "pksp_aragonite" => &mut c.pksp_aragonite,
            "pksp_calcite" => &mut c.pksp_calcite,
            "total_boron" => &mut c.total_boron,
            _ => {
                return Err(format!(
                    "--constant-uncertainty: unknown constant '{key}'; {expected}"
                ))
            }
        };
        *slot = match (key.as_str(), amount) {
            // Total boron is relative whichever way it is written: 2% or 0.02.
            ("total_boron", Amount::Relative(x) | Amount::Absolute(x)) => x,
            (_, Amount::Absolute(x)) => x,
            (_, Amount::Relative(_)) => {
                return Err(format!(
                    "{what}: a pK uncertainty is in pK units, not a percentage"
                ))
            }
        };
    }
    Ok(c)
}

/// A standard uncertainty in the chemistry's units (µmol kg-1, °C, practical salinity, dbar,
/// pH, µatm): relative ones times the row's value, absolute ones through the linear part of
/// their column's conversion.
fn in_chemistry_units(
    role: Role,
    amount: Amount,
    units: Option<ColumnUnits>,
    columns: &BTreeMap<Role, Column>,
    row: &RowInputs,
) -> Result<f64, String> {
    let value = match amount {
        Amount::Relative(_) => return Ok(amount.of(value_of(role, row))),
        Amount::Absolute(value) => value,
    };
    let conversion = match units {
        Some(ColumnUnits::Absolute(conversion)) => conversion,
        Some(ColumnUnits::Relative) => return Ok(value / 100.0 * value_of(role, row)),
        // A pressure computed from depth has no column: its uncertainty is in dbar.
        None => columns
            .get(&role)
            .map_or(Conversion::Scale(1.0), |c| c.conversion),
    };
    let c = &row.conditions;
    let density = || {
        seawater::in_situ_density(c.salinity, c.temperature_c, c.pressure_dbar)
            .map_err(|e| e.to_string())
    };
    // Every conversion is affine: its linear part is f(u) - f(0).
    let linear = |f: &dyn Fn(f64) -> f64| f(value) - f(0.0);
    Ok(match conversion {
        Conversion::Concentration(units) => match units.basis {
            units::ConcentrationBasis::PerMass => units.to_umol_per_kg(value, f64::NAN),
            units::ConcentrationBasis::PerVolume => units.to_umol_per_kg(value, density()?),
        },
        Conversion::Temperature(units) => linear(&|x| units.to_celsius(x)),
        Conversion::Salinity(units::SalinityUnits::Practical) => value,
        Conversion::Salinity(units::SalinityUnits::Absolute { to_g_per_kg }) => {
            linear(&|x| seawater::practical_from_absolute(x * to_g_per_kg))
        }
        Conversion::Scale(factor) => value * factor,
    })
}

/// The row's value of an input role, in the chemistry's units.
fn value_of(role: Role, row: &RowInputs) -> f64 {
    let c = &row.conditions;
    let pair = match row.pair {
        InputPair::AlkalinityDic { alkalinity, dic } => [Some(alkalinity), Some(dic), None, None],
        InputPair::AlkalinityPh {
            alkalinity,
            ph_total,
        } => [Some(alkalinity), None, Some(ph_total), None],
        InputPair::DicPh { dic, ph_total } => [None, Some(dic), Some(ph_total), None],
        InputPair::AlkalinityPco2 {
            alkalinity,
            pco2_uatm,
        } => [Some(alkalinity), None, None, Some(pco2_uatm)],
        InputPair::DicPco2 { dic, pco2_uatm } => [None, Some(dic), None, Some(pco2_uatm)],
    };
    let member = |i: usize| pair[i].unwrap_or(f64::NAN);
    match role {
        Role::Alkalinity => member(0),
        Role::Dic => member(1),
        Role::Ph => member(2),
        Role::Pco2 => member(3),
        Role::Temperature => c.temperature_c,
        Role::Salinity => c.salinity,
        Role::Pressure => c.pressure_dbar,
        Role::Phosphate => c.phosphate,
        Role::Silicate => c.silicate,
        Role::Depth | Role::Latitude => f64::NAN,
    }
}

fn set(u: &mut InputUncertainties, role: Role, value: f64) {
    let slot = match role {
        Role::Alkalinity => &mut u.alkalinity,
        Role::Dic => &mut u.dic,
        Role::Ph => &mut u.ph,
        Role::Pco2 => &mut u.pco2,
        Role::Temperature => &mut u.temperature,
        Role::Salinity => &mut u.salinity,
        Role::Pressure => &mut u.pressure,
        Role::Phosphate => &mut u.phosphate,
        Role::Silicate => &mut u.silicate,
        Role::Depth | Role::Latitude => return,
    };
    *slot = value;
}

fn budget(
    row: &RowInputs,
    solution: &Solution,
    choice: &ConstantChoice,
    u: &Uncertainties,
) -> Result<PerSource, acidscape_chem::ChemError> {
    let constants = equilibrium_constants(&row.conditions, choice)?;
    let sample = SolvedSample {
        pair: &row.pair,
        conditions: &row.conditions,
        choice,
        constants: &constants,
        solution,
    };
    Ok(uncertainty_budget(&sample, u))
}

/// Four significant digits, in plain notation unless very small or large.
fn significant(value: f64) -> String {
    if value == 0.0 {
        return "0".into();
    }
    let magnitude = value.abs().log10().floor();
    if (-4.0..6.0).contains(&magnitude) {
        format!("{value:.*}", (3.0 - magnitude).max(0.0) as usize)
    } else {
        format!("{value:.3e}")
    }
}
