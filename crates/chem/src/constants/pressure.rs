//! Pressure dependence of the equilibrium constants: Millero 1995, Geochimica et Cosmochimica Acta 59,
//! 661-677 (coefficients from memory, as tabulated in check-values.md).

use crate::real::Real;

/// Gas constant in cm³ bar mol-1 K-1 used with Millero 1995's ΔV and ΔK.
pub const GAS_CONSTANT_CM3_BAR: f64 = 83.14472;

/// Partial molal volume and compressibility change of one reaction: ΔV = a0 + a1 t + a2 t²
/// (cm³ mol-1), ΔK = (b0 + b1 t)·10⁻³ (cm³ mol-1 bar-1), t in °C.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PressureCoefficients {
    /// a0, a1, a2 of ΔV.
    pub volume: [f64; 3],
    /// b0, b1 of ΔK (before the 10⁻³ factor).
    pub compressibility: [f64; 2],
}

const fn coefficients(a0: f64, a1: f64, a2: f64, b0: f64, b1: f64) -> PressureCoefficients {
    PressureCoefficients {
        volume: [a0, a1, a2],
        compressibility: [b0, b1],
    }
}

/// K1 of carbonic acid (seawater scale).
pub const K1: PressureCoefficients = coefficients(-25.50, 0.1271, 0.0, -3.08, 0.0877);
/// K2 of carbonic acid (seawater scale).
pub const K2: PressureCoefficients = coefficients(-15.82, -0.0219, 0.0, 1.13, -0.1475);
/// KB of boric acid (seawater scale). a2 = -2.608e-3 as in Millero 1979; some printings of
/// Millero 1995 show +2.608e-3. We keep the 1979 sign: it is the one fitted to the measurements.
pub const KB: PressureCoefficients = coefficients(-29.48, 0.1622, -2.608e-3, -2.84, 0.0);
/// KW of water (seawater scale).
pub const KW: PressureCoefficients = coefficients(-20.02, 0.1119, -1.409e-3, -5.13, 0.0794);
/// KS of bisulfate (free scale).
pub const KS: PressureCoefficients = coefficients(-18.03, 0.0466, 0.316e-3, -4.53, 0.0900);
/// KF of hydrogen fluoride (free scale).
pub const KF: PressureCoefficients = coefficients(-9.78, -0.0090, -0.942e-3, -3.91, 0.054);
/// K1P of phosphoric acid (seawater scale).
pub const K1P: PressureCoefficients = coefficients(-14.51, 0.1211, -0.321e-3, -2.67, 0.0427);
/// K2P of phosphoric acid (seawater scale).
pub const K2P: PressureCoefficients = coefficients(-23.12, 0.1758, -2.647e-3, -5.15, 0.09);
/// K3P of phosphoric acid (seawater scale).
pub const K3P: PressureCoefficients = coefficients(-26.57, 0.2020, -3.042e-3, -4.08, 0.0714);
/// KSi of silicic acid: no published values, given the boric-acid ones (common practice).
pub const KSI: PressureCoefficients = KB;
/// Ksp of calcite.
pub const CALCITE: PressureCoefficients = coefficients(-48.76, 0.5304, 0.0, -11.76, 0.3692);
/// Ksp of aragonite.
pub const ARAGONITE: PressureCoefficients = coefficients(-45.96, 0.5304, 0.0, -11.76, 0.3692);

/// ln(K_P / K_0) = -(ΔV/RT) P + ½ (ΔK/RT) P²: Millero 1995, eqs. 90-91; P gauge pressure in bar.
///
/// ```
/// use acidscape_chem::constants::pressure::{ln_pressure_factor, K1};
/// // Hand evaluation for K1 at 2 °C, 400 bar: ΔV = -25.50 + 0.1271·2 = -25.2458 cm³ mol-1;
/// // ΔK = (-3.08 + 0.0877·2)·1e-3 = -2.9046e-3; RT = 83.14472·275.15 = 22877.27;
/// // ln = (25.2458·400 - 0.5·2.9046e-3·160000)/22877.27 = (10098.32 - 232.368)/22877.27 = 0.431256
/// assert!((ln_pressure_factor(&K1, 2.0, 400.0) - 0.431256).abs() < 2e-6);
/// ```
pub fn ln_pressure_factor(
    coefficients: &PressureCoefficients,
    temperature_c: f64,
    pressure_bar: f64,
) -> f64 {
    PressureTerms::new(temperature_c, pressure_bar).ln_factor(coefficients)
}

/// Terms shared by every constant's pressure correction at one temperature and pressure, so
/// that each correction is five products: ln(K_P/K_0) = -(a0 x0 + a1 x1 + a2 x2) + b0 y0 + b1 y1.
#[derive(Clone, Copy, Debug)]
pub(crate) struct PressureTerms<T: Real> {
    /// P/RT, t P/RT, t² P/RT: multiply a0, a1, a2 of ΔV.
    volume: [T; 3],
    /// ½ P²/RT·10⁻³, t ½ P²/RT·10⁻³: multiply b0, b1 of ΔK.
    compressibility: [T; 2],
}

impl<T: Real> PressureTerms<T> {
    #[inline(always)]
    pub(crate) fn new(temperature_c: T, pressure_bar: T) -> Self {
        let t = temperature_c;
        let pressure_over_rt = pressure_bar / ((t + 273.15) * GAS_CONSTANT_CM3_BAR);
        let half_pressure2_over_rt = pressure_bar * 0.5e-3 * pressure_over_rt;
        Self {
            volume: [
                pressure_over_rt,
                t * pressure_over_rt,
                t * t * pressure_over_rt,
            ],
            compressibility: [half_pressure2_over_rt, t * half_pressure2_over_rt],
        }
    }

    #[inline(always)]
    pub(crate) fn ln_factor(&self, c: &PressureCoefficients) -> T {
        let [x0, x1, x2] = self.volume;
        let [y0, y1] = self.compressibility;
        y0 * c.compressibility[0] + y1 * c.compressibility[1]
            - (x0 * c.volume[0] + x1 * c.volume[1] + x2 * c.volume[2])
    }
}

impl PressureTerms<f64> {
    /// The derivative of each term with respect to temperature \[per °C\]. [`Self::ln_factor`]
    /// is linear in the terms, so applied to these it gives d ln(K_P/K_0)/dt exactly.
    pub(crate) fn temperature_slope(temperature_c: f64, pressure_bar: f64) -> Self {
        let t = temperature_c;
        let kelvin = t + 273.15;
        let at = Self::new(t, pressure_bar);
        let [x0, ..] = at.volume;
        let dx0 = -x0 / kelvin;
        let dy0 = 0.5e-3 * pressure_bar * dx0;
        Self {
            volume: [dx0, x0 + t * dx0, 2.0 * t * x0 + t * t * dx0],
            compressibility: [dy0, at.compressibility[0] + t * dy0],
        }
    }

    /// The derivative of each term with respect to pressure \[per bar\], for the same use.
    pub(crate) fn pressure_slope(temperature_c: f64, pressure_bar: f64) -> Self {
        let t = temperature_c;
        let dx0 = 1.0 / (GAS_CONSTANT_CM3_BAR * (t + 273.15));
        let dy0 = 1e-3 * pressure_bar * dx0;
        Self {
            volume: [dx0, t * dx0, t * t * dx0],
            compressibility: [dy0, t * dy0],
        }
    }
}
