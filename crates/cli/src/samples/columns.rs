//! Which column of a sample table holds which role, and how its units convert to the
//! chemistry's (µmol kg-1, in-situ °C, practical salinity, dbar, µatm).

use acidscape_gridio::units;
use std::collections::BTreeMap;

/// What a column means to the chemistry.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub(super) enum Role {
    Alkalinity,
    Dic,
    Ph,
    Pco2,
    Temperature,
    Salinity,
    Pressure,
    Depth,
    Latitude,
    Phosphate,
    Silicate,
}

impl Role {
    pub(super) const ALL: [Role; 11] = [
        Role::Alkalinity,
        Role::Dic,
        Role::Ph,
        Role::Pco2,
        Role::Temperature,
        Role::Salinity,
        Role::Pressure,
        Role::Depth,
        Role::Latitude,
        Role::Phosphate,
        Role::Silicate,
    ];

    /// The role's key on the command line, then the header names recognised without a mapping.
    pub fn names(self) -> &'static [&'static str] {
        match self {
            Role::Alkalinity => &["alkalinity", "ta", "talk", "total_alkalinity"],
            Role::Dic => &["dic", "dissic", "tco2"],
            Role::Ph => &["ph", "ph_total"],
            Role::Pco2 => &["pco2"],
            Role::Temperature => &["temperature", "temp", "t"],
            Role::Salinity => &["salinity", "sal", "s", "so", "practical_salinity"],
            Role::Pressure => &["pressure", "pres", "p"],
            Role::Depth => &["depth"],
            Role::Latitude => &["latitude", "lat"],
            Role::Phosphate => &["phosphate", "po4"],
            Role::Silicate => &["silicate", "si", "sio4"],
        }
    }

    pub fn key(self) -> &'static str {
        self.names()[0]
    }

    pub(super) fn from_key(key: &str) -> Result<Role, String> {
        let key = key.trim().to_ascii_lowercase();
        Role::ALL
            .into_iter()
            .find(|role| role.key() == key)
            .ok_or_else(|| {
                let keys: Vec<&str> = Role::ALL.iter().map(|r| r.key()).collect();
                format!("unknown role '{key}'; expected one of {}", keys.join(", "))
            })
    }

    fn default_units(self) -> &'static str {
        match self {
            Role::Alkalinity | Role::Dic | Role::Phosphate | Role::Silicate => "umol/kg",
            Role::Temperature => "degC",
            Role::Salinity | Role::Ph | Role::Latitude => "1",
            Role::Pressure => "dbar",
            Role::Depth => "m",
            Role::Pco2 => "uatm",
        }
    }
}

/// How to turn one column's text into the chemistry's units.
#[derive(Clone, Copy, Debug)]
pub(super) enum Conversion {
    Concentration(units::Concentration),
    Temperature(units::TemperatureUnits),
    Salinity(units::SalinityUnits),
    Scale(f64),
}

/// A role found in the header: its column index and how to convert it.
#[derive(Clone, Copy, Debug)]
pub(super) struct Column {
    pub index: usize,
    pub conversion: Conversion,
}

/// Splits `name [units]` or `name (units)` into its parts.
pub(super) fn split_header(header: &str) -> (String, Option<String>) {
    let header = header.trim();
    for (open, close) in [('[', ']'), ('(', ')')] {
        if let (Some(start), true) = (header.find(open), header.ends_with(close)) {
            let name = header[..start].trim().to_ascii_lowercase();
            let unit = header[start + 1..header.len() - 1].trim().to_string();
            return (name, Some(unit));
        }
    }
    (header.to_ascii_lowercase(), None)
}

fn parse_pco2_units(text: &str) -> Result<f64, String> {
    match text.trim().to_ascii_lowercase().as_str() {
        "uatm" | "µatm" | "μatm" | "microatm" | "micro-atm" => Ok(1.0),
        "atm" => Ok(1.0e6),
        other => Err(format!(
            "units '{other}' for pCO2 not understood; expected uatm (µatm) or atm"
        )),
    }
}

pub(super) fn conversion_for(role: Role, unit_text: &str) -> Result<Conversion, String> {
    let describe = |e: units::UnitsError| e.to_string();
    Ok(match role {
        Role::Alkalinity | Role::Dic | Role::Phosphate | Role::Silicate => {
            Conversion::Concentration(units::parse_concentration(unit_text).map_err(describe)?)
        }
        Role::Temperature => {
            Conversion::Temperature(units::parse_temperature(unit_text).map_err(describe)?)
        }
        Role::Salinity => Conversion::Salinity(units::parse_salinity(unit_text).map_err(describe)?),
        Role::Pressure => {
            Conversion::Scale(units::parse_pressure(unit_text).map_err(describe)?.to_dbar)
        }
        Role::Depth => Conversion::Scale(units::parse_length(unit_text).map_err(describe)?.to_m),
        Role::Pco2 => Conversion::Scale(parse_pco2_units(unit_text)?),
        Role::Ph | Role::Latitude => match unit_text.trim() {
            "" | "1" => Conversion::Scale(1.0),
            other => return Err(format!("{} takes no units, got '{other}'", role.key())),
        },
    })
}

/// Parses `ROLE=VALUE` options into a map.
pub(super) fn role_options(
    options: &[String],
    flag: &str,
) -> Result<BTreeMap<Role, String>, String> {
    let mut map = BTreeMap::new();
    for option in options {
        let (role, value) = option
            .split_once('=')
            .ok_or_else(|| format!("{flag} expects ROLE=VALUE, got '{option}'"))?;
        map.insert(Role::from_key(role)?, value.trim().to_string());
    }
    Ok(map)
}

/// Finds each role's column from the header, the mapping and the units options.
pub(super) fn locate_columns(
    header: &csv::StringRecord,
    columns: &[String],
    units: &[String],
) -> Result<BTreeMap<Role, Column>, String> {
    let renames = role_options(columns, "--column")?;
    let unit_overrides = role_options(units, "--units")?;
    let parsed: Vec<(String, Option<String>)> = header.iter().map(split_header).collect();
    let mut found = BTreeMap::new();
    for role in Role::ALL {
        let wanted: Vec<String> = match renames.get(&role) {
            Some(name) => vec![split_header(name).0],
            None => role.names().iter().map(|n| n.to_string()).collect(),
        };
        let Some(index) = parsed.iter().position(|(name, _)| wanted.contains(name)) else {
            if let Some(name) = renames.get(&role) {
                return Err(format!(
                    "--column {}={name}: the table has no column '{name}'",
                    role.key()
                ));
            }
            continue;
        };
        let unit_text = unit_overrides
            .get(&role)
            .cloned()
            .or_else(|| parsed[index].1.clone())
            .unwrap_or_else(|| role.default_units().to_string());
        let conversion = conversion_for(role, &unit_text)
            .map_err(|e| format!("column '{}': {e}", &header[index]))?;
        found.insert(role, Column { index, conversion });
    }
    Ok(found)
}
