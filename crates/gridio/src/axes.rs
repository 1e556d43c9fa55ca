//! Which dimension of a variable is time, vertical, Y or X — from CF attributes of
//! coordinate variables (`axis`, `positive`, `standard_name`, `units`, `formula_terms`),
//! auxiliary coordinates (`coordinates`), and only last from the dimension names that model
//! families write (`native.rs`).

use crate::catalog::{attr_text, dim_names, read_all, InputFile};
use crate::error::{GridError, Result};

/// The role of one dimension.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Axis {
    T,
    Z,
    Y,
    X,
}

impl Axis {
    fn label(self) -> &'static str {
        match self {
            Axis::T => "time",
            Axis::Z => "vertical",
            Axis::Y => "Y (latitude-like)",
            Axis::X => "X (longitude-like)",
        }
    }
}

const VERTICAL_STANDARD_NAMES: [&str; 8] = [
    "depth",
    "altitude",
    "height",
    "ocean_sigma_coordinate",
    "ocean_s_coordinate",
    "ocean_s_coordinate_g1",
    "ocean_s_coordinate_g2",
    "ocean_sigma_z_coordinate",
];

pub(crate) fn is_degrees(units: &str, north: bool) -> bool {
    let u = units.to_ascii_lowercase().replace(' ', "_");
    let list: &[&str] = if north {
        &[
            "degrees_north",
            "degree_north",
            "degree_n",
            "degrees_n",
            "degreen",
            "degreesn",
        ]
    } else {
        &[
            "degrees_east",
            "degree_east",
            "degree_e",
            "degrees_e",
            "degreee",
            "degreese",
        ]
    };
    list.contains(&u.as_str())
}

/// Axis of a coordinate variable from its CF attributes alone (CF sections 4.1-4.4).
pub(crate) fn axis_of_coordinate(var: &netcdf::Variable) -> Option<Axis> {
    // `cartesian_axis` is what FMS-based models (MOM) write instead of `axis` (from memory).
    if let Some(axis) = attr_text(var, "axis").or_else(|| attr_text(var, "cartesian_axis")) {
        match axis.to_ascii_uppercase().as_str() {
            "T" => return Some(Axis::T),
            "Z" => return Some(Axis::Z),
            "Y" => return Some(Axis::Y),
            "X" => return Some(Axis::X),
            _ => {}
        }
    }
    let units = attr_text(var, "units").unwrap_or_default();
    let standard = attr_text(var, "standard_name").unwrap_or_default();
    if units.contains(" since ") || standard == "time" {
        return Some(Axis::T);
    }
    if attr_text(var, "positive").is_some()
        || attr_text(var, "formula_terms").is_some()
        || VERTICAL_STANDARD_NAMES.contains(&standard.as_str())
        || standard.starts_with("sea_water_pressure")
        || crate::units::parse_pressure(&units).is_ok() && !units.is_empty()
    {
        return Some(Axis::Z);
    }
    if matches!(
        standard.as_str(),
        "latitude" | "grid_latitude" | "projection_y_coordinate"
    ) || is_degrees(&units, true)
    {
        return Some(Axis::Y);
    }
    if matches!(
        standard.as_str(),
        "longitude" | "grid_longitude" | "projection_x_coordinate"
    ) || is_degrees(&units, false)
    {
        return Some(Axis::X);
    }
    None
}

/// Names listed in a variable's `coordinates` attribute that exist in the file.
pub(crate) fn auxiliary_coordinates(file: &InputFile, var: &netcdf::Variable) -> Vec<String> {
    attr_text(var, "coordinates")
        .unwrap_or_default()
        .split_whitespace()
        .filter(|n| file.nc.variable(n).is_some())
        .map(str::to_string)
        .collect()
}

/// Classifies every dimension of `var` in file order; each of T, Z, Y, X at most once.
pub(crate) fn classify_dims(file: &InputFile, var: &netcdf::Variable) -> Result<Vec<Axis>> {
    let names = dim_names(var);
    let mut axes: Vec<Option<Axis>> = names
        .iter()
        .map(|d| {
            let by_coordinate = file.nc.variable(d).and_then(|c| axis_of_coordinate(&c));
            by_coordinate.or_else(|| {
                // An unlimited dimension without a coordinate variable is time (common practice).
                var.dimensions()
                    .iter()
                    .find(|dim| &dim.name() == d)
                    .filter(|dim| dim.is_unlimited())
                    .map(|_| Axis::T)
            })
        })
        .collect();
    // Curvilinear grids: 2-D latitude/longitude named by `coordinates` tell Y from X.
    if axes.iter().any(Option::is_none) {
        if let Some((y_dim, x_dim)) = curvilinear_dims(file, var)? {
            for (i, d) in names.iter().enumerate() {
                if axes[i].is_none() && *d == y_dim {
                    axes[i] = Some(Axis::Y);
                } else if axes[i].is_none() && *d == x_dim {
                    axes[i] = Some(Axis::X);
                }
            }
        }
    }
    for (i, d) in names.iter().enumerate() {
        if axes[i].is_none() {
            axes[i] = crate::native::axis_of_dimension(d);
        }
    }
    let mut out = Vec::with_capacity(names.len());
    for (i, axis) in axes.into_iter().enumerate() {
        let axis = axis.ok_or_else(|| GridError::Metadata {
            file: file.path.clone(),
            variable: var.name(),
            message: format!(
                "cannot tell which axis dimension '{}' is; expected a coordinate variable '{}' with an `axis`, `standard_name`, `positive` or `units` attribute, or 2-D latitude/longitude named in the `coordinates` attribute",
                names[i], names[i]
            ),
        })?;
        if out.contains(&axis) {
            return Err(GridError::Metadata {
                file: file.path.clone(),
                variable: var.name(),
                message: format!(
                    "two dimensions ({}) both look like the {} axis; expected at most one of each of time, vertical, Y, X",
                    names.join(", "),
                    axis.label()
                ),
            });
        }
        out.push(axis);
    }
    Ok(out)
}

/// For a variable with 2-D latitude in its `coordinates`: (Y dim, X dim), Y being the
/// dimension along which latitude changes most.
fn curvilinear_dims(file: &InputFile, var: &netcdf::Variable) -> Result<Option<(String, String)>> {
    for name in auxiliary_coordinates(file, var) {
        let Some(coord) = file.nc.variable(&name) else {
            continue;
        };
        if coord.dimensions().len() != 2 || axis_of_coordinate(&coord) != Some(Axis::Y) {
            continue;
        }
        let dims = dim_names(&coord);
        let (n0, n1) = (coord.dimensions()[0].len(), coord.dimensions()[1].len());
        let lat = read_all(&file.path, &coord)?;
        let mut along0 = 0.0;
        let mut along1 = 0.0;
        for a in 0..n0 {
            for b in 0..n1 {
                let v = lat[a * n1 + b];
                if a + 1 < n0 {
                    along0 += (lat[(a + 1) * n1 + b] - v).abs();
                }
                if b + 1 < n1 {
                    along1 += (lat[a * n1 + b + 1] - v).abs();
                }
            }
        }
        let mean0 = along0 / ((n0.saturating_sub(1)) * n1).max(1) as f64;
        let mean1 = along1 / (n0 * n1.saturating_sub(1)).max(1) as f64;
        return Ok(Some(if mean0 >= mean1 {
            (dims[0].clone(), dims[1].clone())
        } else {
            (dims[1].clone(), dims[0].clone())
        }));
    }
    Ok(None)
}

/// Position of an axis in a classified dimension list.
pub(crate) fn position(axes: &[Axis], axis: Axis) -> Option<usize> {
    axes.iter().position(|a| *a == axis)
}
