//! What each file of an input holds, read from that file's own attributes (and the user
//! mapping), and how its values become what the chemistry wants. Files of one variable may
//! differ (one year written in other units): each is then converted by its own meaning, or
//! the run is refused when a file does not say what it holds.

use crate::catalog::{attr_text, InputFile};
use crate::error::{GridError, Result};
use crate::mapping::{MappedVariable, SalinityKind, TemperatureKind};
use crate::native::{self, Stated};
use crate::roles::Role;
use crate::units::{self, Concentration, SalinityUnits, TemperatureUnits};
use crate::DensityChoice;

/// How the values of one input become what the chemistry wants.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Conversion {
    Concentration(Concentration),
    Temperature(TemperatureUnits, TemperatureKind),
    Salinity(SalinityKind, SalinityUnits),
    /// Factor to dbar and the atmospheric pressure to subtract [dbar].
    Pressure(f64, f64),
    Area(f64),
    Length(f64),
}

/// What one file of an input holds.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct FileMeaning {
    /// Units as used: the mapping's override, the family's alias, or the file's attribute.
    pub units: String,
    pub standard_name: Option<String>,
    pub conversion: Conversion,
    /// Factor applied to practical salinity values (1000 for mass-fraction files, else 1);
    /// decided from the file's values when they are inspected.
    pub salinity_scale: f64,
}

/// The temperature kind a long_name states ("Potential Temperature", "Conservative
/// Temperature", "in situ temperature"), if any.
pub(crate) fn temperature_kind_in_words(text: &str) -> Option<TemperatureKind> {
    let t = text.to_ascii_lowercase();
    if t.contains("conservative") {
        Some(TemperatureKind::Conservative)
    } else if t.contains("potential") {
        Some(TemperatureKind::Potential)
    } else if t.contains("in situ") || t.contains("in-situ") || t.contains("insitu") {
        Some(TemperatureKind::InSitu)
    } else {
        None
    }
}

/// The temperature kind stated by a variable's own names and attributes, or by the
/// documentation of the model family that writes this name.
pub(crate) fn stated_temperature_kind(
    name: &str,
    standard_name: Option<&str>,
    long_name: Option<&str>,
) -> Option<TemperatureKind> {
    match standard_name {
        Some("sea_water_potential_temperature") => return Some(TemperatureKind::Potential),
        Some("sea_water_conservative_temperature") => return Some(TemperatureKind::Conservative),
        Some("sea_water_temperature") => return Some(TemperatureKind::InSitu),
        _ => {}
    }
    match name {
        "thetao" => return Some(TemperatureKind::Potential),
        "bigthetao" => return Some(TemperatureKind::Conservative),
        _ => {}
    }
    if let Some(kind) = long_name.and_then(temperature_kind_in_words) {
        return Some(kind);
    }
    match native::stated(Role::Temperature, name) {
        Stated::Temperature(kind) => Some(kind),
        _ => None,
    }
}

/// The salinity kind stated by the attributes (or the family), practical by default.
fn salinity_kind(
    name: &str,
    standard_name: Option<&str>,
    long_name: Option<&str>,
    parsed: SalinityUnits,
) -> SalinityKind {
    let absolute_words = long_name
        .map(str::to_ascii_lowercase)
        .is_some_and(|l| l.contains("absolute") || l.contains("reference salinity"));
    match (standard_name, parsed) {
        (Some("sea_water_absolute_salinity" | "sea_water_reference_salinity"), _)
        | (_, SalinityUnits::Absolute { .. }) => SalinityKind::Absolute,
        _ if absolute_words => SalinityKind::Absolute,
        _ => match native::stated(Role::Salinity, name) {
            Stated::Salinity(kind) => kind,
            _ => SalinityKind::Practical,
        },
    }
}

fn units_error(file: &InputFile, variable: &str, message: String) -> GridError {
    GridError::Units {
        file: file.path.clone(),
        variable: variable.to_string(),
        message,
    }
}

/// What the variable `name` of `file` holds, from its attributes and the mapping entry.
pub(crate) fn meaning_in_file(
    role: Role,
    name: &str,
    mapped: Option<&MappedVariable>,
    file: &InputFile,
) -> Result<FileMeaning> {
    let var = crate::catalog::require_var(file, name, "the run")?;
    let standard_name = attr_text(&var, "standard_name");
    let long_name = attr_text(&var, "long_name");
    let units = match mapped.and_then(|m| m.units.clone()).or_else(|| attr_text(&var, "units")) {
        Some(u) => native::unit_alias(role, name, &u).map_or(u, str::to_string),
        None => {
            return Err(units_error(
                file,
                name,
                format!(
                    "no `units` attribute; expected one (e.g. {}), or give units in the mapping: --variable {}.units=...",
                    role.example_units(),
                    role.key()
                ),
            ))
        }
    };
    let kind_override = mapped.and_then(|m| m.kind.as_deref());
    let err = |e: units::UnitsError| units_error(file, name, e.to_string());
    let conversion = match role {
        Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate => {
            Conversion::Concentration(units::parse_concentration(&units).map_err(err)?)
        }
        Role::Temperature => {
            let scale = units::parse_temperature(&units).map_err(err)?;
            let kind = kind_override
                .and_then(TemperatureKind::parse)
                .or_else(|| stated_temperature_kind(name, standard_name.as_deref(), long_name.as_deref()))
                .ok_or_else(|| GridError::Metadata {
                    file: file.path.clone(),
                    variable: name.to_string(),
                    message: "cannot tell whether this temperature is potential, conservative or in-situ (neither standard_name nor long_name says); set it with --variable temperature.kind=potential (or conservative, in-situ), or kind = \"...\" in the mapping file".to_string(),
                })?;
            Conversion::Temperature(scale, kind)
        }
        Role::Salinity => {
            let parsed = units::parse_salinity(&units).map_err(err)?;
            let kind = kind_override
                .and_then(SalinityKind::parse)
                .unwrap_or_else(|| {
                    salinity_kind(name, standard_name.as_deref(), long_name.as_deref(), parsed)
                });
            let parsed = match (kind, parsed) {
                // Absolute salinity labelled "1"/"psu"-like: take the numbers as g kg-1.
                (SalinityKind::Absolute, SalinityUnits::Practical) => {
                    SalinityUnits::Absolute { to_g_per_kg: 1.0 }
                }
                (_, p) => p,
            };
            Conversion::Salinity(kind, parsed)
        }
        Role::Pressure => {
            let p = units::parse_pressure(&units).map_err(err)?;
            // `sea_water_pressure` includes the atmosphere: subtract one standard atmosphere, 10.1325 dbar (common practice).
            let atmosphere = if standard_name.as_deref() == Some("sea_water_pressure") {
                10.1325
            } else {
                0.0
            };
            Conversion::Pressure(p.to_dbar, atmosphere)
        }
        Role::CellArea => Conversion::Area(units::parse_area(&units).map_err(err)?.to_m2),
        Role::SeaFloorDepth => Conversion::Length(units::parse_length(&units).map_err(err)?.to_m),
    };
    Ok(FileMeaning {
        units,
        standard_name,
        conversion,
        salinity_scale: 1.0,
    })
}

/// The meaning of every file of an input (`files_of`: the files in piece order). A file that
/// does not say what it holds while another does, or whose standard_name names another
/// quantity, is refused naming both files.
pub(crate) fn meanings(
    role: Role,
    name: &str,
    mapped: Option<&MappedVariable>,
    files_of: &[&InputFile],
) -> Result<Vec<FileMeaning>> {
    let Some(first_file) = files_of.first() else {
        return Ok(Vec::new());
    };
    let first = meaning_in_file(role, name, mapped, first_file)?;
    let mut out = vec![first.clone()];
    for file in &files_of[1..] {
        let disagree = |message: String| GridError::FilesDisagree {
            variable: name.to_string(),
            first: first_file.path.clone(),
            second: file.path.clone(),
            message,
        };
        let meaning = meaning_in_file(role, name, mapped, file).map_err(|e| {
            disagree(format!(
                "the first file says what it holds ({}), the second cannot be read the same way: {e}",
                first.describe_briefly()
            ))
        })?;
        // Standard names may differ between files only among those of the role (another
        // temperature kind, per-volume or per-mass); a file without one is read by its
        // units and name.
        let known = |s: &Option<String>| {
            s.as_deref()
                .is_none_or(|s| role.standard_names().contains(&s))
        };
        if meaning.standard_name != first.standard_name
            && !(known(&meaning.standard_name) && known(&first.standard_name))
        {
            return Err(disagree(format!(
                "standard_name {} in the first, {} in the second: they name different quantities; expected every file of a variable to hold the same quantity",
                first.standard_name.as_deref().unwrap_or("(none)"),
                meaning.standard_name.as_deref().unwrap_or("(none)")
            )));
        }
        out.push(meaning);
    }
    Ok(out)
}

impl FileMeaning {
    fn describe_briefly(&self) -> String {
        format!(
            "units \"{}\"{}",
            self.units,
            self.standard_name
                .as_deref()
                .map(|s| format!(", standard_name {s}"))
                .unwrap_or_default()
        )
    }
}

impl Conversion {
    /// Plain description of what will be applied, for reports and provenance.
    pub fn describe(&self, density: DensityChoice) -> String {
        match self {
            Conversion::Concentration(c) => match c.basis {
                units::ConcentrationBasis::PerMass => format!("{} -> µmol kg-1", c.describe()),
                units::ConcentrationBasis::PerVolume => format!(
                    "{} -> µmol kg-1 dividing by {}",
                    c.describe(),
                    density_label(density)
                ),
            },
            Conversion::Temperature(scale, kind) => format!(
                "{}{} temperature -> in-situ °C{}",
                if *scale == TemperatureUnits::Kelvin { "kelvin -> °C; " } else { "" },
                kind.label(),
                match kind {
                    TemperatureKind::InSitu => " (as is)",
                    TemperatureKind::Potential => " (Fofonoff & Millard 1983)",
                    TemperatureKind::Conservative => " (TEOS-10 CT -> potential, then Fofonoff & Millard 1983)",
                }
            ),
            Conversion::Salinity(SalinityKind::Practical, _) => "practical salinity (as is)".to_string(),
            Conversion::Salinity(SalinityKind::Absolute, _) => {
                "absolute salinity -> practical, SP = SA × 35/35.16504 (reference-composition, Millero et al. 2008)".to_string()
            }
            Conversion::Pressure(f, atm) => format!(
                "× {f} -> dbar{}",
                if *atm > 0.0 { ", minus 10.1325 dbar atmosphere -> sea pressure" } else { "" }
            ),
            Conversion::Area(f) => format!("× {f} -> m2"),
            Conversion::Length(f) => format!("× {f} -> m"),
        }
    }

    /// A value in the units the chemistry wants, for plausibility checks: per-volume
    /// concentrations use `density`, temperatures are left at their kind (potential and
    /// in-situ differ by less than 2 °C in the ocean, common practice).
    pub fn rough_value(&self, value: f64, density: f64, salinity_scale: f64) -> f64 {
        match self {
            Conversion::Concentration(c) => c.to_umol_per_kg(value, density),
            Conversion::Temperature(scale, _) => scale.to_celsius(value),
            Conversion::Salinity(SalinityKind::Practical, _) => value * salinity_scale,
            Conversion::Salinity(
                SalinityKind::Absolute,
                SalinityUnits::Absolute { to_g_per_kg },
            ) => crate::seawater::practical_from_absolute(value * to_g_per_kg),
            Conversion::Salinity(SalinityKind::Absolute, SalinityUnits::Practical) => {
                crate::seawater::practical_from_absolute(value)
            }
            Conversion::Pressure(f, atm) => value * f - atm,
            Conversion::Area(f) | Conversion::Length(f) => value * f,
        }
    }
}

pub(crate) fn density_label(density: DensityChoice) -> String {
    match density {
        DensityChoice::InSitu => "in-situ density (TEOS-10 75-term, gsw)".to_string(),
        DensityChoice::Reference(rho) => format!("the reference density {rho} kg m-3 (Boussinesq)"),
    }
}
