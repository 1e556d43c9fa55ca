use super::*;
use proptest::prelude::*;

const NAN: f64 = f64::NAN;

fn horizon(depths: &[f64], omega: &[f64], floor: f64, threshold: f64) -> Horizon {
    WetColumn::new(depths, floor)
        .unwrap()
        .horizon(omega, threshold)
        .unwrap()
}

/// Analytic profile Ω(z) = Ω0 exp(−z / H): the threshold t is crossed at z* = H ln(Ω0 / t).
/// Linear in depth on ln Ω, so the interpolation must reproduce z* at any level spacing.
fn exponential(omega0: f64, scale_m: f64, depths: &[f64]) -> Vec<f64> {
    depths
        .iter()
        .map(|z| omega0 * (-z / scale_m).exp())
        .collect()
}

/// Level centres of a typical z-level grid thickening with depth (synthetic).
fn z_levels() -> Vec<f64> {
    vec![
        5.0, 15.0, 27.0, 45.0, 70.0, 105.0, 150.0, 210.0, 290.0, 390.0, 520.0, 680.0, 880.0,
        1120.0, 1400.0, 1720.0, 2080.0, 2500.0, 3000.0, 3600.0,
    ]
}

#[test]
fn exponential_profile_on_z_levels_gives_the_analytic_depth() {
    // Analytic: z* = H ln(Ω0 / t) = 800 ln 4 ≈ 1109.04 m (between the 880 and 1120 m centres).
    let z = z_levels();
    let h = horizon(&z, &exponential(4.0, 800.0, &z), 3800.0, 1.0);
    assert_eq!(h.status, HorizonStatus::SingleCrossing);
    let expected = 800.0 * 4f64.ln();
    assert!((h.depth_m.unwrap() - expected).abs() < 1e-9, "{h:?}");
    let s = h.sensitivity.unwrap();
    assert_eq!((s.upper_level, s.lower_level), (12, 13));
    // Extra thresholds (1.5 and 3, common practice in reports on shell-forming organisms).
    for t in [1.5, 3.0] {
        let h = horizon(&z, &exponential(4.0, 800.0, &z), 3800.0, t);
        assert!((h.depth_m.unwrap() - 800.0 * (4.0 / t).ln()).abs() < 1e-9);
    }
}

#[test]
fn exponential_profile_on_a_terrain_following_column() {
    // CF Conventions Appendix D, ocean_sigma_coordinate: z = η + σ (depth + η). Depth below the
    // sea surface of a centre is η − z = −σ (depth + η). Ten equal sigma layers, depth 320 m,
    // η = 0.4 m; analytic horizon z* = 120 ln 6 ≈ 215.01 m.
    let (floor, eta) = (320.0, 0.4);
    let depths: Vec<f64> = (0..10)
        .map(|k| {
            let sigma = -(k as f64 + 0.5) / 10.0;
            let z = eta + sigma * (floor + eta);
            eta - z
        })
        .collect();
    let h = horizon(&depths, &exponential(6.0, 120.0, &depths), floor + eta, 1.0);
    assert_eq!(h.status, HorizonStatus::SingleCrossing);
    assert!((h.depth_m.unwrap() - 120.0 * 6f64.ln()).abs() < 1e-9);
}

#[test]
fn linear_profile_is_bracketed_and_close() {
    // Analytic linear profile Ω(z) = 2 − z / 1000 (b = 0.001 m-1): crossing at 1000 m. The
    // line on ln Ω departs from the true profile by at most about Δz² b / (8 Ω) = 0.0125 m over
    // a bracket Δz = 10 m (the curvature of ln Ω is b² / Ω², its slope b / Ω).
    let depths: Vec<f64> = (0..200).map(|k| 5.0 + 10.0 * k as f64).collect();
    let omega: Vec<f64> = depths.iter().map(|z| 2.0 - z / 1000.0).collect();
    let h = horizon(&depths, &omega, 2000.0, 1.0);
    assert_eq!(h.status, HorizonStatus::SingleCrossing);
    let z = h.depth_m.unwrap();
    assert!((995.0..=1005.0).contains(&z));
    assert!((z - 1000.0).abs() <= 0.0125 * 1.01, "{z}");
}

#[test]
fn hand_evaluated_crossing() {
    // Centres 100 and 200 m with Ω 1.2 and 0.8: z = 100 + 100 ln(1/1.2) / ln(0.8/1.2)
    // = 100 + 100 × 0.182322 / 0.405465 = 144.966 m (hand evaluation of the formula).
    let h = horizon(&[100.0, 200.0], &[1.2, 0.8], 250.0, 1.0);
    assert!((h.depth_m.unwrap() - 144.966).abs() < 1e-3);
}

#[test]
fn several_crossings_report_the_shallowest() {
    // A corrosive layer at 100–150 m over saturated water below 200 m (upwelling shelf shape).
    let depths = [10.0, 50.0, 100.0, 150.0, 200.0, 300.0];
    let omega = [2.0, 1.4, 0.9, 0.95, 1.1, 1.2];
    let h = horizon(&depths, &omega, 350.0, 1.0);
    assert_eq!(h.status, HorizonStatus::SeveralCrossings);
    let z = h.depth_m.unwrap();
    assert!(z > 50.0 && z < 100.0);
    assert_eq!(h.sensitivity.unwrap().upper_level, 1);
}

#[test]
fn undersaturated_at_the_surface() {
    let depths = [5.0, 15.0, 30.0];
    let h = horizon(&depths, &[0.9, 0.8, 0.7], 40.0, 1.0);
    assert_eq!(h.status, HorizonStatus::UndersaturatedAtSurface);
    assert_eq!(h.depth_m, Some(0.0));
    assert_eq!(h.sensitivity, None);
    let h = horizon(&depths, &[0.9, 1.1, 1.2], 40.0, 1.0);
    assert_eq!(
        h.status,
        HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow
    );
    assert_eq!(h.depth_m, Some(0.0));
}

#[test]
fn saturated_down_to_the_floor() {
    // Ω increasing with depth at the bottom: nothing to extrapolate.
    let h = horizon(&[5.0, 15.0, 30.0], &[3.0, 2.5, 2.6], 40.0, 1.0);
    assert_eq!(h.status, HorizonStatus::DeeperThanSeaFloor);
    assert_eq!((h.depth_m, h.sensitivity), (None, None));
    // Decreasing, but the extrapolated crossing lies below the floor.
    let h = horizon(&[5.0, 15.0, 30.0], &[3.0, 2.5, 2.0], 40.0, 1.0);
    assert_eq!(h.status, HorizonStatus::DeeperThanSeaFloor);
    // A single wet level gives no gradient.
    let h = horizon(&[5.0], &[1.5], 10.0, 1.0);
    assert_eq!(h.status, HorizonStatus::DeeperThanSeaFloor);
}

#[test]
fn crossing_in_the_bottom_cell_is_extrapolated_from_the_two_deepest_centres() {
    // Exponential profile, analytic z* = 500 ln 2.5 ≈ 458.15 m; deepest centre 450 m, floor
    // 480 m (a partial bottom cell): the extrapolation on ln Ω is exact for this profile.
    let depths = [50.0, 150.0, 250.0, 350.0, 450.0];
    let omega = exponential(2.5, 500.0, &depths);
    let h = horizon(&depths, &omega, 480.0, 1.0);
    assert_eq!(h.status, HorizonStatus::CrossingInBottomCell);
    assert!((h.depth_m.unwrap() - 500.0 * 2.5f64.ln()).abs() < 1e-9);
    let s = h.sensitivity.unwrap();
    assert_eq!((s.upper_level, s.lower_level), (3, 4));
    // The same column with the floor at 455 m: the crossing would be below the floor.
    let h = horizon(&depths, &omega, 455.0, 1.0);
    assert_eq!(h.status, HorizonStatus::DeeperThanSeaFloor);
    // A floor above the deepest centre (inconsistent deptho) allows no extrapolation.
    let h = horizon(&depths, &omega, 400.0, 1.0);
    assert_eq!(h.status, HorizonStatus::DeeperThanSeaFloor);
}

#[test]
fn missing_omega_limits_what_is_trusted() {
    let depths = [10.0, 50.0, 100.0, 150.0, 200.0];
    // Crossing between 50 and 100 m, a gap at 150 m: the crossing stands.
    let h = horizon(&depths, &[2.0, 1.5, 0.9, NAN, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::CrossingAboveMissingOmega);
    let expected = horizon(&depths[..3], &[2.0, 1.5, 0.9], 120.0, 1.0);
    assert_eq!(h.depth_m, expected.depth_m);
    // Gap above any crossing: the depth is unknown even though a deeper level is undersaturated.
    let h = horizon(&depths, &[2.0, NAN, 1.5, 0.9, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::OmegaMissing);
    assert_eq!(h.depth_m, None);
    // Missing at the top wet level.
    let h = horizon(&depths, &[NAN, 1.5, 1.2, 0.9, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::OmegaMissing);
    // Several crossings seen above the gap remain several crossings.
    let h = horizon(&depths, &[2.0, 0.9, 1.2, NAN, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::SeveralCrossings);
    // Non-positive Ω is not a saturation state: treated as missing.
    let h = horizon(&depths, &[2.0, 0.0, 1.2, 0.9, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::OmegaMissing);
    // Surface undersaturated with a gap below: depth 0 m is still known.
    let h = horizon(&depths, &[0.9, NAN, 1.2, 0.9, 0.8], 250.0, 1.0);
    assert_eq!(h.status, HorizonStatus::UndersaturatedAtSurface);
    assert_eq!(h.depth_m, Some(0.0));
}

#[test]
fn land_and_threshold_at_a_centre() {
    let h = horizon(&[], &[], 0.0, 1.0);
    assert_eq!(h.status, HorizonStatus::Land);
    assert_eq!(h.depth_m, None);
    // Ω equal to the threshold counts as saturated: the crossing starts at that centre.
    let h = horizon(&[10.0, 20.0, 30.0], &[1.2, 1.0, 0.8], 35.0, 1.0);
    assert_eq!(h.depth_m, Some(20.0));
}

#[test]
fn bad_inputs_are_errors() {
    assert_eq!(
        WetColumn::new(&[10.0, 5.0], 20.0),
        Err(HorizonError::DepthOrder {
            level: 1,
            depth_m: 5.0
        })
    );
    assert!(WetColumn::new(&[10.0, NAN], 20.0).is_err());
    assert!(WetColumn::new(&[10.0], NAN).is_err());
    let column = WetColumn::new(&[10.0, 20.0], 25.0).unwrap();
    assert!(matches!(
        column.horizon(&[1.0], 1.0),
        Err(HorizonError::LengthMismatch { .. })
    ));
    for bad in [0.0, -1.0, NAN, f64::INFINITY] {
        assert!(matches!(
            column.horizon(&[1.0, 2.0], bad),
            Err(HorizonError::Threshold(_))
        ));
    }
}

#[test]
fn sensitivities_match_finite_differences() {
    // Central differences of the depth itself (an independent evaluation of the derivative).
    let depths = [100.0, 250.0];
    let base = [1.3, 0.7];
    let h = horizon(&depths, &base, 300.0, 1.0);
    let s = h.sensitivity.unwrap();
    let step = 1e-6;
    for (level, analytic) in [
        (0, s.d_depth_d_omega_upper_m),
        (1, s.d_depth_d_omega_lower_m),
    ] {
        let mut up = base;
        let mut down = base;
        up[level] += step;
        down[level] -= step;
        let numeric = (horizon(&depths, &up, 300.0, 1.0).depth_m.unwrap()
            - horizon(&depths, &down, 300.0, 1.0).depth_m.unwrap())
            / (2.0 * step);
        assert!(
            (numeric - analytic).abs() < 1e-5 * analytic.abs(),
            "{level}"
        );
        assert!(analytic > 0.0, "more Ω anywhere pushes the horizon deeper");
    }
}

#[test]
fn bottom_cell_sensitivity_matches_finite_differences() {
    let depths = [350.0, 450.0];
    let base = exponential(2.5, 500.0, &depths);
    let floor = 480.0;
    let h = horizon(&depths, &base, floor, 1.0);
    let s = h.sensitivity.unwrap();
    let step = 1e-7;
    for (level, analytic) in [
        (0, s.d_depth_d_omega_upper_m),
        (1, s.d_depth_d_omega_lower_m),
    ] {
        let mut up = base.clone();
        let mut down = base.clone();
        up[level] += step;
        down[level] -= step;
        let numeric = (horizon(&depths, &up, floor, 1.0).depth_m.unwrap()
            - horizon(&depths, &down, floor, 1.0).depth_m.unwrap())
            / (2.0 * step);
        assert!((numeric - analytic).abs() < 1e-4 * analytic.abs());
    }
}

#[test]
fn uncertainty_propagation_by_hand() {
    // GUM (JCGM 100:2008) eq. 13 with derivatives 3 and 4 m, u = 0.1 each: uncorrelated
    // sqrt(0.09 + 0.16) = 0.5 m; fully correlated 0.3 + 0.4 = 0.7 m.
    let s = HorizonSensitivity {
        upper_level: 0,
        lower_level: 1,
        d_depth_d_omega_upper_m: 3.0,
        d_depth_d_omega_lower_m: 4.0,
    };
    assert!((s.depth_uncertainty_m(0.1, 0.1, 0.0) - 0.5).abs() < 1e-12);
    assert!((s.depth_uncertainty_m(0.1, 0.1, 1.0) - 0.7).abs() < 1e-12);
}

#[test]
fn sea_floor_prefers_deptho() {
    assert_eq!(sea_floor_depth(Some(1234.5), 1300.0), 1234.5);
    assert_eq!(sea_floor_depth(None, 1300.0), 1300.0);
    assert_eq!(sea_floor_depth(Some(NAN), 1300.0), 1300.0);
    assert_eq!(sea_floor_depth(Some(0.0), 1300.0), 1300.0);
}

/// Random wet columns: increasing depths, Ω in (0.2, 4) with a few missing values.
fn columns() -> impl Strategy<Value = (Vec<f64>, Vec<f64>, f64)> {
    (1usize..25).prop_flat_map(|n| {
        (
            prop::collection::vec(1.0f64..300.0, n),
            prop::collection::vec(prop_oneof![9 => 0.2f64..4.0, 1 => Just(NAN)], n),
            0.0f64..400.0,
        )
            .prop_map(|(steps, omega, extra)| {
                let mut z = 0.0;
                let depths: Vec<f64> = steps
                    .iter()
                    .map(|s| {
                        z += s;
                        z
                    })
                    .collect();
                let floor = z + extra;
                (depths, omega, floor)
            })
    })
}

/// The statuses straight from their definitions, level by level (several passes; an
/// independent statement of the rules to check the one-pass search against).
fn reference_status(omega: &[f64], t: f64) -> (HorizonStatus, Option<usize>) {
    let n = omega.len();
    if n == 0 {
        return (HorizonStatus::Land, None);
    }
    let first_missing = omega.iter().position(|&w| !(w.is_finite() && w > 0.0));
    let trusted = first_missing.unwrap_or(n);
    if trusted == 0 {
        return (HorizonStatus::OmegaMissing, None);
    }
    let under = |k: usize| omega[k] < t;
    let saturated_from = |from: usize| (from..trusted).any(|k| !under(k));
    if under(0) {
        return if saturated_from(1) {
            (HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow, None)
        } else {
            (HorizonStatus::UndersaturatedAtSurface, None)
        };
    }
    if let Some(k) = (0..trusted - 1).find(|&k| under(k + 1)) {
        let status = if saturated_from(k + 2) {
            HorizonStatus::SeveralCrossings
        } else if first_missing.is_some() {
            HorizonStatus::CrossingAboveMissingOmega
        } else {
            HorizonStatus::SingleCrossing
        };
        return (status, Some(k));
    }
    if first_missing.is_some() {
        return (HorizonStatus::OmegaMissing, None);
    }
    (HorizonStatus::DeeperThanSeaFloor, None)
}

proptest! {
    #[test]
    fn one_pass_search_agrees_with_the_definitions((depths, omega, floor) in columns(), t in 0.5f64..3.0) {
        let h = horizon(&depths, &omega, floor, t);
        let (status, upper) = reference_status(&omega, t);
        if status == HorizonStatus::DeeperThanSeaFloor {
            // The reference leaves out the bottom-cell extrapolation.
            prop_assert!(matches!(
                h.status,
                HorizonStatus::DeeperThanSeaFloor | HorizonStatus::CrossingInBottomCell
            ));
        } else {
            prop_assert_eq!(h.status, status);
            prop_assert_eq!(h.sensitivity.map(|s| s.upper_level), upper);
        }
    }
    #[test]
    fn depth_lies_where_the_status_says((depths, omega, floor) in columns(), t in 0.5f64..3.0) {
        let h = horizon(&depths, &omega, floor, t);
        prop_assert_eq!(h.depth_m.is_some(), h.status.has_depth());
        let n = depths.len();
        match h.status {
            HorizonStatus::SingleCrossing
            | HorizonStatus::SeveralCrossings
            | HorizonStatus::CrossingAboveMissingOmega => {
                let s = h.sensitivity.unwrap();
                let z = h.depth_m.unwrap();
                prop_assert!(depths[s.upper_level] <= z && z <= depths[s.lower_level]);
                prop_assert!(omega[s.upper_level] >= t && omega[s.lower_level] < t);
                // Every level above the bracket is saturated and known.
                prop_assert!(omega[..=s.upper_level].iter().all(|&w| w >= t));
            }
            HorizonStatus::CrossingInBottomCell => {
                let z = h.depth_m.unwrap();
                prop_assert!(depths[n - 1] <= z && z <= floor);
                prop_assert!(omega.iter().all(|&w| w >= t));
            }
            HorizonStatus::UndersaturatedAtSurface
            | HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow => {
                prop_assert!(omega[0] < t);
                prop_assert_eq!(h.depth_m, Some(0.0));
            }
            HorizonStatus::DeeperThanSeaFloor => {
                prop_assert!(omega.iter().all(|&w| w >= t));
            }
            HorizonStatus::OmegaMissing => prop_assert!(omega.iter().any(|w| w.is_nan())),
            HorizonStatus::Land => prop_assert!(false, "columns here are wet"),
        }
    }

    #[test]
    fn scaling_omega_and_threshold_together_changes_nothing(
        (depths, omega, floor) in columns(),
        t in 0.5f64..3.0,
        c in 0.3f64..3.0,
    ) {
        // Interpolation on ln Ω: the horizon of c·Ω for threshold c·t is the horizon of Ω for t.
        let scaled: Vec<f64> = omega.iter().map(|w| w * c).collect();
        let a = horizon(&depths, &omega, floor, t);
        let b = horizon(&depths, &scaled, floor, t * c);
        // Rounding of w·c and t·c may move a value sitting within an ulp of the threshold.
        let near = omega.iter().any(|w| ((w - t) / t).abs() < 1e-12);
        if !near {
            prop_assert_eq!(a.status, b.status);
            match (a.depth_m, b.depth_m) {
                (Some(x), Some(y)) => prop_assert!((x - y).abs() <= 1e-9 * floor.max(1.0)),
                (x, y) => prop_assert_eq!(x, y),
            }
        }
    }

    #[test]
    fn more_omega_never_makes_the_horizon_shallower(
        (depths, omega, floor) in columns(),
        c in 1.0f64..2.0,
    ) {
        let raised: Vec<f64> = omega.iter().map(|w| w * c).collect();
        let a = horizon(&depths, &omega, floor, 1.0);
        let b = horizon(&depths, &raised, floor, 1.0);
        if let (Some(x), Some(y)) = (a.depth_m, b.depth_m) {
            prop_assert!(y >= x - 1e-9 * floor.max(1.0), "{} then {}", x, y);
        }
    }
}
