//! `draw series`: a regional quantity from the table `compare` writes, every run on one plot,
//! the reference window shaded and each run's year of emergence marked.

use crate::caption;
use crate::error::{DrawError, Result};
use crate::naming::quantity_words;
use crate::options::{parse_years, Page, PageRequest};
use crate::source::parse_windows;
use crate::{title, Drawn};
use acidscape_comparison::COLUMNS;
use acidscape_figures::{Captions, Figure, Series, SeriesSpec};
use acidscape_gridio::IndicatorFile;
use std::path::{Path, PathBuf};

/// A time series as asked for on the command line.
#[derive(Clone, Debug)]
pub struct SeriesRequest {
    /// The regional CSV of `compare`.
    pub table: PathBuf,
    /// The quantity (a field of the runs, e.g. `omega_aragonite`).
    pub quantity: String,
    /// The region (may be left out when the table has one).
    pub region: Option<String>,
    /// The depth layer (default `surface`; ignored for 2-D fields, which have none).
    pub layer: Option<String>,
    /// `mean` (default), `fraction_below`, `area_with_value` or `volume_with_value`.
    pub statistic: Option<String>,
    /// The threshold of a `fraction_below`.
    pub threshold: Option<f64>,
    /// The reference window's years, `FIRST-LAST` (default: from the comparison's NetCDF).
    pub reference_years: Option<String>,
    /// The comparison's NetCDF output (default: the table's path with `.nc`), for the
    /// windows, the emergence rule and the constants.
    pub comparison: Option<PathBuf>,
    /// Output and page.
    pub page: PageRequest,
}

/// The rows of the table that matter here.
#[derive(Clone, Debug)]
struct Row {
    run: String,
    region: String,
    layer: String,
    period: String,
    time: String,
    year: Option<i64>,
    quantity: String,
    statistic: String,
    threshold: Option<f64>,
    value: Option<f64>,
    units: String,
    note: String,
}

/// A time-series figure with every option checked.
pub struct SeriesPlan {
    series: Vec<Series>,
    spec: SeriesSpec,
    page: Page,
    notes: Vec<String>,
}

impl SeriesPlan {
    /// Reads the table (and the comparison's NetCDF beside it, if any) and checks the request.
    pub fn new(request: &SeriesRequest) -> Result<SeriesPlan> {
        let comparison = request
            .comparison
            .clone()
            .unwrap_or_else(|| request.table.with_extension("nc"));
        let page = Page::new(&request.page, &[&request.table, &comparison])?;
        let rows = read_rows(&request.table)?;
        let quantity = &request.quantity;
        let statistic = request.statistic.as_deref().unwrap_or("mean");
        let table = &request.table;
        let wanted: Vec<&Row> = rows
            .iter()
            .filter(|r| r.period == "time_step" && r.quantity == *quantity)
            .collect();
        if wanted.is_empty() {
            return Err(refusal(table, "quantity", quantity, &rows, |r| &r.quantity));
        }
        let region = match &request.region {
            Some(region) => region.clone(),
            None => only_one(table, "region", &wanted, |r| &r.region)?,
        };
        let wanted: Vec<&Row> = wanted.into_iter().filter(|r| r.region == region).collect();
        if wanted.is_empty() {
            return Err(refusal(table, "region", &region, &rows, |r| &r.region));
        }
        let two_d = wanted.iter().all(|r| r.layer.is_empty());
        let layer = if two_d {
            String::new()
        } else {
            request
                .layer
                .clone()
                .unwrap_or_else(|| "surface".to_string())
        };
        let wanted: Vec<&Row> = wanted.into_iter().filter(|r| r.layer == layer).collect();
        if wanted.is_empty() {
            return Err(refusal(table, "layer", &layer, &rows, |r| &r.layer));
        }
        let wanted: Vec<&Row> = wanted
            .into_iter()
            .filter(|r| r.statistic == statistic)
            .collect();
        if wanted.is_empty() {
            return Err(refusal(table, "statistic", statistic, &rows, |r| {
                &r.statistic
            }));
        }
        let wanted = with_threshold(table, wanted, request.threshold)?;
        let windows = Windows::read(&comparison, request.reference_years.as_deref())?;
        let mut notes = Vec::new();
        if windows.reference.is_none() {
            notes.push(format!(
                "no reference window shaded: {} was not found and --reference-years was not given",
                comparison.display()
            ));
        }
        let (series, emergence_words) = build_series(&rows, &wanted, &region, quantity);
        let emergence_shown =
            emergence_words.is_some() || series.iter().any(|s| s.emergence_year.is_some());
        let units = wanted[0].units.clone();
        let words = quantity_words(quantity, None);
        let measured = match statistic {
            "fraction_below" => format!(
                "share of the {} with {words} below {}",
                if layer == "surface" || two_d {
                    "area"
                } else {
                    "volume"
                },
                wanted[0].threshold.map_or(String::new(), |t| t.to_string())
            ),
            "mean" => words.clone(),
            other => format!("{words}, {other}"),
        };
        let (before, after) = match layer.as_str() {
            "" => (String::new(), String::new()),
            "surface" => ("surface ".to_string(), String::new()),
            "column" => ("whole-column ".to_string(), String::new()),
            other => (String::new(), format!(" in the {} layer", en_dashes(other))),
        };
        let first = wanted
            .iter()
            .filter_map(|r| r.year)
            .min()
            .unwrap_or_default();
        let last = wanted
            .iter()
            .filter_map(|r| r.year)
            .max()
            .unwrap_or_default();
        let made_title = title(&[
            region.clone(),
            format!("{before}{measured}{after}"),
            format!("regional mean, {first}–{last}"),
        ]);
        let weighting = match (statistic, layer.as_str()) {
            ("mean", "") => "Area-weighted mean over the region's columns with a value.",
            ("mean", "surface") => "Area-weighted mean over the region's surface cells.",
            ("mean", _) => "Volume-weighted mean over the region's cells in the layer.",
            _ => "",
        };
        let caption = caption::join(&[
            windows.synthetic.clone(),
            page.note.clone(),
            windows.constants.clone(),
            Some(format!("{weighting} From {}.", file_name(table))),
            emergence_words,
            windows
                .rule
                .as_ref()
                .filter(|_| emergence_shown)
                .map(|r| emergence_rule_words(r)),
        ]);
        let quantity_label = if statistic == "mean" { words } else { measured };
        let text = Captions::new(
            page.title.clone().unwrap_or(made_title),
            quantity_label,
            units,
        )
        .with_caption(caption);
        let mut spec = SeriesSpec::new(text);
        spec.reference = windows.reference;
        spec.page = page.size;
        Ok(SeriesPlan {
            series,
            spec,
            page,
            notes,
        })
    }

    /// The runs as they will be drawn.
    pub fn series(&self) -> &[Series] {
        &self.series
    }

    /// The reference window shaded (first and last year).
    pub fn reference(&self) -> Option<(f64, f64)> {
        self.spec.reference
    }

    /// The title the figure will carry.
    pub fn title(&self) -> &str {
        &self.spec.text.title
    }

    /// Draws the series.
    pub fn render(&self) -> Result<(Figure, Vec<String>)> {
        let figure = acidscape_figures::render_series(&self.series, &self.spec)?;
        Ok((figure, self.notes.clone()))
    }

    /// Draws the series and writes the PNG.
    pub fn draw(&self) -> Result<Drawn> {
        let (figure, notes) = self.render()?;
        Drawn::save(&figure, &self.page, notes)
    }
}

/// The comparison's emergence rule (written per column) as it applies to a regional mean: its
/// first clause, e.g. "Emergence of the regional mean: the first year from which the annual
/// mean of omega_aragonite stays below ... in every later year of the run."
fn emergence_rule_words(rule: &str) -> String {
    let first = rule.split(';').next().unwrap_or(rule).trim();
    let first = first.strip_prefix("the surface cell's ").unwrap_or(first);
    let first = first.strip_prefix("the ").unwrap_or(first);
    format!("Emergence of the regional mean: the {first}.")
}

/// "200-1000 m" → "200–1000 m": an en dash between numbers.
fn en_dashes(text: &str) -> String {
    let chars: Vec<char> = text.chars().collect();
    chars
        .iter()
        .enumerate()
        .map(|(k, &c)| {
            let digit = |at: Option<&char>| at.is_some_and(char::is_ascii_digit);
            if c == '-' && k > 0 && digit(chars.get(k - 1)) && digit(chars.get(k + 1)) {
                '–'
            } else {
                c
            }
        })
        .collect()
}

fn file_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

/// An error naming what the table does hold for a column.
fn refusal(
    table: &Path,
    what: &str,
    given: &str,
    rows: &[Row],
    field: impl Fn(&Row) -> &String,
) -> DrawError {
    let mut seen: Vec<&str> = Vec::new();
    for row in rows.iter().filter(|r| r.period == "time_step") {
        let value = field(row).as_str();
        if !seen.contains(&value) {
            seen.push(value);
        }
    }
    let listed: Vec<String> = seen
        .iter()
        .map(|s| {
            if s.is_empty() {
                "(none, for 2-D fields)".to_string()
            } else {
                format!("'{s}'")
            }
        })
        .collect();
    DrawError::file(
        table,
        format!(
            "no time-step rows with {what} '{given}' (among the other choices); the table has {what}s {}",
            listed.join(", ")
        ),
    )
}

/// The single value of a column among `rows`, or an error listing them.
fn only_one(
    table: &Path,
    what: &str,
    rows: &[&Row],
    field: impl Fn(&Row) -> &String,
) -> Result<String> {
    let mut seen: Vec<&String> = Vec::new();
    for row in rows {
        if !seen.contains(&field(row)) {
            seen.push(field(row));
        }
    }
    match seen.as_slice() {
        [one] => Ok((*one).clone()),
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

/// One series per run (in the table's order) and the caption's words on emergence.
fn build_series(
    rows: &[Row],
    wanted: &[&Row],
    region: &str,
    quantity: &str,
) -> (Vec<Series>, Option<String>) {
    let mut runs: Vec<&str> = Vec::new();
    for r in wanted {
        if !runs.contains(&r.run.as_str()) {
            runs.push(&r.run);
        }
    }
    let mut words = Vec::new();
    let series = runs
        .iter()
        .map(|&run| {
            let own: Vec<&&Row> = wanted.iter().filter(|r| r.run == run).collect();
            let years: Vec<i64> = own.iter().filter_map(|r| r.year).collect();
            let annual = years.windows(2).all(|w| w[1] > w[0]);
            let (xs, values): (Vec<f64>, Vec<f64>) = own
                .iter()
                .filter_map(|r| {
                    let x = if annual {
                        r.year? as f64
                    } else {
                        decimal_year(&r.time)?
                    };
                    Some((x, r.value.unwrap_or(f64::NAN)))
                })
                .unzip();
            let emergence = rows.iter().find(|r| {
                r.period == "run"
                    && r.statistic == "emergence_year"
                    && r.run == run
                    && r.region == region
                    && r.quantity == quantity
            });
            let emergence_year = match emergence {
                Some(e) if e.note == "emerged" => e.value,
                Some(e) if e.note.is_empty() => e.value,
                Some(e) => {
                    words.push(format!("{run}: {}", e.note.replace('_', " ")));
                    None
                }
                None => None,
            };
            Series {
                label: run.to_string(),
                years: xs,
                values,
                emergence_year,
            }
        })
        .collect();
    let words = (!words.is_empty()).then(|| format!("Emergence status: {}.", words.join("; ")));
    (series, words)
}

/// "2095-04-16" → 2095.29 (the month's middle; fine for placing a point on a plot).
fn decimal_year(time: &str) -> Option<f64> {
    let mut parts = time.split('-').map(|p| p.parse::<f64>().ok());
    let (year, month, day) = (parts.next()??, parts.next()??, parts.next()??);
    Some(year + ((month - 1.0) + (day - 0.5) / 31.0) / 12.0)
}

fn read_rows(table: &Path) -> Result<Vec<Row>> {
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

/// What the comparison's NetCDF adds: the reference window's years, the emergence rule, the
/// constants and whether the data are synthetic.
struct Windows {
    reference: Option<(f64, f64)>,
    rule: Option<String>,
    constants: Option<String>,
    synthetic: Option<String>,
}

impl Windows {
    fn read(comparison: &Path, reference_years: Option<&str>) -> Result<Windows> {
        let given = reference_years
            .map(|text| parse_years("--reference-years", text))
            .transpose()?;
        let file = if comparison.exists() {
            Some(IndicatorFile::open(comparison)?)
        } else {
            None
        };
        let from_file = file.as_ref().and_then(|f| {
            let name = f.global_attribute("reference_window")?;
            let windows = f.global_attribute("time_windows")?;
            let window = parse_windows(&windows)
                .ok()?
                .into_iter()
                .find(|w| w.name == name)?;
            Some((window.first_year, window.last_year))
        });
        Ok(Windows {
            reference: given.or(from_file).map(|(a, b)| (a as f64, b as f64)),
            rule: file
                .as_ref()
                .and_then(|f| f.global_attribute("emergence_rule")),
            constants: file.as_ref().map(caption::constants),
            synthetic: file.as_ref().and_then(caption::synthetic),
        })
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn decimal_years_place_months() {
        let year = super::decimal_year("2095-07-16").unwrap();
        assert!((year - 2095.54).abs() < 0.01);
        assert!(super::decimal_year("2095").is_none());
        assert_eq!(super::en_dashes("200-1000 m"), "200–1000 m");
        assert_eq!(
            super::emergence_rule_words(
                "the surface cell's first year from which X; years skipped"
            ),
            "Emergence of the regional mean: the first year from which X."
        );
        assert_eq!(super::en_dashes("below-1000 m"), "below-1000 m");
    }
}
