//! Meaning of CF/UDUNITS `units` strings for the quantities a run carries.
//!
//! Every parser either returns what the string means or a [`UnitsError`] that
//! repeats the string seen and lists the accepted forms: an unknown unit is
//! never guessed.
//!
//! Accepted grammar (a subset of UDUNITS-2, "common practice" in model output):
//! a product of factors separated by spaces, `.`, `*` or `·`; a factor is a
//! symbol with an optional integer exponent (`m-3`, `m^-3`, `m**-3`, `m⁻³`);
//! `/` divides by the factor that follows it. `µ` (micro sign) and `μ` (Greek
//! mu) are read as the prefix `u`. An amount may carry an annotation after an
//! underscore naming what is counted, as ROMS writes them ("millimole_carbon
//! meter-3", "millimole_PO4 meter-3"); the annotation does not change the amount.
//! Equivalents (eq, meq, "milliequivalents") count as moles, as alkalinity is
//! given in mole equivalents.

use std::fmt;

/// A units string that could not be understood for the quantity asked for.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitsError {
    /// The units string as it was seen.
    pub seen: String,
    /// What the string was meant to describe, e.g. "concentration".
    pub quantity: &'static str,
    /// Human-readable list of accepted forms.
    pub accepted: &'static str,
}

impl fmt::Display for UnitsError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "units {:?} are not understood as {}; accepted forms: {}",
            self.seen, self.quantity, self.accepted
        )
    }
}

impl std::error::Error for UnitsError {}

const CONCENTRATION_FORMS: &str =
    "amount per volume (mol m-3, mol/m3, mol m^-3, mol.m-3, mmol m-3, mmol/m3, umol L-1, \
mol/L, millimole meter-3, millimole_carbon meter-3) or per mass (mol kg-1, mol/kg, \
mmol/kg, umol kg-1, µmol kg-1, micromol kg-1), with prefixes m/milli, u/µ/micro, n/nano \
and equivalents (eq, meq, ueq, milliequivalents) counted as mol";
const TEMPERATURE_FORMS: &str =
    "degC, deg_C, degree_C, degrees_C, degree_Celsius, Celsius, °C, K, kelvin, degK";
const SALINITY_FORMS: &str =
    "practical salinity: 1, 1e-3, 0.001, psu, PSU, pss-78, practical_salinity_unit, \
ppt, ‰ or empty; absolute salinity: g kg-1, g/kg, kg kg-1";
const LENGTH_FORMS: &str = "m, meter(s), metre(s), cm, mm, km";
const PRESSURE_FORMS: &str = "dbar, decibar, bar, mbar, Pa, hPa, kPa, MPa";
const AREA_FORMS: &str = "m2, m^2, m**2, m²; cm2, km2";

/// Whether a concentration is per volume of seawater or per mass of seawater.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ConcentrationBasis {
    /// Amount per cubic metre; `to_mol` converts a value to mol m-3.
    PerVolume,
    /// Amount per kilogram; `to_mol` converts a value to mol kg-1.
    PerMass,
}

/// What a concentration `units` string means.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Concentration {
    pub basis: ConcentrationBasis,
    /// Factor from the file's number to mol m-3 (per volume) or mol kg-1 (per mass).
    pub to_mol: f64,
}

impl Concentration {
    /// Converts one value to µmol kg-1; `density_kg_m3` is used only for per-volume units.
    #[inline]
    pub fn to_umol_per_kg(&self, value: f64, density_kg_m3: f64) -> f64 {
        match self.basis {
            // Factor first, so µmol-based units convert with a factor of exactly 1.
            ConcentrationBasis::PerMass => value * (self.to_mol * 1e6),
            ConcentrationBasis::PerVolume => value * (self.to_mol * 1e6) / density_kg_m3,
        }
    }

    /// Plain description for reports, e.g. "per volume, 1 unit = 0.001 mol m-3".
    pub fn describe(&self) -> String {
        match self.basis {
            ConcentrationBasis::PerVolume => {
                format!("per volume, 1 unit = {} mol m-3", self.to_mol)
            }
            ConcentrationBasis::PerMass => format!("per mass, 1 unit = {} mol kg-1", self.to_mol),
        }
    }
}

/// Temperature scale of a `units` string.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TemperatureUnits {
    Celsius,
    Kelvin,
}

impl TemperatureUnits {
    /// Converts one value to °C.
    #[inline]
    pub fn to_celsius(self, value: f64) -> f64 {
        match self {
            TemperatureUnits::Celsius => value,
            TemperatureUnits::Kelvin => value - 273.15,
        }
    }
}

/// What a salinity `units` string means.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SalinityUnits {
    /// Practical salinity (PSS-78), a number near 35 in the open ocean. CMIP `so`
    /// carries units "0.001" (or "1e-3") with values near 35: those values are
    /// used as they are, not multiplied by 0.001 (see [`practical_salinity_scale`]).
    Practical,
    /// Absolute salinity; the factor converts a value to g kg-1.
    Absolute { to_g_per_kg: f64 },
}

/// Factor to apply to values labelled practical salinity so they read as PSS-78 numbers.
///
/// CMIP/OMIP write `so` with units "0.001" and values near 35, which are practical
/// salinity as is. A file holding a mass fraction (typical value near 0.035) is
/// recognised from its magnitude: a typical (e.g. median wet) value below 1 gives
/// 1000, anything else 1. Salinities truly below 1 occur only in fresh water.
pub fn practical_salinity_scale(typical_value: f64) -> f64 {
    if typical_value.is_finite() && typical_value > 0.0 && typical_value < 1.0 {
        1000.0
    } else {
        1.0
    }
}

/// Length (depth, thickness) units: factor to metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LengthUnits {
    pub to_m: f64,
}

/// Pressure units: factor to decibar.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PressureUnits {
    pub to_dbar: f64,
}

/// Area units: factor to square metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AreaUnits {
    pub to_m2: f64,
}

/// Dimensions tracked by the generic parser: amount (mol), length (m), mass (kg).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Dimensions {
    amount: i32,
    length: i32,
    mass: i32,
}

/// A parsed product of factors: SI scale and dimension exponents.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Quantity {
    scale: f64,
    dims: Dimensions,
    /// True when a gram/kilogram symbol appeared (distinguishes g kg-1 from 0.001).
    mentions_mass: bool,
}

const fn dimensions(amount: i32, length: i32, mass: i32) -> Dimensions {
    Dimensions {
        amount,
        length,
        mass,
    }
}
const DIMENSIONLESS: Dimensions = dimensions(0, 0, 0);
const AMOUNT: Dimensions = dimensions(1, 0, 0);
const LENGTH: Dimensions = dimensions(0, 1, 0);
const AREA: Dimensions = dimensions(0, 2, 0);
const VOLUME: Dimensions = dimensions(0, 3, 0);
const MASS: Dimensions = dimensions(0, 0, 1);
const PER_VOLUME: Dimensions = dimensions(1, -3, 0);
const PER_MASS: Dimensions = dimensions(1, 0, -1);

/// SI scale and dimensions of one unit symbol.
fn symbol(sym: &str) -> Option<(f64, Dimensions)> {
    let amount = |s| Some((s, AMOUNT));
    let length = |s| Some((s, LENGTH));
    let volume = |s| Some((s, VOLUME));
    let mass = |s| Some((s, MASS));
    match sym {
        "mol" | "mole" | "moles" | "eq" | "equivalent" | "equivalents" => amount(1.0),
        "mmol" | "millimol" | "millimole" | "millimoles" | "meq" | "milliequivalent"
        | "milliequivalents" => amount(1e-3),
        "umol" | "micromol" | "micromole" | "micromoles" | "ueq" | "microequivalent"
        | "microequivalents" => amount(1e-6),
        "nmol" | "nanomol" | "nanomole" | "nanomoles" => amount(1e-9),
        "m" | "meter" | "meters" | "metre" | "metres" => length(1.0),
        "cm" | "centimeter" | "centimeters" | "centimetre" | "centimetres" => length(1e-2),
        "mm" | "millimeter" | "millimeters" | "millimetre" | "millimetres" => length(1e-3),
        "km" | "kilometer" | "kilometers" | "kilometre" | "kilometres" => length(1e3),
        "L" | "l" | "liter" | "liters" | "litre" | "litres" => volume(1e-3),
        "kg" | "kilogram" | "kilograms" => mass(1.0),
        "g" | "gram" | "grams" => mass(1e-3),
        _ => None,
    }
}

/// Rewrites micro signs, superscripts and exponent markers into the plain grammar.
fn normalise(units: &str) -> String {
    let mut out = String::with_capacity(units.len() + 4);
    let mut prev: Option<char> = None;
    for c in units.trim().replace("**", "").chars() {
        match c {
            'µ' | 'μ' => out.push('u'),
            '⁻' => out.push('-'),
            '⁺' => out.push('+'),
            '¹' => out.push('1'),
            '²' => out.push('2'),
            '³' => out.push('3'),
            '^' => {}
            '*' | '·' => out.push(' '),
            // `.` multiplies after a symbol (mol.m-3) but is a decimal point in numbers.
            '.' if prev.is_some_and(|p| p.is_alphabetic()) => out.push(' '),
            '/' => out.push_str(" / "),
            _ => out.push(c),
        }
        prev = Some(c);
    }
    out
}

/// Parses a product of unit factors; None when any factor is unknown.
fn parse_quantity(units: &str) -> Option<Quantity> {
    let text = normalise(units);
    let mut q = Quantity {
        scale: 1.0,
        dims: DIMENSIONLESS,
        mentions_mass: false,
    };
    let mut divide_next = false;
    for token in text.split_whitespace() {
        if token == "/" {
            if divide_next {
                return None;
            }
            divide_next = true;
            continue;
        }
        let sign = if divide_next { -1 } else { 1 };
        divide_next = false;
        let first = token.chars().next()?;
        if first.is_ascii_digit() || first == '.' || first == '-' || first == '+' {
            let number: f64 = token.parse().ok()?;
            if !(number.is_finite() && number > 0.0) {
                return None;
            }
            q.scale *= number.powi(sign);
            continue;
        }
        // "millimole_carbon": the annotation after `_` names what an amount counts.
        let token = match token.split_once('_') {
            Some((head, _)) if symbol(head).is_some_and(|(_, d)| d == AMOUNT) => head,
            _ => token,
        };
        let split = token
            .find(|c: char| c.is_ascii_digit() || c == '-' || c == '+')
            .unwrap_or(token.len());
        let (name, exponent_text) = token.split_at(split);
        let exponent: i32 = if exponent_text.is_empty() {
            1
        } else {
            exponent_text.parse().ok()?
        };
        let (scale, dims) = symbol(name)?;
        let power = exponent * sign;
        q.scale *= scale.powi(power);
        q.dims.amount += dims.amount * power;
        q.dims.length += dims.length * power;
        q.dims.mass += dims.mass * power;
        q.mentions_mass |= dims.mass != 0;
    }
    if divide_next {
        return None;
    }
    Some(q)
}

fn error(units: &str, quantity: &'static str, accepted: &'static str) -> UnitsError {
    UnitsError {
        seen: units.to_string(),
        quantity,
        accepted,
    }
}

/// Parses the units of a dissolved concentration (DIC, alkalinity, nutrients).
pub fn parse_concentration(units: &str) -> Result<Concentration, UnitsError> {
    let err = || error(units, "a concentration", CONCENTRATION_FORMS);
    let q = parse_quantity(units).ok_or_else(err)?;
    if q.dims == PER_VOLUME {
        Ok(Concentration {
            basis: ConcentrationBasis::PerVolume,
            to_mol: q.scale,
        })
    } else if q.dims == PER_MASS {
        Ok(Concentration {
            basis: ConcentrationBasis::PerMass,
            to_mol: q.scale,
        })
    } else {
        Err(err())
    }
}

/// Parses the units of a temperature (Celsius or kelvin scales).
pub fn parse_temperature(units: &str) -> Result<TemperatureUnits, UnitsError> {
    let key: String = units
        .trim()
        .chars()
        .filter(|c| !matches!(c, ' ' | '_' | '.'))
        .collect::<String>()
        .to_lowercase();
    match key.as_str() {
        "degc" | "degreec" | "degreesc" | "degreecelsius" | "degreescelsius" | "celsius" | "°c"
        | "℃" | "degcelsius" => Ok(TemperatureUnits::Celsius),
        "k" | "kelvin" | "kelvins" | "degk" | "degreek" | "degreesk" | "degreekelvin"
        | "degreeskelvin" => Ok(TemperatureUnits::Kelvin),
        _ => Err(error(units, "a temperature", TEMPERATURE_FORMS)),
    }
}

/// Parses the units of a salinity; see [`SalinityUnits::Practical`] for "0.001".
pub fn parse_salinity(units: &str) -> Result<SalinityUnits, UnitsError> {
    let key = units.trim().to_lowercase();
    let named_practical = matches!(
        key.as_str(),
        "" | "psu"
            | "pss"
            | "pss-78"
            | "pss78"
            | "practical_salinity_unit"
            | "practical_salinity_units"
            | "practical salinity unit"
            | "ppt"
            | "‰"
            | "o/oo"
            | "unitless"
            | "dimensionless"
            | "nondimensional"
            | "none"
    );
    if named_practical {
        return Ok(SalinityUnits::Practical);
    }
    let err = || error(units, "a salinity", SALINITY_FORMS);
    let q = parse_quantity(units).ok_or_else(err)?;
    if q.dims != DIMENSIONLESS {
        return Err(err());
    }
    if q.mentions_mass {
        // g kg-1 has scale 1e-3 (a mass fraction); express it in g kg-1.
        Ok(SalinityUnits::Absolute {
            to_g_per_kg: q.scale * 1e3,
        })
    } else if (q.scale - 1.0).abs() < 1e-12 || (q.scale - 1e-3).abs() < 1e-15 {
        Ok(SalinityUnits::Practical)
    } else {
        Err(err())
    }
}

/// Scale to SI of a units string that must have exactly the dimensions `dims`.
fn scale_with_dimensions(
    units: &str,
    dims: Dimensions,
    quantity: &'static str,
    accepted: &'static str,
) -> Result<f64, UnitsError> {
    match parse_quantity(units) {
        Some(q) if q.dims == dims => Ok(q.scale),
        _ => Err(error(units, quantity, accepted)),
    }
}

/// Parses the units of a length (depth, layer thickness).
pub fn parse_length(units: &str) -> Result<LengthUnits, UnitsError> {
    let to_m = scale_with_dimensions(units, LENGTH, "a length", LENGTH_FORMS)?;
    Ok(LengthUnits { to_m })
}

/// Parses the units of an area (cell area).
pub fn parse_area(units: &str) -> Result<AreaUnits, UnitsError> {
    let to_m2 = scale_with_dimensions(units, AREA, "an area", AREA_FORMS)?;
    Ok(AreaUnits { to_m2 })
}

/// Parses the units of a pressure (sea pressure or a pressure coordinate).
pub fn parse_pressure(units: &str) -> Result<PressureUnits, UnitsError> {
    let to_dbar = match units.trim() {
        "dbar" | "decibar" | "decibars" | "dbars" => 1.0,
        "bar" | "bars" => 10.0,
        "mbar" | "millibar" | "millibars" | "hPa" | "hectopascal" | "hectopascals" => 1e-2,
        "Pa" | "pascal" | "pascals" => 1e-4,
        "kPa" | "kilopascal" | "kilopascals" => 0.1,
        "MPa" | "megapascal" | "megapascals" => 100.0,
        _ => return Err(error(units, "a pressure", PRESSURE_FORMS)),
    };
    Ok(PressureUnits { to_dbar })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponent_spellings_agree() {
        for s in [
            "mol m-3",
            "mol/m3",
            "mol m^-3",
            "mol m**-3",
            "mol.m-3",
            "mol m⁻³",
        ] {
            let c = parse_concentration(s).unwrap();
            assert_eq!(c.basis, ConcentrationBasis::PerVolume, "{s}");
            assert!((c.to_mol - 1.0).abs() < 1e-15, "{s}");
        }
    }

    #[test]
    fn dangling_divide_is_rejected() {
        assert!(parse_concentration("mol /").is_err());
        assert!(parse_concentration("mol / / m3").is_err());
    }
}
