//! In-situ density of many cells at once: the TEOS-10 75-term polynomial for specific volume
//! (Roquet et al. 2015, Ocean Modelling 90), written so cells sit side by side in SIMD lanes.
//!
//! The coefficients, scales and the order of every operation are those of the `gsw` crate's
//! `volume::specvol` (BSD-3-Clause; transcribed from its source), so each cell's value is bit
//! for bit that function's (tested); `gsw` stays the reference and the scalar path.

use crate::lanes::widest_lanes;

/// Salinity scale: 1/(40 × 35.16504/35) (Roquet et al. 2015).
pub(crate) const SALINITY_FACTOR: f64 = 1.0 / (40.0 * (35.16504 / 35.0));
/// Salinity offset: 24 g kg-1 × [`SALINITY_FACTOR`] (Roquet et al. 2015).
const SALINITY_OFFSET: f64 = 24.0 * SALINITY_FACTOR;
/// Conservative Temperature scale \[°C\] (Roquet et al. 2015).
const TEMPERATURE_SCALE: f64 = 40.0;
/// Pressure scale \[dbar\] (Roquet et al. 2015).
const PRESSURE_SCALE: f64 = 1e4;

const V000: f64 = 1.0769995862e-3;
const V001: f64 = -6.0799143809e-5;
const V002: f64 = 9.9856169219e-6;
const V003: f64 = -1.1309361437e-6;
const V004: f64 = 1.0531153080e-7;
const V005: f64 = -1.2647261286e-8;
const V006: f64 = 1.9613503930e-9;
const V010: f64 = -1.5649734675e-5;
const V011: f64 = 1.8505765429e-5;
const V012: f64 = -1.1736386731e-6;
const V013: f64 = -3.6527006553e-7;
const V014: f64 = 3.1454099902e-7;
const V020: f64 = 2.7762106484e-5;
const V021: f64 = -1.1716606853e-5;
const V022: f64 = 2.1305028740e-6;
const V023: f64 = 2.8695905159e-7;
const V030: f64 = -1.6521159259e-5;
const V031: f64 = 7.9279656173e-6;
const V032: f64 = -4.6132540037e-7;
const V040: f64 = 6.9111322702e-6;
const V041: f64 = -3.4102187482e-6;
const V042: f64 = -6.3352916514e-8;
const V050: f64 = -8.0539615540e-7;
const V051: f64 = 5.0736766814e-7;
const V060: f64 = 2.0543094268e-7;
const V100: f64 = -3.1038981976e-4;
const V101: f64 = 2.4262468747e-5;
const V102: f64 = -5.8484432984e-7;
const V103: f64 = 3.6310188515e-7;
const V104: f64 = -1.1147125423e-7;
const V110: f64 = 3.5009599764e-5;
const V111: f64 = -9.5677088156e-6;
const V112: f64 = -5.5699154557e-6;
const V113: f64 = -2.7295696237e-7;
const V120: f64 = -3.7435842344e-5;
const V121: f64 = -2.3678308361e-7;
const V122: f64 = 3.9137387080e-7;
const V130: f64 = 2.4141479483e-5;
const V131: f64 = -3.4558773655e-6;
const V132: f64 = 7.7618888092e-9;
const V140: f64 = -8.7595873154e-6;
const V141: f64 = 1.2956717783e-6;
const V150: f64 = -3.3052758900e-7;
const V200: f64 = 6.6928067038e-4;
const V201: f64 = -3.4792460974e-5;
const V202: f64 = -4.8122251597e-6;
const V203: f64 = 1.6746303780e-8;
const V210: f64 = -4.3592678561e-5;
const V211: f64 = 1.1100834765e-5;
const V212: f64 = 5.4620748834e-6;
const V220: f64 = 3.5907822760e-5;
const V221: f64 = 2.9283346295e-6;
const V222: f64 = -6.5731104067e-7;
const V230: f64 = -1.4353633048e-5;
const V231: f64 = 3.1655306078e-7;
const V240: f64 = 4.3703680598e-6;
const V300: f64 = -8.5047933937e-4;
const V301: f64 = 3.7470777305e-5;
const V302: f64 = 4.9263106998e-6;
const V310: f64 = 3.4532461828e-5;
const V311: f64 = -9.8447117844e-6;
const V312: f64 = -1.3544185627e-6;
const V320: f64 = -1.8698584187e-5;
const V321: f64 = -4.8826139200e-7;
const V330: f64 = 2.2863324556e-6;
const V400: f64 = 5.8086069943e-4;
const V401: f64 = -1.7322218612e-5;
const V402: f64 = -1.7811974727e-6;
const V410: f64 = -1.1959409788e-5;
const V411: f64 = 2.5909225260e-6;
const V420: f64 = 3.8595339244e-6;
const V500: f64 = -2.1092370507e-4;
const V501: f64 = 3.0927427253e-6;
const V510: f64 = 1.3864594581e-6;
const V600: f64 = 3.1932457305e-5;

/// Specific volume \[m3 kg-1\] from absolute salinity \[g kg-1\], Conservative Temperature \[°C\] and sea pressure \[dbar\] (Roquet et al. 2015, 75 terms).
#[inline(always)]
pub fn specific_volume(sa: f64, ct: f64, p: f64) -> f64 {
    let xs = (SALINITY_FACTOR * sa + SALINITY_OFFSET).sqrt();
    let ys = ct / TEMPERATURE_SCALE;
    let z = p / PRESSURE_SCALE;
    V000 + xs * (V100 + xs * (V200 + xs * (V300 + xs * (V400 + xs * (V500 + xs * V600)))))
        + ys * (V010
            + xs * (V110 + xs * (V210 + xs * (V310 + xs * (V410 + xs * V510))))
            + ys * (V020
                + xs * (V120 + xs * (V220 + xs * (V320 + xs * V420)))
                + ys * (V030
                    + xs * (V130 + xs * (V230 + xs * V330))
                    + ys * (V040 + xs * (V140 + xs * V240) + ys * (V050 + xs * V150 + ys * V060)))))
        + z * (V001
            + xs * (V101 + xs * (V201 + xs * (V301 + xs * (V401 + xs * V501))))
            + ys * (V011
                + xs * (V111 + xs * (V211 + xs * (V311 + xs * V411)))
                + ys * (V021
                    + xs * (V121 + xs * (V221 + xs * V321))
                    + ys * (V031 + xs * (V131 + xs * V231) + ys * (V041 + xs * V141 + ys * V051))))
            + z * (V002
                + xs * (V102 + xs * (V202 + xs * (V302 + xs * V402)))
                + ys * (V012
                    + xs * (V112 + xs * (V212 + xs * V312))
                    + ys * (V022 + xs * (V122 + xs * V222) + ys * (V032 + xs * V132 + ys * V042)))
                + z * (V003
                    + xs * (V103 + xs * V203)
                    + ys * (V013 + xs * V113 + ys * V023)
                    + z * (V004 + xs * V104 + ys * V014 + z * (V005 + z * V006)))))
}

/// In-situ density \[kg m-3\] of N cells, `1 / `[`specific_volume`] each; NaN where an input is
/// NaN or salinity is negative.
pub fn density_lanes<const N: usize>(sa: &[f64; N], ct: &[f64; N], p: &[f64; N]) -> [f64; N] {
    widest_lanes!(density_each, sa, ct, p)
}

#[inline(always)]
fn density_each<const N: usize>(sa: &[f64; N], ct: &[f64; N], p: &[f64; N]) -> [f64; N] {
    let mut rho = [0.0; N];
    for i in 0..N {
        rho[i] = 1.0 / specific_volume(sa[i], ct[i], p[i]);
    }
    rho
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_bits_of_the_gsw_crate_over_the_oceanic_range() {
        // gsw::volume::rho (TEOS-10 75-term, Roquet et al. 2015) is the reference: same
        // coefficients and operations, so equal bits, scalar and side by side, at every
        // combination of S 0–42 g/kg, CT −2–40 °C and p 0–11000 dbar sampled here.
        let mut cells = 0;
        for sa in [0.0, 5.0, 20.0, 33.0, 35.16504, 36.7, 42.0] {
            for ct in [-2.0, -0.5, 1.3, 4.0, 10.0, 18.5, 27.0, 33.0, 40.0] {
                let p: [f64; 8] = [0.0, 10.0, 250.0, 1000.0, 2000.0, 4500.0, 8000.0, 11000.0];
                let lanes = density_lanes(&[sa; 8], &[ct; 8], &p);
                for i in 0..8 {
                    let reference = gsw::volume::rho(sa, ct, p[i]).unwrap();
                    assert_eq!(
                        lanes[i].to_bits(),
                        reference.to_bits(),
                        "{sa} {ct} {}",
                        p[i]
                    );
                    assert_eq!(
                        (1.0 / specific_volume(sa, ct, p[i])).to_bits(),
                        reference.to_bits()
                    );
                    cells += 1;
                }
            }
        }
        assert_eq!(cells, 7 * 9 * 8);
    }

    #[test]
    fn missing_inputs_give_missing_density() {
        let rho = density_lanes(&[35.0, f64::NAN, 35.0], &[10.0, 10.0, f64::NAN], &[0.0; 3]);
        assert!(rho[0].is_finite() && rho[1].is_nan() && rho[2].is_nan());
    }
}
