//! `compute`'s uncertainty options: the inputs' standard uncertainties (absolute in the
//! chemistry's units, relative to each cell's value, or read per cell from a NetCDF field) and
//! the constants' (Orr et al. 2018 by default), parsed as `samples` parses them.

use crate::samples::uncertainty::{constant_uncertainties, parse_amount};
use acidscape_pipeline::{source_key, UncertaintyFieldSource, UncertaintyRequest, GRID_INPUTS};
use clap::Args;
use std::path::PathBuf;

#[derive(Args, Debug, Clone, Default)]
pub struct GridUncertaintyOptions {
    /// Standard uncertainty of an input, in µmol kg-1 (alkalinity, dic, phosphate, silicate),
    /// °C (temperature), practical salinity (salinity) or dbar (pressure), whatever the run's
    /// units, or relative to each cell's value (e.g. --uncertainty phosphate=5%; nutrients=5%
    /// sets phosphate and silicate). Adds a standard-uncertainty field for every indicator
    #[arg(long = "uncertainty", id = "input_uncertainty", value_name = "ROLE=U")]
    pub inputs: Vec<String>,

    /// Standard uncertainty of an input read per cell from a NetCDF variable on the run's grid,
    /// e.g. a model-minus-observation misfit map: --uncertainty-field dic=misfit.nc:dic_misfit.
    /// The variable holds the run's (depth, y, x) cells, with or without the run's time steps;
    /// its units are converted as the input's own (mol m-3 through each cell's density; K and
    /// degC alike, as a difference), or % for a percentage of each cell's value. Missing values
    /// leave those cells without uncertainty; negative values are refused
    #[arg(
        long = "uncertainty-field",
        id = "input_uncertainty_field",
        value_name = "ROLE=FILE:VARIABLE"
    )]
    pub fields: Vec<String>,

    /// Standard uncertainty of a constant instead of Orr et al. 2018's: pk0, pk1, pk2, pkb, pkw,
    /// pksp_aragonite, pksp_calcite (pK units) or total_boron (relative, e.g. 2%)
    #[arg(
        long = "constant-uncertainty",
        id = "constant_uncertainty",
        value_name = "KEY=U"
    )]
    pub constants: Vec<String>,

    /// Leave the constants' uncertainties out, e.g. for differences between runs computed with
    /// the same constants, which share their errors
    #[arg(long)]
    pub no_constant_uncertainty: bool,

    /// Add the standard-uncertainty fields even when no input has an uncertainty (the
    /// constants' alone)
    #[arg(long)]
    pub with_uncertainty: bool,

    /// Also write each source's signed contribution to each indicator's uncertainty
    /// (NAME_uncertainty_from_SOURCE): one field per indicator and source with an uncertainty
    #[arg(long)]
    pub uncertainty_breakdown: bool,
}

impl GridUncertaintyOptions {
    /// What to propagate, or `None` when nothing asks for uncertainties.
    pub fn request(&self) -> Result<Option<UncertaintyRequest>, String> {
        let asked = !self.inputs.is_empty()
            || !self.fields.is_empty()
            || !self.constants.is_empty()
            || self.no_constant_uncertainty
            || self.with_uncertainty
            || self.uncertainty_breakdown;
        if !asked {
            return Ok(None);
        }
        let constants = constant_uncertainties(&self.constants, self.no_constant_uncertainty)?;
        let mut request = UncertaintyRequest {
            inputs: Vec::new(),
            fields: self
                .fields
                .iter()
                .map(|t| parse_field(t))
                .collect::<Result<_, _>>()?,
            constants,
            breakdown: self.uncertainty_breakdown,
        };
        let keys = || {
            let keys: Vec<&str> = GRID_INPUTS.iter().map(|(s, _)| source_key(*s)).collect();
            format!("{}, nutrients", keys.join(", "))
        };
        for text in &self.inputs {
            let (key, value) = text
                .split_once('=')
                .ok_or_else(|| format!("--uncertainty expects ROLE=U, got '{text}'"))?;
            let key = key.trim().to_ascii_lowercase();
            let amount = parse_amount(value, &format!("--uncertainty {key}"))?;
            let named: Vec<_> = match key.as_str() {
                "nutrients" => vec!["phosphate", "silicate"],
                other => vec![other],
            };
            for name in named {
                let Some((source, _)) = GRID_INPUTS.iter().find(|(s, _)| source_key(*s) == name)
                else {
                    return Err(format!(
                        "--uncertainty: '{key}' is not an input of a grid; choose from {}",
                        keys()
                    ));
                };
                request.inputs.retain(|(s, _)| s != source);
                request.inputs.push((*source, amount));
            }
        }
        request.check().map_err(|e| e.to_string())?;
        Ok(Some(request))
    }
}

/// One `--uncertainty-field ROLE=FILE:VARIABLE` (the last `:` ends the file name).
fn parse_field(text: &str) -> Result<UncertaintyFieldSource, String> {
    let expected = || format!("--uncertainty-field expects ROLE=FILE:VARIABLE, got '{text}'");
    let (key, place) = text.split_once('=').ok_or_else(expected)?;
    let (path, variable) = place.rsplit_once(':').ok_or_else(expected)?;
    let key = key.trim().to_ascii_lowercase();
    if path.is_empty() || variable.trim().is_empty() {
        return Err(expected());
    }
    let source = match GRID_INPUTS.iter().find(|(s, _)| source_key(*s) == key) {
        Some((source, _)) => *source,
        None => {
            let keys: Vec<&str> = GRID_INPUTS.iter().map(|(s, _)| source_key(*s)).collect();
            return Err(format!(
                "--uncertainty-field: '{key}' is not an input of a grid; choose from {} (one field per input)",
                keys.join(", ")
            ));
        }
    };
    // Absolute, so the resume check does not depend on the working directory.
    let path = PathBuf::from(path);
    let path = std::fs::canonicalize(&path).unwrap_or(path);
    Ok(UncertaintyFieldSource {
        source,
        path,
        variable: variable.trim().to_string(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use acidscape_chem::{ConstantUncertainties, Source};
    use acidscape_pipeline::UncertaintyAmount;

    fn options(inputs: &[&str]) -> GridUncertaintyOptions {
        GridUncertaintyOptions {
            inputs: inputs.iter().map(|s| s.to_string()).collect(),
            ..Default::default()
        }
    }

    #[test]
    fn absolute_relative_and_nutrients() {
        let request = options(&["dic=2", "nutrients=5%", "phosphate=0.1"])
            .request()
            .unwrap()
            .unwrap();
        assert_eq!(
            request.inputs,
            vec![
                (Source::Dic, UncertaintyAmount::Absolute(2.0)),
                (Source::Silicate, UncertaintyAmount::Relative(0.05)),
                (Source::Phosphate, UncertaintyAmount::Absolute(0.1)),
            ]
        );
        assert_eq!(request.constants, ConstantUncertainties::ORR_2018);
    }

    #[test]
    fn nothing_asked_means_no_fields() {
        assert_eq!(options(&[]).request().unwrap(), None);
        let constants_only = GridUncertaintyOptions {
            with_uncertainty: true,
            ..Default::default()
        };
        assert!(constants_only.request().unwrap().unwrap().inputs.is_empty());
    }

    #[test]
    fn refuses_what_a_grid_cannot_use() {
        let err = options(&["ph=0.01"]).request().unwrap_err();
        assert!(err.contains("not an input of a grid"), "{err}");
        let err = options(&["temperature=1%"]).request().unwrap_err();
        assert!(err.contains("temperature"), "{err}");
        let err = options(&["dic=-2"]).request().unwrap_err();
        assert!(err.contains("at least 0"), "{err}");
    }

    #[test]
    fn a_field_per_input_and_never_beside_a_number() {
        let with_fields = |inputs: &[&str], fields: &[&str]| GridUncertaintyOptions {
            fields: fields.iter().map(|s| s.to_string()).collect(),
            ..options(inputs)
        };
        let request = with_fields(&["alkalinity=2"], &["dic=misfits/run.nc:dic_misfit"])
            .request()
            .unwrap()
            .unwrap();
        assert_eq!(request.fields.len(), 1);
        assert_eq!(request.fields[0].source, Source::Dic);
        assert_eq!(request.fields[0].variable, "dic_misfit");
        assert!(request.fields[0].path.ends_with("misfits/run.nc"));
        let err = with_fields(&["dic=2"], &["dic=run.nc:dic_misfit"])
            .request()
            .unwrap_err();
        assert!(err.contains("dic is given twice"), "{err}");
        for (text, expected) in [
            ("nutrients=run.nc:n", "not an input of a grid"),
            ("dic=run.nc", "ROLE=FILE:VARIABLE"),
            ("dic run.nc:v", "ROLE=FILE:VARIABLE"),
            ("dic=run.nc:", "ROLE=FILE:VARIABLE"),
        ] {
            let err = with_fields(&[], &[text]).request().unwrap_err();
            assert!(err.contains(expected), "{text}: {err}");
        }
    }
}
