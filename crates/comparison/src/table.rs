//! The regional table: one tidy CSV row per run, region, layer, time step or window, quantity
//! and statistic, with units in their own column; and the time of emergence of each region.
//!
//! Columns: `run, region, layer, period, window, time, year, quantity, statistic, threshold,
//! value, units, note`. `period` is `time_step` (one row per step: `time` the middle of the
//! step, `year` its year), `window` (the mean over the window's years of the annual means of
//! the step values) or `run` (the time of emergence). `layer` is empty for 2-D fields (e.g.
//! horizon depths, averaged over the columns that have one). Statistics: `mean` (area-weighted
//! over the surface layer and 2-D fields, volume-weighted over other layers),
//! `fraction_below` (of the area or volume with a value, below `threshold`),
//! `area_with_value` / `volume_with_value` \[m2, m3\], `emergence_year` (`note` holds the
//! status: emerged, emerged_from_first_year, not_emerged_by_end_of_run, no_data).

use crate::error::{ComparisonError, Result};
use crate::plan::{ComparisonPlan, PlannedRun};
use crate::stream::StepRows;
use acidscape_analysis::emergence::{time_of_emergence, Emergence};
use acidscape_analysis::regions::{LayerKind, RegionRow, Weighting};
use acidscape_analysis::windows::annual_series;
use std::collections::BTreeMap;
use std::path::Path;

/// The header of the CSV.
pub const COLUMNS: [&str; 13] = [
    "run",
    "region",
    "layer",
    "period",
    "window",
    "time",
    "year",
    "quantity",
    "statistic",
    "threshold",
    "value",
    "units",
    "note",
];

/// One row of the regional table.
#[derive(Clone, Debug, PartialEq)]
pub struct TableRow {
    /// Run label.
    pub run: String,
    /// Region name.
    pub region: String,
    /// Layer name, empty for 2-D fields.
    pub layer: String,
    /// `time_step`, `window` or `run`.
    pub period: &'static str,
    /// Window name (window rows).
    pub window: String,
    /// Middle of the step, `YYYY-MM-DD` in the run's calendar (step rows).
    pub time: String,
    /// Year of the step (step rows) or of emergence.
    pub year: Option<i64>,
    /// The field (e.g. `omega_aragonite`).
    pub quantity: String,
    /// `mean`, `fraction_below`, `area_with_value`, `volume_with_value`, `emergence_year`.
    pub statistic: &'static str,
    /// Threshold of a `fraction_below`.
    pub threshold: Option<f64>,
    /// The value; empty where undefined.
    pub value: Option<f64>,
    /// Units of the value.
    pub units: String,
    /// Status words (emergence).
    pub note: String,
}

/// One statistic of a regional row, as (statistic, threshold, value, units).
type Statistic = (&'static str, Option<f64>, Option<f64>, String);

fn statistics_of(row: &RegionRow) -> Vec<Statistic> {
    let (weight_name, weight_units) = match row.weighting {
        Weighting::Area => ("area_with_value", "m2"),
        Weighting::Volume => ("volume_with_value", "m3"),
    };
    let mut out = vec![("mean", None, row.mean, row.units.clone())];
    for &(t, fraction) in &row.fraction_below {
        out.push(("fraction_below", Some(t), fraction, "1".into()));
    }
    out.push((weight_name, None, Some(row.weight), weight_units.into()));
    out
}

/// Key of one regional series: region, layer, quantity, statistic, threshold bits.
type SeriesKey = (String, String, String, &'static str, Option<u64>);

/// Every row of the table, in run order: step rows, window rows, emergence rows.
pub fn build(plan: &ComparisonPlan, per_run: &[StepRows]) -> Result<Vec<TableRow>> {
    let mut table = Vec::new();
    for (run, steps) in plan.runs.iter().zip(per_run) {
        let time = run
            .file
            .time()
            .ok_or_else(|| ComparisonError::file(run.file.path(), "has no time axis"))?;
        let mut series: BTreeMap<SeriesKey, (String, Vec<f64>)> = BTreeMap::new();
        let mut order: Vec<SeriesKey> = Vec::new();
        for (step, rows) in steps.iter().enumerate() {
            let date = time.midpoint(step)?;
            let when = format!("{:04}-{:02}-{:02}", date.year, date.month, date.day);
            for row in rows {
                let layer = row.layer.clone().unwrap_or_default();
                for (statistic, threshold, value, units) in statistics_of(row) {
                    let key = (
                        row.region.clone(),
                        layer.clone(),
                        row.field.clone(),
                        statistic,
                        threshold.map(f64::to_bits),
                    );
                    let entry = series.entry(key.clone()).or_insert_with(|| {
                        order.push(key.clone());
                        (units.clone(), Vec::with_capacity(steps.len()))
                    });
                    entry.1.push(value.unwrap_or(f64::NAN));
                    table.push(TableRow {
                        run: run.label.clone(),
                        region: row.region.clone(),
                        layer: layer.clone(),
                        period: "time_step",
                        window: String::new(),
                        time: when.clone(),
                        year: Some(time.years[step]),
                        quantity: row.field.clone(),
                        statistic,
                        threshold,
                        value,
                        units,
                        note: String::new(),
                    });
                }
            }
        }
        for key in &order {
            let (units, values) = &series[key];
            let annual = annual_series(&time.years, values, &time.lengths_days)
                .map_err(|e| ComparisonError::file(run.file.path(), e.to_string()))?;
            for window in &plan.windows {
                let in_window: Vec<f64> = annual
                    .iter()
                    .filter(|(y, v, _)| window.contains(*y) && run.is_complete(*y) && !v.is_nan())
                    .map(|(_, v, _)| *v)
                    .collect();
                let mean = (!in_window.is_empty())
                    .then(|| in_window.iter().sum::<f64>() / in_window.len() as f64);
                table.push(series_row(
                    run,
                    key,
                    units,
                    "window",
                    &window.name,
                    None,
                    mean,
                    "",
                ));
            }
        }
        table.extend(emergence_rows(plan, run, &series)?);
    }
    Ok(table)
}

#[allow(clippy::too_many_arguments)]
fn series_row(
    run: &PlannedRun,
    key: &SeriesKey,
    units: &str,
    period: &'static str,
    window: &str,
    year: Option<i64>,
    value: Option<f64>,
    note: &str,
) -> TableRow {
    TableRow {
        run: run.label.clone(),
        region: key.0.clone(),
        layer: key.1.clone(),
        period,
        window: window.to_string(),
        time: String::new(),
        year,
        quantity: key.2.clone(),
        statistic: key.3,
        threshold: key.4.map(f64::from_bits),
        value,
        units: units.to_string(),
        note: note.to_string(),
    }
}

/// The words of an emergence status (CF flag meanings).
pub fn emergence_words(e: Emergence) -> &'static str {
    let meanings: Vec<&'static str> = Emergence::FLAG_MEANINGS.split(' ').collect();
    meanings[e.flag_value() as usize]
}

/// Time of emergence of each region's mean of the emergence field (over the surface layer for
/// 3-D fields), by the rule users chose.
fn emergence_rows(
    plan: &ComparisonPlan,
    run: &PlannedRun,
    series: &BTreeMap<SeriesKey, (String, Vec<f64>)>,
) -> Result<Vec<TableRow>> {
    let Some(spec) = &plan.emergence else {
        return Ok(Vec::new());
    };
    let field = plan.fields.iter().find(|f| f.name == spec.field);
    let layer = match field {
        Some(f) if f.has_levels => plan
            .layers
            .iter()
            .find(|l| l.kind == LayerKind::SurfaceCell)
            .map(|l| l.name.clone())
            .unwrap_or_default(),
        _ => String::new(),
    };
    let time = run
        .file
        .time()
        .ok_or_else(|| ComparisonError::file(run.file.path(), "has no time axis"))?;
    let reference = &plan.windows[plan.reference];
    let fail = |e: &dyn std::fmt::Display| ComparisonError::file(run.file.path(), e.to_string());
    let mut rows = Vec::new();
    for region in plan.regions.set.names() {
        let key: SeriesKey = (region, layer.clone(), spec.field.clone(), "mean", None);
        let Some((_, values)) = series.get(&key) else {
            continue;
        };
        let annual: Vec<(i64, f64)> = annual_series(&time.years, values, &time.lengths_days)
            .map_err(|e| fail(&e))?
            .into_iter()
            .filter(|(y, _, _)| run.is_complete(*y))
            .map(|(y, v, _)| (y, v))
            .collect();
        let in_reference: Vec<f64> = annual
            .iter()
            .filter(|(y, _)| reference.contains(*y))
            .map(|(_, v)| *v)
            .collect();
        let test = spec.rule.test_for(&in_reference).map_err(|e| fail(&e))?;
        let years: Vec<i64> = annual.iter().map(|(y, _)| *y).collect();
        let means: Vec<f64> = annual.iter().map(|(_, v)| *v).collect();
        let e = time_of_emergence(&years, &means, test.as_ref()).map_err(|e| fail(&e))?;
        let value = e.year().map(|y| y as f64);
        let row_key: SeriesKey = (key.0, key.1, key.2, "emergence_year", None);
        rows.push(series_row(
            run,
            &row_key,
            "calendar year",
            "run",
            "",
            e.year(),
            value,
            emergence_words(e),
        ));
    }
    Ok(rows)
}

fn number(x: Option<f64>) -> String {
    x.map(|v| format!("{v}")).unwrap_or_default()
}

/// Writes the table atomically: `.NAME.partial` beside `path`, renamed by [`commit`].
pub fn write_partial(path: &Path, rows: &[TableRow]) -> Result<std::path::PathBuf> {
    let partial = crate::output::partial_path(path);
    let fail = |e: &dyn std::fmt::Display| ComparisonError::Output {
        path: path.to_path_buf(),
        message: e.to_string(),
    };
    let mut writer = csv::Writer::from_path(&partial).map_err(|e| fail(&e))?;
    writer.write_record(COLUMNS).map_err(|e| fail(&e))?;
    for r in rows {
        let year = r.year.map(|y| y.to_string()).unwrap_or_default();
        let record = [
            r.run.as_str(),
            &r.region,
            &r.layer,
            r.period,
            &r.window,
            &r.time,
            &year,
            &r.quantity,
            r.statistic,
            &number(r.threshold),
            &number(r.value),
            &r.units,
            &r.note,
        ];
        writer.write_record(record).map_err(|e| fail(&e))?;
    }
    writer.flush().map_err(|e| fail(&e))?;
    Ok(partial)
}

/// Gives a written partial table its final name.
pub fn commit(partial: &Path, path: &Path) -> Result<()> {
    std::fs::rename(partial, path).map_err(|e| ComparisonError::Output {
        path: path.to_path_buf(),
        message: format!("cannot rename {}: {e}", partial.display()),
    })
}
