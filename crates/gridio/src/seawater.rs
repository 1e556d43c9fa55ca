//! Seawater conversions at the edge of the pipeline: pressure from depth,
//! salinity scales, potential/conservative ↔ in-situ temperature and in-situ
//! density. TEOS-10 through the `gsw` crate where it has the function, the
//! EOS-80 algorithms of Fofonoff & Millard 1983 (UNESCO Tech. Pap. Mar. Sci. 44)
//! for the adiabatic lapse rate and potential temperature where it does not.
//!
//! Scalar functions, f64 in and f64 out, no allocation; the two costliest per cell also
//! for many cells side by side ([`in_situ_from_potential_lanes`] here, and the density in
//! [`crate::specific_volume`]), which is what `compute` runs.
//!
//! Approximations (also in [`PROVENANCE_NOTES`]):
//! - Absolute salinity is taken as Reference Salinity SR = SP × 35.16504/35
//!   (Millero et al. 2008): the gsw crate has no SA_from_SP anomaly atlas. The
//!   neglected anomaly δSA is typically below about 0.03 g/kg in the open ocean,
//!   largest in North Pacific deep water (from memory). Its effect on density is
//!   below about 0.025 kg m-3 (β ≈ 0.78 kg m-3 per g/kg, from memory), i.e. below
//!   2.5e-5 relative on per-volume → per-mass conversions.
//! - Potential temperature ↔ in-situ temperature uses Fofonoff & Millard 1983
//!   (EOS-80) also when the input is TEOS-10 Conservative Temperature: CT is first
//!   turned into TEOS-10 potential temperature by inverting gsw `ct_from_pt`, then
//!   taken to in-situ temperature with the EOS-80 lapse rate. On the TEOS-10
//!   example cast (TEOS-10 help page gsw_t_from_CT, 10–1000 dbar) the chain differs
//!   from the exact TEOS-10 result by at most 2.2e-4 °C, and in-situ density from
//!   (SP, t, p) differs from the exact-Gibbs gsw_rho(SA, t, p) by at most
//!   5.2e-4 kg m-3 (measured in tests/conversions.rs).
//! - Fofonoff & Millard 1983 work on IPTS-68; ITS-90 temperatures are converted
//!   with t68 = 1.00024 t90 (Saunders 1990, as quoted in the TEOS-10 manual
//!   IOC et al. 2010, appendix A.1; from memory).

use crate::lanes::widest_lanes;
use std::fmt;

/// IPTS-68 from ITS-90 temperature factor (Saunders 1990): t68 = 1.00024 t90.
const T68_PER_T90: f64 = 1.00024;

/// Convergence threshold of the Conservative Temperature inversion, °C.
const NEWTON_TOLERANCE: f64 = 1e-10;

/// Statements of what this module approximates, for output provenance.
pub const PROVENANCE_NOTES: [(&str, &str); 3] = [
    (
        "absolute_salinity",
        "absolute salinity approximated by Reference Salinity SR = SP * 35.16504/35 \
         (Millero et al. 2008); the salinity anomaly (typically < 0.03 g/kg in the open ocean) \
         is neglected",
    ),
    (
        "temperature_conversion",
        "potential <-> in-situ temperature by Fofonoff & Millard 1983 (UNESCO Tech. Pap. Mar. Sci. 44, \
         EOS-80 adiabatic lapse rate, one Runge-Kutta step up or down), ITS-90 via t68 = 1.00024 t90; Conservative \
         Temperature first converted to potential temperature by inverting TEOS-10 CT_from_pt (gsw crate)",
    ),
    (
        "density",
        "in-situ density from the TEOS-10 75-term specific-volume polynomial (Roquet et al. 2015, \
         the gsw crate's coefficients) with SA = SR and CT from potential temperature",
    ),
];

/// A seawater conversion that could not be done.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SeawaterError {
    /// Depth above the sea surface (negative depth, more than 5 m).
    DepthAboveSurface { depth_m: f64 },
    /// Salinity below zero.
    NegativeSalinity { salinity: f64 },
    /// An iteration did not converge (input far outside the ocean's range).
    NoConvergence { quantity: &'static str, value: f64 },
}

impl fmt::Display for SeawaterError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SeawaterError::DepthAboveSurface { depth_m } => write!(
                f,
                "depth {depth_m} m is above the sea surface; expected depth positive down (>= -5 m)"
            ),
            SeawaterError::NegativeSalinity { salinity } => {
                write!(f, "salinity {salinity} is negative; expected >= 0")
            }
            SeawaterError::NoConvergence { quantity, value } => write!(
                f,
                "{quantity} could not be converted from {value}: iteration did not converge \
                 (value far outside the oceanic range?)"
            ),
        }
    }
}

impl std::error::Error for SeawaterError {}

fn gsw_error(salinity: f64) -> impl Fn(gsw::Error) -> SeawaterError {
    move |_| SeawaterError::NegativeSalinity { salinity }
}

/// Sea pressure \[dbar\] from depth \[m, positive down\] and latitude \[°N\] (TEOS-10 gsw p_from_z).
pub fn sea_pressure_from_depth(depth_m: f64, latitude: f64) -> Result<f64, SeawaterError> {
    gsw::conversions::p_from_z(-depth_m, latitude, None, None)
        .map_err(|_| SeawaterError::DepthAboveSurface { depth_m })
}

/// Depth \[m, positive down\] from sea pressure \[dbar\] and latitude \[°N\] (TEOS-10 gsw z_from_p).
pub fn depth_from_sea_pressure(pressure_dbar: f64, latitude: f64) -> f64 {
    -gsw::conversions::z_from_p(pressure_dbar, latitude, 0.0, 0.0)
}

/// Absolute salinity \[g/kg\] standing in for SA: Reference Salinity from practical salinity.
#[inline]
pub fn absolute_from_practical(practical: f64) -> f64 {
    gsw::conversions::sr_from_sp(practical)
}

/// Practical salinity from absolute salinity \[g/kg\] taken as Reference Salinity.
#[inline]
pub fn practical_from_absolute(absolute_g_kg: f64) -> f64 {
    gsw::conversions::sp_from_sr(absolute_g_kg)
}

/// Adiabatic lapse rate \[°C/dbar\], Fofonoff & Millard 1983 ATG; S practical, t IPTS-68 °C, p dbar.
///
/// ```
/// // Fofonoff & Millard 1983 check value (printed with its ATG; from memory): ATG(40, 40 °C, 10000 dbar) = 3.255976e-4 °C/dbar.
/// let atg = acidscape_gridio::seawater::adiabatic_lapse_rate_ipts68(40.0, 40.0, 10000.0);
/// assert!((atg - 3.255976e-4).abs() < 5e-11);
/// ```
#[inline(always)]
pub fn adiabatic_lapse_rate_ipts68(s: f64, t68: f64, p: f64) -> f64 {
    let ds = s - 35.0;
    let t = t68;
    (((-2.1687e-16 * t + 1.8676e-14) * t - 4.6206e-13) * p
        + ((2.7759e-12 * t - 1.1351e-10) * ds
            + ((-5.4481e-14 * t + 8.733e-12) * t - 6.7795e-10) * t
            + 1.8741e-8))
        * p
        + (-4.2393e-8 * t + 1.8932e-6) * ds
        + ((6.6228e-10 * t - 6.836e-8) * t + 8.5258e-6) * t
        + 3.5803e-5
}

/// Potential temperature \[IPTS-68 °C\], Fofonoff & Millard 1983 THETA (4th-order Runge–Kutta, Gill's coefficients).
///
/// ```
/// // Fofonoff & Millard 1983 check value (printed with its THETA; from memory): THETA(40, 40 °C, 10000 dbar, 0) = 36.89073 °C.
/// let theta = acidscape_gridio::seawater::potential_temperature_ipts68(40.0, 40.0, 10000.0, 0.0);
/// assert!((theta - 36.89073).abs() < 5e-6);
/// ```
#[inline(always)]
pub fn potential_temperature_ipts68(s: f64, t68: f64, p: f64, p_ref: f64) -> f64 {
    let h = p_ref - p;
    let mut xk = h * adiabatic_lapse_rate_ipts68(s, t68, p);
    let mut t = t68 + 0.5 * xk;
    let mut q = xk;
    let mut pm = p + 0.5 * h;
    xk = h * adiabatic_lapse_rate_ipts68(s, t, pm);
    t += 0.292_893_218_813_452_5 * (xk - q);
    q = 0.585_786_437_626_905 * xk + 0.121_320_343_559_642_6 * q;
    xk = h * adiabatic_lapse_rate_ipts68(s, t, pm);
    t += 1.707_106_781_186_547_5 * (xk - q);
    q = 3.414_213_562_373_095 * xk - 4.121_320_343_559_643 * q;
    pm += 0.5 * h;
    xk = h * adiabatic_lapse_rate_ipts68(s, t, pm);
    t + (xk - 2.0 * q) / 6.0
}

/// Potential temperature \[ITS-90 °C\] referenced to 0 dbar from in-situ temperature \[ITS-90 °C\].
pub fn potential_from_in_situ(practical: f64, t90: f64, p: f64) -> f64 {
    potential_temperature_ipts68(practical, t90 * T68_PER_T90, p, 0.0) / T68_PER_T90
}

/// In-situ temperature \[ITS-90 °C\] from potential temperature (0 dbar reference): Fofonoff & Millard 1983 THETA from 0 dbar down to `p`.
///
/// Their THETA with the two pressures swapped; NaN where an input is not finite. Within
/// 7.1e-5 °C of their lapse rate integrated finely, over S 0–42, t −2–40 °C, p to 11000 dbar
/// (tests/conversions.rs); not an exact inverse of the one-step [`potential_from_in_situ`]
/// (off the same adiabat by up to 1.32e-4 °C): the round trip closes to 1e-9 °C above
/// 1000 dbar, 1.9e-4 °C at 11000 dbar.
#[inline(always)]
pub fn in_situ_from_potential(practical: f64, theta90: f64, p: f64) -> f64 {
    potential_temperature_ipts68(practical, theta90 * T68_PER_T90, 0.0, p) / T68_PER_T90
}

/// [`in_situ_from_potential`] for N cells side by side: the same arithmetic on each, so each
/// cell's result is bit for bit the scalar one, compiled for the widest SIMD registers the CPU
/// offers ([`crate::lanes`]).
pub fn in_situ_from_potential_lanes<const N: usize>(
    practical: &[f64; N],
    theta90: &[f64; N],
    p: &[f64; N],
) -> [f64; N] {
    widest_lanes!(in_situ_each, practical, theta90, p)
}

#[inline(always)]
fn in_situ_each<const N: usize>(
    practical: &[f64; N],
    theta90: &[f64; N],
    p: &[f64; N],
) -> [f64; N] {
    let mut in_situ = [0.0; N];
    for i in 0..N {
        in_situ[i] = in_situ_from_potential(practical[i], theta90[i], p[i]);
    }
    in_situ
}

/// TEOS-10 potential temperature \[°C\] from Conservative Temperature by inverting gsw ct_from_pt.
pub fn potential_from_conservative(absolute_g_kg: f64, ct: f64) -> Result<f64, SeawaterError> {
    if !(ct.is_finite() && absolute_g_kg.is_finite()) {
        return Ok(f64::NAN);
    }
    let ct_of = |pt: f64| gsw::conversions::ct_from_pt(absolute_g_kg, pt);
    let err = gsw_error(absolute_g_kg);
    // Secant slope dCT/dpt = cp(SA, pt)/cp0, close to 1; refreshed each step.
    let mut pt = ct;
    let mut f = ct_of(pt).map_err(&err)? - ct;
    let mut pt_prev = pt - 0.01;
    let mut f_prev = ct_of(pt_prev).map_err(&err)? - ct;
    for _ in 0..20 {
        if f.abs() < NEWTON_TOLERANCE {
            return Ok(pt);
        }
        let slope = (f - f_prev) / (pt - pt_prev);
        if !(slope.is_finite() && slope > 0.5) {
            break;
        }
        pt_prev = pt;
        f_prev = f;
        pt -= f / slope;
        f = ct_of(pt).map_err(&err)? - ct;
    }
    if f.abs() < 1e-8 {
        return Ok(pt);
    }
    Err(SeawaterError::NoConvergence {
        quantity: "Conservative Temperature",
        value: ct,
    })
}

/// Conservative Temperature \[°C\] from potential temperature (TEOS-10 gsw ct_from_pt).
pub fn conservative_from_potential(absolute_g_kg: f64, theta: f64) -> Result<f64, SeawaterError> {
    gsw::conversions::ct_from_pt(absolute_g_kg, theta).map_err(gsw_error(absolute_g_kg))
}

/// In-situ temperature \[°C\] from Conservative Temperature, absolute salinity (as SR) and sea pressure.
pub fn in_situ_from_conservative(
    absolute_g_kg: f64,
    ct: f64,
    p: f64,
) -> Result<f64, SeawaterError> {
    let theta = potential_from_conservative(absolute_g_kg, ct)?;
    Ok(in_situ_from_potential(
        practical_from_absolute(absolute_g_kg),
        theta,
        p,
    ))
}

/// In-situ density \[kg m-3\] from absolute salinity and Conservative Temperature (TEOS-10 75-term gsw rho).
///
/// ```
/// // TEOS-10 help page gsw_rho (v3.05): rho(34.7118, 28.8099, 10) = 1021.839935738108.
/// let rho = acidscape_gridio::seawater::density_from_conservative(34.7118, 28.8099, 10.0).unwrap();
/// assert!((rho - 1021.839935738108).abs() < 1e-9);
/// ```
pub fn density_from_conservative(
    absolute_g_kg: f64,
    ct: f64,
    p: f64,
) -> Result<f64, SeawaterError> {
    gsw::volume::rho(absolute_g_kg, ct, p).map_err(gsw_error(absolute_g_kg))
}

/// In-situ density \[kg m-3\] from practical salinity, in-situ temperature \[°C\] and sea pressure \[dbar\].
pub fn in_situ_density(practical: f64, t_in_situ: f64, p: f64) -> Result<f64, SeawaterError> {
    in_situ_state(TemperatureKind::InSitu, t_in_situ, practical, p).map(|s| s.density_kg_m3)
}

/// What a temperature variable holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TemperatureKind {
    InSitu,
    /// Potential temperature referenced to the sea surface (CMIP `thetao`).
    Potential,
    /// TEOS-10 Conservative Temperature (CMIP `bigthetao`).
    Conservative,
}

/// In-situ temperature \[°C\] from a temperature of any kind, practical salinity and sea pressure.
#[inline]
pub fn in_situ_temperature(
    kind: TemperatureKind,
    temperature: f64,
    practical: f64,
    p: f64,
) -> Result<f64, SeawaterError> {
    match kind {
        TemperatureKind::InSitu => Ok(temperature),
        TemperatureKind::Potential => Ok(in_situ_from_potential(practical, temperature, p)),
        TemperatureKind::Conservative => {
            in_situ_from_conservative(absolute_from_practical(practical), temperature, p)
        }
    }
}

/// In-situ temperature and in-situ density of one cell, computed together.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InSituState {
    /// In-situ temperature \[ITS-90 °C\].
    pub temperature_c: f64,
    /// In-situ density \[kg m-3\] (TEOS-10 75-term, SA taken as SR).
    pub density_kg_m3: f64,
}

/// In-situ temperature and density from a temperature of any kind, practical salinity and
/// sea pressure. Same results as [`in_situ_temperature`] then [`in_situ_density`], but the
/// density comes from the given potential or Conservative Temperature directly, which
/// saves one potential-temperature evaluation per cell and a round trip through t.
pub fn in_situ_state(
    kind: TemperatureKind,
    temperature: f64,
    practical: f64,
    p: f64,
) -> Result<InSituState, SeawaterError> {
    in_situ_state_knowing(kind, temperature, practical, p, None)
}

/// [`in_situ_state`], given the in-situ temperature of a potential temperature when it is
/// already known (from [`in_situ_from_potential_lanes`]); ignored for other kinds.
pub fn in_situ_state_knowing(
    kind: TemperatureKind,
    temperature: f64,
    practical: f64,
    p: f64,
    in_situ: Option<f64>,
) -> Result<InSituState, SeawaterError> {
    let (temperature_c, ct) =
        in_situ_and_conservative(kind, temperature, practical, p, in_situ, None)?;
    Ok(InSituState {
        temperature_c,
        density_kg_m3: density_from_conservative(absolute_from_practical(practical), ct, p)?,
    })
}

/// In-situ and Conservative Temperature \[°C\] of one cell (what its density needs), from a
/// temperature of any kind; `in_situ` as for [`in_situ_state_knowing`], and likewise
/// `conservative`, a potential temperature's Conservative Temperature when already known.
pub fn in_situ_and_conservative(
    kind: TemperatureKind,
    temperature: f64,
    practical: f64,
    p: f64,
    in_situ: Option<f64>,
    conservative: Option<f64>,
) -> Result<(f64, f64), SeawaterError> {
    if practical < 0.0 {
        return Err(SeawaterError::NegativeSalinity {
            salinity: practical,
        });
    }
    let sa = absolute_from_practical(practical);
    Ok(match kind {
        TemperatureKind::InSitu => {
            let theta = potential_from_in_situ(practical, temperature, p);
            (temperature, conservative_from_potential(sa, theta)?)
        }
        TemperatureKind::Potential => (
            in_situ.unwrap_or_else(|| in_situ_from_potential(practical, temperature, p)),
            match conservative {
                Some(ct) => ct,
                None => conservative_from_potential(sa, temperature)?,
            },
        ),
        TemperatureKind::Conservative => {
            let theta = potential_from_conservative(sa, temperature)?;
            (in_situ_from_potential(practical, theta, p), temperature)
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lapse_rate_is_positive_in_warm_water_and_small_near_freezing() {
        assert!(adiabatic_lapse_rate_ipts68(35.0, 20.0, 0.0) > 1e-4);
        assert!(adiabatic_lapse_rate_ipts68(35.0, -1.5, 0.0).abs() < 3e-5);
    }

    #[test]
    fn cells_side_by_side_get_the_scalar_in_situ_temperature_bit_for_bit() {
        // Synthetic cells over the oceanic range, with a non-finite one in the lane group.
        for (k, p0) in [0.0, 800.0, 3000.0, 6000.0, 11000.0]
            .into_iter()
            .enumerate()
        {
            let s: [f64; 8] = std::array::from_fn(|i| 30.0 + i as f64);
            let theta: [f64; 8] = std::array::from_fn(|i| -1.9 + 5.0 * i as f64 + k as f64);
            let mut p: [f64; 8] = std::array::from_fn(|i| p0 + 37.0 * i as f64);
            p[5] = f64::NAN;
            let lanes = in_situ_from_potential_lanes(&s, &theta, &p);
            for i in 0..8 {
                let scalar = in_situ_from_potential(s[i], theta[i], p[i]);
                assert_eq!(
                    lanes[i].to_bits(),
                    scalar.to_bits(),
                    "cell {i} at {p0} dbar"
                );
            }
        }
    }

    #[test]
    fn negative_depth_above_five_metres_is_an_error() {
        assert!(sea_pressure_from_depth(-10.0, 0.0).is_err());
        assert!(sea_pressure_from_depth(0.0, 0.0).unwrap().abs() < 1e-9);
    }
}
