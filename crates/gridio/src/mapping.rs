//! The user's variable mapping: which variable plays which role when CF standard
//! names and CMIP/OMIP names are not enough (TOML file and command-line overrides).
//!
//! File format (our own): a `[variables]` table, or the same keys at top level:
//! ```toml
//! [variables]
//! dic = "DIC"                                   # just the name
//! alkalinity = { name = "ALK", units = "mmol m-3" }  # name and a units override
//! temperature = { name = "temp", kind = "potential" } # potential | conservative | in-situ
//! salinity = { name = "salt", kind = "practical" }    # practical | absolute
//! ```

use crate::error::{GridError, Result};
use serde::Deserialize;
use std::path::Path;

/// One mapped variable: its name in the files, and optionally its units and kind.
#[derive(Default, Clone, Debug, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MappedVariable {
    /// Empty when only units or kind are given: the variable is then found as usual
    /// (standard name, CMIP/OMIP or native name) and the units or kind applied to it.
    #[serde(default)]
    pub name: String,
    /// Replaces the file's `units` attribute (for files with missing or wrong units).
    #[serde(default)]
    pub units: Option<String>,
    /// For temperature: potential | conservative | in-situ; for salinity: practical | absolute.
    #[serde(default)]
    pub kind: Option<String>,
}

#[derive(Deserialize)]
#[serde(untagged)]
enum MappedEntry {
    Name(String),
    Full(MappedVariable),
}

impl From<MappedEntry> for MappedVariable {
    fn from(entry: MappedEntry) -> Self {
        match entry {
            MappedEntry::Name(name) => MappedVariable {
                name,
                ..Default::default()
            },
            MappedEntry::Full(full) => full,
        }
    }
}

fn entry<'de, D: serde::Deserializer<'de>>(
    deserializer: D,
) -> std::result::Result<Option<MappedVariable>, D::Error> {
    Ok(Option::<MappedEntry>::deserialize(deserializer)?.map(MappedVariable::from))
}

/// Role -> variable overrides. Every field is optional; an empty mapping means
/// "find everything by standard name or CMIP/OMIP name".
#[derive(Default, Clone, Debug, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct VariableMapping {
    #[serde(default, deserialize_with = "entry")]
    pub dic: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub alkalinity: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub temperature: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub salinity: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub phosphate: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub silicate: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub pressure: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub cell_area: Option<MappedVariable>,
    #[serde(default, deserialize_with = "entry")]
    pub sea_floor_depth: Option<MappedVariable>,
}

/// The roles a mapping can name, in the order reports list them.
pub const ROLE_NAMES: [&str; 9] = [
    "dic",
    "alkalinity",
    "temperature",
    "salinity",
    "phosphate",
    "silicate",
    "pressure",
    "cell_area",
    "sea_floor_depth",
];

impl VariableMapping {
    /// Reads a mapping file (TOML, keys as in the module docs).
    pub fn from_toml_file(path: &Path) -> Result<Self> {
        let source_name = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|e| GridError::Mapping {
            source_name: source_name.clone(),
            message: format!("cannot read the file ({e})"),
        })?;
        Self::from_toml_str(&text, &source_name)
    }

    /// Parses mapping text; `source_name` is used in error messages.
    pub fn from_toml_str(text: &str, source_name: &str) -> Result<Self> {
        let bad = |message: String| GridError::Mapping {
            source_name: source_name.to_string(),
            message,
        };
        let mut table: toml::Table =
            toml::from_str(text).map_err(|e| bad(format!("not valid TOML: {}", e.message())))?;
        let table = match table.remove("variables") {
            Some(toml::Value::Table(inner)) => inner,
            Some(_) => return Err(bad("`variables` must be a table".to_string())),
            None => table,
        };
        let mapping: VariableMapping = toml::Value::Table(table).try_into().map_err(
            |e: toml::de::Error| {
                bad(format!(
                    "{}; known roles: {}; each is \"NAME\" or {{ name = \"NAME\", units = \"...\", kind = \"...\" }}",
                    e.message(),
                    ROLE_NAMES.join(", ")
                ))
            },
        )?;
        mapping.check_kinds(source_name)?;
        Ok(mapping)
    }

    /// Sets one override from the command line: `role` is a role name (`dic`), or
    /// `role.units` / `role.kind` to set those fields (of a named role, or of the variable
    /// found for that role when no name is given).
    pub fn set(&mut self, role: &str, value: &str) -> Result<()> {
        let bad = |message: String| GridError::Mapping {
            source_name: "override".to_string(),
            message,
        };
        let (role_name, field) = match role.split_once('.') {
            Some((r, f)) => (r, Some(f)),
            None => (role, None),
        };
        let slot = self.slot_mut(role_name).ok_or_else(|| {
            bad(format!(
                "unknown role '{role_name}'; known roles: {}",
                ROLE_NAMES.join(", ")
            ))
        })?;
        match field {
            None => {
                if value.is_empty() {
                    return Err(bad(format!("empty variable name for {role_name}")));
                }
                let entry = slot.get_or_insert_with(MappedVariable::default);
                entry.name = value.to_string();
            }
            Some(field @ ("units" | "kind")) => {
                if value.is_empty() {
                    return Err(bad(format!("empty value for {role_name}.{field}")));
                }
                let entry = slot.get_or_insert_with(MappedVariable::default);
                if field == "units" {
                    entry.units = Some(value.to_string());
                } else {
                    entry.kind = Some(value.to_string());
                }
            }
            Some(other) => {
                return Err(bad(format!(
                    "unknown field '{other}' for {role_name}; expected {role_name}, {role_name}.units or {role_name}.kind"
                )))
            }
        }
        self.check_kinds("override")
    }

    /// The entry for a role name, if that role exists.
    pub fn get(&self, role: &str) -> Option<&MappedVariable> {
        match role {
            "dic" => self.dic.as_ref(),
            "alkalinity" => self.alkalinity.as_ref(),
            "temperature" => self.temperature.as_ref(),
            "salinity" => self.salinity.as_ref(),
            "phosphate" => self.phosphate.as_ref(),
            "silicate" => self.silicate.as_ref(),
            "pressure" => self.pressure.as_ref(),
            "cell_area" => self.cell_area.as_ref(),
            "sea_floor_depth" => self.sea_floor_depth.as_ref(),
            _ => None,
        }
    }

    fn slot_mut(&mut self, role: &str) -> Option<&mut Option<MappedVariable>> {
        Some(match role {
            "dic" => &mut self.dic,
            "alkalinity" => &mut self.alkalinity,
            "temperature" => &mut self.temperature,
            "salinity" => &mut self.salinity,
            "phosphate" => &mut self.phosphate,
            "silicate" => &mut self.silicate,
            "pressure" => &mut self.pressure,
            "cell_area" => &mut self.cell_area,
            "sea_floor_depth" => &mut self.sea_floor_depth,
            _ => return None,
        })
    }

    fn check_kinds(&self, source_name: &str) -> Result<()> {
        let bad = |message: String| GridError::Mapping {
            source_name: source_name.to_string(),
            message,
        };
        if let Some(kind) = self.temperature.as_ref().and_then(|t| t.kind.as_deref()) {
            TemperatureKind::parse(kind).ok_or_else(|| {
                bad(format!(
                    "temperature kind '{kind}' unknown; expected potential, conservative or in-situ"
                ))
            })?;
        }
        if let Some(kind) = self.salinity.as_ref().and_then(|s| s.kind.as_deref()) {
            SalinityKind::parse(kind).ok_or_else(|| {
                bad(format!(
                    "salinity kind '{kind}' unknown; expected practical or absolute"
                ))
            })?;
        }
        for role in [
            "phosphate",
            "silicate",
            "dic",
            "alkalinity",
            "pressure",
            "cell_area",
            "sea_floor_depth",
        ] {
            if self.get(role).is_some_and(|m| m.kind.is_some()) {
                return Err(bad(format!(
                    "`kind` applies only to temperature and salinity, not {role}"
                )));
            }
        }
        Ok(())
    }
}

pub use crate::seawater::TemperatureKind;

impl TemperatureKind {
    /// Parses the mapping's `kind` value.
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "potential" => Some(Self::Potential),
            "conservative" => Some(Self::Conservative),
            "in-situ" | "in_situ" | "insitu" => Some(Self::InSitu),
            _ => None,
        }
    }

    /// Plain label for reports.
    pub fn label(self) -> &'static str {
        match self {
            Self::Potential => "potential",
            Self::Conservative => "conservative",
            Self::InSitu => "in-situ",
        }
    }
}

/// What a salinity variable holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SalinityKind {
    Practical,
    Absolute,
}

impl SalinityKind {
    /// Parses the mapping's `kind` value.
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "practical" => Some(Self::Practical),
            "absolute" => Some(Self::Absolute),
            _ => None,
        }
    }

    /// Plain label for reports.
    pub fn label(self) -> &'static str {
        match self {
            Self::Practical => "practical",
            Self::Absolute => "absolute",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn toml_with_names_tables_and_kinds() {
        let m = VariableMapping::from_toml_str(
            "[variables]\ndic = \"DIC\"\ntemperature = { name = \"temp\", kind = \"potential\" }\n",
            "test",
        )
        .unwrap();
        assert_eq!(m.dic.as_ref().unwrap().name, "DIC");
        assert_eq!(
            m.temperature.as_ref().unwrap().kind.as_deref(),
            Some("potential")
        );
        assert!(m.alkalinity.is_none());
    }

    #[test]
    fn unknown_role_and_kind_are_errors() {
        let e = VariableMapping::from_toml_str("dicc = \"DIC\"", "m.toml").unwrap_err();
        assert!(
            e.to_string().contains("m.toml") && e.to_string().contains("dicc"),
            "{e}"
        );
        let e = VariableMapping::from_toml_str(
            "salinity = { name = \"s\", kind = \"relative\" }",
            "m.toml",
        )
        .unwrap_err();
        assert!(e.to_string().contains("practical or absolute"), "{e}");
    }

    #[test]
    fn command_line_overrides() {
        let mut m = VariableMapping::default();
        m.set("alkalinity", "ALK").unwrap();
        m.set("alkalinity.units", "mmol m-3").unwrap();
        assert_eq!(
            m.alkalinity.as_ref().unwrap().units.as_deref(),
            Some("mmol m-3")
        );
        assert!(m.set("ph", "x").is_err());
        // A kind or units alone apply to the variable found for the role.
        m.set("temperature.kind", "conservative").unwrap();
        assert_eq!(m.temperature.as_ref().unwrap().name, "");
        assert!(m.set("temperature.kind", "lukewarm").is_err());
        let m =
            VariableMapping::from_toml_str("temperature = { kind = \"potential\" }", "t").unwrap();
        assert_eq!(m.temperature.unwrap().kind.as_deref(), Some("potential"));
    }
}
