//! `draw series`: a regional quantity from the table `compare` writes, every run on one plot,
//! the reference window shaded and each run's year of emergence marked.

mod table;

use crate::caption;
use crate::error::Result;
use crate::naming::quantity_words;
use crate::options::{parse_years, Page, PageRequest};
use crate::source::parse_windows;
use crate::{title, Drawn};
use acidscape_figures::{Captions, Figure, Series, SeriesSpec};
use acidscape_gridio::IndicatorFile;
use std::path::{Path, PathBuf};
use table::{read_rows, select, Row, Selection};

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
        let chosen = select(&request.table, &rows, request)?;
        let windows = Windows::read(&comparison, request.reference_years.as_deref())?;
        let mut notes = Vec::new();
        if windows.reference.is_none() {
            notes.push(format!(
                "no reference window shaded: {} was not found and --reference-years was not given",
                comparison.display()
            ));
        }
        let (series, emergence_words) =
            build_series(&rows, &chosen.rows, &chosen.region, &request.quantity);
        let emergence_shown =
            emergence_words.is_some() || series.iter().any(|s| s.emergence_year.is_some());
        let words = SeriesWords::new(&chosen, &request.quantity);
        let caption = caption::join(&[
            windows.synthetic.clone(),
            page.note.clone(),
            windows.constants.clone(),
            Some(format!(
                "{} From {}.",
                words.weighting,
                file_name(&request.table)
            )),
            emergence_words,
            windows
                .rule
                .as_ref()
                .filter(|_| emergence_shown)
                .map(|r| emergence_rule_words(r)),
        ]);
        let title = page.title.clone().unwrap_or(words.title);
        let text =
            Captions::new(title, words.axis, chosen.rows[0].units.clone()).with_caption(caption);
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

/// The words of a series figure: its title, the value axis and how the values were weighted.
struct SeriesWords {
    title: String,
    axis: String,
    weighting: &'static str,
}

impl SeriesWords {
    fn new(chosen: &Selection, quantity: &str) -> SeriesWords {
        let (layer, statistic) = (chosen.layer.as_str(), chosen.statistic.as_str());
        let words = quantity_words(quantity, None);
        let measured = match statistic {
            "fraction_below" => format!(
                "share of the {} with {words} below {}",
                if matches!(layer, "surface" | "") {
                    "area"
                } else {
                    "volume"
                },
                chosen.rows[0]
                    .threshold
                    .map_or(String::new(), |t| t.to_string())
            ),
            "mean" => words.clone(),
            other => format!("{words}, {other}"),
        };
        let (before, after) = match layer {
            "" => (String::new(), String::new()),
            "surface" => ("surface ".to_string(), String::new()),
            "column" => ("whole-column ".to_string(), String::new()),
            other => (String::new(), format!(" in the {} layer", en_dashes(other))),
        };
        let years = chosen.rows.iter().filter_map(|r| r.year);
        let (first, last) = (years.clone().min(), years.max());
        let span = format!("{}–{}", first.unwrap_or_default(), last.unwrap_or_default());
        let kind = if statistic == "mean" {
            "regional mean"
        } else {
            "regional"
        };
        let weighting = match (statistic, layer) {
            ("mean", "") => "Area-weighted mean over the region's columns with a value.",
            ("mean", "surface") => "Area-weighted mean over the region's surface cells.",
            ("mean", _) => "Volume-weighted mean over the region's cells in the layer.",
            _ => "",
        };
        SeriesWords {
            title: title(&[
                chosen.region.clone(),
                format!("{before}{measured}{after}"),
                format!("{kind}, {span}"),
            ]),
            axis: if statistic == "mean" { words } else { measured },
            weighting,
        }
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
