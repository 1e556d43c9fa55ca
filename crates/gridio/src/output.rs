//! Copying the run's coordinates (time, horizontal, vertical incl. parametric terms,
//! grid mapping) with their CF attributes into an output file.

use crate::catalog::{attr_text, dim_lens, dim_names, read_all, InputFile};
use crate::error::{GridError, Result};
use crate::run::Run;
use crate::vertical::Vertical;
use crate::OutputAxes;
use netcdf::types::NcVariableType;
use netcdf::{AttributeValue, Extent};
use std::ops::Range;

pub(crate) fn write_error(variable: &str, e: netcdf::Error) -> GridError {
    GridError::Write {
        variable: variable.to_string(),
        message: e.to_string(),
    }
}

/// Defines a dimension unless the output has it already with the same length.
pub(crate) fn ensure_dim(out: &mut netcdf::FileMut, name: &str, len: usize) -> Result<()> {
    match out.dimension(name).map(|d| d.len()) {
        Some(existing) if existing == len => Ok(()),
        Some(existing) => Err(GridError::Write {
            variable: name.to_string(),
            message: format!("dimension already defined with length {existing}, expected {len}"),
        }),
        None => out
            .add_dimension(name, len)
            .map(|_| ())
            .map_err(|e| write_error(name, e)),
    }
}

const FILL_FAMILY: [&str; 5] = [
    "_FillValue",
    "missing_value",
    "valid_min",
    "valid_max",
    "valid_range",
];

/// Converts a numeric attribute to double (for variables written as f64).
fn as_double(value: AttributeValue) -> AttributeValue {
    let numbers = crate::catalog::attribute_numbers(&value);
    match numbers.len() {
        0 => value,
        1 => AttributeValue::Double(numbers[0]),
        _ => AttributeValue::Doubles(numbers),
    }
}

/// Copies every attribute of `src` onto the output variable `name`; `skip` names attributes
/// not to copy, `force_double` converts fill-like attributes to double.
fn copy_attributes(
    src: &netcdf::Variable,
    out: &mut netcdf::FileMut,
    name: &str,
    skip: &[&str],
    force_double: bool,
) -> Result<()> {
    let mut pairs = Vec::new();
    for attribute in src.attributes() {
        let key = attribute.name().to_string();
        if skip.contains(&key.as_str()) {
            continue;
        }
        if let Ok(value) = attribute.value() {
            let value = if force_double && FILL_FAMILY.contains(&key.as_str()) {
                as_double(value)
            } else {
                value
            };
            pairs.push((key, value));
        }
    }
    let mut var = out.variable_mut(name).ok_or_else(|| GridError::Write {
        variable: name.to_string(),
        message: "variable vanished after definition".to_string(),
    })?;
    for (key, value) in pairs {
        var.put_attribute(&key, value)
            .map_err(|e| write_error(name, e))?;
    }
    Ok(())
}

/// Copies a time-independent variable (same type, dims, attributes, values).
pub(crate) fn copy_static(file: &InputFile, name: &str, out: &mut netcdf::FileMut) -> Result<()> {
    if out.variable(name).is_some() {
        return Ok(());
    }
    let var = crate::catalog::require_var(file, name, "the coordinates")?;
    let dims = dim_names(&var);
    for (d, len) in dims.iter().zip(dim_lens(&var)) {
        ensure_dim(out, d, len)?;
    }
    let dim_refs: Vec<&str> = dims.iter().map(String::as_str).collect();
    let vartype = var.vartype();
    let numeric = matches!(vartype, NcVariableType::Int(_) | NcVariableType::Float(_));
    let values = if numeric && var.len() > 0 {
        Some(read_all(&file.path, &var)?)
    } else {
        None
    };
    out.add_variable_with_type(name, &dim_refs, &vartype)
        .map_err(|e| write_error(name, e))?;
    copy_attributes(&var, out, name, &[], false)?;
    if let Some(values) = values {
        let mut v = out.variable_mut(name).ok_or_else(|| GridError::Write {
            variable: name.to_string(),
            message: "variable vanished after definition".to_string(),
        })?;
        if dims.is_empty() {
            v.put_value(values[0], ())
                .map_err(|e| write_error(name, e))?;
        } else {
            v.put_values(&values, ..)
                .map_err(|e| write_error(name, e))?;
        }
    }
    Ok(())
}

/// A static variable, with the variable named by its `bounds` attribute.
fn copy_with_bounds(
    run: &Run,
    files: &[InputFile],
    name: &str,
    out: &mut netcdf::FileMut,
) -> Result<()> {
    let Some(file) = holder(run, files, name) else {
        return Ok(());
    };
    copy_static(file, name, out)?;
    if let Some(var) = file.nc.variable(name) {
        if let Some(bounds) = attr_text(&var, "bounds").filter(|b| file.nc.variable(b).is_some()) {
            copy_static(file, &bounds, out)?;
        }
    }
    Ok(())
}

/// The grid file if it has the variable, else the first file that does.
pub(crate) fn holder<'f>(run: &Run, files: &'f [InputFile], name: &str) -> Option<&'f InputFile> {
    let grid = &files[run.grid_file];
    if grid.nc.variable(name).is_some() {
        return Some(grid);
    }
    files.iter().find(|f| f.nc.variable(name).is_some())
}

pub(crate) fn write_coordinates(
    run: &Run,
    files: &[InputFile],
    out: &mut netcdf::FileMut,
    steps: Range<usize>,
) -> Result<OutputAxes> {
    if steps.start >= steps.end || steps.end > run.time_steps() {
        return Err(GridError::OutOfRange {
            message: format!(
                "output steps {}..{} but the run has {} steps",
                steps.start,
                steps.end,
                run.time_steps()
            ),
        });
    }
    let mut dims = Vec::new();
    let h = &run.horizontal;

    // Time, with its bounds, in the run's reference units and calendar.
    if let Some(time) = &run.time {
        let name = time.var_name.clone();
        ensure_dim(out, &time.dim_name, steps.len())?;
        dims.push(time.dim_name.clone());
        let src_file = &files[time.file];
        let src = crate::catalog::require_var(src_file, &name, "the time axis")?;
        out.add_variable::<f64>(&name, &[&time.dim_name])
            .map_err(|e| write_error(&name, e))?;
        copy_attributes(&src, out, &name, &["units"], true)?;
        let mut v = out.variable_mut(&name).ok_or_else(|| GridError::Write {
            variable: name.clone(),
            message: "variable vanished after definition".to_string(),
        })?;
        v.put_attribute("units", time.axis.units_attribute())
            .map_err(|e| write_error(&name, e))?;
        v.put_values(&time.values[steps.clone()], ..)
            .map_err(|e| write_error(&name, e))?;
        if let Some((bname, bvalues)) = &time.bounds {
            if let Some(bvar) = src_file.nc.variable(bname) {
                let bdims = dim_names(&bvar);
                let blens = dim_lens(&bvar);
                // CF bounds: (time, 2), values already joined in that layout.
                if bdims.len() == 2 && bdims[0] == time.dim_name && blens[1] == 2 {
                    ensure_dim(out, &bdims[1], blens[1])?;
                    out.add_variable::<f64>(bname, &[&time.dim_name, &bdims[1]])
                        .map_err(|e| write_error(bname, e))?;
                    copy_attributes(&bvar, out, bname, &["units", "calendar"], true)?;
                    let width = blens[1];
                    let slice = &bvalues[steps.start * width..steps.end * width];
                    let mut v = out.variable_mut(bname).ok_or_else(|| GridError::Write {
                        variable: bname.clone(),
                        message: "variable vanished after definition".to_string(),
                    })?;
                    v.put_values(slice, ..).map_err(|e| write_error(bname, e))?;
                }
            }
        }
    }

    // Vertical coordinate (and parametric terms).
    if let Some(z_dim) = &run.z_dim {
        ensure_dim(out, z_dim, run.shape.levels)?;
        dims.push(z_dim.clone());
        if let Some(name) = run.vertical.name() {
            copy_with_bounds(run, files, name, out)?;
        }
        if let Vertical::Parametric(p) = &run.vertical {
            for term in &p.term_vars {
                if *term != p.eta.name {
                    copy_with_bounds(run, files, term, out)?;
                }
            }
            copy_free_surface(run, files, p, out, &steps)?;
        }
    }

    // Horizontal coordinates.
    ensure_dim(out, &h.y_dim, run.shape.rows)?;
    ensure_dim(out, &h.x_dim, run.shape.cols)?;
    dims.push(h.y_dim.clone());
    dims.push(h.x_dim.clone());
    for name in [&h.y_dim, &h.x_dim] {
        if holder(run, files, name).is_some() {
            copy_with_bounds(run, files, name, out)?;
        }
    }
    for name in h.lat_name.iter().chain(h.lon_name.iter()) {
        copy_with_bounds(run, files, name, out)?;
    }
    if let Some(gm) = &h.grid_mapping {
        copy_with_bounds(run, files, gm, out)?;
    }
    let coordinates_attr = if h.curvilinear {
        let names: Vec<&str> = h
            .lat_name
            .iter()
            .chain(h.lon_name.iter())
            .map(String::as_str)
            .collect();
        Some(names.join(" "))
    } else {
        None
    };
    Ok(OutputAxes {
        dims,
        coordinates_attr,
        grid_mapping: h.grid_mapping.clone(),
    })
}

/// The free-surface term of a parametric coordinate, for the output's steps, in
/// (time, y, x) order.
fn copy_free_surface(
    run: &Run,
    files: &[InputFile],
    p: &crate::vertical::Parametric,
    out: &mut netcdf::FileMut,
    steps: &Range<usize>,
) -> Result<()> {
    let name = p.eta.name.clone();
    let src_file = &files[p.eta.pieces[0].file];
    let src = crate::catalog::require_var(src_file, &name, "formula_terms")?;
    let h = &run.horizontal;
    let mut out_dims: Vec<String> = Vec::new();
    let has_time = p.eta.has_time();
    if has_time {
        if let Some(t) = &run.time {
            out_dims.push(t.dim_name.clone());
        }
    }
    out_dims.push(h.y_dim.clone());
    out_dims.push(h.x_dim.clone());
    let refs: Vec<&str> = out_dims.iter().map(String::as_str).collect();
    out.add_variable::<f64>(&name, &refs)
        .map_err(|e| write_error(&name, e))?;
    copy_attributes(&src, out, &name, &["coordinates"], true)?;
    let fill = p
        .eta
        .pieces
        .first()
        .and_then(|piece| piece.mask.missing.first().copied())
        .unwrap_or(9.969_209_968_386_869e36);
    let rows = 0..run.shape.rows;
    let frames: Vec<usize> = if has_time {
        steps.clone().collect()
    } else {
        vec![0]
    };
    for (i, step) in frames.into_iter().enumerate() {
        let values: Vec<f64> = p
            .eta
            .read(&run.paths, step, &rows)?
            .into_iter()
            .map(|v| if v.is_nan() { fill } else { v })
            .collect();
        let mut v = out.variable_mut(&name).ok_or_else(|| GridError::Write {
            variable: name.clone(),
            message: "variable vanished after definition".to_string(),
        })?;
        let mut extents = Vec::new();
        if has_time {
            extents.push(Extent::SliceCount {
                start: i,
                count: 1,
                stride: 1,
            });
        }
        extents.push(Extent::from(0..run.shape.rows));
        extents.push(Extent::from(0..run.shape.cols));
        v.put_values(&values, extents)
            .map_err(|e| write_error(&name, e))?;
    }
    Ok(())
}
