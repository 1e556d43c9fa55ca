//! Which indicators a job writes, and how each is named and labelled in CF NetCDF.
//!
//! Standard names were checked in the CF standard-name table, version 93 (the copy shipped
//! with the compliance-checker package). The table has no name for bicarbonate, CO2*, the
//! saturation states or the Revelle factor: those get a plain name with long_name and units.

mod uncertainty;

use crate::PipelineError;
use acidscape_chem::{Output, Solution};
use std::borrow::Cow;
use std::fmt;
use std::str::FromStr;
pub use uncertainty::{
    with_uncertainty_fields, CellUncertainty, UncertaintyPart, UNCERTAINTY_SUFFIX,
};

/// One quantity the user can ask for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Indicator {
    Ph,
    Carbonate,
    Bicarbonate,
    Co2Star,
    Pco2,
    Fco2,
    OmegaAragonite,
    OmegaCalcite,
    RevelleFactor,
}

impl Indicator {
    pub const ALL: &'static [Indicator] = &[
        Indicator::Ph,
        Indicator::Carbonate,
        Indicator::Bicarbonate,
        Indicator::Co2Star,
        Indicator::Pco2,
        Indicator::Fco2,
        Indicator::OmegaAragonite,
        Indicator::OmegaCalcite,
        Indicator::RevelleFactor,
    ];

    /// What `compute` writes when the user does not choose.
    pub const DEFAULT: &'static [Indicator] = &[
        Indicator::Ph,
        Indicator::Carbonate,
        Indicator::Pco2,
        Indicator::OmegaAragonite,
        Indicator::OmegaCalcite,
    ];

    /// The key users type in `--indicators`.
    pub fn key(self) -> &'static str {
        match self {
            Indicator::Ph => "ph",
            Indicator::Carbonate => "co3",
            Indicator::Bicarbonate => "hco3",
            Indicator::Co2Star => "co2",
            Indicator::Pco2 => "pco2",
            Indicator::Fco2 => "fco2",
            Indicator::OmegaAragonite => "omega-aragonite",
            Indicator::OmegaCalcite => "omega-calcite",
            Indicator::RevelleFactor => "revelle",
        }
    }
}

impl fmt::Display for Indicator {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

impl FromStr for Indicator {
    type Err = PipelineError;
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let wanted = text.trim().to_ascii_lowercase();
        Indicator::ALL
            .iter()
            .copied()
            .find(|i| i.key() == wanted)
            .ok_or_else(|| PipelineError::Option {
                option: "--indicators".into(),
                message: format!(
                    "unknown indicator '{text}'; choose from {}",
                    keys(Indicator::ALL)
                ),
            })
    }
}

/// pH scales (Dickson 1984 definitions as used by the chemistry crate).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum PhScale {
    Total,
    Seawater,
    Free,
}

impl PhScale {
    pub const ALL: &'static [PhScale] = &[PhScale::Total, PhScale::Seawater, PhScale::Free];

    pub fn key(self) -> &'static str {
        match self {
            PhScale::Total => "total",
            PhScale::Seawater => "seawater",
            PhScale::Free => "free",
        }
    }
}

impl fmt::Display for PhScale {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

impl FromStr for PhScale {
    type Err = PipelineError;
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let wanted = text.trim().to_ascii_lowercase();
        PhScale::ALL
            .iter()
            .copied()
            .find(|s| s.key() == wanted)
            .ok_or_else(|| PipelineError::Option {
                option: "--ph-scales".into(),
                message: format!(
                    "unknown pH scale '{text}'; choose from {}",
                    keys(PhScale::ALL)
                ),
            })
    }
}

/// Units of the concentration outputs (CO3--, HCO3-, CO2*).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum ConcentrationUnit {
    /// mol m-3, as CMIP model output; per-mass values times the slab's density.
    #[default]
    MolPerCubicMetre,
    /// µmol kg-1, as the chemistry computes them.
    MicromolPerKilogram,
}

impl ConcentrationUnit {
    pub const ALL: &'static [ConcentrationUnit] = &[
        ConcentrationUnit::MolPerCubicMetre,
        ConcentrationUnit::MicromolPerKilogram,
    ];

    pub fn key(self) -> &'static str {
        match self {
            ConcentrationUnit::MolPerCubicMetre => "mol-m3",
            ConcentrationUnit::MicromolPerKilogram => "umol-kg",
        }
    }

    /// UDUNITS spelling written to the `units` attribute.
    pub fn udunits(self) -> &'static str {
        match self {
            ConcentrationUnit::MolPerCubicMetre => "mol m-3",
            ConcentrationUnit::MicromolPerKilogram => "umol kg-1",
        }
    }

    /// Converts µmol kg-1 to this unit; `density` in kg m-3.
    fn convert_micromol_per_kg(self, value: f64, density: f64) -> f64 {
        match self {
            ConcentrationUnit::MolPerCubicMetre => value * 1e-6 * density,
            ConcentrationUnit::MicromolPerKilogram => value,
        }
    }
}

impl fmt::Display for ConcentrationUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.key())
    }
}

impl FromStr for ConcentrationUnit {
    type Err = PipelineError;
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let wanted = text.trim().to_ascii_lowercase();
        ConcentrationUnit::ALL
            .iter()
            .copied()
            .find(|u| u.key() == wanted)
            .ok_or_else(|| PipelineError::Option {
                option: "--concentration-units".into(),
                message: format!(
                    "unknown unit '{text}'; choose from {}",
                    keys(ConcentrationUnit::ALL)
                ),
            })
    }
}

fn keys<T: fmt::Display>(all: &[T]) -> String {
    all.iter()
        .map(|k| k.to_string())
        .collect::<Vec<_>>()
        .join(", ")
}

/// Parses a comma-separated list of keys, dropping repeats and keeping the order given.
pub fn parse_list<T: FromStr<Err = PipelineError> + PartialEq>(
    text: &str,
) -> Result<Vec<T>, PipelineError> {
    let mut out = Vec::new();
    for part in text.split(',').filter(|p| !p.trim().is_empty()) {
        let item: T = part.parse()?;
        if !out.contains(&item) {
            out.push(item);
        }
    }
    Ok(out)
}

/// The user's selection: indicators, pH scales and concentration units.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct IndicatorChoice {
    pub indicators: Vec<Indicator>,
    pub ph_scales: Vec<PhScale>,
    pub concentration_unit: ConcentrationUnit,
}

impl Default for IndicatorChoice {
    fn default() -> Self {
        IndicatorChoice {
            indicators: Indicator::DEFAULT.to_vec(),
            ph_scales: vec![PhScale::Total],
            concentration_unit: ConcentrationUnit::default(),
        }
    }
}

impl IndicatorChoice {
    /// The output variables, in the order they are defined in the file.
    pub fn fields(&self) -> Result<Vec<OutputField>, PipelineError> {
        if self.indicators.is_empty() {
            return Err(PipelineError::Option {
                option: "--indicators".into(),
                message: format!("no indicator chosen; choose from {}", keys(Indicator::ALL)),
            });
        }
        let mut fields = Vec::new();
        for &indicator in &self.indicators {
            match indicator {
                Indicator::Ph => {
                    if self.ph_scales.is_empty() {
                        return Err(PipelineError::Option {
                            option: "--ph-scales".into(),
                            message: format!(
                                "no pH scale chosen; choose from {}",
                                keys(PhScale::ALL)
                            ),
                        });
                    }
                    fields.extend(self.ph_scales.iter().map(|&s| OutputField::ph(s)));
                }
                other => fields.push(OutputField::new(other, self.concentration_unit)),
            }
        }
        Ok(fields)
    }

    /// One line for provenance and resume checks.
    pub fn describe(&self) -> String {
        format!(
            "indicators={} ph_scales={} concentration_units={}",
            keys(&self.indicators),
            keys(&self.ph_scales),
            self.concentration_unit
        )
    }
}

/// What a field takes from a [`Solution`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Quantity {
    Ph(PhScale),
    Concentration(Species, ConcentrationUnit),
    Pco2,
    Fco2,
    OmegaAragonite,
    OmegaCalcite,
    RevelleFactor,
}

impl Quantity {
    /// The chemistry's output this quantity is (before any change of units).
    fn output(self) -> Output {
        match self {
            Quantity::Ph(PhScale::Total) => Output::PhTotal,
            Quantity::Ph(PhScale::Seawater) => Output::PhSeawater,
            Quantity::Ph(PhScale::Free) => Output::PhFree,
            Quantity::Concentration(Species::Carbonate, _) => Output::Carbonate,
            Quantity::Concentration(Species::Bicarbonate, _) => Output::Bicarbonate,
            Quantity::Concentration(Species::Co2Star, _) => Output::Co2,
            Quantity::Pco2 => Output::Pco2,
            Quantity::Fco2 => Output::Fco2,
            Quantity::OmegaAragonite => Output::OmegaAragonite,
            Quantity::OmegaCalcite => Output::OmegaCalcite,
            Quantity::RevelleFactor => Output::RevelleFactor,
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Species {
    Carbonate,
    Bicarbonate,
    Co2Star,
}

/// One output variable: its name, CF labels and how its value comes from a solution.
#[derive(Clone, Debug, PartialEq)]
pub struct OutputField {
    pub name: Cow<'static, str>,
    pub long_name: Cow<'static, str>,
    pub standard_name: Option<Cow<'static, str>>,
    pub units: &'static str,
    pub comment: &'static str,
    /// For a field of an indicator's uncertainty: which part, of which indicator.
    pub uncertainty: Option<UncertaintyPart>,
    quantity: Quantity,
}

const PCO2_NOTE: &str = "At the in-situ temperature and 1 atm total pressure, as if the water were brought to the surface without change of temperature (common practice for pCO2 below the surface).";

impl OutputField {
    fn ph(scale: PhScale) -> OutputField {
        let (name, long_name, standard_name) = match scale {
            PhScale::Total => (
                "ph",
                "pH on the total scale, in situ",
                Some("sea_water_ph_reported_on_total_scale"),
            ),
            PhScale::Seawater => (
                "ph_seawater_scale",
                "pH on the seawater scale, in situ",
                None,
            ),
            PhScale::Free => ("ph_free_scale", "pH on the free scale, in situ", None),
        };
        OutputField {
            name: name.into(),
            long_name: long_name.into(),
            standard_name: standard_name.map(Cow::Borrowed),
            units: "1",
            comment: "At in-situ temperature and pressure.",
            uncertainty: None,
            quantity: Quantity::Ph(scale),
        }
    }

    fn new(indicator: Indicator, unit: ConcentrationUnit) -> OutputField {
        let per_volume = unit == ConcentrationUnit::MolPerCubicMetre;
        let concentration = |name: &'static str,
                             long_name: &'static str,
                             standard_name: Option<&'static str>,
                             species| OutputField {
            name: name.into(),
            long_name: long_name.into(),
            // CF mole_concentration names are per volume; no per-mass names exist for these.
            standard_name: standard_name.filter(|_| per_volume).map(Cow::Borrowed),
            units: unit.udunits(),
            comment: "",
            uncertainty: None,
            quantity: Quantity::Concentration(species, unit),
        };
        let plain = |name: &'static str,
                     long_name: &'static str,
                     standard_name: Option<&'static str>,
                     units,
                     comment,
                     quantity| OutputField {
            name: name.into(),
            long_name: long_name.into(),
            standard_name: standard_name.map(Cow::Borrowed),
            units,
            comment,
            uncertainty: None,
            quantity,
        };
        match indicator {
            Indicator::Ph => OutputField::ph(PhScale::Total),
            Indicator::Carbonate => concentration(
                "co3",
                "Carbonate ion concentration",
                Some("mole_concentration_of_carbonate_expressed_as_carbon_in_sea_water"),
                Species::Carbonate,
            ),
            Indicator::Bicarbonate => concentration(
                "hco3",
                "Bicarbonate ion concentration",
                None,
                Species::Bicarbonate,
            ),
            Indicator::Co2Star => concentration(
                "co2_star",
                "Dissolved CO2 (CO2(aq) + H2CO3) concentration",
                None,
                Species::Co2Star,
            ),
            Indicator::Pco2 => plain(
                "pco2",
                "Partial pressure of CO2 in sea water",
                Some("partial_pressure_of_carbon_dioxide_in_sea_water"),
                "uatm",
                PCO2_NOTE,
                Quantity::Pco2,
            ),
            Indicator::Fco2 => plain(
                "fco2",
                "Fugacity of CO2 in sea water",
                Some("fugacity_of_carbon_dioxide_in_sea_water"),
                "uatm",
                PCO2_NOTE,
                Quantity::Fco2,
            ),
            Indicator::OmegaAragonite => plain(
                "omega_aragonite",
                "Saturation state of sea water with respect to aragonite",
                None,
                "1",
                "[Ca++][CO3--] / Ksp(aragonite) at in-situ temperature and pressure.",
                Quantity::OmegaAragonite,
            ),
            Indicator::OmegaCalcite => plain(
                "omega_calcite",
                "Saturation state of sea water with respect to calcite",
                None,
                "1",
                "[Ca++][CO3--] / Ksp(calcite) at in-situ temperature and pressure.",
                Quantity::OmegaCalcite,
            ),
            Indicator::RevelleFactor => plain(
                "revelle_factor",
                "Revelle factor (d ln pCO2 / d ln DIC at constant alkalinity)",
                None,
                "1",
                "",
                Quantity::RevelleFactor,
            ),
        }
    }

    /// The field's value for a solved cell; `density_kg_m3` converts per-mass to per-volume.
    pub fn value(&self, solution: &Solution, density_kg_m3: f64) -> f64 {
        self.value_of_output(self.output().value(solution), density_kg_m3)
    }

    /// The chemistry's output the field is made from.
    pub fn output(&self) -> Output {
        self.quantity.output()
    }

    /// The field's value from its [`OutputField::output`] as the chemistry gives it.
    pub fn value_of_output(&self, value: f64, density_kg_m3: f64) -> f64 {
        match self.quantity {
            Quantity::Concentration(_, unit) => unit.convert_micromol_per_kg(value, density_kg_m3),
            _ => value,
        }
    }

    /// [`OutputField::value_of_output`] of many cells: `each(i, value)` for the `i`th of
    /// `outputs`, with the density beside it in `densities`.
    pub fn each_value_of_output(
        &self,
        outputs: &[f64],
        densities: &[f64],
        mut each: impl FnMut(usize, f64),
    ) {
        // The match hoisted out of the loop: only concentrations read the density.
        match self.quantity {
            Quantity::Concentration(..) => {
                for (i, (&v, &density)) in outputs.iter().zip(densities).enumerate() {
                    each(i, self.value_of_output(v, density));
                }
            }
            _ => outputs.iter().enumerate().for_each(|(i, &v)| each(i, v)),
        }
    }

    /// Whether the value needs the cell's density.
    pub fn needs_density(&self) -> bool {
        matches!(
            self.quantity,
            Quantity::Concentration(_, ConcentrationUnit::MolPerCubicMetre)
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_lists_and_rejects_unknown_keys() {
        let list: Vec<Indicator> = parse_list("ph, co3,omega-aragonite,ph").unwrap();
        assert_eq!(
            list,
            vec![
                Indicator::Ph,
                Indicator::Carbonate,
                Indicator::OmegaAragonite
            ]
        );
        let err = parse_list::<Indicator>("ph,omega").unwrap_err().to_string();
        assert!(err.contains("omega-aragonite"), "{err}");
    }

    #[test]
    fn per_mass_units_drop_volume_standard_names() {
        let choice = IndicatorChoice {
            indicators: vec![Indicator::Carbonate],
            ph_scales: vec![PhScale::Total],
            concentration_unit: ConcentrationUnit::MicromolPerKilogram,
        };
        let fields = choice.fields().unwrap();
        assert_eq!(fields[0].units, "umol kg-1");
        assert_eq!(fields[0].standard_name, None);
    }

    #[test]
    fn one_ph_variable_per_scale() {
        let choice = IndicatorChoice {
            indicators: vec![Indicator::Ph],
            ph_scales: vec![PhScale::Total, PhScale::Free],
            concentration_unit: ConcentrationUnit::default(),
        };
        let names: Vec<_> = choice
            .fields()
            .unwrap()
            .iter()
            .map(|f| f.name.clone())
            .collect();
        assert_eq!(names, vec!["ph", "ph_free_scale"]);
    }
}
