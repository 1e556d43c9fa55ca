//! The CF NetCDF-4 output: variables, attributes, chunking, and writing slabs.

use crate::cells::{SlabResult, VALUE_FILL};
use crate::cells_uncertainty::source_key;
use crate::cells_uncertainty::UncertaintyRequest;
use crate::column_output::{
    define_cell_area, define_column_outputs, ColumnDefinition, CELL_MEASURES,
};
use crate::columns::ColumnWork;
use crate::error::nc;
use crate::flags::{flag_masks, flag_meanings, Flag, ALL_FLAG_BITS, FLAG_BITS, FLAG_FILL};
use crate::indicators::{IndicatorChoice, OutputField, UncertaintyPart, UNCERTAINTY_SUFFIX};
use crate::plan::SlabPlan;
use crate::PipelineError;
use acidscape_chem::ConstantChoice;
use acidscape_gridio::Run;
use netcdf::FileMut;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Name of the per-cell quality flag variable.
pub const FLAG_VARIABLE: &str = "quality_flag";
/// The CF version the output declares (and the checker validates against).
pub const CONVENTIONS: &str = "CF-1.10";

/// Dimension names of the output variables and which of time / vertical they include.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct OutputLayout {
    pub dims: Vec<String>,
    has_time: bool,
    has_vertical: bool,
}

impl OutputLayout {
    /// Interprets dims ending in (y, x); a 3-D list is (time, y, x) when the grid has one
    /// level and several steps, else (vertical, y, x). With one level and one step both
    /// readings write the same hyperslab.
    pub fn new(dims: Vec<String>, levels: usize, steps: usize) -> Result<OutputLayout, String> {
        let (has_time, has_vertical) = match dims.len() {
            4 => (true, true),
            3 if levels == 1 && steps > 1 => (true, false),
            3 if steps == 1 => (false, true),
            2 if levels == 1 && steps == 1 => (false, false),
            _ => {
                return Err(format!(
                    "the run's axes {dims:?} do not fit {steps} time step(s) x {levels} level(s) x y x x"
                ))
            }
        };
        Ok(OutputLayout {
            dims,
            has_time,
            has_vertical,
        })
    }

    /// The layout of an existing output (for `--resume`), read from the flag variable.
    pub fn from_file(
        file: &netcdf::File,
        path: &Path,
        levels: usize,
        steps: usize,
    ) -> Result<OutputLayout, PipelineError> {
        let resume_error = |message: String| PipelineError::Resume {
            path: path.to_path_buf(),
            message,
        };
        let variable = file
            .variable(FLAG_VARIABLE)
            .ok_or_else(|| resume_error(format!("it has no variable '{FLAG_VARIABLE}'")))?;
        let dims = variable.dimensions().iter().map(|d| d.name()).collect();
        OutputLayout::new(dims, levels, steps).map_err(resume_error)
    }

    /// Hyperslab of one slab: [step,] [levels,] rows, columns.
    pub fn extents(&self, step: usize, rows: Range<usize>, shape: [usize; 3]) -> Vec<Range<usize>> {
        let mut extents = Vec::with_capacity(4);
        if self.has_time {
            extents.push(step..step + 1);
        }
        if self.has_vertical {
            extents.push(0..shape[0]);
        }
        extents.push(rows);
        extents.push(0..shape[2]);
        extents
    }

    /// The time dimension's name, when the output has one.
    pub fn time_dim(&self) -> Option<&str> {
        self.has_time.then(|| self.dims[0].as_str())
    }

    fn chunk(&self, plan: &SlabPlan) -> Vec<usize> {
        let mut chunk = Vec::with_capacity(4);
        if self.has_time {
            chunk.push(1);
        }
        if self.has_vertical {
            chunk.push(plan.chunk[0]);
        }
        chunk.extend_from_slice(&plan.chunk[1..]);
        chunk
    }
}

/// Everything the output records about how it was made.
#[derive(Clone, Debug)]
pub struct OutputMetadata {
    /// The command line, as typed.
    pub command_line: String,
    /// When the output was created, UTC (ISO 8601), for its history attribute.
    pub created: String,
    pub constants: ConstantChoice,
    pub indicators: IndicatorChoice,
    /// Deflate level 0-9 (0: no compression).
    pub deflate_level: i32,
    /// The uncertainties propagated to the companion fields, if any.
    pub uncertainty: Option<UncertaintyRequest>,
}

/// Defines the whole output in `file`: coordinates (copied from the run), the indicator
/// and flag variables with CF attributes, chunking, compression and global attributes.
pub fn define_output(
    file: &mut FileMut,
    path: &Path,
    run: &Run,
    plan: &SlabPlan,
    fields: &[OutputField],
    meta: &OutputMetadata,
    columns: Option<&ColumnWork>,
) -> Result<OutputLayout, PipelineError> {
    let axes = run.write_coordinates(file, 0..plan.steps)?;
    let layout =
        OutputLayout::new(axes.dims.clone(), plan.shape[0], plan.steps).map_err(|message| {
            PipelineError::Output {
                path: path.to_path_buf(),
                message,
            }
        })?;
    let dims: Vec<&str> = layout.dims.iter().map(String::as_str).collect();
    let chunk = layout.chunk(plan);
    let constants_note = format!(
        "Constants: {}, {}, {} (global attribute references).",
        meta.constants.carbonic.key(),
        meta.constants.fluoride.key(),
        meta.constants.boron.key()
    );
    let cell_methods = input_cell_methods(&run.input_files());
    let column_definition = ColumnDefinition {
        path,
        layout: &layout,
        axes: &axes,
        plan,
        chunk: &chunk,
        deflate_level: meta.deflate_level,
    };
    if let Some(work) = columns {
        define_cell_area(file, &column_definition, work)?;
    }

    let uncertainty_note = meta.uncertainty.as_ref().map(uncertainty_comment);
    for field in fields {
        let mut var = nc(file.add_variable::<f32>(&field.name, &dims), path, || {
            format!("defining variable '{}'", field.name)
        })?;
        let what = || format!("setting storage of variable '{}'", field.name);
        nc(var.set_chunking(&chunk), path, what)?;
        if meta.deflate_level > 0 {
            nc(var.set_compression(meta.deflate_level, true), path, what)?;
        }
        nc(var.set_fill_value(VALUE_FILL), path, what)?;
        let mut attributes: Vec<(&str, String)> = vec![
            ("long_name", field.long_name.to_string()),
            ("units", field.units.to_string()),
        ];
        if let Some(standard_name) = &field.standard_name {
            attributes.push(("standard_name", standard_name.to_string()));
        }
        let note = match &field.uncertainty {
            Some(UncertaintyPart::Combined { of }) => format!(
                "Standard uncertainty of {of}. {}",
                uncertainty_note.as_deref().unwrap_or_default()
            ),
            Some(UncertaintyPart::Contribution { of, source }) => format!(
                "Signed contribution of {} to the standard uncertainty of {of}: the sensitivity of {of} to it times its standard uncertainty; the root sum of squares of the contributions is {of}{UNCERTAINTY_SUFFIX}. {}",
                source_key(*source),
                uncertainty_note.as_deref().unwrap_or_default()
            ),
            None => String::new(),
        };
        let comment = [
            note.as_str(),
            field.comment,
            "Computed from alkalinity and DIC.",
            &constants_note,
        ]
        .iter()
        .filter(|s| !s.is_empty())
        .copied()
        .collect::<Vec<_>>()
        .join(" ");
        attributes.push(("comment", comment));
        attributes.push(("ancillary_variables", ancillary_variables(field, fields)));
        if let Some(coordinates) = &axes.coordinates_attr {
            attributes.push(("coordinates", coordinates.clone()));
        }
        if let Some(grid_mapping) = &axes.grid_mapping {
            attributes.push(("grid_mapping", grid_mapping.clone()));
        }
        if let Some(methods) = &cell_methods {
            attributes.push(("cell_methods", methods.clone()));
        }
        if columns.is_some() {
            attributes.push(("cell_measures", CELL_MEASURES.to_string()));
        }
        for (name, value) in attributes {
            nc(var.put_attribute(name, value), path, || {
                format!("writing attribute '{name}' of '{}'", field.name)
            })?;
        }
        nc(var.put_attribute("missing_value", VALUE_FILL), path, || {
            format!("writing attribute 'missing_value' of '{}'", field.name)
        })?;
    }

    define_flag(file, path, &dims, &chunk, &axes, meta, columns.is_some())?;
    if let Some(work) = columns {
        define_column_outputs(file, &column_definition, work)?;
    }

    for (name, value) in global_attributes(run, meta) {
        nc(file.add_attribute(&name, value), path, || {
            format!("writing global attribute '{name}'")
        })?;
    }
    Ok(layout)
}

/// The flag, and (CF 1.10 section 3.4, ancillary data) for an indicator its
/// standard-uncertainty field, for that field the contributions to it, when the output has them.
fn ancillary_variables(field: &OutputField, fields: &[OutputField]) -> String {
    let belongs = |f: &OutputField| match (&field.uncertainty, &f.uncertainty) {
        (None, Some(UncertaintyPart::Combined { of })) => *of == field.name,
        (
            Some(UncertaintyPart::Combined { of }),
            Some(UncertaintyPart::Contribution { of: to, .. }),
        ) => of == to,
        _ => false,
    };
    let mut names = vec![FLAG_VARIABLE];
    names.extend(fields.iter().filter(|f| belongs(f)).map(|f| &*f.name));
    names.join(" ")
}

/// How the standard uncertainties were obtained: method, sources and values.
pub(crate) fn uncertainty_comment(request: &UncertaintyRequest) -> String {
    format!(
        "First-order propagation of independent standard uncertainties (Orr, Epitalon, Dickson \
         & Gattuso 2018, Marine Chemistry 207), derivatives by implicit differentiation of the \
         equations solved; the run's density is taken as exact. Sources: {}.",
        request.describe()
    )
}

/// The `cell_methods` the run's gridded variables share (e.g. "area: mean where sea
/// time: mean"), if they all carry the same one; indicators computed from those means
/// inherit them.
fn input_cell_methods(files: &[PathBuf]) -> Option<String> {
    let mut found: Option<String> = None;
    for path in files {
        let file = netcdf::open(path).ok()?;
        for var in file.variables() {
            if var.dimensions().len() < 3 {
                continue;
            }
            let methods = match var.attribute_value("cell_methods") {
                Some(Ok(netcdf::AttributeValue::Str(text))) => text.trim().to_string(),
                _ => continue,
            };
            match &found {
                Some(previous) if *previous != methods => return None,
                _ => found = Some(methods),
            }
        }
    }
    found
}

/// Defines the quality flag: a CF bit field (`flag_masks`, `flag_meanings`; CF 1.10 section 3.5).
fn define_flag(
    file: &mut FileMut,
    path: &Path,
    dims: &[&str],
    chunk: &[usize],
    axes: &acidscape_gridio::OutputAxes,
    meta: &OutputMetadata,
    with_cell_area: bool,
) -> Result<(), PipelineError> {
    let mut flag = nc(file.add_variable::<Flag>(FLAG_VARIABLE, dims), path, || {
        format!("defining variable '{FLAG_VARIABLE}'")
    })?;
    let what = || format!("setting up variable '{FLAG_VARIABLE}'");
    nc(flag.set_chunking(chunk), path, what)?;
    if meta.deflate_level > 0 {
        nc(flag.set_compression(meta.deflate_level, true), path, what)?;
    }
    nc(flag.set_fill_value(FLAG_FILL), path, what)?;
    let mut texts = vec![
        ("standard_name", "status_flag".to_string()),
        (
            "long_name",
            "Why the computed indicators deserve care (bit field; 0: none)".to_string(),
        ),
        ("flag_meanings", flag_meanings()),
        ("comment", flag_comment(&meta.constants)),
    ];
    if let Some(coordinates) = &axes.coordinates_attr {
        texts.push(("coordinates", coordinates.clone()));
    }
    if let Some(grid_mapping) = &axes.grid_mapping {
        texts.push(("grid_mapping", grid_mapping.clone()));
    }
    if with_cell_area {
        texts.push(("cell_measures", CELL_MEASURES.to_string()));
    }
    for (name, value) in texts {
        nc(flag.put_attribute(name, value), path, what)?;
    }
    nc(flag.put_attribute("flag_masks", flag_masks()), path, what)?;
    nc(
        flag.put_attribute("valid_range", vec![0, ALL_FLAG_BITS]),
        path,
        what,
    )?;
    Ok(())
}

/// What each bit means, with the published limits of the chosen constants behind it.
fn flag_comment(constants: &ConstantChoice) -> String {
    let bits: Vec<String> = FLAG_BITS
        .iter()
        .map(|bit| {
            let limits = bit.limits(constants);
            if limits.is_empty() {
                format!("{} ({}): {}", bit.meaning, bit.mask, bit.note)
            } else {
                format!("{} ({}): {}: {limits}", bit.meaning, bit.mask, bit.note)
            }
        })
        .collect();
    format!(
        "Bits are added: test a bit with (quality_flag AND mask) != 0. 0: computed, every constant \
         inside its published range. Flags never change a value. {}. Range bits describe the \
         cell's temperature, salinity and pressure whenever they are known; KF's range sets no bit \
         (its alkalinity term stays below 0.01 umol kg-1). Land is _FillValue (-1).",
        bits.join("; ")
    )
}

fn global_attributes(run: &Run, meta: &OutputMetadata) -> Vec<(String, String)> {
    let inputs = run.input_files();
    let first = inputs
        .first()
        .and_then(|p| p.file_name())
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let mut attributes = vec![
        ("Conventions".to_string(), CONVENTIONS.to_string()),
        (
            "title".to_string(),
            format!("Ocean acidification indicators computed from {first} and related run files"),
        ),
        (
            "history".to_string(),
            format!("{}: {}", meta.created, meta.command_line),
        ),
        (
            "source".to_string(),
            format!(
                "acidscape {} (carbonate system solved per cell from total alkalinity and dissolved inorganic carbon); {}",
                env!("CARGO_PKG_VERSION"),
                meta.indicators.describe()
            ),
        ),
        ("references".to_string(), meta.constants.describe()),
        ("carbonic_acid_constants".to_string(), meta.constants.carbonic.key().to_string()),
        ("hydrogen_fluoride_constant".to_string(), meta.constants.fluoride.key().to_string()),
        ("total_boron".to_string(), meta.constants.boron.key().to_string()),
        (
            "input_files".to_string(),
            inputs
                .iter()
                .map(|p| p.display().to_string())
                .collect::<Vec<_>>()
                .join("\n"),
        ),
        ("acidscape_version".to_string(), env!("CARGO_PKG_VERSION").to_string()),
    ];
    let processing = run
        .provenance()
        .into_iter()
        .map(|(key, value)| format!("{key}: {value}"))
        .collect::<Vec<_>>()
        .join("\n");
    if !processing.is_empty() {
        attributes.push(("input_processing".to_string(), processing));
    }
    attributes
}

/// Writes one slab's fields and flags at its place in the output.
pub fn write_slab(
    file: &mut FileMut,
    path: &Path,
    layout: &OutputLayout,
    fields: &[OutputField],
    result: &SlabResult,
) -> Result<(), PipelineError> {
    let extents = layout.extents(result.step, result.rows.clone(), result.shape);
    for (field, values) in fields.iter().zip(&result.fields) {
        let mut var = file
            .variable_mut(&field.name)
            .ok_or_else(|| PipelineError::Output {
                path: path.to_path_buf(),
                message: format!("variable '{}' is missing", field.name),
            })?;
        nc(var.put_values(values, extents.clone()), path, || {
            format!("writing '{}' at time step {}", field.name, result.step)
        })?;
    }
    let mut flag = file
        .variable_mut(FLAG_VARIABLE)
        .ok_or_else(|| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("variable '{FLAG_VARIABLE}' is missing"),
        })?;
    nc(flag.put_values(&result.flags, extents), path, || {
        format!("writing '{FLAG_VARIABLE}' at time step {}", result.step)
    })
}

/// The partial file a job writes before renaming it to `output`: `.<name>.partial` beside it.
pub fn partial_path(output: &Path) -> PathBuf {
    sibling(output, ".partial")
}

/// The progress record beside the partial file.
pub fn progress_path(output: &Path) -> PathBuf {
    sibling(output, ".partial.progress")
}

fn sibling(output: &Path, suffix: &str) -> PathBuf {
    let name = output
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output.nc".into());
    output.with_file_name(format!(".{name}{suffix}"))
}

/// Current UTC time as ISO 8601, e.g. "2026-12-02T03:04:05Z".
pub fn utc_timestamp() -> String {
    let seconds = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0);
    format_utc(seconds)
}

/// Formats seconds since 1970-01-01T00:00:00Z (proleptic Gregorian calendar).
fn format_utc(seconds: u64) -> String {
    let days = (seconds / 86_400) as i64;
    let time = seconds % 86_400;
    // Civil date from a day count (the standard era-based algorithm, common practice).
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let day = doy - (153 * mp + 2) / 5 + 1;
    let month = if mp < 10 { mp + 3 } else { mp - 9 };
    let year = yoe + era * 400 + i64::from(month <= 2);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        time / 3600,
        (time % 3600) / 60,
        time % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    // Unix time check values: 0 is 1970-01-01T00:00:00Z; 951782400 is 2000-02-29T00:00:00Z
    // and 1700000000 is 2023-11-14T22:13:20Z (POSIX.1-2017, "Seconds Since the Epoch").
    #[test]
    fn formats_unix_times() {
        assert_eq!(format_utc(0), "1970-01-01T00:00:00Z");
        assert_eq!(format_utc(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(format_utc(1_700_000_000), "2023-11-14T22:13:20Z");
    }

    #[test]
    fn partial_files_sit_beside_the_output() {
        let out = Path::new("/data/out/indicators.nc");
        assert_eq!(
            partial_path(out),
            Path::new("/data/out/.indicators.nc.partial")
        );
        assert_eq!(
            progress_path(out),
            Path::new("/data/out/.indicators.nc.partial.progress")
        );
    }

    #[test]
    fn layouts_place_slabs() {
        let dims = |n: &[&str]| n.iter().map(|s| s.to_string()).collect::<Vec<_>>();
        let full = OutputLayout::new(dims(&["time", "lev", "lat", "lon"]), 5, 3).unwrap();
        assert_eq!(
            full.extents(2, 4..6, [5, 2, 8]),
            vec![2..3, 0..5, 4..6, 0..8]
        );
        let no_time = OutputLayout::new(dims(&["lev", "lat", "lon"]), 5, 1).unwrap();
        assert_eq!(no_time.extents(0, 0..2, [5, 2, 8]), vec![0..5, 0..2, 0..8]);
        let surface = OutputLayout::new(dims(&["time", "lat", "lon"]), 1, 4).unwrap();
        assert_eq!(surface.extents(3, 0..2, [1, 2, 8]), vec![3..4, 0..2, 0..8]);
        assert!(OutputLayout::new(dims(&["lev", "lat", "lon"]), 5, 2).is_err());
    }
}
