//! Opening the run's files and reading their metadata (attributes, dimensions).

use crate::error::{GridError, Result};
use netcdf::AttributeValue;
use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// Prepares HDF5 for the calling thread: once per process, installs the deflate and
/// shuffle filters that use several threads ([`crate::chunk_filters`]); then turns off
/// HDF5's automatic error printing on this thread.
///
/// libnetcdf 4.9.0 (Debian 12) looks up optional quantization attributes on every
/// NetCDF-4 variable it reads; on variables with many attributes HDF5 prints a
/// harmless "HDF5-DIAG ... can't locate attribute" trace to stderr for each lookup.
/// The errors are handled by libnetcdf; only the printing is suppressed. HDF5 keeps
/// this setting per thread, so every public entry point calls this.
pub fn prepare_hdf5() {
    crate::chunk_filters::install();
    thread_local! {
        static DONE: std::cell::Cell<bool> = const { std::cell::Cell::new(false) };
    }
    if DONE.with(|d| d.replace(true)) {
        return;
    }
    type SetAuto = unsafe extern "C" fn(i64, *const libc::c_void, *mut libc::c_void) -> i32;
    // SAFETY: dlsym with RTLD_DEFAULT and a NUL-terminated name only looks a symbol up.
    let symbol = unsafe { libc::dlsym(libc::RTLD_DEFAULT, c"H5Eset_auto2".as_ptr()) };
    if symbol.is_null() {
        return;
    }
    // SAFETY: H5Eset_auto2(hid_t estack_id, H5E_auto2_t func, void *client_data) from
    // H5Epublic.h (hid_t is int64_t since HDF5 1.10); H5E_DEFAULT is 0 and a null
    // function disables printing.
    unsafe {
        let set_auto: SetAuto = std::mem::transmute::<*mut libc::c_void, SetAuto>(symbol);
        set_auto(0, std::ptr::null(), std::ptr::null_mut());
    }
}

/// One opened input file.
pub(crate) struct InputFile {
    pub path: PathBuf,
    pub nc: netcdf::File,
    /// Format and least length its header promises (checked when opened).
    pub expected: crate::integrity::Expected,
}

/// Expands paths and glob patterns (in the order given, each pattern's matches sorted),
/// dropping duplicates, and opens every file.
pub(crate) fn open_inputs(inputs: &[String]) -> Result<Vec<InputFile>> {
    let mut paths: Vec<PathBuf> = Vec::new();
    let mut seen = BTreeSet::new();
    if inputs.is_empty() {
        return Err(GridError::NoMatch {
            pattern: "(no input given)".to_string(),
        });
    }
    for input in inputs {
        let is_pattern = input.contains(['*', '?', '[']);
        let matches: Vec<PathBuf> = if is_pattern {
            let mut found: Vec<PathBuf> = glob::glob(input)
                .map_err(|e| GridError::BadPattern {
                    pattern: input.clone(),
                    message: e.to_string(),
                })?
                .filter_map(|entry| entry.ok())
                .filter(|p| p.is_file())
                .collect();
            found.sort();
            if found.is_empty() {
                return Err(GridError::NoMatch {
                    pattern: input.clone(),
                });
            }
            found
        } else {
            let path = PathBuf::from(input);
            if !path.exists() {
                return Err(GridError::FileNotFound { path });
            }
            vec![path]
        };
        for path in matches {
            let key = std::fs::canonicalize(&path).unwrap_or_else(|_| path.clone());
            if seen.insert(key) {
                paths.push(path);
            }
        }
    }
    open_paths(&paths)
}

/// Opens files already found (again, for metadata after [`open_inputs`]'s handles closed),
/// each checked first against the length its header promises (`integrity.rs`).
pub(crate) fn open_paths(paths: &[PathBuf]) -> Result<Vec<InputFile>> {
    paths
        .iter()
        .map(|path| {
            let expected =
                crate::integrity::expected_length(path).map_err(|message| GridError::Damaged {
                    path: path.clone(),
                    message,
                })?;
            let nc = netcdf::open(path).map_err(|e| GridError::Unreadable {
                path: path.clone(),
                message: e.to_string(),
            })?;
            Ok(InputFile {
                path: path.clone(),
                nc,
                expected,
            })
        })
        .collect()
}

/// Refuses a file that has become shorter than its header promises since it was opened.
pub(crate) fn still_complete(path: &Path, expected_len: u64) -> Result<()> {
    let len = std::fs::metadata(path)
        .map_err(|e| GridError::Unreadable {
            path: path.to_path_buf(),
            message: e.to_string(),
        })?
        .len();
    if len < expected_len {
        return Err(GridError::Damaged {
            path: path.to_path_buf(),
            message: format!(
                "it now holds {len} of the {expected_len} bytes its header describes (it was cut short after the run was opened)"
            ),
        });
    }
    Ok(())
}

/// A text attribute of a variable, trimmed; None when absent or not text.
pub(crate) fn attr_text(var: &netcdf::Variable, name: &str) -> Option<String> {
    match var.attribute_value(name)? {
        Ok(AttributeValue::Str(s)) => Some(s.trim().to_string()),
        Ok(AttributeValue::Strs(v)) => Some(v.join(" ").trim().to_string()),
        _ => None,
    }
}

/// Numeric attribute values of a variable as f64 (empty when absent or text).
pub(crate) fn attr_numbers(var: &netcdf::Variable, name: &str) -> Vec<f64> {
    match var.attribute_value(name) {
        Some(Ok(value)) => attribute_numbers(&value),
        _ => Vec::new(),
    }
}

/// Numeric content of an attribute value as f64.
pub(crate) fn attribute_numbers(value: &AttributeValue) -> Vec<f64> {
    use AttributeValue as A;
    match value {
        A::Uchar(x) => vec![f64::from(*x)],
        A::Schar(x) => vec![f64::from(*x)],
        A::Ushort(x) => vec![f64::from(*x)],
        A::Short(x) => vec![f64::from(*x)],
        A::Uint(x) => vec![f64::from(*x)],
        A::Int(x) => vec![f64::from(*x)],
        A::Ulonglong(x) => vec![*x as f64],
        A::Longlong(x) => vec![*x as f64],
        A::Float(x) => vec![f64::from(*x)],
        A::Double(x) => vec![*x],
        A::Uchars(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Schars(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Ushorts(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Shorts(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Uints(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Ints(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Ulonglongs(v) => v.iter().map(|x| *x as f64).collect(),
        A::Longlongs(v) => v.iter().map(|x| *x as f64).collect(),
        A::Floats(v) => v.iter().map(|x| f64::from(*x)).collect(),
        A::Doubles(v) => v.clone(),
        A::Str(_) | A::Strs(_) => Vec::new(),
    }
}

/// Dimension names of a variable, in file order.
pub(crate) fn dim_names(var: &netcdf::Variable) -> Vec<String> {
    var.dimensions().iter().map(|d| d.name()).collect()
}

/// Dimension lengths of a variable, in file order.
pub(crate) fn dim_lens(var: &netcdf::Variable) -> Vec<usize> {
    var.dimensions().iter().map(|d| d.len()).collect()
}

/// Reads a whole (small) variable as f64: coordinates, bounds, parameters.
pub(crate) fn read_all(path: &Path, var: &netcdf::Variable) -> Result<Vec<f64>> {
    var.get_values::<f64, _>(..).map_err(|e| GridError::Read {
        file: path.to_path_buf(),
        variable: var.name(),
        message: e.to_string(),
    })
}

/// A variable that must exist in a file, with a clear error when it does not.
pub(crate) fn require_var<'f>(
    file: &'f InputFile,
    name: &str,
    what: &str,
) -> Result<netcdf::Variable<'f>> {
    file.nc.variable(name).ok_or_else(|| GridError::Metadata {
        file: file.path.clone(),
        variable: name.to_string(),
        message: format!("{what} names this variable, but the file has no variable of that name"),
    })
}

/// Reading mask and packing rules of one variable in one file (CF section 2.5.1, 8.1).
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct MaskRule {
    /// `_FillValue`, `missing_value` and the netCDF default fill when no `_FillValue` is set.
    pub missing: Vec<f64>,
    pub valid_min: Option<f64>,
    pub valid_max: Option<f64>,
    pub scale_factor: f64,
    pub add_offset: f64,
}

/// Default fill values of netCDF-C (netcdf.h: NC_FILL_FLOAT, NC_FILL_DOUBLE, NC_FILL_INT, NC_FILL_SHORT, NC_FILL_BYTE).
fn default_fill(var: &netcdf::Variable) -> Option<f64> {
    use netcdf::types::{FloatType, IntType, NcVariableType};
    match var.vartype() {
        NcVariableType::Float(FloatType::F32) => Some(f64::from(9.969_21e36_f32)),
        NcVariableType::Float(FloatType::F64) => Some(9.969_209_968_386_869e36),
        NcVariableType::Int(IntType::I32) => Some(-2_147_483_647.0),
        NcVariableType::Int(IntType::I16) => Some(-32767.0),
        NcVariableType::Int(IntType::I8) => Some(-127.0),
        _ => None,
    }
}

impl MaskRule {
    /// Reads the mask and packing attributes of a variable.
    pub fn of(var: &netcdf::Variable) -> MaskRule {
        let mut missing = attr_numbers(var, "_FillValue");
        if missing.is_empty() {
            missing.extend(default_fill(var));
        }
        missing.extend(attr_numbers(var, "missing_value"));
        let range = attr_numbers(var, "valid_range");
        let (mut valid_min, mut valid_max) = if range.len() == 2 {
            (Some(range[0]), Some(range[1]))
        } else {
            (None, None)
        };
        if let Some(v) = attr_numbers(var, "valid_min").first() {
            valid_min = Some(*v);
        }
        if let Some(v) = attr_numbers(var, "valid_max").first() {
            valid_max = Some(*v);
        }
        MaskRule {
            missing,
            valid_min,
            valid_max,
            scale_factor: attr_numbers(var, "scale_factor")
                .first()
                .copied()
                .unwrap_or(1.0),
            add_offset: attr_numbers(var, "add_offset")
                .first()
                .copied()
                .unwrap_or(0.0),
        }
    }

    /// Masks (to NaN) and unpacks raw values in place.
    pub fn apply(&self, values: &mut [f64]) {
        let packed = self.scale_factor != 1.0 || self.add_offset != 0.0;
        let (lo, hi) = (
            self.valid_min.unwrap_or(f64::NEG_INFINITY),
            self.valid_max.unwrap_or(f64::INFINITY),
        );
        // Hot loop (every value read): the common one- or two-entry list compared without
        // branches, so the loop vectorises; a NaN entry matches nothing.
        let (m, n) = match self.missing.as_slice() {
            [] => (f64::NAN, f64::NAN),
            [m] => (*m, *m),
            [m, n] => (*m, *n),
            more => {
                return self.apply_each(values, more, packed, lo, hi);
            }
        };
        let (tm, tn) = (tolerance(m), tolerance(n));
        let is_missing = |raw: f64| -> bool {
            !raw.is_finite()
                | (raw < lo)
                | (raw > hi)
                | ((raw - m).abs() <= tm)
                | ((raw - n).abs() <= tn)
        };
        if packed {
            let (scale, offset) = (self.scale_factor, self.add_offset);
            for v in values.iter_mut() {
                let unpacked = *v * scale + offset;
                *v = if is_missing(*v) { f64::NAN } else { unpacked };
            }
        } else {
            for v in values.iter_mut() {
                *v = if is_missing(*v) { f64::NAN } else { *v };
            }
        }
    }

    /// [`MaskRule::apply`] for a list of three or more missing values.
    fn apply_each(&self, values: &mut [f64], missing: &[f64], packed: bool, lo: f64, hi: f64) {
        let (scale, offset) = (self.scale_factor, self.add_offset);
        for v in values.iter_mut() {
            let raw = *v;
            *v = if !raw.is_finite()
                || raw < lo
                || raw > hi
                || missing.iter().any(|m| same_value(raw, *m))
            {
                f64::NAN
            } else if packed {
                raw * scale + offset
            } else {
                raw
            };
        }
    }
}

/// How far from a missing value `b` a value still counts as it (see [`same_value`]); none
/// for an infinite or NaN `b`, which only equality matches.
#[inline]
fn tolerance(b: f64) -> f64 {
    if b.is_finite() {
        1e-6 * b.abs().max(f64::MIN_POSITIVE)
    } else {
        0.0
    }
}

/// Equality tolerant of a float32 fill value stored in a float64 attribute (or the reverse).
#[inline]
fn same_value(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= tolerance(b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mask_fill_missing_range_and_packing() {
        let rule = MaskRule {
            missing: vec![f64::from(1e20_f32), -999.0],
            valid_min: Some(0.0),
            valid_max: Some(50.0),
            scale_factor: 2.0,
            add_offset: 1.0,
        };
        let mut v = vec![1e20, -999.0, -1.0, 51.0, 10.0, f64::NAN];
        rule.apply(&mut v);
        assert!(v[..4].iter().all(|x| x.is_nan()) && v[5].is_nan());
        assert_eq!(v[4], 21.0);
    }

    #[test]
    fn every_length_of_missing_list_masks_alike() {
        let raw = [
            1e20,
            f64::from(1e20_f32),
            -999.0,
            -0.0,
            7.5,
            f64::INFINITY,
            3.0,
        ];
        for missing in [
            vec![],
            vec![1e20],
            vec![1e20, -999.0],
            vec![1e20, -999.0, 3.0],
        ] {
            let rule = MaskRule {
                missing: missing.clone(),
                valid_min: None,
                valid_max: None,
                scale_factor: 1.0,
                add_offset: 0.0,
            };
            let mut v = raw.to_vec();
            rule.apply(&mut v);
            for (got, r) in v.iter().zip(raw) {
                let expected_missing = !r.is_finite() || missing.iter().any(|m| same_value(r, *m));
                assert_eq!(got.is_nan(), expected_missing, "{r} with {missing:?}");
                if !expected_missing {
                    assert_eq!(got.to_bits(), r.to_bits(), "{r} kept bit for bit");
                }
            }
        }
        // An infinite missing value matches only itself (already missing as not finite).
        let rule = MaskRule {
            missing: vec![f64::INFINITY],
            valid_min: None,
            valid_max: None,
            scale_factor: 1.0,
            add_offset: 0.0,
        };
        let mut v = vec![1.0, 1e30];
        rule.apply(&mut v);
        assert_eq!(v, [1.0, 1e30]);
    }
}
