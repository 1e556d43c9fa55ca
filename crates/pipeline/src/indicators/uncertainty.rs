//! The fields of the indicators' uncertainties: each indicator's combined standard uncertainty
//! and, on request, each source's signed contribution to it (see [`crate::cells_uncertainty`]).

use super::{OutputField, Quantity};
use crate::cells_uncertainty::{source_key, UncertaintyRequest};
use acidscape_chem::{PerOutput, PerSource, Solution, Source};
use std::borrow::Cow;

/// Suffix of the name of an indicator's standard-uncertainty field.
pub const UNCERTAINTY_SUFFIX: &str = "_uncertainty";

/// Which part of an indicator's uncertainty a field holds.
#[derive(Clone, Debug, PartialEq)]
pub enum UncertaintyPart {
    /// The combined standard uncertainty of the indicator named.
    Combined { of: Cow<'static, str> },
    /// One source's signed contribution (sensitivity × the source's standard uncertainty) to
    /// the uncertainty of the indicator named.
    Contribution {
        of: Cow<'static, str>,
        source: Source,
    },
}

/// A solved cell's uncertainties: combined, and per source when a breakdown is asked for.
#[derive(Clone, Copy, Debug)]
pub struct CellUncertainty {
    pub combined: PerOutput,
    pub budget: Option<PerSource>,
}

/// Appends, after the indicators, the standard-uncertainty field of each, then (with a
/// breakdown) each source's contribution to each, when `request` is given.
pub fn with_uncertainty_fields(
    mut fields: Vec<OutputField>,
    request: Option<&UncertaintyRequest>,
) -> Vec<OutputField> {
    let Some(request) = request else {
        return fields;
    };
    let combined: Vec<OutputField> = fields
        .iter()
        .map(OutputField::standard_uncertainty)
        .collect();
    let sources = request.breakdown_sources();
    let contributions: Vec<OutputField> = fields
        .iter()
        .flat_map(|f| sources.iter().map(move |&s| f.contribution(s)))
        .collect();
    fields.extend(combined);
    fields.extend(contributions);
    fields
}

impl OutputField {
    /// The field that holds this indicator's standard uncertainty: same units, `standard_name`
    /// with the CF modifier `standard_error` (CF 1.10 Appendix C) where the indicator has one.
    pub fn standard_uncertainty(&self) -> OutputField {
        OutputField {
            name: format!("{}{UNCERTAINTY_SUFFIX}", self.name).into(),
            long_name: format!("{} (standard uncertainty)", self.long_name).into(),
            standard_name: (self.standard_name.as_ref())
                .map(|name| format!("{name} standard_error").into()),
            units: self.units,
            comment: "",
            uncertainty: Some(UncertaintyPart::Combined {
                of: self.name.clone(),
            }),
            quantity: self.quantity,
        }
    }

    /// The field that holds one source's signed contribution to this indicator's standard
    /// uncertainty (no CF standard name: the table has no modifier for it).
    fn contribution(&self, source: Source) -> OutputField {
        let key = source_key(source);
        OutputField {
            name: format!("{}{UNCERTAINTY_SUFFIX}_from_{key}", self.name).into(),
            long_name: format!(
                "{} (contribution of {key} to the standard uncertainty)",
                self.long_name
            )
            .into(),
            standard_name: None,
            units: self.units,
            comment: "",
            uncertainty: Some(UncertaintyPart::Contribution {
                of: self.name.clone(),
                source,
            }),
            quantity: self.quantity,
        }
    }

    /// The indicator whose combined standard uncertainty this field holds, if it does.
    pub fn combined_uncertainty_of(&self) -> Option<&str> {
        match &self.uncertainty {
            Some(UncertaintyPart::Combined { of }) => Some(of),
            _ => None,
        }
    }

    /// The field's value for a solved cell: the indicator, or its part of `uncertainty` (NaN
    /// without it); `density_kg_m3` converts per-mass to per-volume.
    pub fn cell_value(
        &self,
        solution: &Solution,
        uncertainty: Option<&CellUncertainty>,
        density_kg_m3: f64,
    ) -> f64 {
        let Some(part) = &self.uncertainty else {
            return self.value(solution, density_kg_m3);
        };
        let output = self.quantity.output();
        let u = match (part, uncertainty) {
            (UncertaintyPart::Combined { .. }, Some(u)) => u.combined.get(output),
            (UncertaintyPart::Contribution { source, .. }, Some(u)) => {
                u.budget.map_or(f64::NAN, |b| b.get(*source, output))
            }
            (_, None) => f64::NAN,
        };
        match self.quantity {
            // The density is taken as exact: the conversion scales the uncertainty.
            Quantity::Concentration(_, unit) => unit.convert_micromol_per_kg(u, density_kg_m3),
            _ => u,
        }
    }
}
