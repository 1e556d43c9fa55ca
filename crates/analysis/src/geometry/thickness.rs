//! Cell thicknesses from vertical bounds or interfaces, clipped to the sea floor (partial bottom
//! cells), and cell volumes.

use super::GeometryError;

/// Direction of a vertical coordinate, as its CF `positive` attribute gives it (CF Conventions
/// 1.10, section 4.3).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Positive {
    /// Values are heights \[m\], increasing upwards (negative below the datum).
    Up,
    /// Values are depths \[m\], increasing downwards.
    Down,
}

impl Positive {
    fn depth(self, value: f64) -> f64 {
        match self {
            Positive::Up => -value,
            Positive::Down => value,
        }
    }
}

/// Thickness \[m\] of the part of a cell between depths `upper_m` and `lower_m` \[m, positive
/// down, either order\] that lies above the sea floor `sea_floor_m` \[m, positive down, same
/// reference\]: `max(0, min(lower, floor) − upper)`. A cell wholly below the floor has thickness 0;
/// a cell the floor cuts is a partial bottom cell. `f64::INFINITY` as the floor clips nothing.
///
/// ```
/// use acidscape_analysis::geometry::clipped_thickness;
/// assert_eq!(clipped_thickness(100.0, 120.0, 105.0), 5.0); // partial bottom cell
/// assert_eq!(clipped_thickness(100.0, 120.0, 90.0), 0.0); // below the sea floor
/// ```
pub fn clipped_thickness(upper_m: f64, lower_m: f64, sea_floor_m: f64) -> f64 {
    let (top, bottom) = if upper_m <= lower_m {
        (upper_m, lower_m)
    } else {
        (lower_m, upper_m)
    };
    (bottom.min(sea_floor_m) - top).max(0.0)
}

fn check_finite(level: usize, value: f64) -> Result<(), GeometryError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(GeometryError::Vertical { level, value })
    }
}

/// Thickness of each level \[m\] from its vertical bounds (two values per level, as a CF
/// `bounds` variable of the vertical coordinate gives them, in either order), clipped to the sea
/// floor `sea_floor_m` \[m, positive down; `f64::INFINITY` for none\]. `positive` is the
/// coordinate's direction; heights are turned into depths by changing sign.
pub fn thicknesses_from_bounds(
    bounds: &[[f64; 2]],
    positive: Positive,
    sea_floor_m: f64,
) -> Result<Vec<f64>, GeometryError> {
    bounds
        .iter()
        .enumerate()
        .map(|(level, pair)| {
            check_finite(level, pair[0])?;
            check_finite(level, pair[1])?;
            Ok(clipped_thickness(
                positive.depth(pair[0]),
                positive.depth(pair[1]),
                sea_floor_m,
            ))
        })
        .collect()
}

/// Thickness of each level \[m\] from the `levels + 1` interfaces between levels (e.g. the
/// w-level heights of a terrain-following column at this time step, from the parametric
/// coordinate's formula), in the levels' own order (downwards or upwards), clipped to the sea
/// floor `sea_floor_m` \[m, positive down; `f64::INFINITY` for none\].
pub fn thicknesses_from_interfaces(
    interfaces: &[f64],
    positive: Positive,
    sea_floor_m: f64,
) -> Result<Vec<f64>, GeometryError> {
    for (level, &value) in interfaces.iter().enumerate() {
        check_finite(level, value)?;
    }
    Ok(interfaces
        .windows(2)
        .map(|pair| {
            clipped_thickness(
                positive.depth(pair[0]),
                positive.depth(pair[1]),
                sea_floor_m,
            )
        })
        .collect())
}

/// Volume of each cell of a column \[m³\]: the column's horizontal area \[m²\] times each
/// thickness \[m\].
pub fn cell_volumes(area_m2: f64, thickness_m: &[f64]) -> Vec<f64> {
    thickness_m.iter().map(|h| area_m2 * h).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn z_levels_down_with_a_partial_bottom_cell() {
        // Bounds 0–10–30–60–100 m, floor at 45 m: 10, 20, 15 (partial), 0 (below the floor).
        let bounds = [[0.0, 10.0], [10.0, 30.0], [30.0, 60.0], [60.0, 100.0]];
        let t = thicknesses_from_bounds(&bounds, Positive::Down, 45.0).unwrap();
        assert_eq!(t, vec![10.0, 20.0, 15.0, 0.0]);
        // No floor: full cells summing to the bottom interface.
        let t = thicknesses_from_bounds(&bounds, Positive::Down, f64::INFINITY).unwrap();
        assert_eq!(t.iter().sum::<f64>(), 100.0);
    }

    #[test]
    fn heights_positive_up_in_either_order() {
        // The same grid written as heights (CF positive = "up"), bounds listed top first or not.
        let bounds = [[0.0, -10.0], [-30.0, -10.0], [-30.0, -60.0]];
        let t = thicknesses_from_bounds(&bounds, Positive::Up, 45.0).unwrap();
        assert_eq!(t, vec![10.0, 20.0, 15.0]);
    }

    #[test]
    fn terrain_following_interfaces_bottom_first() {
        // CF Appendix D ocean_sigma_coordinate at w-levels σ = −1, −0.75, …, 0 (bottom first),
        // depth 200 m, η = 0.5 m: z = η + σ (depth + η); four layers of (200.5 / 4) m.
        let (depth, eta) = (200.0, 0.5);
        let z: Vec<f64> = (0..5)
            .map(|k| eta + (-1.0 + 0.25 * k as f64) * (depth + eta))
            .collect();
        let t = thicknesses_from_interfaces(&z, Positive::Up, f64::INFINITY).unwrap();
        for h in &t {
            assert!((h - 200.5 / 4.0).abs() < 1e-12);
        }
        // A floor given in the same reference (depth below the datum) cuts nothing here.
        let t2 = thicknesses_from_interfaces(&z, Positive::Up, depth).unwrap();
        assert_eq!(t, t2);
    }

    #[test]
    fn column_volumes_equal_area_times_summed_thickness() {
        // Issue 8: the volumes of a column sum to its area times its summed thickness.
        let bounds = [[0.0, 10.0], [10.0, 30.0], [30.0, 60.0], [60.0, 100.0]];
        let t = thicknesses_from_bounds(&bounds, Positive::Down, 72.5).unwrap();
        let area = 1.234e8;
        let v = cell_volumes(area, &t);
        let total: f64 = v.iter().sum();
        assert!((total - area * 72.5).abs() <= 1e-12 * total);
        assert_eq!(v.len(), 4);
    }

    #[test]
    fn clipping_rules() {
        assert_eq!(clipped_thickness(100.0, 120.0, 90.0), 0.0);
        assert_eq!(clipped_thickness(100.0, 120.0, 105.0), 5.0);
        assert_eq!(clipped_thickness(120.0, 100.0, 130.0), 20.0);
        assert_eq!(clipped_thickness(100.0, 120.0, f64::INFINITY), 20.0);
    }

    #[test]
    fn non_finite_bounds_are_errors() {
        let bad = thicknesses_from_bounds(&[[0.0, 10.0], [10.0, f64::NAN]], Positive::Down, 1e4);
        assert!(matches!(bad, Err(GeometryError::Vertical { level: 1, .. })));
        let bad = thicknesses_from_interfaces(&[0.0, f64::INFINITY], Positive::Up, 1e4);
        assert!(matches!(bad, Err(GeometryError::Vertical { level: 1, .. })));
    }
}
