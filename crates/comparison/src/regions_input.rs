//! Where the regions come from: a region file (TOML, the analysis crate's schema), an integer
//! mask variable in a NetCDF file (region names from `flag_values` and `flag_meanings`, CF
//! Conventions 1.10 section 3.5), or the whole domain.

use crate::error::{ComparisonError, Result};
use acidscape_analysis::regions::{Layer, RegionFile, RegionSet};
use acidscape_gridio::HorizontalGrid;
use netcdf::AttributeValue;
use std::path::{Path, PathBuf};

/// Name of the single region when no regions are given.
pub const WHOLE_DOMAIN: &str = "whole domain";

/// The regions of a comparison.
#[derive(Clone, Debug)]
pub struct Regions {
    /// The regions.
    pub set: RegionSet,
    /// Depth layers the region file defines (empty for masks and the whole domain).
    pub layers: Vec<Layer>,
    /// Mask value per column, for mask regions.
    pub mask: Option<Vec<i64>>,
    /// Where they came from, for metadata.
    pub description: String,
}

/// Loads the regions: `None` is the whole domain; a path ending in `.toml` a region file;
/// anything else a NetCDF mask, `FILE` (the one integer variable with `flag_values` and
/// `flag_meanings`) or `FILE:VARIABLE`.
pub fn load_regions(source: Option<&str>, grid: &HorizontalGrid) -> Result<Regions> {
    let Some(text) = source else {
        return Ok(Regions {
            set: RegionSet::whole_domain(WHOLE_DOMAIN)
                .map_err(|e| ComparisonError::option("--regions", e.to_string()))?,
            layers: Vec::new(),
            mask: None,
            description: "the whole domain".into(),
        });
    };
    if text.ends_with(".toml") {
        let path = PathBuf::from(text);
        let contents = std::fs::read_to_string(&path).map_err(|e| {
            ComparisonError::file(&path, format!("cannot read the region file: {e}"))
        })?;
        let file = RegionFile::from_toml_str(&contents, text)
            .map_err(|e| ComparisonError::option("--regions", e.to_string()))?;
        return Ok(Regions {
            set: file.regions,
            layers: file.layers,
            mask: None,
            description: format!("region file {text}"),
        });
    }
    let (path, variable) = match text.rsplit_once(':') {
        Some((p, v)) if !Path::new(text).exists() && !v.contains('/') => {
            (PathBuf::from(p), Some(v))
        }
        _ => (PathBuf::from(text), None),
    };
    load_mask(&path, variable, grid)
}

fn text_attribute(var: &netcdf::Variable, name: &str) -> Option<String> {
    match var.attribute_value(name)?.ok()? {
        AttributeValue::Str(s) => Some(s),
        AttributeValue::Strs(v) => Some(v.join(" ")),
        _ => None,
    }
}

fn integer_attribute(var: &netcdf::Variable, name: &str) -> Option<Vec<i64>> {
    let numbers: Vec<f64> = match var.attribute_value(name)?.ok()? {
        AttributeValue::Schar(x) => vec![f64::from(x)],
        AttributeValue::Uchar(x) => vec![f64::from(x)],
        AttributeValue::Short(x) => vec![f64::from(x)],
        AttributeValue::Int(x) => vec![f64::from(x)],
        AttributeValue::Longlong(x) => vec![x as f64],
        AttributeValue::Schars(v) => v.into_iter().map(f64::from).collect(),
        AttributeValue::Uchars(v) => v.into_iter().map(f64::from).collect(),
        AttributeValue::Shorts(v) => v.into_iter().map(f64::from).collect(),
        AttributeValue::Ints(v) => v.into_iter().map(f64::from).collect(),
        AttributeValue::Longlongs(v) => v.into_iter().map(|x| x as f64).collect(),
        _ => return None,
    };
    Some(numbers.into_iter().map(|x| x as i64).collect())
}

fn is_integer(var: &netcdf::Variable) -> bool {
    matches!(var.vartype(), netcdf::types::NcVariableType::Int(_))
}

/// The mask variable: the one named, or the only 2-D integer variable with `flag_meanings`.
fn mask_variable<'f>(
    nc: &'f netcdf::File,
    path: &Path,
    variable: Option<&str>,
) -> Result<netcdf::Variable<'f>> {
    let mut candidates: Vec<netcdf::Variable> = match variable {
        Some(name) => nc.variable(name).into_iter().collect(),
        None => nc
            .variables()
            .filter(|v| {
                is_integer(v) && v.dimensions().len() == 2 && v.attribute("flag_meanings").is_some()
            })
            .collect(),
    };
    match candidates.len() {
        1 => Ok(candidates.remove(0)),
        0 => Err(ComparisonError::file(
            path,
            match variable {
                Some(name) => format!("has no variable '{name}'"),
                None => "has no 2-D integer variable with flag_values and flag_meanings; name the mask with FILE:VARIABLE".into(),
            },
        )),
        _ => Err(ComparisonError::file(
            path,
            "holds several integer variables with flag_meanings; name the mask with FILE:VARIABLE",
        )),
    }
}

/// The mask's values per column (row-major, on the grid), fill as `i64::MIN`.
fn mask_values(
    var: &netcdf::Variable,
    grid: &HorizontalGrid,
) -> std::result::Result<Vec<i64>, String> {
    let dims: Vec<(String, usize)> = var
        .dimensions()
        .iter()
        .map(|d| (d.name(), d.len()))
        .collect();
    let raw: Vec<i64> = var
        .get_values::<i64, _>(..)
        .map_err(|e| format!("read failed ({e})"))?;
    let fill = integer_attribute(var, "_FillValue").and_then(|v| v.first().copied());
    let on_grid = if dims.len() == 2 && dims[0].1 == grid.rows && dims[1].1 == grid.cols {
        raw
    } else if dims.len() == 2 && dims[0].0 == grid.x_dim && dims[1].0 == grid.y_dim {
        (0..grid.rows * grid.cols)
            .map(|c| raw[(c % grid.cols) * grid.rows + c / grid.cols])
            .collect()
    } else {
        return Err(format!(
            "shape {dims:?} does not match the runs' grid of {} rows ({}) x {} columns ({})",
            grid.rows, grid.y_dim, grid.cols, grid.x_dim
        ));
    };
    Ok(on_grid
        .into_iter()
        .map(|v| if Some(v) == fill { i64::MIN } else { v })
        .collect())
}

/// Reads a region mask on the comparison's grid.
fn load_mask(path: &Path, variable: Option<&str>, grid: &HorizontalGrid) -> Result<Regions> {
    let nc = netcdf::open(path).map_err(|e| {
        ComparisonError::file(
            path,
            format!("cannot be opened as a NetCDF region mask: {e}"),
        )
    })?;
    let var = mask_variable(&nc, path, variable)?;
    let name = var.name();
    let bad =
        |message: String| ComparisonError::file(path, format!("variable '{name}': {message}"));
    if !is_integer(&var) {
        return Err(bad("expected an integer mask".into()));
    }
    let values = integer_attribute(&var, "flag_values")
        .ok_or_else(|| bad("needs integer flag_values naming the regions".into()))?;
    let meanings: Vec<String> = text_attribute(&var, "flag_meanings")
        .unwrap_or_default()
        .split_whitespace()
        .map(str::to_string)
        .collect();
    if meanings.len() != values.len() {
        return Err(bad(format!(
            "{} flag_values but {} words in flag_meanings; expected one name per value",
            values.len(),
            meanings.len()
        )));
    }
    let mask = mask_values(&var, grid).map_err(bad)?;
    let set = RegionSet::from_mask(&values, &meanings).map_err(|e| bad(e.to_string()))?;
    Ok(Regions {
        set,
        layers: Vec::new(),
        mask: Some(mask),
        description: format!("mask variable '{name}' in {}", path.display()),
    })
}
