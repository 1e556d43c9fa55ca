//! First-order propagation of standard uncertainties through the carbonate system (Orr,
//! Epitalon, Dickson & Gattuso 2018, Marine Chemistry 207, 84-107): the combined standard
//! uncertainty of each output is the root sum of squares of each source's standard uncertainty
//! times the output's sensitivity to it, sources taken as independent.
//!
//! The sensitivities are exact for the model: the alkalinity-pH equation (or whichever pair of
//! equations fixes the sample) is differentiated implicitly at the solution, and the chain rule
//! carries the change of \[H+\] and DIC to every output. Temperature, salinity and pressure act
//! through every constant and total; their slopes come from central differences of each paper's
//! scalar formula (never of the solver), within 1e-7 relative of the exact slopes (see
//! `constants/slopes.rs`). Nothing is solved again: the functions take the solved sample.
//!
//! What a caller needs per sample ([`SolvedSample`]): the [`InputPair`] it solved, its
//! [`Conditions`], the [`ConstantChoice`], the [`EquilibriumConstants`] it solved with (from
//! [`equilibrium_constants`](crate::equilibrium_constants), then
//! [`solve_with_constants`](crate::solve_with_constants)) and the [`Solution`]. Of the solution,
//! the propagation reads `h_total`, `dic` and the output values it scales relative changes by
//! (every field named in [`Output`]).

mod implicit;
mod systems;

use crate::constants::slopes::Slopes;
use crate::{Conditions, ConstantChoice, EquilibriumConstants, InputPair, Solution};
use implicit::{Direction, Lanes, Linearized, Pushes};
use std::f64::consts::LN_10;

/// µmol kg-1 per mol kg-1.
const MICRO: f64 = 1e6;

/// A public enum with `COUNT` and `ALL` (every variant, in declaration order): the order of
/// the arrays this module returns.
macro_rules! listed_enum {
    ($(#[$meta:meta])* pub enum $name:ident { $($(#[$variant_meta:meta])* $variant:ident,)+ }) => {
        $(#[$meta])*
        #[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
        pub enum $name {
            $($(#[$variant_meta])* $variant,)+
        }

        impl $name {
            /// How many there are.
            pub const COUNT: usize = [$($name::$variant),+].len();
            /// Every one, in the order of the arrays this module returns.
            pub const ALL: [$name; $name::COUNT] = [$($name::$variant),+];
        }
    };
}

listed_enum! {
    /// A result whose uncertainty is propagated, with the units of its [`Solution`] field.
    pub enum Output {
        /// pH, total scale.
        PhTotal,
        /// pH, seawater scale.
        PhSeawater,
        /// pH, free scale.
        PhFree,
        /// \[H+\] on the total scale \[mol kg-1\].
        Hydrogen,
        /// DIC \[µmol kg-1\] (computed for pairs without DIC, else the input).
        Dic,
        /// Total alkalinity \[µmol kg-1\] (computed for pairs without it, else the input).
        Alkalinity,
        /// CO2* \[µmol kg-1\].
        Co2,
        /// HCO3- \[µmol kg-1\].
        Bicarbonate,
        /// CO3-- \[µmol kg-1\].
        Carbonate,
        /// pCO2 \[µatm\] at in-situ temperature and 1 atm.
        Pco2,
        /// fCO2 \[µatm\] at in-situ temperature and 1 atm.
        Fco2,
        /// Ω of aragonite.
        OmegaAragonite,
        /// Ω of calcite.
        OmegaCalcite,
        /// Revelle factor.
        RevelleFactor,
    }
}

impl Output {
    /// The output's value in a solution.
    pub fn value(self, s: &Solution) -> f64 {
        match self {
            Output::PhTotal => s.ph_total,
            Output::PhSeawater => s.ph_seawater,
            Output::PhFree => s.ph_free,
            Output::Hydrogen => s.h_total,
            Output::Dic => s.dic,
            Output::Alkalinity => s.alkalinity,
            Output::Co2 => s.co2,
            Output::Bicarbonate => s.bicarbonate,
            Output::Carbonate => s.carbonate,
            Output::Pco2 => s.pco2_uatm,
            Output::Fco2 => s.fco2_uatm,
            Output::OmegaAragonite => s.omega_aragonite,
            Output::OmegaCalcite => s.omega_calcite,
            Output::RevelleFactor => s.revelle_factor,
        }
    }
}

listed_enum! {
    /// Where an uncertainty comes from: a member of the input pair, a condition of the sample, or
    /// an equilibrium constant or total.
    pub enum Source {
        /// Total alkalinity \[µmol kg-1\] (input pairs with alkalinity).
        Alkalinity,
        /// DIC \[µmol kg-1\] (input pairs with DIC).
        Dic,
        /// pH on the total scale (input pairs with pH).
        Ph,
        /// pCO2 \[µatm\] (input pairs with pCO2).
        Pco2,
        /// In-situ temperature \[°C\], through every constant.
        Temperature,
        /// Practical salinity, through every constant and total.
        Salinity,
        /// Sea pressure \[dbar\], through every pressure correction.
        Pressure,
        /// Total phosphate \[µmol kg-1\].
        Phosphate,
        /// Total silicate \[µmol kg-1\].
        Silicate,
        /// pK0 = -log10 K0 (CO2 solubility).
        Pk0,
        /// pK1 of carbonic acid.
        Pk1,
        /// pK2 of carbonic acid.
        Pk2,
        /// pKB of boric acid.
        Pkb,
        /// pKW of water.
        Pkw,
        /// pKsp of aragonite.
        PkspAragonite,
        /// pKsp of calcite.
        PkspCalcite,
        /// Total boron, relative (a fraction: 0.02 is 2 %).
        TotalBoron,
    }
}

impl Source {
    /// Whether the source is an equilibrium constant or total (rather than a measured input).
    pub fn is_constant(self) -> bool {
        matches!(
            self,
            Source::Pk0
                | Source::Pk1
                | Source::Pk2
                | Source::Pkb
                | Source::Pkw
                | Source::PkspAragonite
                | Source::PkspCalcite
                | Source::TotalBoron
        )
    }

    /// Whether the source moves the sample solved from `pair`: a member of another pair does not.
    pub fn applies_to(self, pair: &InputPair) -> bool {
        let (alkalinity, dic, ph, pco2) = match pair {
            InputPair::AlkalinityDic { .. } => (true, true, false, false),
            InputPair::AlkalinityPh { .. } => (true, false, true, false),
            InputPair::DicPh { .. } => (false, true, true, false),
            InputPair::AlkalinityPco2 { .. } => (true, false, false, true),
            InputPair::DicPco2 { .. } => (false, true, false, true),
        };
        match self {
            Source::Alkalinity => alkalinity,
            Source::Dic => dic,
            Source::Ph => ph,
            Source::Pco2 => pco2,
            _ => true,
        }
    }
}

/// Standard uncertainties of the measured or modelled inputs, in the chemistry's units
/// (µmol kg-1, °C, practical salinity, dbar, pH units, µatm). Zero leaves a source out.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct InputUncertainties {
    pub alkalinity: f64,
    pub dic: f64,
    pub ph: f64,
    pub pco2: f64,
    pub temperature: f64,
    pub salinity: f64,
    pub pressure: f64,
    pub phosphate: f64,
    pub silicate: f64,
}

/// Standard uncertainties of the equilibrium constants (in pK units) and of total boron
/// (relative, a fraction).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ConstantUncertainties {
    pub pk0: f64,
    pub pk1: f64,
    pub pk2: f64,
    pub pkb: f64,
    pub pkw: f64,
    pub pksp_aragonite: f64,
    pub pksp_calcite: f64,
    pub total_boron: f64,
}

impl ConstantUncertainties {
    /// The standard uncertainties recommended by Orr, Epitalon, Dickson & Gattuso 2018 (values
    /// from memory; the paper's table could not be read here): pK0 0.002, pK1 0.0075, pK2
    /// 0.015, pKB 0.01, pKW 0.01, pKsp of aragonite and calcite 0.02, total boron 2 %.
    pub const ORR_2018: Self = Self {
        pk0: 0.002,
        pk1: 0.0075,
        pk2: 0.015,
        pkb: 0.01,
        pkw: 0.01,
        pksp_aragonite: 0.02,
        pksp_calcite: 0.02,
        total_boron: 0.02,
    };

    /// No uncertainty from the constants: for differences between results computed with the
    /// same constants (pathways, times, places), whose shared constant errors cancel.
    pub const NONE: Self = Self {
        pk0: 0.0,
        pk1: 0.0,
        pk2: 0.0,
        pkb: 0.0,
        pkw: 0.0,
        pksp_aragonite: 0.0,
        pksp_calcite: 0.0,
        total_boron: 0.0,
    };
}

impl Default for ConstantUncertainties {
    fn default() -> Self {
        Self::ORR_2018
    }
}

/// The standard uncertainty of every source.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Uncertainties {
    pub inputs: InputUncertainties,
    pub constants: ConstantUncertainties,
}

impl Uncertainties {
    /// The standard uncertainty of one source.
    pub fn of(&self, source: Source) -> f64 {
        let (i, c) = (&self.inputs, &self.constants);
        match source {
            Source::Alkalinity => i.alkalinity,
            Source::Dic => i.dic,
            Source::Ph => i.ph,
            Source::Pco2 => i.pco2,
            Source::Temperature => i.temperature,
            Source::Salinity => i.salinity,
            Source::Pressure => i.pressure,
            Source::Phosphate => i.phosphate,
            Source::Silicate => i.silicate,
            Source::Pk0 => c.pk0,
            Source::Pk1 => c.pk1,
            Source::Pk2 => c.pk2,
            Source::Pkb => c.pkb,
            Source::Pkw => c.pkw,
            Source::PkspAragonite => c.pksp_aragonite,
            Source::PkspCalcite => c.pksp_calcite,
            Source::TotalBoron => c.total_boron,
        }
    }
}

/// A number per output, in [`Output::ALL`] order.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PerOutput(pub [f64; Output::COUNT]);

impl PerOutput {
    /// The number for one output.
    pub fn get(&self, output: Output) -> f64 {
        self.0[output as usize]
    }
}

/// A number per source and output: sensitivities (change of each output per unit of each
/// source) or contributions (sensitivity times the source's standard uncertainty, signed).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PerSource(pub [[f64; Output::COUNT]; Source::COUNT]);

impl PerSource {
    /// The number for one source and output.
    pub fn get(&self, source: Source, output: Output) -> f64 {
        self.0[source as usize][output as usize]
    }

    /// Root sum of squares over the sources: the combined standard uncertainty of each output
    /// when the numbers are contributions.
    pub fn combined(&self) -> PerOutput {
        let mut variance = [0.0; Output::COUNT];
        for row in &self.0 {
            for (v, c) in variance.iter_mut().zip(row) {
                *v += c * c;
            }
        }
        PerOutput(variance.map(f64::sqrt))
    }

    /// The share of one output's variance that one source brings (0 to 1), for contributions.
    pub fn variance_share(&self, source: Source, output: Output) -> f64 {
        let total = self.combined().get(output);
        let c = self.get(source, output);
        if total > 0.0 {
            c * c / (total * total)
        } else {
            0.0
        }
    }
}

/// A solved sample: everything the propagation reads, nothing solved again.
#[derive(Clone, Copy, Debug)]
pub struct SolvedSample<'a> {
    /// The input pair the sample was solved from.
    pub pair: &'a InputPair,
    pub conditions: &'a Conditions,
    pub choice: &'a ConstantChoice,
    /// The constants it was solved with (from [`equilibrium_constants`](crate::equilibrium_constants)).
    pub constants: &'a EquilibriumConstants,
    pub solution: &'a Solution,
}

/// The sensitivity of every output to every source (∂output/∂source, in the units of
/// [`Output`] per unit of [`Source`]). Sources that do not apply to the pair are zero.
pub fn sensitivities(sample: &SolvedSample) -> PerSource {
    per_source(&output_changes(sample, |_| 1.0))
}

/// Each source's signed contribution to each output's uncertainty (sensitivity × standard
/// uncertainty); [`PerSource::combined`] gives the combined standard uncertainties.
pub fn uncertainty_budget(sample: &SolvedSample, uncertainties: &Uncertainties) -> PerSource {
    per_source(&output_changes(sample, |source| uncertainties.of(source)))
}

fn per_source(changes: &[Lanes; Output::COUNT]) -> PerSource {
    PerSource(std::array::from_fn(|s| {
        std::array::from_fn(|o| changes[o][s])
    }))
}

/// The combined standard uncertainty of every output: the per-cell function for grids (cost:
/// see the `uncertainty` benchmark and the README; temperature and salinity are the dearest
/// sources, as they move every constant).
///
/// ```
/// use acidscape_chem::{equilibrium_constants, solve_with_constants, standard_uncertainties};
/// use acidscape_chem::{Conditions, ConstantChoice, InputPair, InputUncertainties, Output};
/// use acidscape_chem::{SolvedSample, Uncertainties};
/// let conditions = Conditions { temperature_c: 18.0, salinity: 35.0, pressure_dbar: 0.0, phosphate: 0.5, silicate: 5.0 };
/// let pair = InputPair::AlkalinityDic { alkalinity: 2300.0, dic: 2050.0 };
/// let choice = ConstantChoice::default();
/// let constants = equilibrium_constants(&conditions, &choice).unwrap();
/// let solution = solve_with_constants(pair, &conditions, &constants).unwrap();
/// let sample = SolvedSample { pair: &pair, conditions: &conditions, choice: &choice, constants: &constants, solution: &solution };
/// let u = Uncertainties {
///     inputs: InputUncertainties { alkalinity: 2.0, dic: 2.0, ..Default::default() },
///     ..Default::default() // constants: Orr et al. 2018
/// };
/// let combined = standard_uncertainties(&sample, &u);
/// // A few thousandths of a pH unit, a few per cent of Ω (orders of magnitude, common practice).
/// assert!(combined.get(Output::PhTotal) > 0.002 && combined.get(Output::PhTotal) < 0.03);
/// let relative = combined.get(Output::OmegaAragonite) / solution.omega_aragonite;
/// assert!(relative > 0.02 && relative < 0.1);
/// ```
pub fn standard_uncertainties(sample: &SolvedSample, uncertainties: &Uncertainties) -> PerOutput {
    let changes = output_changes(sample, |source| uncertainties.of(source));
    PerOutput(changes.map(|c| c.iter().map(|c| c * c).sum::<f64>().sqrt()))
}

/// Reads one field of a gradient.
type Gradient = fn(&Direction) -> f64;

/// The change of each output (outer index) for a change `size(source)` of each source (inner
/// index, [`Source::ALL`] order); zero for sources that do not apply to the pair.
fn output_changes(sample: &SolvedSample, size: impl Fn(Source) -> f64) -> [Lanes; Output::COUNT] {
    let (pair, conditions, solution) = (sample.pair, sample.conditions, sample.solution);
    let linearized = Linearized::new(pair, solution, sample.constants, conditions);
    let size = |source: Source| {
        if source.applies_to(pair) {
            size(source)
        } else {
            0.0
        }
    };
    let mut p = Pushes::default();
    // The input pair's members.
    p.alkalinity_input[Source::Alkalinity as usize] = size(Source::Alkalinity) / MICRO;
    p.ln_dic_input[Source::Dic as usize] = size(Source::Dic) / solution.dic;
    p.ph_input[Source::Ph as usize] = size(Source::Ph);
    p.ln_pco2_input[Source::Pco2 as usize] = size(Source::Pco2) / solution.pco2_uatm;
    // Sources that move the alkalinity equation only, by ∂TA/∂θ and ∂(∂TA/∂ln h)/∂θ.
    let (ta, slope) = (
        linearized.alkalinity_gradient(),
        linearized.slope_gradient(),
    );
    // K = 10^-pK: d ln K = -ln 10 · d pK.
    let pk = |source| -LN_10 * size(source);
    let moves_alkalinity: [(Source, Gradient, f64); 7] = [
        (
            Source::Phosphate,
            |d| d.phosphate,
            size(Source::Phosphate) / MICRO,
        ),
        (
            Source::Silicate,
            |d| d.silicate,
            size(Source::Silicate) / MICRO,
        ),
        (Source::Pk1, |d| d.ln_k1, pk(Source::Pk1)),
        (Source::Pk2, |d| d.ln_k2, pk(Source::Pk2)),
        (Source::Pkb, |d| d.ln_kb, pk(Source::Pkb)),
        (Source::Pkw, |d| d.ln_kw, pk(Source::Pkw)),
        (
            Source::TotalBoron,
            |d| d.ln_total_boron,
            size(Source::TotalBoron),
        ),
    ];
    for (source, by, change) in moves_alkalinity {
        p.alkalinity[source as usize] = by(ta) * change;
        p.slope[source as usize] = by(slope) * change;
    }
    // Constants the outputs also read directly.
    p.ln_k0[Source::Pk0 as usize] = pk(Source::Pk0);
    p.ln_k1[Source::Pk1 as usize] = pk(Source::Pk1);
    p.ln_k2[Source::Pk2 as usize] = pk(Source::Pk2);
    p.ln_ksp_aragonite[Source::PkspAragonite as usize] = pk(Source::PkspAragonite);
    p.ln_ksp_calcite[Source::PkspCalcite as usize] = pk(Source::PkspCalcite);
    // Temperature, salinity and pressure move every constant.
    let everywhere = [Source::Temperature, Source::Salinity, Source::Pressure];
    if everywhere.iter().any(|&s| size(s) != 0.0) {
        let slopes = Slopes::new(conditions, sample.choice, sample.constants);
        for source in everywhere {
            let change = size(source);
            if change != 0.0 {
                let d = Direction::from_slopes(&match source {
                    Source::Temperature => slopes.temperature(),
                    Source::Salinity => slopes.salinity(),
                    _ => slopes.pressure(),
                });
                linearized.push(&mut p, source, &d, change);
            }
        }
    }
    linearized.output_changes(&p)
}
