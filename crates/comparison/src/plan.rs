//! The two stages of the options: a [`ComparisonRequest`] as users typed it, and the
//! [`ComparisonPlan`] it becomes once every file is opened and every option checked, before
//! any output is touched.

use crate::consistency::{check_comparable, select_fields, FieldPlan};
use crate::error::{ComparisonError, Result};
use crate::options::{
    parse_emergence, parse_layers, parse_numbers, parse_run, parse_statistics, EmergenceSpec,
    Statistic,
};
use crate::regions_input::{load_regions, Regions};
use acidscape_analysis::regions::{Layer, LayerKind};
use acidscape_analysis::windows::{parse_windows, TimeWindow};
use acidscape_gridio::IndicatorFile;
use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

/// The options of a comparison as users give them (the command line's raw values).
#[derive(Clone, Debug, Default)]
pub struct ComparisonRequest {
    /// Runs as `LABEL=FILE`; the first is the baseline of differences between runs.
    pub runs: Vec<String>,
    /// Windows as `NAME=FIRST-LAST`, one or several per item.
    pub windows: Vec<String>,
    /// The window changes are measured from (default: the first).
    pub reference_window: Option<String>,
    /// Fields to compare (default: every indicator and horizon depth of the first run).
    pub fields: Option<String>,
    /// Statistics, e.g. `mean,min,max,p90` (the mean is always computed).
    pub statistics: Option<String>,
    /// Regions: a `.toml` region file or a NetCDF mask (`FILE` or `FILE:VARIABLE`).
    pub regions: Option<String>,
    /// Depth layers, e.g. `surface,0-200,200-1000,1000-`.
    pub layers: Option<String>,
    /// Emergence rule, e.g. `omega_aragonite<1` or `ph:2sd:below`.
    pub emergence: Option<String>,
    /// Ω thresholds for fractions below (default: 1 and those of the runs' extra horizons).
    pub omega_thresholds: Option<String>,
    /// The NetCDF output.
    pub output: PathBuf,
    /// The regional CSV (default: the output with extension `.csv`).
    pub table: Option<PathBuf>,
    /// Replace existing outputs.
    pub overwrite: bool,
    /// Memory the per-cell accumulators may use \[bytes\].
    pub memory_budget_bytes: usize,
    /// Target size of one chunk of one output variable \[bytes\] (usually
    /// [`crate::CHUNK_BYTES`]; smaller in tests, to have a small grid in several chunks).
    pub chunk_bytes: usize,
    /// The `history` attribute: when and with what command line (e.g.
    /// "2026-12-02T10:00:00Z: acidscape compare ...").
    pub history: String,
}

/// One run, opened, with the steps of each window.
#[derive(Debug)]
pub struct PlannedRun {
    /// The label users gave.
    pub label: String,
    /// The output of `compute`.
    pub file: IndicatorFile,
    /// Per window (plan order): the steps it selects.
    pub window_steps: Vec<Vec<usize>>,
    /// Calendar years the run covers in full (partial years give no annual mean).
    pub complete_years: Vec<i64>,
}

impl PlannedRun {
    /// Whether the run covers `year` in full.
    pub fn is_complete(&self, year: i64) -> bool {
        self.complete_years.binary_search(&year).is_ok()
    }
}

/// A validated comparison: every file open, every option checked.
#[derive(Debug)]
pub struct ComparisonPlan {
    /// The runs, baseline first.
    pub runs: Vec<PlannedRun>,
    /// The windows, in the order given.
    pub windows: Vec<TimeWindow>,
    /// Index of the reference window in `windows`.
    pub reference: usize,
    /// The fields compared.
    pub fields: Vec<FieldPlan>,
    /// The per-cell statistics (the mean first).
    pub statistics: Vec<Statistic>,
    /// The regions.
    pub regions: Regions,
    /// The depth layers.
    pub layers: Vec<Layer>,
    /// The emergence rule, if any.
    pub emergence: Option<EmergenceSpec>,
    /// The NetCDF output.
    pub output: PathBuf,
    /// The regional CSV.
    pub table: PathBuf,
    /// Replace existing outputs.
    pub overwrite: bool,
    /// Memory the per-cell accumulators may use \[bytes\].
    pub memory_budget_bytes: usize,
    /// Target size of one chunk of one output variable \[bytes\].
    pub chunk_bytes: usize,
    /// The `history` attribute.
    pub history: String,
}

impl ComparisonPlan {
    /// Opens every run and checks every option; nothing is written.
    pub fn new(request: &ComparisonRequest) -> Result<ComparisonPlan> {
        let windows = parse_windows(&request.windows)
            .map_err(|e| ComparisonError::option("--window", e.to_string()))?;
        if windows.is_empty() {
            return Err(ComparisonError::option(
                "--window",
                "give at least one window, e.g. --window reference=2015-2034 --window late=2081-2100",
            ));
        }
        let reference = match &request.reference_window {
            None => 0,
            Some(name) => windows
                .iter()
                .position(|w| &w.name == name)
                .ok_or_else(|| {
                    ComparisonError::option(
                        "--reference-window",
                        format!("'{name}' is none of the windows given"),
                    )
                })?,
        };
        let statistics = parse_statistics(request.statistics.as_deref().unwrap_or("mean"))?;
        let inputs = parse_runs(&request.runs)?;
        let output = request.output.clone();
        let table = request
            .table
            .clone()
            .unwrap_or_else(|| output.with_extension("csv"));
        check_outputs(&output, &table, &inputs, request.overwrite)?;
        let emergence = request
            .emergence
            .as_deref()
            .map(|text| parse_emergence(text, &windows[reference]))
            .transpose()?;
        let mut runs = Vec::with_capacity(inputs.len());
        for (label, path) in inputs {
            let file = IndicatorFile::open(&path)?;
            runs.push(plan_run(label, file, &windows)?);
        }
        let fields = fields_to_compare(request, &runs, emergence.as_ref())?;
        let first = &runs[0].file;
        let regions = load_regions(request.regions.as_deref(), first.grid())?;
        let layers = choose_layers(
            request.layers.as_deref(),
            &regions,
            first,
            &fields,
            &emergence,
        )?;
        Ok(ComparisonPlan {
            runs,
            windows,
            reference,
            fields,
            statistics,
            regions,
            layers,
            emergence,
            output,
            table,
            overwrite: request.overwrite,
            memory_budget_bytes: request.memory_budget_bytes,
            chunk_bytes: request.chunk_bytes.max(1),
            history: request.history.clone(),
        })
    }

    /// The baseline run (the first given).
    pub fn baseline(&self) -> &PlannedRun {
        &self.runs[0]
    }
}

fn parse_runs(items: &[String]) -> Result<Vec<(String, PathBuf)>> {
    if items.is_empty() {
        return Err(ComparisonError::option(
            "run",
            "give at least one run as LABEL=FILE, e.g. moderate=out/moderate.nc",
        ));
    }
    let mut out: Vec<(String, PathBuf)> = Vec::new();
    for item in items {
        let run = parse_run(item)?;
        if out.iter().any(|(label, _)| *label == run.label) {
            return Err(ComparisonError::option(
                "run",
                format!("two runs are labelled '{}'", run.label),
            ));
        }
        out.push((run.label, run.path));
    }
    Ok(out)
}

/// The fields: those asked for (or all of the first run), with the emergence field, each
/// present with the same units and shape in every run.
fn fields_to_compare(
    request: &ComparisonRequest,
    runs: &[PlannedRun],
    emergence: Option<&EmergenceSpec>,
) -> Result<Vec<FieldPlan>> {
    let thresholds = request
        .omega_thresholds
        .as_deref()
        .map(|t| parse_numbers("--omega-thresholds", t))
        .transpose()?;
    let first = &runs[0].file;
    let mut fields = select_fields(first, request.fields.as_deref(), thresholds.as_deref())?;
    if let Some(spec) = emergence {
        if !fields.iter().any(|f| f.name == spec.field) {
            let extra = select_fields(first, Some(&spec.field), thresholds.as_deref())
                .map_err(|e| ComparisonError::option("--emergence", e.to_string()))?;
            fields.extend(extra);
        }
    }
    for other in &runs[1..] {
        check_comparable(first, &other.file, &fields)?;
    }
    Ok(fields)
}

/// Calendar year length \[days\] in a calendar.
fn year_length_days(calendar: acidscape_gridio::calendar::Calendar, year: i64) -> f64 {
    (1..=12)
        .map(|m| f64::from(calendar.days_in_month(year, m)))
        .sum()
}

/// Allowance for a year's covered length against its calendar length \[days\]: time bounds
/// derived half-way between values make annual steps of a mixed calendar 365.5 days long.
const YEAR_LENGTH_TOLERANCE_DAYS: f64 = 1.5;

fn plan_run(label: String, file: IndicatorFile, windows: &[TimeWindow]) -> Result<PlannedRun> {
    let time = file.time().ok_or_else(|| {
        ComparisonError::file(
            file.path(),
            "has no time axis; a comparison over windows of years needs a run with time steps",
        )
    })?;
    let mut covered: BTreeMap<i64, f64> = BTreeMap::new();
    for (year, days) in time.years.iter().zip(&time.lengths_days) {
        *covered.entry(*year).or_default() += days;
    }
    let complete_years: Vec<i64> = covered
        .iter()
        .filter(|(&year, &days)| {
            (days - year_length_days(time.calendar(), year)).abs() <= YEAR_LENGTH_TOLERANCE_DAYS
        })
        .map(|(&year, _)| year)
        .collect();
    let mut window_steps = Vec::with_capacity(windows.len());
    for window in windows {
        let selection = window.select(&time.years);
        selection
            .require_complete()
            .map_err(|e| ComparisonError::file(file.path(), e.to_string()))?;
        if let Some(year) = (window.first_year..=window.last_year)
            .find(|y| complete_years.binary_search(y).is_err())
        {
            return Err(ComparisonError::file(
                file.path(),
                format!(
                    "time window '{}': the run covers only {:.1} of the {} days of {year} ({} calendar); windows need whole years",
                    window.name,
                    covered[&year],
                    year_length_days(time.calendar(), year),
                    time.calendar().cf_name()
                ),
            ));
        }
        window_steps.push(selection.steps);
    }
    Ok(PlannedRun {
        label,
        file,
        window_steps,
        complete_years,
    })
}

/// The same file on disk (paths compared after resolving links and `..`).
fn same_file(a: &Path, b: &Path) -> bool {
    let resolve = |p: &Path| {
        let parent = p.parent().filter(|d| !d.as_os_str().is_empty());
        let dir = parent.map_or_else(|| std::fs::canonicalize("."), std::fs::canonicalize);
        dir.map(|d| d.join(p.file_name().unwrap_or_default()))
    };
    match (resolve(a), resolve(b)) {
        (Ok(x), Ok(y)) => x == y,
        _ => a == b,
    }
}

/// Outputs must not be inputs, must differ from each other, and exist only with --overwrite.
fn check_outputs(
    output: &Path,
    table: &Path,
    inputs: &[(String, PathBuf)],
    overwrite: bool,
) -> Result<()> {
    if same_file(output, table) {
        return Err(ComparisonError::option(
            "--table",
            format!("{} is also the NetCDF output", table.display()),
        ));
    }
    for (option, path) in [("--output", output), ("--table", table)] {
        if let Some((label, _)) = inputs.iter().find(|(_, input)| same_file(path, input)) {
            return Err(ComparisonError::option(
                option,
                format!(
                    "{} is the input of run '{label}'; inputs are never written",
                    path.display()
                ),
            ));
        }
        if path.exists() && !overwrite {
            return Err(ComparisonError::option(
                option,
                format!("{} exists; pass --overwrite to replace it", path.display()),
            ));
        }
        let parent = path.parent().filter(|d| !d.as_os_str().is_empty());
        if let Some(dir) = parent.filter(|d| !d.is_dir()) {
            return Err(ComparisonError::option(
                option,
                format!("folder {} does not exist", dir.display()),
            ));
        }
    }
    Ok(())
}

/// Layers from the option, else from the region file, else the surface cell and the whole
/// column; the surface cell is added when emergence looks at a 3-D field's surface.
fn choose_layers(
    option: Option<&str>,
    regions: &Regions,
    file: &IndicatorFile,
    fields: &[FieldPlan],
    emergence: &Option<EmergenceSpec>,
) -> Result<Vec<Layer>> {
    let surface = || Layer::new("surface", LayerKind::SurfaceCell);
    let mut layers = match option {
        Some(text) => parse_layers(text)?,
        None if !regions.layers.is_empty() => regions.layers.clone(),
        None if file.levels() == 1 => {
            vec![surface().map_err(|e| ComparisonError::option("--layers", e.to_string()))?]
        }
        None => vec![
            surface().map_err(|e| ComparisonError::option("--layers", e.to_string()))?,
            Layer::new("whole column", LayerKind::WholeColumn)
                .map_err(|e| ComparisonError::option("--layers", e.to_string()))?,
        ],
    };
    let emergence_on_cells = emergence
        .as_ref()
        .is_some_and(|e| fields.iter().any(|f| f.name == e.field && f.has_levels));
    let has_surface = layers.iter().any(|l| l.kind == LayerKind::SurfaceCell);
    if emergence_on_cells && !has_surface {
        let name = if layers.iter().any(|l| l.name == "surface") {
            "surface cell"
        } else {
            "surface"
        };
        let layer = Layer::new(name, LayerKind::SurfaceCell)
            .map_err(|e| ComparisonError::option("--layers", e.to_string()))?;
        layers.insert(0, layer);
    }
    Ok(layers)
}
