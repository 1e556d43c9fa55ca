//! The regional table of `compare` as a series needs it: its rows, and the rows of one
//! quantity, region, layer, statistic and threshold, with refusals that list what the table
//! holds.

use super::SeriesRequest;
use crate::error::{DrawError, Result};
use acidscape_comparison::COLUMNS;
use std::path::Path;

/// The rows of the table that matter here.
#[derive(Clone, Debug)]
pub(super) struct Row {
    pub run: String,
    pub region: String,
    pub layer: String,
    pub period: String,
    pub time: String,
    pub year: Option<i64>,
    pub quantity: String,
    pub statistic: String,
    pub threshold: Option<f64>,
    pub value: Option<f64>,
    pub units: String,
    pub note: String,
}

/// The time-step rows chosen, and what they were chosen by.
pub(super) struct Selection<'a> {
    pub region: String,
    /// Empty for 2-D fields, which have no layer.
    pub layer: String,
    pub statistic: String,
    pub rows: Vec<&'a Row>,
}

/// The time-step rows of the request's quantity, region, layer, statistic and threshold.
pub(super) fn select<'a>(
    table: &Path,
    rows: &'a [Row],
    request: &SeriesRequest,
) -> Result<Selection<'a>> {
    let quantity = request.quantity.as_str();
    let statistic = request.statistic.as_deref().unwrap_or("mean");
    let steps: Vec<&Row> = rows.iter().filter(|r| r.period == "time_step").collect();
    let wanted = narrow(table, &steps, "quantity", quantity, |r| &r.quantity)?;
    let region = match &request.region {
        Some(region) => region.clone(),
        None => only_one(table, "region", &wanted, |r| &r.region)?,
    };
    let wanted = narrow(table, &wanted, "region", &region, |r| &r.region)?;
    let layer = if wanted.iter().all(|r| r.layer.is_empty()) {
        String::new()
    } else {
        request
            .layer
            .clone()
            .unwrap_or_else(|| "surface".to_string())
    };
    let wanted = narrow(table, &wanted, "layer", &layer, |r| &r.layer)?;
    let wanted = narrow(table, &wanted, "statistic", statistic, |r| &r.statistic)?;
    Ok(Selection {
        region,
        layer,
        statistic: statistic.to_string(),
        rows: with_threshold(table, wanted, request.threshold)?,
    })
}

/// The rows whose `field` is `value`, or an error listing the values the rows have.
fn narrow<'a>(
    table: &Path,
    rows: &[&'a Row],
    what: &str,
    value: &str,
    field: impl Fn(&Row) -> &String,
) -> Result<Vec<&'a Row>> {
    let kept: Vec<&Row> = rows.iter().copied().filter(|r| field(r) == value).collect();
    if !kept.is_empty() {
        return Ok(kept);
    }
    let listed: Vec<String> = distinct(rows, &field)
        .iter()
        .map(|s| {
            if s.is_empty() {
                "(none, for 2-D fields)".to_string()
            } else {
                format!("'{s}'")
            }
        })
        .collect();
    Err(DrawError::file(
        table,
        format!(
            "no time-step rows with {what} '{value}' (among the other choices); there are {what}s {}",
            listed.join(", ")
        ),
    ))
}

/// The distinct values of `field` among `rows`, in order of first appearance.
fn distinct<'a>(rows: &[&'a Row], field: &impl Fn(&Row) -> &String) -> Vec<&'a str> {
    let mut seen: Vec<&str> = Vec::new();
    for row in rows {
        let value = field(row).as_str();
        if !seen.contains(&value) {
            seen.push(value);
        }
    }
    seen
}

/// The single value of a column among `rows`, or an error listing them.
fn only_one(
    table: &Path,
    what: &str,
    rows: &[&Row],
    field: impl Fn(&Row) -> &String,
) -> Result<String> {
    let seen = distinct(rows, &field);
    match seen.as_slice() {
        [one] => Ok(one.to_string()),
        _ => Err(DrawError::option(
            &format!("--{what}"),
            format!(
                "{} has {} {what}s; choose one: {}",
                table.display(),
                seen.len(),
                seen.iter()
                    .map(|s| format!("'{s}'"))
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        )),
    }
}

/// The rows of one threshold (fractions below several thresholds need `--threshold`).
fn with_threshold<'a>(
    table: &Path,
    rows: Vec<&'a Row>,
    threshold: Option<f64>,
) -> Result<Vec<&'a Row>> {
    let mut thresholds: Vec<f64> = Vec::new();
    for t in rows.iter().filter_map(|r| r.threshold) {
        if !thresholds.contains(&t) {
            thresholds.push(t);
        }
    }
    let listed = || {
        thresholds
            .iter()
            .map(f64::to_string)
            .collect::<Vec<_>>()
            .join(", ")
    };
    let chosen = match (threshold, thresholds.as_slice()) {
        (None, []) => return Ok(rows),
        (None, [one]) => *one,
        (None, _) => {
            return Err(DrawError::option(
                "--threshold",
                format!(
                    "{} has several thresholds ({}); choose one",
                    table.display(),
                    listed()
                ),
            ))
        }
        (Some(t), _) if thresholds.contains(&t) => t,
        (Some(t), _) => {
            return Err(DrawError::option(
                "--threshold",
                format!(
                    "{} has no threshold {t}; it has {}",
                    table.display(),
                    listed()
                ),
            ))
        }
    };
    Ok(rows
        .into_iter()
        .filter(|r| r.threshold == Some(chosen))
        .collect())
}

/// Every row of the table, columns found by name.
pub(super) fn read_rows(table: &Path) -> Result<Vec<Row>> {
    let fail = |why: String| DrawError::file(table, why);
    let mut reader =
        csv::Reader::from_path(table).map_err(|e| fail(format!("cannot read: {e}")))?;
    let header = reader
        .headers()
        .map_err(|e| fail(format!("cannot read the header: {e}")))?
        .clone();
    let column = |name: &str| header.iter().position(|h| h == name);
    let missing: Vec<&str> = COLUMNS
        .iter()
        .copied()
        .filter(|n| column(n).is_none())
        .collect();
    if !missing.is_empty() {
        return Err(fail(format!(
            "not a regional table of compare: no column {}; expected the columns {}",
            missing.join(", "),
            COLUMNS.join(", ")
        )));
    }
    let at = |name: &str| column(name).unwrap_or(usize::MAX);
    let mut rows = Vec::new();
    for (line, record) in reader.records().enumerate() {
        let record = record.map_err(|e| fail(format!("row {}: {e}", line + 2)))?;
        let text = |i: usize| record.get(i).unwrap_or("").to_string();
        let number = |name: &str| -> Result<Option<f64>> {
            let cell = text(at(name));
            if cell.is_empty() {
                return Ok(None);
            }
            cell.parse().map(Some).map_err(|_| {
                fail(format!(
                    "row {}, column {name}: '{cell}' is not a number",
                    line + 2
                ))
            })
        };
        rows.push(Row {
            run: text(at("run")),
            region: text(at("region")),
            layer: text(at("layer")),
            period: text(at("period")),
            time: text(at("time")),
            year: number("year")?.map(|y| y as i64),
            quantity: text(at("quantity")),
            statistic: text(at("statistic")),
            threshold: number("threshold")?,
            value: number("value")?,
            units: text(at("units")),
            note: text(at("note")),
        });
    }
    Ok(rows)
}
