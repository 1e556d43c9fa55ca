//! The corrosive-extent time series as a tidy CSV beside the output (`NAME.extent.csv` for
//! `NAME.nc`), read back from the output's time-series variables so that a resumed run writes
//! the same table, and the overview the end-of-run report shows.

use crate::column_output::{row_name, series_rows, DOUBLE_FILL};
use crate::columns::ColumnWork;
use crate::resume::sync_parent;
use crate::stream::sync_file;
use crate::PipelineError;
use acidscape_analysis::extent::Mineral;
use std::fmt;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The table written beside `output`: `NAME.extent.csv` for `NAME.nc`.
pub fn extent_table_path(output: &Path) -> PathBuf {
    output.with_extension("extent.csv")
}

/// Header of the table.
pub const TABLE_HEADER: &str = "time,step,quantity,mineral,threshold,value,units";

/// The first and last time step of the extent, for the end-of-run report.
#[derive(Clone, Debug, PartialEq)]
pub struct ExtentOverview {
    /// Where the table was written.
    pub table: PathBuf,
    /// Per reported step (the first and the last): its date and, per mineral, the fraction of
    /// the volume with known Ω below 1 and the mean horizon depth [m].
    pub steps: Vec<StepOverview>,
}

/// One step of the overview.
#[derive(Clone, Debug, PartialEq)]
pub struct StepOverview {
    pub date: String,
    pub step: usize,
    /// (mineral, volume fraction below Ω = 1, mean horizon depth [m]).
    pub minerals: Vec<(Mineral, Option<f64>, Option<f64>)>,
}

impl fmt::Display for ExtentOverview {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "corrosive water (omega < 1), every step in {}:",
            self.table.display()
        )?;
        for step in &self.steps {
            let parts: Vec<String> = step
                .minerals
                .iter()
                .map(|(m, fraction, depth)| {
                    let fraction =
                        fraction.map_or("no omega".to_string(), |x| format!("{:.1} %", 100.0 * x));
                    let depth = depth.map_or("no horizon".to_string(), |d| format!("{d:.0} m"));
                    format!(
                        "{}: {fraction} of the volume, mean horizon depth {depth}",
                        m.name()
                    )
                })
                .collect();
            writeln!(
                f,
                "  step {} ({}): {}",
                step.step,
                step.date,
                parts.join("; ")
            )?;
        }
        Ok(())
    }
}

/// Reads the time series back from `file` (the finished partial output) and writes the table
/// beside `output`, atomically: a temporary file, flushed, then renamed.
pub(crate) fn write_extent_table(
    file: &netcdf::File,
    partial: &Path,
    output: &Path,
    dates: &[String],
    work: &ColumnWork,
) -> Result<ExtentOverview, PipelineError> {
    let rows = series_rows(work.plan());
    let mut series = Vec::with_capacity(rows.len());
    for row in &rows {
        let name = row_name(row);
        let var = file.variable(&name).ok_or_else(|| PipelineError::Output {
            path: partial.to_path_buf(),
            message: format!("variable '{name}' is missing"),
        })?;
        let values: Vec<f64> = if var.dimensions().is_empty() {
            vec![var
                .get_value::<f64, _>(())
                .map_err(|e| read_back(partial, &name, e))?]
        } else {
            var.get_values::<f64, _>(..)
                .map_err(|e| read_back(partial, &name, e))?
        };
        let values: Vec<Option<f64>> = values
            .into_iter()
            .map(|v| (v != DOUBLE_FILL).then_some(v))
            .collect();
        series.push((name, values));
    }
    let mut text = String::from(TABLE_HEADER);
    text.push('\n');
    for (step, date) in dates.iter().enumerate() {
        for (row, (_, values)) in rows.iter().zip(&series) {
            let value = values.get(step).copied().flatten();
            text.push_str(&format!(
                "{date},{},{},{},{},{},{}\n",
                step + 1,
                row.quantity,
                row.mineral.map_or("", Mineral::name),
                row.threshold.map_or(String::new(), |t| t.to_string()),
                value.map_or(String::new(), |v| v.to_string()),
                row.units
            ));
        }
    }
    let table = extent_table_path(output);
    write_atomically(&table, text.as_bytes())?;
    Ok(overview(table, dates, work, &series))
}

fn read_back(partial: &Path, name: &str, e: netcdf::Error) -> PipelineError {
    PipelineError::Output {
        path: partial.to_path_buf(),
        message: format!("cannot read '{name}' back for the extent table: {e}"),
    }
}

fn overview(
    table: PathBuf,
    dates: &[String],
    work: &ColumnWork,
    series: &[(String, Vec<Option<f64>>)],
) -> ExtentOverview {
    let value = |name: &str, step: usize| {
        series
            .iter()
            .find(|(n, _)| n == name)
            .and_then(|(_, v)| v.get(step).copied().flatten())
    };
    let mut reported = vec![0];
    if dates.len() > 1 {
        reported.push(dates.len() - 1);
    }
    let steps = reported
        .into_iter()
        .map(|step| StepOverview {
            date: dates[step].clone(),
            step: step + 1,
            minerals: work
                .plan()
                .minerals
                .iter()
                .map(|&m| {
                    let fraction = value(
                        &format!("volume_fraction_below_threshold_{}", m.name()),
                        step,
                    );
                    let depth = value(&format!("mean_horizon_depth_{}", m.name()), step);
                    (m, fraction, depth)
                })
                .collect(),
        })
        .collect();
    ExtentOverview { table, steps }
}

/// Writes `bytes` to `path` through a temporary file beside it, flushed and renamed.
fn write_atomically(path: &Path, bytes: &[u8]) -> Result<(), PipelineError> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let temporary = path.with_file_name(format!(".{name}.partial"));
    let failed = |e: std::io::Error| PipelineError::Output {
        path: path.to_path_buf(),
        message: format!("cannot write the extent table: {e}"),
    };
    let mut out = std::fs::File::create(&temporary).map_err(failed)?;
    out.write_all(bytes).map_err(failed)?;
    drop(out);
    sync_file(&temporary)?;
    std::fs::rename(&temporary, path).map_err(failed)?;
    sync_parent(path);
    Ok(())
}
