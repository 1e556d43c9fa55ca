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
use crate::error::{check_range, ChemError};
use crate::validity::Validity;
use crate::Conditions;
use pressure::PressureTerms;

/// Temperature and salinity terms shared by many constants, each evaluated once per sample.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SampleTerms {
    /// Temperature \[°C\].
    pub celsius: f64,
    /// Temperature \[K\].
    pub kelvin: f64,
    /// 1 / T \[K-1\].
    pub inv_kelvin: f64,
    /// ln(T / K).
    pub ln_kelvin: f64,
    /// Practical salinity.
    pub salinity: f64,
    /// √S.
    pub sqrt_salinity: f64,
    /// Ionic strength \[mol kg-1 H2O\].
    pub ionic_strength: f64,
    /// √I.
    pub sqrt_ionic_strength: f64,
    /// 1 - 0.001005 S: kg of water per kg of seawater, converting mol kg-1 of water to mol kg-1
    /// of seawater (Dickson 1990). Kept as a factor: its logarithm is only needed for printed ln K.
    pub water_fraction: f64,
}

impl SampleTerms {
    /// Terms at in-situ temperature \[°C\] and practical salinity.
    pub fn new(temperature_c: f64, salinity: f64) -> Self {
        let unset = Self {
            celsius: 0.0,
            kelvin: 0.0,
            inv_kelvin: 0.0,
            ln_kelvin: 0.0,
            salinity: 0.0,
            sqrt_salinity: 0.0,
            ionic_strength: 0.0,
            sqrt_ionic_strength: 0.0,
            water_fraction: 0.0,
        };
        unset
            .with_temperature(temperature_c)
            .with_salinity(salinity)
    }

    /// The same terms at another temperature \[°C\].
    pub(crate) fn with_temperature(&self, temperature_c: f64) -> Self {
        let kelvin = temperature_c + 273.15;
        Self {
            celsius: temperature_c,
            kelvin,
            inv_kelvin: 1.0 / kelvin,
            ln_kelvin: kelvin.ln(),
            ..*self
        }
    }

    /// The same terms at another practical salinity.
    pub(crate) fn with_salinity(&self, salinity: f64) -> Self {
        let ionic_strength = ionic_strength(salinity);
        Self {
            salinity,
            sqrt_salinity: salinity.sqrt(),
            ionic_strength,
            sqrt_ionic_strength: ionic_strength.sqrt(),
            water_fraction: 1.0 - 0.001005 * salinity,
            ..*self
        }
    }

    /// ln(1 - 0.001005 S), the water-fraction term of the ln K written per kg of seawater.
    pub fn ln_water_fraction(&self) -> f64 {
        self.water_fraction.ln()
    }

    /// log10(T / K), from the stored ln T.
    pub fn log10_kelvin(&self) -> f64 {
        self.ln_kelvin * std::f64::consts::LOG10_E
    }
}

/// Ionic strength of seawater \[mol kg-1 H2O\]: I = 19.924 S / (1000 - 1.005 S), Dickson 1990.
///
/// ```
/// // Hand evaluation at S = 35: 19.924·35 / (1000 - 35.175) = 697.34 / 964.825 = 0.722763
/// assert!((acidscape_chem::constants::ionic_strength(35.0) - 0.722763).abs() < 1e-6);
/// ```
pub fn ionic_strength(salinity: f64) -> f64 {
    19.924 * salinity / (1000.0 - 1.005 * salinity)
}

/// All constants at the sample's in-situ T, S and P. Acid constants are on the total scale
/// (mol kg-1 of seawater) except where named free; totals are mol kg-1.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EquilibriumConstants {
    /// CO2 solubility K0 \[mol kg-1 atm-1\] at in-situ temperature and 1 atm (not pressure-corrected).
    pub k0: f64,
    /// fCO2 / pCO2 at in-situ temperature and 1 atm total pressure.
    pub fugacity_factor: f64,
    /// K1 of carbonic acid (total scale).
    pub k1: f64,
    /// K2 of carbonic acid (total scale).
    pub k2: f64,
    /// KB of boric acid (total scale).
    pub kb: f64,
    /// KW of water (total scale, mol² kg-2).
    pub kw: f64,
    /// KS of bisulfate (free scale).
    pub ks_free: f64,
    /// KF of hydrogen fluoride (total scale).
    pub kf: f64,
    /// KF of hydrogen fluoride (free scale).
    pub kf_free: f64,
    /// K1P of phosphoric acid (total scale).
    pub k1p: f64,
    /// K2P of phosphoric acid (total scale).
    pub k2p: f64,
    /// K3P of phosphoric acid (total scale).
    pub k3p: f64,
    /// KSi of silicic acid (total scale).
    pub ksi: f64,
    /// Ksp* of calcite \[mol² kg-2\].
    pub ksp_calcite: f64,
    /// Ksp* of aragonite \[mol² kg-2\].
    pub ksp_aragonite: f64,
    /// Total boron \[mol kg-1\].
    pub total_boron: f64,
    /// Total sulfate \[mol kg-1\].
    pub total_sulfate: f64,
    /// Total fluoride \[mol kg-1\].
    pub total_fluoride: f64,
    /// Calcium \[mol kg-1\].
    pub calcium: f64,
    /// \[H+\]total / \[H+\]free = 1 + ST/KS.
    pub free_to_total: f64,
    /// \[H+\]total / \[H+\]seawater = (1 + ST/KS) / (1 + ST/KS + FT/KF).
    pub seawater_to_total: f64,
    /// Validity ranges the sample falls outside.
    pub validity: Validity,
}

/// Rejects conditions that are not numbers or not seawater at all (validity ranges are separate).
pub(crate) fn validate_conditions(conditions: &Conditions) -> Result<(), ChemError> {
    check_range(
        "temperature_c",
        conditions.temperature_c,
        -10.0,
        60.0,
        "in-situ temperature between -10 and 60 °C",
    )?;
    check_range(
        "salinity",
        conditions.salinity,
        f64::MIN_POSITIVE,
        60.0,
        "practical salinity above 0 and at most 60",
    )?;
    check_range(
        "pressure_dbar",
        conditions.pressure_dbar,
        0.0,
        12_000.0,
        "sea pressure between 0 (surface) and 12000 dbar",
    )?;
    check_range(
        "phosphate",
        conditions.phosphate,
        0.0,
        1_000.0,
        "phosphate between 0 and 1000 µmol kg-1",
    )?;
    check_range(
        "silicate",
        conditions.silicate,
        0.0,
        5_000.0,
        "silicate between 0 and 5000 µmol kg-1",
    )?;
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
    let terms = SampleTerms::new(conditions.temperature_c, conditions.salinity);
    let pt = PressureTerms::new(conditions.temperature_c, conditions.pressure_dbar * 0.1);
    let validity = Validity::assess(
        conditions.temperature_c,
        conditions.salinity,
        conditions.pressure_dbar,
        choice,
    );
    let parts = Ingredients {
        surface: surface_ingredients(&terms, choice),
        pressure: pressure_ingredients(&pt),
    };
    assemble(&parts, choice, validity)
}

/// One number for each constant that has a pressure correction.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct PerConstant {
    pub ks: f64,
    pub kf: f64,
    pub k1: f64,
    pub k2: f64,
    pub kb: f64,
    pub kw: f64,
    pub k1p: f64,
    pub k2p: f64,
    pub k3p: f64,
    pub ksi: f64,
    pub calcite: f64,
    pub aragonite: f64,
}

/// What the constants are made of at the surface, before exponentiation and scale conversion:
/// each paper's ln K (on its own scale and mass basis), the totals and the water fraction.
/// No exp: cheap enough to evaluate again at nearby temperatures and salinities.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct SurfaceIngredients {
    /// ln K: KS per kg of water (free scale); KF on its paper's scale and basis; K1, K2 on their
    /// paper's scale; KSi per kg of water; the rest as published.
    pub ln_k: PerConstant,
    pub ln_k0: f64,
    pub ln_fugacity_factor: f64,
    pub water_fraction: f64,
    pub total_boron: f64,
    pub total_sulfate: f64,
    pub total_fluoride: f64,
    pub calcium: f64,
}

/// Everything the constants are assembled from: the surface ingredients and each constant's
/// pressure term ln(K_P / K_0) (Millero 1995).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Ingredients {
    pub surface: SurfaceIngredients,
    pub pressure: PerConstant,
}

/// Each paper's formula at the sample's shared temperature and salinity terms.
#[inline(always)]
pub(crate) fn surface_ingredients(
    terms: &SampleTerms,
    choice: &ConstantChoice,
) -> SurfaceIngredients {
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
pub(crate) fn pressure_ingredients(pt: &PressureTerms) -> PerConstant {
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
pub(crate) fn assemble(
    parts: &Ingredients,
    choice: &ConstantChoice,
    validity: Validity,
) -> EquilibriumConstants {
    let (surface, pressure) = (&parts.surface.ln_k, &parts.pressure);
    let water_fraction = parts.surface.water_fraction;
    let (total_sulfate, total_fluoride) =
        (parts.surface.total_sulfate, parts.surface.total_fluoride);
    // Every constant is one exp of its ln K plus its pressure term (Millero 1995); factors that
    // change only its unit or scale multiply the exp instead of adding their ln to it.
    let in_situ =
        |ln_k_surface: f64, ln_pressure_factor: f64| (ln_k_surface + ln_pressure_factor).exp();

    // Free-scale KS and KF at the surface, then at in-situ pressure.
    let ks_surface = surface.ks.exp() * water_fraction;
    let ks_free = in_situ(surface.ks, pressure.ks) * water_fraction;
    let free_to_total_surface = 1.0 + total_sulfate / ks_surface;
    let free_to_total = 1.0 + total_sulfate / ks_free;
    // KF on the scale its paper gives, at the surface and in situ.
    let fluoride_scale = match choice.fluoride {
        FluorideSet::PerezFraga1987 => 1.0,
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
    let in_situ_total = |ln_k_surface_total: f64, ln_pressure_factor: f64| {
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
