//! The run's time axis: each file's CF time coordinate, put in one common unit and
//! calendar (calendar.rs), joined in time order with overlaps refused, and checked for
//! gaps against the run's own sampling (sampling.rs).

use crate::axes::{axis_of_coordinate, Axis};
use crate::calendar::{join_time_parts, CalendarError, TimeAxis, TimePart};
use crate::catalog::{attr_text, read_all, InputFile};
use crate::error::{GridError, Result};
use crate::sampling::{check_sampling, SamplingCheck};
use std::path::PathBuf;

/// Time coordinate of one file.
pub(crate) struct FileTime {
    pub var_name: String,
    pub dim_name: String,
    pub axis: TimeAxis,
    pub values: Vec<f64>,
    /// Name of the bounds variable and its values (2 per step), if any.
    pub bounds: Option<(String, Vec<f64>)>,
}

/// The CF time coordinate of a file (a variable named after its dimension, recognised
/// as time by `units` "... since ...", `axis` T or `standard_name` time), if any.
pub(crate) fn file_time(file: &InputFile) -> Result<Option<FileTime>> {
    for var in file.nc.variables() {
        let dims = var.dimensions();
        if dims.len() != 1
            || dims[0].name() != var.name()
            || axis_of_coordinate(&var) != Some(Axis::T)
        {
            continue;
        }
        let name = var.name();
        let fail = |message: String| GridError::Metadata {
            file: file.path.clone(),
            variable: name.clone(),
            message,
        };
        let units = attr_text(&var, "units").ok_or_else(|| {
            fail(
                "time coordinate has no `units` attribute; expected e.g. \"days since 1850-01-01\""
                    .to_string(),
            )
        })?;
        let calendar = attr_text(&var, "calendar");
        let axis = TimeAxis::parse(&units, calendar.as_deref()).map_err(|e| fail(e.to_string()))?;
        let values = read_all(&file.path, &var)?;
        let bounds = match attr_text(&var, "bounds") {
            Some(bname) => match file.nc.variable(&bname) {
                Some(b) if b.len() == 2 * values.len() => Some((bname, read_all(&file.path, &b)?)),
                _ => None,
            },
            None => None,
        };
        return Ok(Some(FileTime {
            var_name: name.clone(),
            dim_name: name,
            axis,
            values,
            bounds,
        }));
    }
    Ok(None)
}

/// One file's share of a variable's joined time axis.
#[derive(Clone, Debug)]
pub(crate) struct TimeSpan {
    pub file: usize,
    pub first_step: usize,
    pub steps: usize,
}

/// A joined time axis, in the units of `axis`.
pub(crate) struct Joined {
    pub values: Vec<f64>,
    pub bounds: Option<Vec<f64>>,
    pub spans: Vec<TimeSpan>,
}

fn calendar_error(path: &std::path::Path, variable: &str, e: CalendarError) -> GridError {
    GridError::Metadata {
        file: path.to_path_buf(),
        variable: variable.to_string(),
        message: e.to_string(),
    }
}

/// Joins the time axes of the files holding `variable` (indices into `files`/`times`)
/// into the `reference` units; refuses overlaps (gaps: [`check_gaps`]).
pub(crate) fn join_variable(
    variable: &str,
    holders: &[usize],
    files: &[InputFile],
    times: &[Option<FileTime>],
    reference: &TimeAxis,
) -> Result<Joined> {
    let mut parts = Vec::with_capacity(holders.len());
    let mut bounds_parts = Vec::with_capacity(holders.len());
    for &f in holders {
        let Some(t) = &times[f] else {
            return Err(GridError::Metadata {
                file: files[f].path.clone(),
                variable: variable.to_string(),
                message: "has a time dimension but the file has no time coordinate variable"
                    .to_string(),
            });
        };
        let values = t
            .axis
            .convert_all(&t.values, reference)
            .map_err(|e| calendar_error(&files[f].path, &t.var_name, e))?;
        let bounds = match &t.bounds {
            Some((_, b)) => Some(
                t.axis
                    .convert_all(b, reference)
                    .map_err(|e| calendar_error(&files[f].path, &t.var_name, e))?,
            ),
            None => None,
        };
        parts.push(TimePart {
            label: files[f].path.display().to_string(),
            values,
        });
        bounds_parts.push(bounds);
    }
    let joined = join_time_parts(&parts).map_err(|e| match e {
        CalendarError::Overlap {
            part,
            previous_part,
            previous,
            next,
        } => GridError::TimeOverlap {
            variable: variable.to_string(),
            first: PathBuf::from(previous_part),
            second: PathBuf::from(part),
            message: format!(
                "time {next} does not come after {previous} ({}); each time step must be in exactly one file",
                reference.units_attribute()
            ),
        },
        other => GridError::Metadata {
            file: files[holders[0]].path.clone(),
            variable: variable.to_string(),
            message: other.to_string(),
        },
    })?;
    let mut spans = Vec::with_capacity(holders.len());
    let mut start = 0;
    for &p in &joined.part_order {
        let steps = parts[p].values.len();
        spans.push(TimeSpan {
            file: holders[p],
            first_step: start,
            steps,
        });
        start += steps;
    }
    let bounds = if bounds_parts.iter().all(Option::is_some) {
        Some(
            joined
                .part_order
                .iter()
                .flat_map(|&p| bounds_parts[p].clone().unwrap_or_default())
                .collect(),
        )
    } else {
        None
    };
    Ok(Joined {
        values: joined.values,
        bounds,
        spans,
    })
}

/// Infers the joined axis's sampling and refuses breaks of it (missing steps, uneven
/// steps, bounds that do not meet), naming the files on both sides, unless
/// `irregular_ok` (the user stated an irregular run is intended).
pub(crate) fn check_gaps(
    variable: &str,
    joined: &Joined,
    files: &[InputFile],
    reference: &TimeAxis,
    irregular_ok: bool,
) -> Result<SamplingCheck> {
    let check = check_sampling(reference, &joined.values, joined.bounds.as_deref());
    let Some(first) = check.breaks.first().filter(|_| !irregular_ok) else {
        return Ok(check);
    };
    let file_at = |step: usize| {
        joined
            .spans
            .iter()
            .find(|s| step >= s.first_step && step < s.first_step + s.steps)
            .map_or_else(PathBuf::new, |s| files[s.file].path.clone())
    };
    let date = |v: f64| {
        reference
            .to_datetime(v)
            .map(|d| d.to_string())
            .unwrap_or_else(|_| v.to_string())
    };
    let (i, more) = (first.index, check.breaks.len() - 1);
    Err(GridError::TimeGap {
        variable: variable.to_string(),
        before: file_at(i - 1),
        after: file_at(i),
        message: format!(
            "the run is sampled {}{}, but between {} and {} {}{}; a file or time steps are missing. If the run is irregular on purpose, give --irregular-time",
            check.sampling,
            if check.from_bounds { " (by its time bounds)" } else { "" },
            date(joined.values[i - 1]),
            date(joined.values[i]),
            first.found,
            if more > 0 { format!(" ({more} more break(s) further on)") } else { String::new() }
        ),
    })
}
