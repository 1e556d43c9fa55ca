//! Saturation horizon of one water column: the depth at which a saturation state Ω crosses a
//! threshold (1 for the aragonite or calcite saturation horizon; 1.5 or 3 are used in reports on
//! shell-forming organisms and aquaculture, common practice).
//!
//! # Method
//! The horizon is the shallowest depth, going down from the sea surface, at which Ω falls below
//! the threshold. It is located between the two level centres that bracket the crossing by
//! interpolating **linearly in depth on ln Ω**:
//!
//! `z = z_k + (z_{k+1} − z_k) · (ln Ω_t − ln Ω_k) / (ln Ω_{k+1} − ln Ω_k)`.
//!
//! Why ln Ω: Ω = \[Ca²⁺\]\[CO₃²⁻\] / K*sp, and the pressure dependence of ln K*sp is linear in
//! pressure plus a small quadratic term (Millero 1995), pressure is nearly linear in depth, and
//! the carbonate ion declines smoothly below the surface, so Ω varies roughly exponentially with
//! depth and ln Ω roughly linearly. Interpolating on ln Ω also makes the result independent of
//! scale: the horizon of Ω for threshold t is the horizon of Ω/t for threshold 1. Where the two
//! centres are close the choice barely matters; across the thick cells of deep z-levels it
//! avoids the bias of a straight line through an exponential profile.
//!
//! # Cases (see [`HorizonStatus`])
//! - Undersaturated at the top wet level: depth **0 m** (the sea surface), not the top cell's
//!   centre: the water is corrosive from the surface down to at least that centre, and nothing
//!   is known above it. No extrapolation upwards, since the mixed layer above the first centre
//!   is usually near-uniform and a gradient from below would not describe it.
//! - Saturated at every centre: if the straight line (on ln Ω) through the two deepest centres
//!   falls to the threshold between the deepest centre and the sea floor, that depth is reported
//!   as a crossing in the bottom cell. This is an extrapolation over at most half a cell (less
//!   with partial bottom cells), flagged so that users may discard it; otherwise the horizon is
//!   deeper than the sea floor and the depth is missing.
//! - Ω missing at a wet level (no solution or a missing input): only the levels above the first
//!   missing one are used. A crossing found there is trustworthy (it lies between two known
//!   values); if none is found the depth is unknown and missing.
//! - Several crossings (a corrosive layer over saturated water): the shallowest is reported.
//!
//! A level counts as undersaturated when Ω < threshold; Ω equal to the threshold is saturated.
//! Ω must be positive; zero, negative and non-finite values are treated as missing.

mod status;
#[cfg(test)]
mod tests;

pub use status::HorizonStatus;

use thiserror::Error;

/// A column whose inputs cannot describe a water column.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum HorizonError {
    /// Depths and Ω have different lengths.
    #[error("a column has {depths} level depths but {omegas} omega values")]
    LengthMismatch {
        /// Number of depths.
        depths: usize,
        /// Number of Ω values.
        omegas: usize,
    },
    /// A level depth is not finite, or depths do not increase strictly downwards.
    #[error(
        "level depths must be finite and increase strictly downwards (level {level}: {depth_m} m)"
    )]
    DepthOrder {
        /// Index of the wet level.
        level: usize,
        /// Its depth \[m\].
        depth_m: f64,
    },
    /// The sea-floor depth is not a finite number.
    #[error("the sea-floor depth must be a finite number of metres, got {0}")]
    SeaFloor(f64),
    /// The threshold is not a positive finite number.
    #[error("a saturation threshold must be a positive finite number, got {0}")]
    Threshold(f64),
}

/// The wet levels of one column at one time step, ordered from the surface down.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WetColumn<'a> {
    depth_m: &'a [f64],
    sea_floor_m: f64,
}

impl<'a> WetColumn<'a> {
    /// Checks and wraps a column.
    ///
    /// - `depth_m`: depth of each wet level's centre \[m\], positive down, measured below the sea
    ///   surface, strictly increasing; at the actual depths of this time step (terrain-following
    ///   columns: from `formula_terms`, minus the free-surface height so that 0 is the surface).
    ///   Empty for a land column.
    /// - `sea_floor_m`: depth of the sea floor \[m\], positive down (`deptho`, or the lower
    ///   interface of the deepest wet cell; see [`sea_floor_depth`]). A floor above the deepest
    ///   centre (inconsistent inputs) is taken as that centre: no bottom-cell extrapolation.
    pub fn new(depth_m: &'a [f64], sea_floor_m: f64) -> Result<Self, HorizonError> {
        if !sea_floor_m.is_finite() {
            return Err(HorizonError::SeaFloor(sea_floor_m));
        }
        let finite = depth_m.iter().all(|z| z.is_finite());
        if !finite || !depth_m.windows(2).all(|pair| pair[1] > pair[0]) {
            let level = (0..depth_m.len())
                .find(|&k| !depth_m[k].is_finite() || (k > 0 && depth_m[k] <= depth_m[k - 1]))
                .unwrap_or(0);
            return Err(HorizonError::DepthOrder {
                level,
                depth_m: depth_m[level],
            });
        }
        let deepest = depth_m.last().copied().unwrap_or(sea_floor_m);
        Ok(WetColumn {
            depth_m,
            sea_floor_m: sea_floor_m.max(deepest),
        })
    }

    /// Depths of the wet level centres \[m\].
    pub fn depth_m(&self) -> &'a [f64] {
        self.depth_m
    }

    /// The sea-floor depth used \[m\] (never above the deepest centre).
    pub fn sea_floor_m(&self) -> f64 {
        self.sea_floor_m
    }

    /// The saturation horizon for `threshold` \[1\], from Ω per wet level \[1\] (NaN where
    /// missing), in the same order as the depths.
    ///
    /// ```
    /// use acidscape_analysis::horizons::{HorizonStatus, WetColumn};
    /// // Ω = 4 exp(−z / 800 m): the analytic horizon is 800 ln 4 ≈ 1109.04 m, which
    /// // interpolation on ln Ω reproduces between the 1000 and 1200 m centres.
    /// let depths: [f64; 6] = [10.0, 200.0, 500.0, 1000.0, 1200.0, 2000.0];
    /// let omega: Vec<f64> = depths.iter().map(|z| 4.0 * (-z / 800.0).exp()).collect();
    /// let h = WetColumn::new(&depths, 2100.0)?.horizon(&omega, 1.0)?;
    /// assert_eq!(h.status, HorizonStatus::SingleCrossing);
    /// assert!((h.depth_m.unwrap() - 800.0 * 4f64.ln()).abs() < 1e-9);
    /// # Ok::<(), acidscape_analysis::horizons::HorizonError>(())
    /// ```
    pub fn horizon(&self, omega: &[f64], threshold: f64) -> Result<Horizon, HorizonError> {
        if omega.len() != self.depth_m.len() {
            return Err(HorizonError::LengthMismatch {
                depths: self.depth_m.len(),
                omegas: omega.len(),
            });
        }
        if !(threshold.is_finite() && threshold > 0.0) {
            return Err(HorizonError::Threshold(threshold));
        }
        Ok(self.find(omega, threshold))
    }

    /// One pass down the column in two tight scans: through the saturated levels to the first
    /// level that is not (the crossing, or a missing Ω), then through the undersaturated levels
    /// below it to the first that is not (re-saturation, or a missing Ω).
    fn find(&self, omega: &[f64], threshold: f64) -> Horizon {
        let valid = |w: f64| w > 0.0 && w < f64::INFINITY;
        let Some(&top) = omega.first() else {
            return Horizon::without_depth(HorizonStatus::Land);
        };
        if !valid(top) {
            return Horizon::without_depth(HorizonStatus::OmegaMissing);
        }
        // After an undersaturated level at `from`: whether a saturated level follows before
        // any missing Ω (re-saturation), and whether the scan met a missing Ω.
        let below_crossing = |from: usize| {
            let rest = &omega[from + 1..];
            match rest.iter().position(|&w| !(w < threshold && w > 0.0)) {
                Some(i) if valid(rest[i]) => (true, false),
                Some(_) => (false, true),
                None => (false, false),
            }
        };
        if top < threshold {
            let status = match below_crossing(0) {
                (true, _) => HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow,
                _ => HorizonStatus::UndersaturatedAtSurface,
            };
            return Horizon {
                status,
                depth_m: Some(0.0),
                sensitivity: None,
            };
        }
        let saturated = |w: f64| w >= threshold && w < f64::INFINITY;
        let Some(i) = omega[1..].iter().position(|&w| !saturated(w)) else {
            return self.bottom_cell(omega, threshold);
        };
        let lower = i + 1;
        if !valid(omega[lower]) {
            return Horizon::without_depth(HorizonStatus::OmegaMissing);
        }
        let status = match below_crossing(lower) {
            (true, _) => HorizonStatus::SeveralCrossings,
            (false, true) => HorizonStatus::CrossingAboveMissingOmega,
            (false, false) => HorizonStatus::SingleCrossing,
        };
        self.crossing(status, omega, i, threshold)
    }

    /// Extrapolation into the bottom cell from the two deepest centres, when Ω decreases with
    /// depth there and reaches the threshold above the floor.
    fn bottom_cell(&self, omega: &[f64], threshold: f64) -> Horizon {
        let n = omega.len();
        if n >= 2 && omega[n - 1] < omega[n - 2] {
            let found = self.crossing(HorizonStatus::CrossingInBottomCell, omega, n - 2, threshold);
            if let Some(z) = found.depth_m {
                if z >= self.depth_m[n - 1] && z <= self.sea_floor_m {
                    return found;
                }
            }
        }
        Horizon::without_depth(HorizonStatus::DeeperThanSeaFloor)
    }

    /// Crossing on the line through levels `k` and `k + 1` (linear in depth on ln Ω), with the
    /// derivatives of its depth with respect to both Ω values.
    fn crossing(&self, status: HorizonStatus, omega: &[f64], k: usize, threshold: f64) -> Horizon {
        let (z_a, z_b) = (self.depth_m[k], self.depth_m[k + 1]);
        let (w_a, w_b) = (omega[k], omega[k + 1]);
        let (l_a, l_b) = (w_a.ln(), w_b.ln());
        let slope = l_b - l_a;
        let fraction = (threshold.ln() - l_a) / slope;
        let span = z_b - z_a;
        let depth = z_a + span * fraction;
        // Keep rounding from pushing the depth past the centres it lies between (or, when
        // extrapolating into the bottom cell, above the deepest centre).
        let depth = if status == HorizonStatus::CrossingInBottomCell {
            depth.max(z_b)
        } else {
            depth.clamp(z_a, z_b)
        };
        Horizon {
            status,
            depth_m: Some(depth),
            sensitivity: Some(HorizonSensitivity {
                upper_level: k,
                lower_level: k + 1,
                d_depth_d_omega_upper_m: span * (fraction - 1.0) / (slope * w_a),
                d_depth_d_omega_lower_m: -span * fraction / (slope * w_b),
            }),
        }
    }
}

/// The saturation horizon of one column for one threshold.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Horizon {
    /// How the horizon was found.
    pub status: HorizonStatus,
    /// Depth of the horizon \[m\], positive down below the sea surface; `None` where the status
    /// has no depth ([`HorizonStatus::has_depth`]).
    pub depth_m: Option<f64>,
    /// Sensitivity of the depth to the Ω values it was computed from; `None` when the depth does
    /// not depend on them locally (0 m at the surface) or is missing.
    pub sensitivity: Option<HorizonSensitivity>,
}

impl Horizon {
    fn without_depth(status: HorizonStatus) -> Horizon {
        Horizon {
            status,
            depth_m: None,
            sensitivity: None,
        }
    }
}

/// Partial derivatives of a horizon depth with respect to the Ω of the two levels it was
/// interpolated (or extrapolated) from, for propagating Ω uncertainties to horizon depths.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HorizonSensitivity {
    /// Index (among the column's wet levels, from the top) of the upper level.
    pub upper_level: usize,
    /// Index of the lower level (`upper_level + 1`).
    pub lower_level: usize,
    /// ∂depth/∂Ω at the upper level \[m\] (per unit Ω).
    pub d_depth_d_omega_upper_m: f64,
    /// ∂depth/∂Ω at the lower level \[m\] (per unit Ω).
    pub d_depth_d_omega_lower_m: f64,
}

impl HorizonSensitivity {
    /// Standard uncertainty of the depth \[m\] from standard uncertainties of Ω at the upper and
    /// lower levels \[1\] and their correlation coefficient \[-1, 1\], to first order (JCGM
    /// 100:2008, Guide to the expression of uncertainty in measurement, eq. 13).
    pub fn depth_uncertainty_m(&self, u_upper: f64, u_lower: f64, correlation: f64) -> f64 {
        let a = self.d_depth_d_omega_upper_m * u_upper;
        let b = self.d_depth_d_omega_lower_m * u_lower;
        (a * a + b * b + 2.0 * correlation * a * b).max(0.0).sqrt()
    }
}

/// The sea-floor depth \[m\] to use for a column: `deptho` when the run gives a finite, positive
/// value, otherwise the lower interface of the deepest wet cell \[m\], positive down.
pub fn sea_floor_depth(deptho_m: Option<f64>, deepest_lower_interface_m: f64) -> f64 {
    match deptho_m {
        Some(d) if d.is_finite() && d > 0.0 => d,
        _ => deepest_lower_interface_m,
    }
}
