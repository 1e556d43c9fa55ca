//! The uncertainty path of a cell: solved with its equilibrium constants kept, then the
//! standard uncertainty of every output propagated to first order (Orr, Epitalon, Dickson &
//! Gattuso 2018, Marine Chemistry 207; the implicit differentiation is the chemistry crate's
//! `standard_uncertainties`). The batch kernel gives no derivatives, so this path is scalar.

use crate::cells::{solve_cell_by, CellSolved};
use crate::flags::Flag;
use crate::indicators::{CellUncertainty, OutputField};
use crate::PipelineError;
use acidscape_chem::uncertainty_budget;
use acidscape_chem::{equilibrium_constants, solve_with_constants, standard_uncertainties};
use acidscape_chem::{Conditions, ConstantChoice, ConstantUncertainties, InputPair};
use acidscape_chem::{InputUncertainties, SolvedSample, Source, Uncertainties};
use acidscape_gridio::{Run, SlabInputs, UncertaintyField};
use std::path::PathBuf;

/// A standard uncertainty as given: in the chemistry's units, or relative to the value.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum UncertaintyAmount {
    Absolute(f64),
    /// A fraction of the value (0.05 is 5 %).
    Relative(f64),
}

impl UncertaintyAmount {
    /// The standard uncertainty of `value`, in its units.
    pub fn of(self, value: f64) -> f64 {
        match self {
            UncertaintyAmount::Absolute(u) => u,
            UncertaintyAmount::Relative(fraction) => fraction * value,
        }
    }

    fn describe(self) -> String {
        match self {
            UncertaintyAmount::Absolute(u) => format!("{u}"),
            UncertaintyAmount::Relative(fraction) => format!("{}%", fraction * 100.0),
        }
    }
}

/// The inputs of a grid that can carry an uncertainty, and the units of an absolute one (the
/// chemistry's).
pub const GRID_INPUTS: [(Source, &str); 7] = [
    (Source::Alkalinity, "umol kg-1"),
    (Source::Dic, "umol kg-1"),
    (Source::Temperature, "degC"),
    (Source::Salinity, "(practical salinity)"),
    (Source::Pressure, "dbar"),
    (Source::Phosphate, "umol kg-1"),
    (Source::Silicate, "umol kg-1"),
];

/// The key users type for each source (in `--uncertainty`, `--constant-uncertainty` and the
/// names of per-source contributions).
pub fn source_key(source: Source) -> &'static str {
    match source {
        Source::Alkalinity => "alkalinity",
        Source::Dic => "dic",
        Source::Ph => "ph",
        Source::Pco2 => "pco2",
        Source::Temperature => "temperature",
        Source::Salinity => "salinity",
        Source::Pressure => "pressure",
        Source::Phosphate => "phosphate",
        Source::Silicate => "silicate",
        Source::Pk0 => "pk0",
        Source::Pk1 => "pk1",
        Source::Pk2 => "pk2",
        Source::Pkb => "pkb",
        Source::Pkw => "pkw",
        Source::PkspAragonite => "pksp_aragonite",
        Source::PkspCalcite => "pksp_calcite",
        Source::TotalBoron => "total_boron",
    }
}

/// An input's standard uncertainty read per cell from a NetCDF variable on the run's grid
/// (opened by the job as an [`acidscape_gridio::UncertaintyField`]).
#[derive(Clone, Debug, PartialEq)]
pub struct UncertaintyFieldSource {
    pub source: Source,
    pub path: PathBuf,
    pub variable: String,
}

/// One slab's standard uncertainties of one input read from a field, in the chemistry's units
/// or, when `relative`, as fractions of each cell's value (NaN: the cell has none).
#[derive(Clone, Debug, PartialEq)]
pub struct FieldAmounts {
    pub source: Source,
    pub relative: bool,
    pub values: Vec<f64>,
}

impl FieldAmounts {
    /// The amount of cell `cell`.
    fn at(&self, cell: usize) -> UncertaintyAmount {
        let value = self.values[cell];
        if self.relative {
            UncertaintyAmount::Relative(value)
        } else {
            UncertaintyAmount::Absolute(value)
        }
    }
}

/// What a slab propagates: the job's request and the amounts its fields give the slab's cells.
#[derive(Clone, Copy, Debug)]
pub struct SlabUncertainty<'a> {
    pub request: &'a UncertaintyRequest,
    /// In the order of `request.fields`.
    pub fields: &'a [FieldAmounts],
}

/// What a job propagates: the inputs' standard uncertainties (absolute in the chemistry's
/// units, relative to each cell's value, or read per cell from fields) and the constants'.
#[derive(Clone, Debug, PartialEq)]
pub struct UncertaintyRequest {
    /// At most one per source, each one of [`GRID_INPUTS`].
    pub inputs: Vec<(Source, UncertaintyAmount)>,
    /// Inputs whose uncertainty is a field; a source is given as a number or a field, not both.
    pub fields: Vec<UncertaintyFieldSource>,
    pub constants: ConstantUncertainties,
    /// Also each source's signed contribution to each indicator's uncertainty.
    pub breakdown: bool,
}

impl UncertaintyRequest {
    /// Refuses sources a grid does not have and relative uncertainties of temperature.
    pub fn check(&self) -> Result<(), PipelineError> {
        let refuse = |message: String| PipelineError::Option {
            option: "--uncertainty".into(),
            message,
        };
        let sources: Vec<Source> = (self.inputs.iter().map(|(s, _)| *s))
            .chain(self.fields.iter().map(|f| f.source))
            .collect();
        for (k, &source) in sources.iter().enumerate() {
            if !GRID_INPUTS.iter().any(|(s, _)| *s == source) {
                return Err(refuse(format!(
                    "{} is not an input of a grid (alkalinity and DIC are)",
                    source_key(source)
                )));
            }
            if sources[..k].contains(&source) {
                return Err(refuse(format!(
                    "{} is given twice (as a number with --uncertainty or as a field with --uncertainty-field: give one)",
                    source_key(source)
                )));
            }
        }
        for &(source, amount) in &self.inputs {
            if source == Source::Temperature && matches!(amount, UncertaintyAmount::Relative(_)) {
                return Err(refuse(
                    "a relative uncertainty of temperature has no meaning; give it in °C".into(),
                ));
            }
        }
        Ok(())
    }

    /// Checks the request, then opens its fields and checks them against `run`.
    pub fn open_fields(&self, run: &Run) -> Result<Vec<(Source, UncertaintyField)>, PipelineError> {
        self.check()?;
        (self.fields.iter())
            .map(|f| {
                let field =
                    UncertaintyField::open(run, source_key(f.source), &f.path, &f.variable)?;
                Ok((f.source, field))
            })
            .collect()
    }

    /// The standard uncertainty of every source for cell `cell`, in the chemistry's units:
    /// the request's numbers and the amounts `fields` read for the cell's slab.
    pub fn for_cell(
        &self,
        pair: &InputPair,
        conditions: &Conditions,
        fields: &[FieldAmounts],
        cell: usize,
    ) -> Uncertainties {
        let (alkalinity, dic) = match *pair {
            InputPair::AlkalinityDic { alkalinity, dic } => (alkalinity, dic),
            _ => (f64::NAN, f64::NAN),
        };
        let mut inputs = InputUncertainties::default();
        let from_fields = fields.iter().map(|f| (f.source, f.at(cell)));
        for (source, amount) in self.inputs.iter().copied().chain(from_fields) {
            let (slot, value) = match source {
                Source::Alkalinity => (&mut inputs.alkalinity, alkalinity),
                Source::Dic => (&mut inputs.dic, dic),
                Source::Temperature => (&mut inputs.temperature, conditions.temperature_c),
                Source::Salinity => (&mut inputs.salinity, conditions.salinity),
                Source::Pressure => (&mut inputs.pressure, conditions.pressure_dbar),
                Source::Phosphate => (&mut inputs.phosphate, conditions.phosphate),
                Source::Silicate => (&mut inputs.silicate, conditions.silicate),
                _ => continue,
            };
            *slot = amount.of(value);
        }
        Uncertainties {
            inputs,
            constants: self.constants,
        }
    }

    /// The sources and values used, for the output's comments and the resume check.
    pub fn describe(&self) -> String {
        let inputs = if self.inputs.is_empty() && self.fields.is_empty() {
            "none".to_string()
        } else {
            (self.inputs.iter())
                .filter_map(|&(source, amount)| {
                    let (_, units) = GRID_INPUTS.iter().find(|(s, _)| *s == source)?;
                    let key = source_key(source);
                    Some(match amount {
                        UncertaintyAmount::Absolute(_) => {
                            format!("{key} {} {units}", amount.describe())
                        }
                        UncertaintyAmount::Relative(_) => format!("{key} {}", amount.describe()),
                    })
                })
                .chain(self.fields.iter().map(|f| {
                    format!(
                        "{} per cell from variable '{}' of {}",
                        source_key(f.source),
                        f.variable,
                        f.path.display()
                    )
                }))
                .collect::<Vec<_>>()
                .join(", ")
        };
        let c = &self.constants;
        let constants = if *c == ConstantUncertainties::NONE {
            "left out".to_string()
        } else {
            let origin = if *c == ConstantUncertainties::ORR_2018 {
                "the values Orr et al. 2018 recommend, recalled from memory"
            } else {
                "Orr et al. 2018's recommended values (recalled from memory) with overrides"
            };
            format!(
                "pK0 {}, pK1 {}, pK2 {}, pKB {}, pKW {}, pKsp aragonite {}, pKsp calcite {}, \
                 total boron {}% ({origin})",
                c.pk0,
                c.pk1,
                c.pk2,
                c.pkb,
                c.pkw,
                c.pksp_aragonite,
                c.pksp_calcite,
                c.total_boron * 100.0
            )
        };
        let breakdown = if self.breakdown {
            "; with each source's contribution"
        } else {
            ""
        };
        format!("inputs: {inputs}; constants: {constants}{breakdown}")
    }

    /// The sources whose contributions a breakdown writes: the inputs given and the constants
    /// with an uncertainty, in [`Source::ALL`] order; none without a breakdown.
    pub fn breakdown_sources(&self) -> Vec<Source> {
        if !self.breakdown {
            return Vec::new();
        }
        let u = Uncertainties {
            inputs: InputUncertainties::default(),
            constants: self.constants,
        };
        let given = |source: Source| {
            self.inputs.iter().any(|(s, _)| *s == source)
                || self.fields.iter().any(|f| f.source == source)
        };
        (Source::ALL.into_iter())
            .filter(|&s| given(s) || (s.is_constant() && u.of(s) > 0.0))
            .collect()
    }
}

/// As [`solve_cell`](crate::cells::solve_cell), with the standard uncertainty of each
/// uncertainty field (the indicators' values are the same bits as without).
pub fn solve_cell_with_uncertainty(
    inputs: &SlabInputs,
    cell: usize,
    fields: &[OutputField],
    choice: &ConstantChoice,
    uncertainty: SlabUncertainty<'_>,
    put: impl FnMut(usize, f32),
    put_omega: impl FnMut(f64, f64),
) -> Flag {
    let solve = |pair: InputPair, conditions: &Conditions| -> CellSolved {
        let constants = equilibrium_constants(conditions, choice)?;
        let solution = solve_with_constants(pair, conditions, &constants)?;
        let sample = SolvedSample {
            pair: &pair,
            conditions,
            choice,
            constants: &constants,
            solution: &solution,
        };
        let request = uncertainty.request;
        let u = request.for_cell(&pair, conditions, uncertainty.fields, cell);
        let uncertainty = if request.breakdown {
            let budget = uncertainty_budget(&sample, &u);
            CellUncertainty {
                combined: budget.combined(),
                budget: Some(budget),
            }
        } else {
            CellUncertainty {
                combined: standard_uncertainties(&sample, &u),
                budget: None,
            }
        };
        Ok((solution, Some(uncertainty)))
    };
    solve_cell_by(inputs, cell, fields, choice, put, put_omega, solve)
}
