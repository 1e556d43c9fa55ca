//! An opened output of `compute` or `compare`: the indicator file, and for a comparison its
//! runs and windows (from the global attributes `compare` writes).

use crate::error::{DrawError, Result};
use acidscape_gridio::{FieldInfo, FieldKind, IndicatorFile};
use std::path::Path;

/// A named window of years of a comparison (one step of its climatological time axis).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Window {
    /// Its name, e.g. `late`.
    pub name: String,
    /// First year.
    pub first_year: i64,
    /// Last year.
    pub last_year: i64,
}

/// What an output of `compare` says about the runs it compared.
#[derive(Clone, Debug, PartialEq)]
pub struct ComparedRuns {
    /// Run labels, baseline first.
    pub labels: Vec<String>,
    /// The baseline run's label.
    pub baseline: String,
    /// The windows, in the order of the time axis.
    pub windows: Vec<Window>,
    /// The reference window's name.
    pub reference: Option<String>,
}

/// An opened output.
pub(crate) struct Source {
    pub file: IndicatorFile,
    /// Set for an output of `compare`.
    pub compared: Option<ComparedRuns>,
}

impl Source {
    pub(crate) fn open(path: &Path) -> Result<Source> {
        let file = IndicatorFile::open(path)?;
        let compared = match file.global_attribute("compared_runs") {
            Some(runs) => Some(compared_runs(&file, &runs)?),
            None => None,
        };
        Ok(Source { file, compared })
    }

    pub(crate) fn path(&self) -> &Path {
        self.file.path()
    }

    /// A variable that can be drawn: a field on the grid (not a flag, not a series).
    pub(crate) fn field(&self, name: &str) -> Result<&FieldInfo> {
        let info = self.file.variable(name).map_err(|_| {
            let drawable: Vec<&str> = self
                .file
                .variables()
                .iter()
                .filter(|f| drawable(f))
                .map(|f| f.name.as_str())
                .collect();
            DrawError::variable(
                self.path(),
                name,
                format!(
                    "no such variable; fields that can be drawn: {}",
                    drawable.join(", ")
                ),
            )
        })?;
        if !drawable(info) {
            let what = match info.kind {
                FieldKind::Flag => "a status flag (categories, not values)",
                FieldKind::TimeSeries => "a time series (draw series from the compare table)",
                _ => "not a field on the horizontal grid",
            };
            return Err(DrawError::variable(
                self.path(),
                name,
                format!("{what}; expected a field of values on the grid"),
            ));
        }
        Ok(info)
    }

    /// Whether the file has a drawable field of this name.
    pub(crate) fn has_field(&self, name: &str) -> bool {
        self.file.variable(name).is_ok_and(drawable)
    }

    /// A window of a comparison by name (its index on the time axis).
    pub(crate) fn window(&self, name: &str) -> Result<(usize, &Window)> {
        let Some(compared) = &self.compared else {
            return Err(DrawError::option(
                "--window",
                format!(
                    "{} has no time windows (it is not an output of compare); choose a time step with --step, --year or --date",
                    self.path().display()
                ),
            ));
        };
        compared
            .windows
            .iter()
            .enumerate()
            .find(|(_, w)| w.name == name)
            .ok_or_else(|| {
                DrawError::option(
                    "--window",
                    format!(
                        "{} has no window '{name}'; its windows are {}",
                        self.path().display(),
                        window_list(&compared.windows)
                    ),
                )
            })
    }
}

fn drawable(info: &FieldInfo) -> bool {
    matches!(
        info.kind,
        FieldKind::Field | FieldKind::Geometry | FieldKind::Uncertainty
    ) && info.on_grid
}

/// "reference (2015-2034), late (2081-2100)".
pub(crate) fn window_list(windows: &[Window]) -> String {
    windows
        .iter()
        .map(|w| format!("{} ({}-{})", w.name, w.first_year, w.last_year))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The runs and windows of an output of compare, from its global attributes
/// `compared_runs` ("LABEL: FILE; LABEL: FILE"), `baseline_run`, `time_windows`
/// ("NAME (FIRST-LAST), ...") and `reference_window`.
fn compared_runs(file: &IndicatorFile, runs: &str) -> Result<ComparedRuns> {
    let path = file.path();
    let labels: Vec<String> = runs
        .split("; ")
        .filter_map(|item| {
            item.split_once(": ")
                .map(|(label, _)| label.trim().to_string())
        })
        .filter(|label| !label.is_empty())
        .collect();
    let windows = file
        .global_attribute("time_windows")
        .map(|text| parse_windows(&text))
        .transpose()
        .map_err(|why| {
            DrawError::file(
                path,
                format!("global attribute time_windows: {why}; expected NAME (FIRST-LAST), ... as compare writes it"),
            )
        })?
        .unwrap_or_default();
    let steps = file.steps();
    if labels.is_empty() || windows.len() != steps {
        return Err(DrawError::file(
            path,
            format!(
                "an output of compare should name its runs (global attribute compared_runs) and one window per time step ({steps}) in time_windows; found {} run(s) and {} window(s)",
                labels.len(),
                windows.len()
            ),
        ));
    }
    let baseline = file
        .global_attribute("baseline_run")
        .unwrap_or_else(|| labels[0].clone());
    Ok(ComparedRuns {
        labels,
        baseline,
        windows,
        reference: file.global_attribute("reference_window"),
    })
}

/// "reference (2015-2034), late (2081-2100)" → windows.
pub(crate) fn parse_windows(text: &str) -> std::result::Result<Vec<Window>, String> {
    text.split("),")
        .map(str::trim)
        .filter(|s| !s.is_empty())
        .map(|item| {
            let item = item.trim_end_matches(')');
            let (name, years) = item
                .split_once(" (")
                .ok_or_else(|| format!("'{item}' has no (FIRST-LAST)"))?;
            let (first, last) = years
                .split_once('-')
                .ok_or_else(|| format!("'{years}' is not FIRST-LAST"))?;
            let year = |s: &str| {
                s.trim()
                    .parse::<i64>()
                    .map_err(|_| format!("'{s}' is not a year"))
            };
            Ok(Window {
                name: name.trim().to_string(),
                first_year: year(first)?,
                last_year: year(last)?,
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_as_compare_writes_them() {
        let windows = parse_windows("reference (2015-2034), late (2081-2100)").unwrap();
        assert_eq!(
            windows,
            vec![
                Window {
                    name: "reference".into(),
                    first_year: 2015,
                    last_year: 2034
                },
                Window {
                    name: "late".into(),
                    first_year: 2081,
                    last_year: 2100
                }
            ]
        );
        assert!(parse_windows("reference 2015-2034").is_err());
        assert_eq!(
            window_list(&windows),
            "reference (2015-2034), late (2081-2100)"
        );
    }
}
