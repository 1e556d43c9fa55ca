//! Equilibrium constants, one module per published paper, and their assembly at a sample's
//! in-situ temperature, salinity and pressure on the total pH scale.

pub mod dickson1990;
pub mod dickson_riley1979;
pub mod lueker2000;
pub mod millero1995;
pub mod millero2006;
pub mod millero2010;
pub mod mucci1983;
pub mod perez_fraga1987;
pub mod pressure;
pub(crate) mod slopes;
pub mod totals;
pub mod waters2014;
pub mod weiss1974;

use crate::choice::{CarbonicSet, ConstantChoice, FluorideSet, PhScale};
use crate::error::{Accepted, ChemError};
use crate::real::Real;
use crate::Conditions;
use pressure::PressureTerms;

/// Temperature and salinity terms shared by many constants, each evaluated once per sample
/// (`T = f64`) or once per lane of cells in the batch kernel.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SampleTerms<T: Real = f64> {
    /// Temperature \[°C\].
    pub celsius: T,
    /// Temperature \[K\].
    pub kelvin: T,
    /// 1 / T \[K-1\].
    pub inv_kelvin: T,
    /// ln(T / K).
    pub ln_kelvin: T,
    /// Practical salinity.
    pub salinity: T,
    /// √S.
    pub sqrt_salinity: T,
    /// Ionic strength \[mol kg-1 H2O\].
    pub ionic_strength: T,
    /// √I.
    pub sqrt_ionic_strength: T,
    /// 1 - 0.001005 S: kg of water per kg of seawater, converting mol kg-1 of water to mol kg-1
    /// of seawater (Dickson 1990). Kept as a factor: its logarithm is only needed for printed ln K.
    pub water_fraction: T,
}

impl<T: Real> SampleTerms<T> {
    /// Terms at in-situ temperature \[°C\] and practical salinity.
    #[inline(always)]
    pub fn new(temperature_c: T, salinity: T) -> Self {
        let unset = T::from(0.0);
        Self {
            celsius: unset,
            kelvin: unset,
            inv_kelvin: unset,
            ln_kelvin: unset,
            salinity: unset,
            sqrt_salinity: unset,
            ionic_strength: unset,
            sqrt_ionic_strength: unset,
            water_fraction: unset,
        }
        .with_temperature(temperature_c)
        .with_salinity(salinity)
    }

    /// The same terms at another temperature \[°C\].
    #[inline(always)]
    pub(crate) fn with_temperature(&self, temperature_c: T) -> Self {
        let kelvin = temperature_c + 273.15;
        Self {
            celsius: temperature_c,
            kelvin,
            inv_kelvin: T::from(1.0) / kelvin,
            ln_kelvin: kelvin.ln(),
            ..*self
        }
    }

    /// The same terms at another practical salinity.
    #[inline(always)]
    pub(crate) fn with_salinity(&self, salinity: T) -> Self {
        let ionic_strength = ionic_strength(salinity);
        Self {
            salinity,
            sqrt_salinity: salinity.sqrt(),
            ionic_strength,
            sqrt_ionic_strength: ionic_strength.sqrt(),
            water_fraction: T::from(1.0) - salinity * 0.001005,
            ..*self
        }
    }

    /// ln(1 - 0.001005 S), the water-fraction term of the ln K written per kg of seawater.
    #[inline(always)]
    pub fn ln_water_fraction(&self) -> T {
        self.water_fraction.ln()
    }

    /// log10(T / K), from the stored ln T.
    #[inline(always)]
    pub fn log10_kelvin(&self) -> T {
        self.ln_kelvin * std::f64::consts::LOG10_E
    }
}

/// Ionic strength of seawater \[mol kg-1 H2O\]: I = 19.924 S / (1000 - 1.005 S), Dickson 1990.
///
/// ```
/// // Hand evaluation at S = 35: 19.924·35 / (1000 - 35.175) = 697.34 / 964.825 = 0.722763
/// assert!((acidscape_chem::constants::ionic_strength(35.0) - 0.722763).abs() < 1e-6);
/// ```
#[inline(always)]
pub fn ionic_strength<T: Real>(salinity: T) -> T {
    salinity * 19.924 / (T::from(1000.0) - salinity * 1.005)
}

/// All constants at the sample's in-situ T, S and P (`T = f64`; a lane of cells in the batch
/// kernel). Acid constants are on the total scale (mol kg-1 of seawater) except where named free;
/// totals are mol kg-1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EquilibriumConstants<T: Real = f64> {
    /// CO2 solubility K0 \[mol kg-1 atm-1\] at in-situ temperature and 1 atm (not pressure-corrected).
    pub k0: T,
    /// fCO2 / pCO2 at in-situ temperature and 1 atm total pressure.
    pub fugacity_factor: T,
    /// K1 of carbonic acid (total scale).
    pub k1: T,
    /// K2 of carbonic acid (total scale).
    pub k2: T,
    /// KB of boric acid (total scale).
    pub kb: T,
    /// KW of water (total scale, mol² kg-2).
    pub kw: T,
    /// KS of bisulfate (free scale).
    pub ks_free: T,
    /// KF of hydrogen fluoride (total scale).
    pub kf: T,
    /// KF of hydrogen fluoride (free scale).
    pub kf_free: T,
    /// K1P of phosphoric acid (total scale).
    pub k1p: T,
    /// K2P of phosphoric acid (total scale).
    pub k2p: T,
    /// K3P of phosphoric acid (total scale).
    pub k3p: T,
    /// KSi of silicic acid (total scale).
    pub ksi: T,
    /// Ksp* of calcite \[mol² kg-2\].
    pub ksp_calcite: T,
    /// Ksp* of aragonite \[mol² kg-2\].
    pub ksp_aragonite: T,
    /// Total boron \[mol kg-1\].
    pub total_boron: T,
    /// Total sulfate \[mol kg-1\].
    pub total_sulfate: T,
    /// Total fluoride \[mol kg-1\].
    pub total_fluoride: T,
    /// Calcium \[mol kg-1\].
    pub calcium: T,
    /// \[H+\]total / \[H+\]free = 1 + ST/KS.
    pub free_to_total: T,
    /// \[H+\]total / \[H+\]seawater = (1 + ST/KS) / (1 + ST/KS + FT/KF).
    pub seawater_to_total: T,
    /// Validity ranges the sample falls outside.
    pub validity: T::Validity,
}

/// What the solver accepts of each condition at all (validity ranges are separate), in the order
/// temperature, salinity, pressure, phosphate, silicate.
pub(crate) const ACCEPTED_CONDITIONS: [Accepted; 5] = [
    Accepted {
        field: "temperature_c",
        min: -10.0,
        max: 60.0,
        expected: "in-situ temperature between -10 and 60 °C",
    },
    Accepted {
        field: "salinity",
        min: f64::MIN_POSITIVE,
        max: 60.0,
        expected: "practical salinity above 0 and at most 60",
    },
    Accepted {
        field: "pressure_dbar",
        min: 0.0,
        max: 12_000.0,
        expected: "sea pressure between 0 (surface) and 12000 dbar",
    },
    Accepted {
        field: "phosphate",
        min: 0.0,
        max: 1_000.0,
        expected: "phosphate between 0 and 1000 µmol kg-1",
    },
    Accepted {
        field: "silicate",
        min: 0.0,
        max: 5_000.0,
        expected: "silicate between 0 and 5000 µmol kg-1",
    },
];

/// Rejects conditions that are not numbers or not seawater at all (validity ranges are separate).
pub(crate) fn validate_conditions(conditions: &Conditions) -> Result<(), ChemError> {
    let values = [
        conditions.temperature_c,
        conditions.salinity,
        conditions.pressure_dbar,
        conditions.phosphate,
        conditions.silicate,
    ];
    for (accepted, value) in ACCEPTED_CONDITIONS.iter().zip(values) {
        accepted.check(value)?;
    }
    Ok(())
}

/// All equilibrium constants at the sample's in-situ T, S, P on the total scale (KS and KF also
/// free), with the totals from salinity. KS and KF are pressure-corrected on the free scale first;
/// the other acid constants are pressure-corrected on the seawater scale (as Millero 1995 fitted
/// them) and then converted to the total scale with the in-situ KS and KF.
///
/// ```
/// use acidscape_chem::{equilibrium_constants, Conditions, ConstantChoice};
/// let surface = Conditions { temperature_c: 25.0, salinity: 35.0, pressure_dbar: 0.0, phosphate: 0.0, silicate: 0.0 };
/// let k = equilibrium_constants(&surface, &ConstantChoice::default()).unwrap();
/// // log10 K1 = -5.8472 (Lueker et al. 2000 via Dickson et al. 2007; check value from memory)
/// assert!((k.k1.log10() + 5.8472).abs() < 5e-5);
/// ```
pub fn equilibrium_constants(
    conditions: &Conditions,
    choice: &ConstantChoice,
) -> Result<EquilibriumConstants, ChemError> {
    validate_conditions(conditions)?;
    Ok(constants_unchecked(conditions, choice))
}

/// As [`equilibrium_constants`], for conditions already validated.
pub(crate) fn constants_unchecked(
    conditions: &Conditions,
    choice: &ConstantChoice,
) -> EquilibriumConstants {
    in_situ_constants(
        conditions.temperature_c,
        conditions.salinity,
        conditions.pressure_dbar,
        choice,
    )
}

/// The assembly behind [`equilibrium_constants`], for one sample or a lane of cells: in-situ
/// temperature \[°C\], practical salinity, sea pressure \[dbar\], all already validated.
#[inline(always)]
pub(crate) fn in_situ_constants<T: Real>(
    temperature_c: T,
    salinity: T,
    pressure_dbar: T,
    choice: &ConstantChoice,
) -> EquilibriumConstants<T> {
    let terms = SampleTerms::new(temperature_c, salinity);
    let pt = PressureTerms::new(temperature_c, pressure_dbar * 0.1);
    let validity = T::assess_validity(temperature_c, salinity, pressure_dbar, choice);
    let parts = Ingredients {
        surface: surface_ingredients(&terms, choice),
        pressure: pressure_ingredients(&pt),
    };
    assemble(&parts, choice, validity)
}

/// One number for each constant that has a pressure correction.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct PerConstant<T: Real = f64> {
    pub ks: T,
    pub kf: T,
    pub k1: T,
    pub k2: T,
    pub kb: T,
    pub kw: T,
    pub k1p: T,
    pub k2p: T,
    pub k3p: T,
    pub ksi: T,
    pub calcite: T,
    pub aragonite: T,
}

/// What the constants are made of at the surface, before exponentiation and scale conversion:
/// each paper's ln K (on its own scale and mass basis), the totals and the water fraction.
/// No exp: cheap enough to evaluate again at nearby temperatures and salinities.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct SurfaceIngredients<T: Real = f64> {
    /// ln K: KS per kg of water (free scale); KF on its paper's scale and basis; K1, K2 on their
    /// paper's scale; KSi per kg of water; the rest as published.
    pub ln_k: PerConstant<T>,
    pub ln_k0: T,
    pub ln_fugacity_factor: T,
    pub water_fraction: T,
    pub total_boron: T,
    pub total_sulfate: T,
    pub total_fluoride: T,
    pub calcium: T,
}

/// Everything the constants are assembled from: the surface ingredients and each constant's
/// pressure term ln(K_P / K_0) (Millero 1995).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Ingredients<T: Real = f64> {
    pub surface: SurfaceIngredients<T>,
    pub pressure: PerConstant<T>,
}

/// Each paper's formula at the sample's shared temperature and salinity terms.
#[inline(always)]
pub(crate) fn surface_ingredients<T: Real>(
    terms: &SampleTerms<T>,
    choice: &ConstantChoice,
) -> SurfaceIngredients<T> {
    let ln10 = std::f64::consts::LN_10;
    let (k1, k2) = match choice.carbonic {
        CarbonicSet::Lueker2000 => (lueker2000::pk1(terms), lueker2000::pk2(terms)),
        CarbonicSet::Millero2006 => (millero2006::pk1(terms), millero2006::pk2(terms)),
        CarbonicSet::Millero2010 => (millero2010::pk1(terms), millero2010::pk2(terms)),
        CarbonicSet::WatersMilleroWoosley2014 => (waters2014::pk1(terms), waters2014::pk2(terms)),
    };
    let kf = match choice.fluoride {
        FluorideSet::PerezFraga1987 => perez_fraga1987::ln_kf(terms),
        FluorideSet::DicksonRiley1979 => dickson_riley1979::ln_kf_free_per_kg_water(terms),
    };
    let salinity = terms.salinity;
    SurfaceIngredients {
        ln_k: PerConstant {
            ks: dickson1990::ln_ks_per_kg_water(terms),
            kf,
            k1: -k1 * ln10,
            k2: -k2 * ln10,
            kb: dickson1990::ln_kb(terms),
            kw: millero1995::ln_kw(terms),
            k1p: millero1995::ln_k1p(terms),
            k2p: millero1995::ln_k2p(terms),
            k3p: millero1995::ln_k3p(terms),
            ksi: millero1995::ln_ksi_per_kg_water(terms),
            calcite: mucci1983::log10_ksp_calcite(terms) * ln10,
            aragonite: mucci1983::log10_ksp_aragonite(terms) * ln10,
        },
        ln_k0: weiss1974::ln_k0(terms),
        ln_fugacity_factor: weiss1974::ln_fugacity_factor(terms.kelvin),
        water_fraction: terms.water_fraction,
        total_boron: totals::boron(salinity, choice.boron),
        total_sulfate: totals::sulfate(salinity),
        total_fluoride: totals::fluoride(salinity),
        calcium: totals::calcium(salinity),
    }
}

/// Each constant's Millero 1995 pressure term. Linear in the terms `pt`: given their
/// derivatives (see [`PressureTerms::temperature_slope`]) it gives the terms' derivatives.
#[inline(always)]
pub(crate) fn pressure_ingredients<T: Real>(pt: &PressureTerms<T>) -> PerConstant<T> {
    PerConstant {
        ks: pt.ln_factor(&pressure::KS),
        kf: pt.ln_factor(&pressure::KF),
        k1: pt.ln_factor(&pressure::K1),
        k2: pt.ln_factor(&pressure::K2),
        kb: pt.ln_factor(&pressure::KB),
        kw: pt.ln_factor(&pressure::KW),
        k1p: pt.ln_factor(&pressure::K1P),
        k2p: pt.ln_factor(&pressure::K2P),
        k3p: pt.ln_factor(&pressure::K3P),
        ksi: pt.ln_factor(&pressure::KSI),
        calcite: pt.ln_factor(&pressure::CALCITE),
        aragonite: pt.ln_factor(&pressure::ARAGONITE),
    }
}

/// The constants from their ingredients: KS and KF are pressure-corrected on the free scale
/// first; the other acid constants on the seawater scale (as Millero 1995 fitted them), then
/// brought to the total scale with the in-situ KS and KF.
#[inline(always)]
pub(crate) fn assemble<T: Real>(
    parts: &Ingredients<T>,
    choice: &ConstantChoice,
    validity: T::Validity,
) -> EquilibriumConstants<T> {
    let (surface, pressure) = (&parts.surface.ln_k, &parts.pressure);
    let water_fraction = parts.surface.water_fraction;
    let (total_sulfate, total_fluoride) =
        (parts.surface.total_sulfate, parts.surface.total_fluoride);
    // Every constant is one exp of its ln K plus its pressure term (Millero 1995); factors that
    // change only its unit or scale multiply the exp instead of adding their ln to it.
    let in_situ =
        |ln_k_surface: T, ln_pressure_factor: T| (ln_k_surface + ln_pressure_factor).exp();

    // Free-scale KS and KF at the surface, then at in-situ pressure.
    let ks_surface = surface.ks.exp() * water_fraction;
    let ks_free = in_situ(surface.ks, pressure.ks) * water_fraction;
    let free_to_total_surface = total_sulfate / ks_surface + 1.0;
    let free_to_total = total_sulfate / ks_free + 1.0;
    // KF on the scale its paper gives, at the surface and in situ.
    let fluoride_scale = match choice.fluoride {
        FluorideSet::PerezFraga1987 => T::from(1.0),
        FluorideSet::DicksonRiley1979 => water_fraction,
    };
    let kf_published_surface = surface.kf.exp() * fluoride_scale;
    let kf_published = in_situ(surface.kf, pressure.kf) * fluoride_scale;
    // FT/KF on the free scale. Perez & Fraga 1987 is on the total scale: its free-scale KF is
    // KF / ([H+]T/[H+]F at the surface), so FT/KF_free = (FT/KF)·[H+]T/[H+]F; formed as products
    // so that only two divisions lie between KS and the scale factors.
    let (kf_free, fluoride_surface, fluoride_in_situ) = match choice.fluoride {
        FluorideSet::PerezFraga1987 => (
            kf_published / free_to_total_surface,
            total_fluoride / kf_published_surface * free_to_total_surface,
            total_fluoride / kf_published * free_to_total_surface,
        ),
        FluorideSet::DicksonRiley1979 => (
            kf_published,
            total_fluoride / kf_published_surface,
            total_fluoride / kf_published,
        ),
    };

    // [H+]F/[H+]SWS at the surface and in situ.
    let free_to_seawater = free_to_total + fluoride_in_situ;
    let free_to_seawater_surface = free_to_total_surface + fluoride_surface;
    let seawater_to_total = free_to_total / free_to_seawater;

    // Takes a total-scale surface constant, corrected on the seawater scale, to the total scale
    // at in-situ pressure: (SWS/T at the surface) · (T/SWS in situ).
    let total_surface_to_total =
        free_to_total * free_to_seawater_surface / (free_to_seawater * free_to_total_surface);
    let in_situ_total = |ln_k_surface_total: T, ln_pressure_factor: T| {
        in_situ(ln_k_surface_total, ln_pressure_factor) * total_surface_to_total
    };
    let carbonic_to_total = match choice.carbonic.scale() {
        PhScale::Total => total_surface_to_total,
        PhScale::Seawater => seawater_to_total,
    };

    EquilibriumConstants {
        k0: parts.surface.ln_k0.exp(),
        fugacity_factor: parts.surface.ln_fugacity_factor.exp(),
        k1: in_situ(surface.k1, pressure.k1) * carbonic_to_total,
        k2: in_situ(surface.k2, pressure.k2) * carbonic_to_total,
        kb: in_situ_total(surface.kb, pressure.kb),
        kw: in_situ_total(surface.kw, pressure.kw),
        ks_free,
        kf: kf_free * free_to_total,
        kf_free,
        k1p: in_situ_total(surface.k1p, pressure.k1p),
        k2p: in_situ_total(surface.k2p, pressure.k2p),
        k3p: in_situ_total(surface.k3p, pressure.k3p),
        ksi: in_situ_total(surface.ksi, pressure.ksi) * water_fraction,
        ksp_calcite: in_situ(surface.calcite, pressure.calcite),
        ksp_aragonite: in_situ(surface.aragonite, pressure.aragonite),
        total_boron: parts.surface.total_boron,
        total_sulfate,
        total_fluoride,
        calcium: parts.surface.calcium,
        free_to_total,
        seawater_to_total,
        validity,
    }
}
