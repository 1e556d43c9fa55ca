//! Reading the CF outputs of `acidscape compute` (indicator files) back: which variables they
//! hold, their grid, vertical coordinate and time axis, one step (or one level, or a block of
//! rows) of a field at a time, and the geometry variables.
//!
//! An indicator file is recognised by its global attribute `acidscape_version`; any other file
//! is refused with a message naming it. Values come back as `f64` in canonical order
//! (level, row, col), level outermost, whatever the file's dimension order, with `_FillValue`,
//! `missing_value` and valid ranges turned into NaN (as run inputs are read).
//!
//! ```no_run
//! use acidscape_gridio::IndicatorFile;
//! let file = IndicatorFile::open("out/moderate.nc")?;
//! let time = file.time().expect("a time axis");
//! println!("{} steps, first year {}", time.steps(), time.years[0]);
//! let omega = file.read_step("omega_aragonite", 0)?; // levels × rows × cols
//! let surface = file.read_level("omega_aragonite", 0, file.vertical().surface_level())?;
//! # Ok::<(), acidscape_gridio::GridError>(())
//! ```

mod copy;
mod layout;
mod read;
mod time;

pub use copy::CopiedCoordinates;
#[cfg(test)]
mod tests;

pub use layout::{GridLayout, HorizontalGrid, ParametricColumns, VerticalAxis, VerticalCoordinate};
pub use time::{bounds_between, TimeSteps};

use crate::axes::{classify_dims, Axis};
use crate::catalog::{attr_numbers, attr_text, dim_names, InputFile, MaskRule};
use crate::error::{GridError, Result};
use crate::vertical::Vertical;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// Global attribute by which an output of `acidscape compute` is recognised.
pub const VERSION_ATTRIBUTE: &str = "acidscape_version";

/// What a variable of an indicator file holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FieldKind {
    /// A per-cell or per-column field of values (an indicator, a horizon depth, ...).
    Field,
    /// A status or quality flag (`flag_values` or `flag_masks`).
    Flag,
    /// Cell geometry written by `compute`: `cell_area`, `cell_thickness`, `sea_floor_depth`.
    Geometry,
    /// The standard uncertainty of another field, or one source's contribution to it
    /// (`ph_uncertainty`, `ph_uncertainty_from_dic`, standard name modifier `standard_error`).
    Uncertainty,
    /// A series with a time dimension and no horizontal ones (e.g. corrosive volumes).
    TimeSeries,
    /// Anything else (scalars, tables on other dimensions).
    Other,
}

/// One data variable of an indicator file.
#[derive(Clone, Debug)]
pub struct FieldInfo {
    /// Variable name.
    pub name: String,
    /// `units` attribute, if any.
    pub units: Option<String>,
    /// `long_name` attribute, if any.
    pub long_name: Option<String>,
    /// `standard_name` attribute, if any.
    pub standard_name: Option<String>,
    /// `cell_methods` attribute, if any.
    pub cell_methods: Option<String>,
    /// Dimension names in file order.
    pub dims: Vec<String>,
    /// Whether it varies with time.
    pub has_time: bool,
    /// Whether it has the vertical dimension (a 3-D field).
    pub has_levels: bool,
    /// Whether it lies on the horizontal grid (both Y and X dimensions).
    pub on_grid: bool,
    /// What it holds.
    pub kind: FieldKind,
    axes: Vec<Axis>,
    mask: MaskRule,
}

/// Names of the geometry variables `compute` writes.
pub const CELL_AREA: &str = "cell_area";
/// Cell thickness \[m\], static (z-levels) or per step (terrain-following).
pub const CELL_THICKNESS: &str = "cell_thickness";
/// Sea-floor depth \[m, positive down\].
pub const SEA_FLOOR_DEPTH: &str = "sea_floor_depth";

/// An opened output of `acidscape compute`.
pub struct IndicatorFile {
    path: PathBuf,
    /// The one file, kept open (a one-element list for the crate's readers).
    files: Vec<InputFile>,
    version: String,
    fields: Vec<FieldInfo>,
    grid: HorizontalGrid,
    vertical: VerticalAxis,
    levels_internal: Vertical,
    time: Option<TimeSteps>,
}

impl std::fmt::Debug for IndicatorFile {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("IndicatorFile")
            .field("path", &self.path)
            .field("version", &self.version)
            .finish_non_exhaustive()
    }
}

impl IndicatorFile {
    /// Opens an output of `acidscape compute`: checks the file is complete and one of ours
    /// (global attribute `acidscape_version`), and reads its variables, grid, vertical
    /// coordinate and time axis.
    pub fn open(path: impl AsRef<Path>) -> Result<IndicatorFile> {
        crate::catalog::prepare_hdf5();
        let path = path.as_ref().to_path_buf();
        if !path.exists() {
            return Err(GridError::FileNotFound { path });
        }
        let files = crate::catalog::open_paths(std::slice::from_ref(&path))?;
        let file = &files[0];
        let version = global_text(&file.nc, VERSION_ATTRIBUTE).ok_or_else(|| GridError::Metadata {
            file: path.clone(),
            variable: format!("(global attribute {VERSION_ATTRIBUTE})"),
            message: "not an output of `acidscape compute`: it has no global attribute acidscape_version; expected a file written by `acidscape compute`".to_string(),
        })?;
        let fields = catalogue_fields(file);
        let reference = fields
            .iter()
            .find(|f| f.kind == FieldKind::Field && f.on_grid)
            .or_else(|| fields.iter().find(|f| f.on_grid))
            .ok_or_else(|| GridError::Metadata {
                file: path.clone(),
                variable: "(data variables)".to_string(),
                message: "no variable on a latitude-longitude grid; expected indicator fields such as ph or omega_aragonite".to_string(),
            })?
            .clone();
        let time = time::time_steps(file, &reference)?;
        let steps = time.as_ref().map_or(1, TimeSteps::steps);
        let grid = layout::horizontal(&files, &reference)?;
        let (vertical, levels_internal) = layout::vertical(&files, &reference, steps, &grid)?;
        Ok(IndicatorFile {
            path,
            files,
            version,
            fields,
            grid,
            vertical,
            levels_internal,
            time,
        })
    }

    /// The file's path, as given.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The `acidscape_version` that wrote it.
    pub fn version(&self) -> &str {
        &self.version
    }

    /// Every data variable (not coordinates, bounds or formula terms), in file order.
    pub fn variables(&self) -> &[FieldInfo] {
        &self.fields
    }

    /// The data variables of one kind.
    pub fn variables_of(&self, kind: FieldKind) -> impl Iterator<Item = &FieldInfo> {
        self.fields.iter().filter(move |f| f.kind == kind)
    }

    /// Whether the file has a data variable of this name.
    pub fn has(&self, name: &str) -> bool {
        self.fields.iter().any(|f| f.name == name)
    }

    /// A data variable, or an error naming the file and the variables it has.
    pub fn variable(&self, name: &str) -> Result<&FieldInfo> {
        self.fields
            .iter()
            .find(|f| f.name == name)
            .ok_or_else(|| GridError::Metadata {
                file: self.path.clone(),
                variable: name.to_string(),
                message: format!(
                    "no such data variable; the file has {}",
                    self.fields
                        .iter()
                        .map(|f| f.name.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            })
    }

    /// The horizontal grid.
    pub fn grid(&self) -> &HorizontalGrid {
        &self.grid
    }

    /// The vertical coordinate.
    pub fn vertical(&self) -> &VerticalAxis {
        &self.vertical
    }

    /// Number of vertical levels (1 without a vertical coordinate).
    pub fn levels(&self) -> usize {
        self.vertical.levels()
    }

    /// The time axis, if the file has one.
    pub fn time(&self) -> Option<&TimeSteps> {
        self.time.as_ref()
    }

    /// Number of time steps (1 without a time axis).
    pub fn steps(&self) -> usize {
        self.time.as_ref().map_or(1, TimeSteps::steps)
    }

    /// A global text attribute.
    pub fn global_attribute(&self, name: &str) -> Option<String> {
        global_text(&self.files[0].nc, name)
    }
}

fn global_text(nc: &netcdf::File, name: &str) -> Option<String> {
    match nc.attribute(name)?.value().ok()? {
        netcdf::AttributeValue::Str(s) => Some(s.trim().to_string()),
        netcdf::AttributeValue::Strs(v) => Some(v.join(" ").trim().to_string()),
        _ => None,
    }
}

/// Names that are coordinates, bounds, formula terms, grid mappings or climatology bounds of
/// other variables (not data).
fn auxiliary_names(file: &InputFile) -> BTreeSet<String> {
    let mut names = BTreeSet::new();
    for var in file.nc.variables() {
        let dims = dim_names(&var);
        if dims.len() == 1 && dims[0] == var.name() {
            names.insert(var.name());
        }
        for key in ["bounds", "climatology", "coordinates", "grid_mapping"] {
            if let Some(text) = attr_text(&var, key) {
                names.extend(text.split_whitespace().map(str::to_string));
            }
        }
        if let Some(terms) = attr_text(&var, "formula_terms") {
            names.extend(
                terms
                    .split_whitespace()
                    .filter(|w| !w.ends_with(':'))
                    .map(str::to_string),
            );
        }
    }
    names
}

/// The field and the source (for one source's contribution) of an uncertainty variable as
/// `compute` names them: `ph_uncertainty` → (`ph`, None), `ph_uncertainty_from_dic` → (`ph`,
/// Some(`dic`)); None for other names.
pub fn uncertainty_of(name: &str) -> Option<(&str, Option<&str>)> {
    if let Some(base) = name.strip_suffix("_uncertainty") {
        return Some((base, None));
    }
    let (base, source) = name.split_once("_uncertainty_from_")?;
    Some((base, Some(source)))
}

/// Whether a variable holds the standard uncertainty of another (as `compute` names them, or
/// with the CF standard-name modifier `standard_error`).
fn is_uncertainty(name: &str, var: &netcdf::Variable) -> bool {
    uncertainty_of(name).is_some()
        || attr_text(var, "standard_name").is_some_and(|s| s.ends_with(" standard_error"))
}

fn catalogue_fields(file: &InputFile) -> Vec<FieldInfo> {
    let auxiliary = auxiliary_names(file);
    let mut fields = Vec::new();
    for var in file.nc.variables() {
        let name = var.name();
        if auxiliary.contains(&name) {
            continue;
        }
        // Variables on dimensions that are no axis (labels, tables) are listed as Other.
        let axes = classify_dims(file, &var).ok();
        let classified = axes.is_some();
        let axes = axes.unwrap_or_default();
        let has = |a: Axis| axes.contains(&a);
        let on_grid = has(Axis::Y) && has(Axis::X);
        let is_flag = !attr_numbers(&var, "flag_values").is_empty()
            || !attr_numbers(&var, "flag_masks").is_empty();
        let kind = if [CELL_AREA, CELL_THICKNESS, SEA_FLOOR_DEPTH].contains(&name.as_str()) {
            FieldKind::Geometry
        } else if is_flag {
            FieldKind::Flag
        } else if classified && on_grid && is_uncertainty(&name, &var) {
            FieldKind::Uncertainty
        } else if classified && on_grid {
            FieldKind::Field
        } else if classified && has(Axis::T) && axes.len() == 1 {
            FieldKind::TimeSeries
        } else {
            FieldKind::Other
        };
        fields.push(FieldInfo {
            units: attr_text(&var, "units"),
            long_name: attr_text(&var, "long_name"),
            standard_name: attr_text(&var, "standard_name"),
            cell_methods: attr_text(&var, "cell_methods"),
            dims: dim_names(&var),
            has_time: has(Axis::T),
            has_levels: has(Axis::Z),
            on_grid,
            kind,
            mask: MaskRule::of(&var),
            axes,
            name,
        });
    }
    fields
}
