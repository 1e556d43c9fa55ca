//! The time axis of an indicator file: units, calendar, bounds (or climatology bounds), and
//! each step's year and length.

use super::FieldInfo;
use crate::calendar::{Calendar, DateTime, TimeAxis};
use crate::catalog::{attr_text, read_all, require_var, InputFile};
use crate::error::{GridError, Result};

const SECONDS_PER_DAY: f64 = 86_400.0;

/// The time axis of an indicator file, in the file's units and calendar.
#[derive(Clone, Debug)]
pub struct TimeSteps {
    /// Name of the time coordinate variable (and dimension).
    pub name: String,
    /// Units, reference date and calendar.
    pub axis: TimeAxis,
    /// Time coordinate values.
    pub values: Vec<f64>,
    /// Bounds of each step, from the file's `bounds` variable or, without one, half-way
    /// between neighbouring values (the first and last step mirrored; common practice).
    pub bounds: Vec<[f64; 2]>,
    /// Whether `bounds` came from the file.
    pub bounds_from_file: bool,
    /// Whether the axis is climatological (CF `climatology` bounds: each step a window of
    /// years, as the pathway comparison writes).
    pub climatological: bool,
    /// Calendar year of each step, in the file's calendar, from the midpoint of its bounds
    /// (so an annual mean stamped on 1 January of the next year counts in its own year).
    pub years: Vec<i64>,
    /// Length of each step \[days\], from its bounds.
    pub lengths_days: Vec<f64>,
}

impl TimeSteps {
    /// Number of steps.
    pub fn steps(&self) -> usize {
        self.values.len()
    }

    /// The calendar.
    pub fn calendar(&self) -> Calendar {
        self.axis.calendar
    }

    /// Calendar date of the midpoint of a step's bounds.
    pub fn midpoint(&self, step: usize) -> Result<DateTime> {
        let [a, b] = self.bounds[step];
        self.axis
            .to_datetime(0.5 * (a + b))
            .map_err(|e| GridError::OutOfRange {
                message: format!("time step {step}: {e}"),
            })
    }
}

/// Bounds of each step: the file's, or half-way between neighbours.
fn step_bounds(values: &[f64], file_bounds: Option<&[f64]>) -> Vec<[f64; 2]> {
    if let Some(b) = file_bounds {
        return b.chunks_exact(2).map(|p| [p[0], p[1]]).collect();
    }
    bounds_between(values)
}

/// Bounds half-way between neighbouring values, the outer ones mirrored (±0.5 for a single
/// value): what a coordinate without a `bounds` variable is taken to mean (common practice).
///
/// ```
/// use acidscape_gridio::bounds_between;
/// assert_eq!(bounds_between(&[5.0, 15.0, 35.0]), vec![[0.0, 10.0], [10.0, 25.0], [25.0, 45.0]]);
/// ```
pub fn bounds_between(values: &[f64]) -> Vec<[f64; 2]> {
    let n = values.len();
    (0..n)
        .map(|i| {
            let before = if i > 0 {
                0.5 * (values[i - 1] + values[i])
            } else if n > 1 {
                values[0] - 0.5 * (values[1] - values[0])
            } else {
                values[0] - 0.5
            };
            let after = if i + 1 < n {
                0.5 * (values[i] + values[i + 1])
            } else if n > 1 {
                values[i] + 0.5 * (values[i] - values[i - 1])
            } else {
                values[0] + 0.5
            };
            [before, after]
        })
        .collect()
}

/// The values of the variable a time coordinate's `climatology` attribute names, if any.
fn climatology_bounds(file: &InputFile, time: &str, steps: usize) -> Result<Option<Vec<f64>>> {
    let var = require_var(file, time, "the time axis")?;
    let Some(name) = attr_text(&var, "climatology") else {
        return Ok(None);
    };
    match file.nc.variable(&name) {
        Some(b) if b.len() == 2 * steps => Ok(Some(read_all(&file.path, &b)?)),
        _ => Ok(None),
    }
}

/// The time axis of the reference variable, if it has one.
pub(super) fn time_steps(file: &InputFile, reference: &FieldInfo) -> Result<Option<TimeSteps>> {
    if !reference.has_time {
        return Ok(None);
    }
    let time = crate::timeline::file_time(file)?.ok_or_else(|| GridError::Metadata {
        file: file.path.clone(),
        variable: reference.name.clone(),
        message:
            "varies in time, but the file has no CF time coordinate (units \"days since ...\")"
                .to_string(),
    })?;
    // A climatological axis (CF 1.10 section 7.4) has `climatology` bounds instead.
    let climatology = match &time.bounds {
        Some(_) => None,
        None => climatology_bounds(file, &time.var_name, time.values.len())?,
    };
    let file_bounds = time
        .bounds
        .as_ref()
        .map(|b| b.1.clone())
        .or(climatology.clone());
    let bounds = step_bounds(&time.values, file_bounds.as_deref());
    let fail = |message: String| GridError::Metadata {
        file: file.path.clone(),
        variable: time.var_name.clone(),
        message,
    };
    let mut years = Vec::with_capacity(bounds.len());
    let mut lengths_days = Vec::with_capacity(bounds.len());
    for (step, [a, b]) in bounds.iter().enumerate() {
        let middle = time
            .axis
            .to_datetime(0.5 * (a + b))
            .map_err(|e| fail(format!("time step {step}: {e}")))?;
        let length = (b - a).abs() * time.axis.unit.seconds() / SECONDS_PER_DAY;
        if !(length.is_finite() && length > 0.0) {
            return Err(fail(format!(
                "time step {step} has bounds {a} and {b}; expected a step of positive length"
            )));
        }
        years.push(middle.year);
        lengths_days.push(length);
    }
    Ok(Some(TimeSteps {
        name: time.var_name,
        axis: time.axis,
        values: time.values,
        bounds,
        bounds_from_file: file_bounds.is_some(),
        climatological: climatology.is_some(),
        years,
        lengths_days,
    }))
}
