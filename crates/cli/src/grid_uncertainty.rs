//! `compute`'s uncertainty options: the inputs' standard uncertainties (absolute in the
//! chemistry's units, or relative to each cell's value) and the constants' (Orr et al. 2018 by
//! default), parsed as `samples` parses them.

use crate::samples::uncertainty::{constant_uncertainties, parse_amount};
use acidscape_pipeline::{source_key, UncertaintyRequest, GRID_INPUTS};
use clap::Args;

#[derive(Args, Debug, Clone, Default)]
pub struct GridUncertaintyOptions {
    /// Standard uncertainty of an input, in µmol kg-1 (alkalinity, dic, phosphate, silicate),
    /// °C (temperature), practical salinity (salinity) or dbar (pressure), whatever the run's
    /// units, or relative to each cell's value (e.g. --uncertainty phosphate=5%; nutrients=5%
    /// sets phosphate and silicate). Adds a standard-uncertainty field for every indicator
    #[arg(long = "uncertainty", id = "input_uncertainty", value_name = "ROLE=U")]
    pub inputs: Vec<String>,

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
}
