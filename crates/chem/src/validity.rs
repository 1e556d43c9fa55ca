//! Which published validity ranges a sample falls outside, and which way. The result is still
//! computed: these are notes on it, never reasons to change it.

use crate::choice::{CarbonicSet, ConstantChoice, FluorideSet};

/// Bit set of validity-range breaches (empty = all within). See the associated constants.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct Validity(pub u32);

#[derive(Clone, Copy)]
enum Quantity {
    Temperature,
    Salinity,
    Pressure,
}

impl Quantity {
    fn name(self) -> &'static str {
        match self {
            Quantity::Temperature => "temperature",
            Quantity::Salinity => "salinity",
            Quantity::Pressure => "pressure",
        }
    }

    /// The [`OutOfRange`] bits for a value below and above a range of this quantity.
    fn direction_bits(self) -> (u8, u8) {
        match self {
            Quantity::Temperature => (OutOfRange::TEMPERATURE_BELOW, OutOfRange::TEMPERATURE_ABOVE),
            Quantity::Salinity => (OutOfRange::SALINITY_BELOW, OutOfRange::SALINITY_ABOVE),
            Quantity::Pressure => (OutOfRange::PRESSURE_BELOW, OutOfRange::PRESSURE_ABOVE),
        }
    }
}

impl Range {
    fn value(&self, temperature_c: f64, salinity: f64, pressure_dbar: f64) -> f64 {
        match self.quantity {
            Quantity::Temperature => temperature_c,
            Quantity::Salinity => salinity,
            Quantity::Pressure => pressure_dbar,
        }
    }

    /// "2-35" reads well; "-1-40" does not, so negative minima get "to".
    fn limits(&self) -> String {
        let separator = if self.min < 0.0 { " to " } else { "-" };
        format!("{}{separator}{}{}", self.min, self.max, self.unit)
    }
}

/// One validity range: bit, what it covers, the variable, limits and units.
struct Range {
    bit: u32,
    quantity: Quantity,
    min: f64,
    max: f64,
    unit: &'static str,
    source: &'static str,
    /// The constants the range belongs to.
    constants: &'static str,
}

/// The common part of every range of each quantity (temperature, salinity, pressure), min and
/// max: a sample inside all three breaches no range of any set.
static INSIDE_ALL_RANGES: std::sync::LazyLock<[(f64, f64); 3]> = std::sync::LazyLock::new(|| {
    let common = |quantity: Quantity| {
        let ranges = RANGES.iter().filter(|r| r.quantity as u8 == quantity as u8);
        ranges.fold((f64::NEG_INFINITY, f64::INFINITY), |(min, max), r| {
            (min.max(r.min), max.min(r.max))
        })
    };
    [
        common(Quantity::Temperature),
        common(Quantity::Salinity),
        common(Quantity::Pressure),
    ]
});

// Ranges as the papers state them (all `from memory`, except Lueker et al. 2000 which
// check-values.md quotes as T 2-35 °C, S 19-43).
const RANGES: &[Range] = &[
    Range {
        bit: Validity::LUEKER2000_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 2.0,
        max: 35.0,
        unit: " °C",
        source: "Lueker et al. 2000",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::LUEKER2000_SALINITY,
        quantity: Quantity::Salinity,
        min: 19.0,
        max: 43.0,
        unit: "",
        source: "Lueker et al. 2000",
        constants: "K1, K2",
    },
    // Millero et al. 2006: "valid from S = 0 to 50 and t = 0 to 50 °C" (verified, abstract).
    Range {
        bit: Validity::MILLERO2006_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 0.0,
        max: 50.0,
        unit: " °C",
        source: "Millero et al. 2006",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::MILLERO2006_SALINITY,
        quantity: Quantity::Salinity,
        min: 0.0,
        max: 50.0,
        unit: "",
        source: "Millero et al. 2006",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::MILLERO2010_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 0.0,
        max: 50.0,
        unit: " °C",
        source: "Millero 2010",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::MILLERO2010_SALINITY,
        quantity: Quantity::Salinity,
        min: 1.0,
        max: 50.0,
        unit: "",
        source: "Millero 2010",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::WATERS2014_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 0.0,
        max: 50.0,
        unit: " °C",
        source: "Waters, Millero & Woosley 2014",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::WATERS2014_SALINITY,
        quantity: Quantity::Salinity,
        min: 1.0,
        max: 50.0,
        unit: "",
        source: "Waters, Millero & Woosley 2014",
        constants: "K1, K2",
    },
    Range {
        bit: Validity::PEREZ_FRAGA1987_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 9.0,
        max: 33.0,
        unit: " °C",
        source: "Perez & Fraga 1987",
        constants: "KF",
    },
    Range {
        bit: Validity::PEREZ_FRAGA1987_SALINITY,
        quantity: Quantity::Salinity,
        min: 10.0,
        max: 40.0,
        unit: "",
        source: "Perez & Fraga 1987",
        constants: "KF",
    },
    Range {
        bit: Validity::DICKSON_RILEY1979_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 0.0,
        max: 45.0,
        unit: " °C",
        source: "Dickson & Riley 1979",
        constants: "KF",
    },
    Range {
        bit: Validity::DICKSON_RILEY1979_SALINITY,
        quantity: Quantity::Salinity,
        min: 5.0,
        max: 45.0,
        unit: "",
        source: "Dickson & Riley 1979",
        constants: "KF",
    },
    Range {
        bit: Validity::WEISS1974_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: -1.0,
        max: 40.0,
        unit: " °C",
        source: "Weiss 1974",
        constants: "K0",
    },
    Range {
        bit: Validity::WEISS1974_SALINITY,
        quantity: Quantity::Salinity,
        min: 0.0,
        max: 40.0,
        unit: "",
        source: "Weiss 1974",
        constants: "K0",
    },
    Range {
        bit: Validity::MINOR_ACIDS_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 0.0,
        max: 45.0,
        unit: " °C",
        source: "Dickson 1990 and Millero 1995",
        constants: "KB, KS, KW, phosphate, silicate",
    },
    Range {
        bit: Validity::MINOR_ACIDS_SALINITY,
        quantity: Quantity::Salinity,
        min: 5.0,
        max: 45.0,
        unit: "",
        source: "Dickson 1990 and Millero 1995",
        constants: "KB, KS, KW, phosphate, silicate",
    },
    Range {
        bit: Validity::MUCCI1983_TEMPERATURE,
        quantity: Quantity::Temperature,
        min: 5.0,
        max: 40.0,
        unit: " °C",
        source: "Mucci 1983",
        constants: "Ksp",
    },
    Range {
        bit: Validity::MUCCI1983_SALINITY,
        quantity: Quantity::Salinity,
        min: 5.0,
        max: 44.0,
        unit: "",
        source: "Mucci 1983",
        constants: "Ksp",
    },
    Range {
        bit: Validity::PRESSURE,
        quantity: Quantity::Pressure,
        min: 0.0,
        max: 10_000.0,
        unit: " dbar",
        source: "Millero 1995",
        constants: "pressure corrections",
    },
];

impl Validity {
    /// K1, K2 of Lueker et al. 2000 used outside 2-35 °C.
    pub const LUEKER2000_TEMPERATURE: u32 = 1 << 0;
    /// K1, K2 of Lueker et al. 2000 used outside S 19-43.
    pub const LUEKER2000_SALINITY: u32 = 1 << 1;
    /// K1, K2 of Millero 2010 used outside 0-50 °C.
    pub const MILLERO2010_TEMPERATURE: u32 = 1 << 2;
    /// K1, K2 of Millero 2010 used outside S 1-50.
    pub const MILLERO2010_SALINITY: u32 = 1 << 3;
    /// K1, K2 of Waters et al. 2014 used outside 0-50 °C.
    pub const WATERS2014_TEMPERATURE: u32 = 1 << 4;
    /// K1, K2 of Waters et al. 2014 used outside S 1-50.
    pub const WATERS2014_SALINITY: u32 = 1 << 5;
    /// KF of Perez & Fraga 1987 used outside 9-33 °C.
    pub const PEREZ_FRAGA1987_TEMPERATURE: u32 = 1 << 6;
    /// KF of Perez & Fraga 1987 used outside S 10-40.
    pub const PEREZ_FRAGA1987_SALINITY: u32 = 1 << 7;
    /// KF of Dickson & Riley 1979 used outside 0-45 °C.
    pub const DICKSON_RILEY1979_TEMPERATURE: u32 = 1 << 8;
    /// KF of Dickson & Riley 1979 used outside S 5-45.
    pub const DICKSON_RILEY1979_SALINITY: u32 = 1 << 9;
    /// K0 of Weiss 1974 used outside -1-40 °C.
    pub const WEISS1974_TEMPERATURE: u32 = 1 << 10;
    /// K0 of Weiss 1974 used outside S 0-40.
    pub const WEISS1974_SALINITY: u32 = 1 << 11;
    /// KB, KS, KW, phosphate and silicate constants used outside 0-45 °C.
    pub const MINOR_ACIDS_TEMPERATURE: u32 = 1 << 12;
    /// KB, KS, KW, phosphate and silicate constants used outside S 5-45.
    pub const MINOR_ACIDS_SALINITY: u32 = 1 << 13;
    /// Ksp of Mucci 1983 used outside 5-40 °C.
    pub const MUCCI1983_TEMPERATURE: u32 = 1 << 14;
    /// Ksp of Mucci 1983 used outside S 5-44.
    pub const MUCCI1983_SALINITY: u32 = 1 << 15;
    /// Pressure corrections used beyond 10000 dbar (1000 bar).
    pub const PRESSURE: u32 = 1 << 16;
    /// K1, K2 of Millero et al. 2006 used outside 0-50 °C.
    pub const MILLERO2006_TEMPERATURE: u32 = 1 << 17;
    /// K1, K2 of Millero et al. 2006 used outside S 0-50.
    pub const MILLERO2006_SALINITY: u32 = 1 << 18;

    /// Breaches that can move a reported indicator: all but KF's. HF enters alkalinity as
    /// TF·[H+]free/KF, below 0.01 µmol kg-1 at seawater pH, so an extrapolated KF cannot
    /// change the results at the precision they are reported (Dickson 1981 alkalinity terms).
    pub const MATERIAL: u32 = !(Self::PEREZ_FRAGA1987_TEMPERATURE
        | Self::PEREZ_FRAGA1987_SALINITY
        | Self::DICKSON_RILEY1979_TEMPERATURE
        | Self::DICKSON_RILEY1979_SALINITY);

    /// True when no constant was used outside its published range.
    pub fn is_within(self) -> bool {
        self.0 == 0
    }

    /// True when some constant that matters for the indicators was used outside its range
    /// (see [`Validity::MATERIAL`]); the per-cell quality flag of grids follows this.
    pub fn is_material(self) -> bool {
        self.0 & Self::MATERIAL != 0
    }

    /// The raw bits (for per-cell flag variables).
    pub fn bits(self) -> u32 {
        self.0
    }

    /// True when every bit of `flag` is set.
    pub fn contains(self, flag: u32) -> bool {
        self.0 & flag == flag
    }

    /// Plain-language list of the breached ranges, "; "-separated (empty when within).
    pub fn describe(self) -> String {
        RANGES
            .iter()
            .filter(|range| self.contains(range.bit))
            .map(|range| {
                format!(
                    "{} outside {} for {} ({})",
                    range.quantity.name(),
                    range.limits(),
                    range.source,
                    range.constants
                )
            })
            .collect::<Vec<_>>()
            .join("; ")
    }

    /// The ranges that apply to the chosen sets (the others are never reported).
    fn relevant(choice: &ConstantChoice) -> u32 {
        let (carbonic_t, carbonic_s) = match choice.carbonic {
            CarbonicSet::Lueker2000 => (Self::LUEKER2000_TEMPERATURE, Self::LUEKER2000_SALINITY),
            CarbonicSet::Millero2006 => (Self::MILLERO2006_TEMPERATURE, Self::MILLERO2006_SALINITY),
            CarbonicSet::Millero2010 => (Self::MILLERO2010_TEMPERATURE, Self::MILLERO2010_SALINITY),
            CarbonicSet::WatersMilleroWoosley2014 => {
                (Self::WATERS2014_TEMPERATURE, Self::WATERS2014_SALINITY)
            }
        };
        let (fluoride_t, fluoride_s) = match choice.fluoride {
            FluorideSet::PerezFraga1987 => (
                Self::PEREZ_FRAGA1987_TEMPERATURE,
                Self::PEREZ_FRAGA1987_SALINITY,
            ),
            FluorideSet::DicksonRiley1979 => (
                Self::DICKSON_RILEY1979_TEMPERATURE,
                Self::DICKSON_RILEY1979_SALINITY,
            ),
        };
        carbonic_t
            | carbonic_s
            | fluoride_t
            | fluoride_s
            | Self::WEISS1974_TEMPERATURE
            | Self::WEISS1974_SALINITY
            | Self::MINOR_ACIDS_TEMPERATURE
            | Self::MINOR_ACIDS_SALINITY
            | Self::MUCCI1983_TEMPERATURE
            | Self::MUCCI1983_SALINITY
            | Self::PRESSURE
    }

    /// Checks a sample's temperature (°C), salinity and pressure (dbar) against the ranges of the chosen sets.
    pub fn assess(
        temperature_c: f64,
        salinity: f64,
        pressure_dbar: f64,
        choice: &ConstantChoice,
    ) -> Self {
        // Inside every range of every set (most of the ocean): nothing to look up.
        let [t, s, p] = *INSIDE_ALL_RANGES;
        let within = |value: f64, (min, max): (f64, f64)| (value >= min) & (value <= max);
        if within(temperature_c, t) & within(salinity, s) & within(pressure_dbar, p) {
            return Validity(0);
        }
        Self::assess_each(temperature_c, salinity, pressure_dbar, choice)
    }

    /// [`Validity::assess`] range by range.
    fn assess_each(
        temperature_c: f64,
        salinity: f64,
        pressure_dbar: f64,
        choice: &ConstantChoice,
    ) -> Self {
        // Every range is checked without branching, then the ones of unused sets are masked off.
        let outside = RANGES.iter().fold(0, |bits, range| {
            let value = range.value(temperature_c, salinity, pressure_dbar);
            let within = value >= range.min && value <= range.max;
            bits | (u32::from(!within) * range.bit)
        });
        Validity(outside & Self::relevant(choice))
    }

    /// Which way the material breaches of `self` ([`Validity::MATERIAL`]) leave their ranges,
    /// for the conditions `self` was assessed at. A NaN condition counts as neither below nor above.
    pub fn out_of_range(self, temperature_c: f64, salinity: f64, pressure_dbar: f64) -> OutOfRange {
        let material = self.0 & Self::MATERIAL;
        if material == 0 {
            return OutOfRange(0);
        }
        let bits = RANGES
            .iter()
            .filter(|range| material & range.bit != 0)
            .fold(0, |bits, range| {
                let value = range.value(temperature_c, salinity, pressure_dbar);
                let (below, above) = range.quantity.direction_bits();
                bits | (u8::from(value < range.min) * below) | (u8::from(value > range.max) * above)
            });
        OutOfRange(bits)
    }
}

/// Which way one sample's conditions leave the published ranges of the chosen constants that
/// can move the indicators ([`Validity::MATERIAL`]): a bit set, empty when all are within. This
/// is the per-cell check behind the quality flag of grids and the status of tables.
///
/// ```
/// use acidscape_chem::{ConstantChoice, OutOfRange};
/// // Deep water at 1.5 °C is below the 2-35 °C of Lueker et al. 2000 (the default K1, K2).
/// let deep = OutOfRange::assess(1.5, 34.7, 4000.0, &ConstantChoice::default());
/// assert_eq!(deep.bits(), OutOfRange::TEMPERATURE_BELOW);
/// ```
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct OutOfRange(pub u8);

impl OutOfRange {
    /// Temperature below the lower limit of some material range.
    pub const TEMPERATURE_BELOW: u8 = 1 << 0;
    /// Temperature above the upper limit of some material range.
    pub const TEMPERATURE_ABOVE: u8 = 1 << 1;
    /// Salinity below the lower limit of some material range.
    pub const SALINITY_BELOW: u8 = 1 << 2;
    /// Salinity above the upper limit of some material range.
    pub const SALINITY_ABOVE: u8 = 1 << 3;
    /// Pressure below 0 dbar (not seawater; the chemistry refuses it).
    pub const PRESSURE_BELOW: u8 = 1 << 4;
    /// Pressure beyond the basis of the Millero 1995 pressure corrections (10000 dbar).
    pub const PRESSURE_ABOVE: u8 = 1 << 5;
    /// Every bit, in order.
    pub const ALL: [u8; 6] = [
        Self::TEMPERATURE_BELOW,
        Self::TEMPERATURE_ABOVE,
        Self::SALINITY_BELOW,
        Self::SALINITY_ABOVE,
        Self::PRESSURE_BELOW,
        Self::PRESSURE_ABOVE,
    ];

    /// Checks one sample's in-situ temperature (°C), practical salinity and sea pressure (dbar)
    /// against the material ranges of the chosen constants.
    pub fn assess(
        temperature_c: f64,
        salinity: f64,
        pressure_dbar: f64,
        choice: &ConstantChoice,
    ) -> OutOfRange {
        Validity::assess(temperature_c, salinity, pressure_dbar, choice).out_of_range(
            temperature_c,
            salinity,
            pressure_dbar,
        )
    }

    /// The raw bits.
    pub fn bits(self) -> u8 {
        self.0
    }

    /// True when every bit of `flag` is set.
    pub fn contains(self, flag: u8) -> bool {
        self.0 & flag == flag
    }

    /// True when no material range is left.
    pub fn is_empty(self) -> bool {
        self.0 == 0
    }

    /// Which published limits of the chosen sets one bit stands for, the first crossed first:
    /// for [`OutOfRange::TEMPERATURE_BELOW`] with the defaults "below 5 °C (Mucci 1983: Ksp);
    /// below 2 °C (Lueker et al. 2000: K1, K2); ...". Empty for a bit no chosen range can set.
    pub fn limits(bit: u8, choice: &ConstantChoice) -> String {
        let relevant = Validity::relevant(choice) & Validity::MATERIAL;
        let mut limits: Vec<(f64, String)> = RANGES
            .iter()
            .filter(|range| relevant & range.bit != 0)
            .filter_map(|range| {
                let (below, above) = range.quantity.direction_bits();
                // Sort key: the limit a value crosses first comes first.
                let (word, limit, key) = if bit == below {
                    ("below", range.min, -range.min)
                } else if bit == above {
                    ("above", range.max, range.max)
                } else {
                    return None;
                };
                let text = format!(
                    "{word} {limit}{} ({}: {})",
                    range.unit, range.source, range.constants
                );
                Some((key, text))
            })
            .collect();
        limits.sort_by(|a, b| a.0.total_cmp(&b.0));
        limits
            .into_iter()
            .map(|(_, text)| text)
            .collect::<Vec<_>>()
            .join("; ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_shortcut_inside_every_range_agrees_with_each_range() {
        // Edges of every range, just inside and just outside, and NaN, for every set.
        let mut values: [Vec<f64>; 3] = Default::default();
        for range in RANGES {
            let quantity = range.quantity as usize;
            for edge in [range.min, range.max] {
                values[quantity].extend([edge - 1e-9, edge, edge + 1e-9]);
            }
        }
        for v in &mut values {
            v.extend([f64::NAN, -1e9, 1e9, 0.0]);
        }
        let mut inside = 0;
        for &carbonic in CarbonicSet::ALL {
            for &fluoride in FluorideSet::ALL {
                let choice = ConstantChoice {
                    carbonic,
                    fluoride,
                    ..ConstantChoice::default()
                };
                for &t in &values[0] {
                    for &s in &values[1] {
                        for &p in &values[2] {
                            let each = Validity::assess_each(t, s, p, &choice);
                            assert_eq!(Validity::assess(t, s, p, &choice), each, "{t} {s} {p}");
                            inside += usize::from(each.is_within());
                        }
                    }
                }
            }
        }
        assert!(inside > 0);
    }
}
