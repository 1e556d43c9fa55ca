//! Conservative Temperature of many cells at once: potential enthalpy over cp0 (IOC, SCOR and
//! IAPSO 2010; McDougall 2003) by the GSW toolbox's polynomial (McDougall and Barker 2011),
//! written so cells sit side by side in SIMD lanes.
//!
//! The coefficients and the order of every operation are those of the `gsw` crate's
//! `conversions::ct_from_pt` (BSD-3-Clause; transcribed from its source), with the hardware
//! square root (correctly rounded, as its software one), so each cell's value is bit for bit
//! that function's (tested); `gsw` stays the reference and the scalar path.

use crate::lanes::widest_lanes;
use crate::specific_volume::SALINITY_FACTOR;

/// Specific heat of seawater used by TEOS-10's potential enthalpy, cp0 \[J kg-1 K-1\] (IOC et al. 2010).
const CP0: f64 = 3_991.867_957_119_63;

/// Conservative Temperature \[°C\] from absolute salinity \[g kg-1\] and potential temperature
/// (0 dbar) \[°C\]: potential enthalpy / cp0 (IOC et al. 2010); NaN for NaN inputs.
/// Salinity must not be negative (the caller checks, as `gsw` refuses it).
#[inline(always)]
pub(crate) fn conservative_from_potential(sa: f64, pt: f64) -> f64 {
    let x2 = SALINITY_FACTOR * sa;
    let x = x2.sqrt();
    let y = pt * 0.025;
    let pot_enthalpy = 61.01362420681071e0
        + y * (168776.46138048015e0
            + y * (-2735.2785605119625e0
                + y * (2574.2164453821433e0
                    + y * (-1536.6644434977543e0
                        + y * (545.7340497931629e0
                            + (-50.91091728474331e0 - 18.30489878927802e0 * y) * y)))))
        + x2 * (268.5520265845071e0
            + y * (-12019.028203559312e0
                + y * (3734.858026725145e0
                    + y * (-2046.7671145057618e0
                        + y * (465.28655623826234e0
                            + (-0.6370820302376359e0 - 10.650848542359153e0 * y) * y))))
            + x * (937.2099110620707e0
                + y * (588.1802812170108e0
                    + y * (248.39476522971285e0
                        + (-3.871557904936333e0 - 2.6268019854268356e0 * y) * y))
                + x * (-1687.914374187449e0
                    + x * (246.9598888781377e0
                        + x * (123.59576582457964e0 - 48.5891069025409e0 * x))
                    + y * (936.3206544460336e0
                        + y * (-942.7827304544439e0
                            + y * (369.4389437509002e0
                                + (-33.83664947895248e0 - 9.987880382780322e0 * y) * y))))));
    pot_enthalpy / CP0
}

/// [`conservative_from_potential`] of N cells side by side.
pub(crate) fn conservative_from_potential_lanes<const N: usize>(
    sa: &[f64; N],
    pt: &[f64; N],
) -> [f64; N] {
    widest_lanes!(conservative_each, sa, pt)
}

#[inline(always)]
fn conservative_each<const N: usize>(sa: &[f64; N], pt: &[f64; N]) -> [f64; N] {
    let mut ct = [0.0; N];
    for i in 0..N {
        ct[i] = conservative_from_potential(sa[i], pt[i]);
    }
    ct
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_bits_of_the_gsw_crate_over_the_oceanic_range() {
        // gsw::conversions::ct_from_pt is the reference: same coefficients and operations,
        // so equal bits, scalar and side by side, at every combination sampled here.
        let mut cells = 0;
        for sa in [0.0, 0.7, 5.0, 20.0, 33.0, 35.16504, 36.7, 42.0] {
            let pt: [f64; 8] = [-2.5, -0.5, 0.0, 1.3, 10.0, 18.5, 33.0, 40.0];
            let lanes = conservative_from_potential_lanes(&[sa; 8], &pt);
            for i in 0..8 {
                let reference = gsw::conversions::ct_from_pt(sa, pt[i]).unwrap();
                assert_eq!(lanes[i].to_bits(), reference.to_bits(), "{sa} {}", pt[i]);
                let scalar = conservative_from_potential(sa, pt[i]);
                assert_eq!(scalar.to_bits(), reference.to_bits());
                cells += 1;
            }
        }
        assert_eq!(cells, 8 * 8);
    }

    #[test]
    fn missing_inputs_give_missing_temperature() {
        let ct =
            conservative_from_potential_lanes(&[35.0, f64::NAN, 35.0], &[10.0, 10.0, f64::NAN]);
        assert!(ct[0].is_finite() && ct[1].is_nan() && ct[2].is_nan());
    }
}
