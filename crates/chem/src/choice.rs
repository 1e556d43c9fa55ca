//! Which published constant sets a run uses, with stable user keys and full citations.

use std::fmt;
use std::str::FromStr;

/// The choice of constant sets for one run; the default is the set recommended by
/// Dickson, Sabine & Christian (2007) for open-ocean work.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct ConstantChoice {
    /// First and second dissociation constants of carbonic acid.
    pub carbonic: CarbonicSet,
    /// Dissociation constant of hydrogen fluoride.
    pub fluoride: FluorideSet,
    /// Total boron to salinity ratio.
    pub boron: BoronTotal,
}

/// Source of K1 and K2 of carbonic acid.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum CarbonicSet {
    /// Lueker, Dickson & Keeling 2000 (total scale), refit of Mehrbach et al. 1973.
    #[default]
    Lueker2000,
    /// Millero et al. 2006 (seawater scale), S 1-50, 0-50 °C; coefficients verified in the abstract.
    Millero2006,
    /// Millero 2010 (seawater scale), for estuarine to open-ocean salinities.
    Millero2010,
    /// Waters, Millero & Woosley 2014 (seawater scale), the corrected Millero 2010 fit.
    WatersMilleroWoosley2014,
}

/// Source of the HF dissociation constant KF.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum FluorideSet {
    /// Perez & Fraga 1987 (total scale).
    #[default]
    PerezFraga1987,
    /// Dickson & Riley 1979 (free scale).
    DicksonRiley1979,
}

/// Source of the total boron to salinity ratio.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum BoronTotal {
    /// Uppström 1974: B/Cl = 0.232 mg kg-1 per ‰ chlorinity.
    #[default]
    Uppstrom1974,
    /// Lee et al. 2010: B/Cl = 0.2414 mg kg-1 per ‰ chlorinity.
    Lee2010,
}

/// Error returned when a user key names no known constant set.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UnknownKey {
    /// What kind of constant was being chosen (e.g. "carbonic acid constants").
    pub what: &'static str,
    /// The key the user gave.
    pub given: String,
    /// The keys that would have been accepted.
    pub valid: Vec<&'static str>,
}

impl fmt::Display for UnknownKey {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "unknown {} \"{}\": expected one of {}",
            self.what,
            self.given,
            self.valid.join(", ")
        )
    }
}

impl std::error::Error for UnknownKey {}

/// Key, citation, `ALL`, `FromStr` and `Display` for a constant-choice enum.
macro_rules! keyed_choice {
    ($ty:ty, $what:expr, [$(($variant:path, $key:expr, $cite:expr)),+ $(,)?]) => {
        impl $ty {
            /// Every option, default first.
            pub const ALL: &'static [Self] = &[$($variant),+];

            /// Stable lower-case key users type in options and configuration files.
            pub fn key(self) -> &'static str {
                match self { $($variant => $key),+ }
            }

            /// Full literature reference.
            pub fn citation(self) -> &'static str {
                match self { $($variant => $cite),+ }
            }
        }

        impl FromStr for $ty {
            type Err = UnknownKey;
            fn from_str(s: &str) -> Result<Self, Self::Err> {
                let wanted = s.trim();
                Self::ALL
                    .iter()
                    .copied()
                    .find(|option| option.key().eq_ignore_ascii_case(wanted))
                    .ok_or_else(|| UnknownKey {
                        what: $what,
                        given: s.to_string(),
                        valid: Self::ALL.iter().map(|option| option.key()).collect(),
                    })
            }
        }

        impl fmt::Display for $ty {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(self.key())
            }
        }
    };
}

keyed_choice!(
    CarbonicSet,
    "carbonic acid constants",
    [
        (
            CarbonicSet::Lueker2000,
            "lueker2000",
            "Lueker, T. J., Dickson, A. G. and Keeling, C. D. (2000), Ocean pCO2 calculated from dissolved inorganic carbon, alkalinity, and equations for K1 and K2, Marine Chemistry 70, 105-119"
        ),
        (
            CarbonicSet::Millero2006,
            "millero2006",
            "Millero, F. J., Graham, T. B., Huang, F., Bustos-Serrano, H. and Pierrot, D. (2006), Dissociation constants of carbonic acid in seawater as a function of salinity and temperature, Marine Chemistry 100, 80-94"
        ),
        (
            CarbonicSet::Millero2010,
            "millero2010",
            "Millero, F. J. (2010), Carbonate constants for estuarine waters, Marine and Freshwater Research 61, 139-142"
        ),
        (
            CarbonicSet::WatersMilleroWoosley2014,
            "waters2014",
            "Waters, J., Millero, F. J. and Woosley, R. J. (2014), Corrigendum to 'The free proton concentration scale for seawater pH', Marine Chemistry 165, 66-67"
        ),
    ]
);

keyed_choice!(
    FluorideSet,
    "hydrogen fluoride constant",
    [
        (
            FluorideSet::PerezFraga1987,
            "perez-fraga1987",
            "Perez, F. F. and Fraga, F. (1987), Association constant of fluoride and hydrogen ions in seawater, Marine Chemistry 21, 161-168"
        ),
        (
            FluorideSet::DicksonRiley1979,
            "dickson-riley1979",
            "Dickson, A. G. and Riley, J. P. (1979), The estimation of acid dissociation constants in seawater media from potentiometric titrations with strong base. I. The ionic product of water - Kw, Marine Chemistry 7, 89-99"
        ),
    ]
);

keyed_choice!(
    BoronTotal,
    "total boron ratio",
    [
        (
            BoronTotal::Uppstrom1974,
            "uppstrom1974",
            "Uppström, L. R. (1974), The boron/chlorinity ratio of deep-sea water from the Pacific Ocean, Deep-Sea Research 21, 161-162"
        ),
        (
            BoronTotal::Lee2010,
            "lee2010",
            "Lee, K., Kim, T.-W., Byrne, R. H., Millero, F. J., Feely, R. A. and Liu, Y.-M. (2010), The universal ratio of boron to chlorinity for the North Pacific and North Atlantic oceans, Geochimica et Cosmochimica Acta 74, 1801-1811"
        ),
    ]
);

/// Citations of the constants that do not depend on the user's choice.
pub const FIXED_SOURCES: &str = "K0 and CO2 fugacity: Weiss 1974; KB: Dickson 1990 (total scale); \
KW, K1P, K2P, K3P, KSi: Millero 1995 as given by Dickson, Sabine & Christian 2007 (total scale); \
KS: Dickson 1990 (free scale); total sulfate: Morris & Riley 1966; total fluoride: Riley 1965; \
calcium: Riley & Tongudai 1967; Ksp calcite and aragonite: Mucci 1983; \
pressure corrections: Millero 1995; alkalinity-pH solver after Munhoven 2013";

impl ConstantChoice {
    /// One line naming every constant and source used, for output provenance.
    pub fn describe(&self) -> String {
        format!(
            "K1, K2: {} ({}); KF: {} ({}); total boron: {} ({}); {}",
            self.carbonic.short_name(),
            self.carbonic.key(),
            self.fluoride.short_name(),
            self.fluoride.key(),
            self.boron.short_name(),
            self.boron.key(),
            FIXED_SOURCES
        )
    }
}

/// The pH scale on which a set of acid constants is published.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum PhScale {
    Total,
    Seawater,
}

impl CarbonicSet {
    /// The pH scale of the published K1 and K2.
    pub(crate) fn scale(self) -> PhScale {
        match self {
            CarbonicSet::Lueker2000 => PhScale::Total,
            CarbonicSet::Millero2006
            | CarbonicSet::Millero2010
            | CarbonicSet::WatersMilleroWoosley2014 => PhScale::Seawater,
        }
    }

    /// Author-year name, as used in messages.
    pub fn short_name(self) -> &'static str {
        match self {
            CarbonicSet::Lueker2000 => "Lueker et al. 2000 (total scale)",
            CarbonicSet::Millero2006 => "Millero et al. 2006 (seawater scale)",
            CarbonicSet::Millero2010 => "Millero 2010 (seawater scale)",
            CarbonicSet::WatersMilleroWoosley2014 => {
                "Waters, Millero & Woosley 2014 (seawater scale)"
            }
        }
    }
}

impl FluorideSet {
    /// Author-year name, as used in messages.
    pub fn short_name(self) -> &'static str {
        match self {
            FluorideSet::PerezFraga1987 => "Perez & Fraga 1987",
            FluorideSet::DicksonRiley1979 => "Dickson & Riley 1979",
        }
    }
}

impl BoronTotal {
    /// Author-year name, as used in messages.
    pub fn short_name(self) -> &'static str {
        match self {
            BoronTotal::Uppstrom1974 => "Uppström 1974",
            BoronTotal::Lee2010 => "Lee et al. 2010",
        }
    }
}
