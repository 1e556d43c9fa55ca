//! The comparison's options as users write them, parsed into typed values: runs
//! (`LABEL=FILE`), statistics (`mean,min,max,p90`), depth layers (`surface,0-200,1000-`),
//! the emergence rule (`omega_aragonite<1`, `ph:2sd:below`) and lists of names or numbers.

use crate::error::{ComparisonError, Result};
use acidscape_analysis::emergence::{Departure, Direction, EmergenceRule, ReferenceBand};
use acidscape_analysis::regions::{Layer, LayerKind};
use acidscape_analysis::windows::TimeWindow;
use std::path::PathBuf;

/// One run to compare: a label users chose and the `compute` output it names.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RunInput {
    /// The label (letters, digits and `_`, starting with a letter): it names output variables.
    pub label: String,
    /// The output of `acidscape compute`.
    pub path: PathBuf,
}

/// Whether `name` can stand in a NetCDF variable name as CF recommends (CF Conventions 1.10
/// section 2.3: letters, digits and underscores, starting with a letter).
pub(crate) fn is_plain_name(name: &str) -> bool {
    name.chars().next().is_some_and(|c| c.is_ascii_alphabetic())
        && name.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
}

/// Parses `LABEL=FILE`.
///
/// ```
/// use acidscape_comparison::parse_run;
/// let run = parse_run("steep=out/steep.nc")?;
/// assert_eq!((run.label.as_str(), run.path.to_str()), ("steep", Some("out/steep.nc")));
/// assert!(parse_run("out/steep.nc").is_err());
/// # Ok::<(), acidscape_comparison::ComparisonError>(())
/// ```
pub fn parse_run(text: &str) -> Result<RunInput> {
    let bad = |message: &str| ComparisonError::option("run", format!("'{text}': {message}"));
    let (label, path) = text
        .split_once('=')
        .ok_or_else(|| bad("expected LABEL=FILE, e.g. moderate=out/moderate.nc"))?;
    let label = label.trim();
    if !is_plain_name(label) {
        return Err(bad(
            "the label must start with a letter and hold only letters, digits and '_' (it names output variables; write pathway_moderate, not pathway-moderate)",
        ));
    }
    if path.trim().is_empty() {
        return Err(bad("no file after '='"));
    }
    Ok(RunInput {
        label: label.to_string(),
        path: PathBuf::from(path.trim()),
    })
}

/// A per-cell statistic over the years of a window.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Statistic {
    /// Mean of the annual means.
    Mean,
    /// Smallest annual mean.
    Min,
    /// Largest annual mean.
    Max,
    /// A percentile of the annual means (Hyndman & Fan 1996, definition 7), 0 to 100.
    Percentile(f64),
}

impl Statistic {
    /// The suffix of output variable names: "" for the mean, `_min`, `_max`, `_p90`.
    pub fn suffix(self) -> String {
        match self {
            Statistic::Mean => String::new(),
            Statistic::Min => "_min".into(),
            Statistic::Max => "_max".into(),
            Statistic::Percentile(p) => format!("_p{}", number_tag(p)),
        }
    }

    /// The statistic in words, for `long_name`s.
    pub fn words(self) -> String {
        match self {
            Statistic::Mean => "mean".into(),
            Statistic::Min => "smallest annual mean".into(),
            Statistic::Max => "largest annual mean".into(),
            Statistic::Percentile(p) => format!("{p}th percentile of the annual means"),
        }
    }
}

/// A number as it may stand in a name: `1.5` → `1p5`, `90` → `90`.
pub(crate) fn number_tag(x: f64) -> String {
    format!("{x}").replace('.', "p").replace('-', "m")
}

/// Parses a list such as `mean,min,max,p90`; the mean is always computed (differences and
/// changes use it) and comes first.
pub fn parse_statistics(text: &str) -> Result<Vec<Statistic>> {
    let mut out = vec![Statistic::Mean];
    for word in list_items(text) {
        let statistic = match word {
            "mean" => Statistic::Mean,
            "min" => Statistic::Min,
            "max" => Statistic::Max,
            _ => {
                let p = word
                    .strip_prefix('p')
                    .and_then(|n| n.parse::<f64>().ok())
                    .filter(|p| (0.0..=100.0).contains(p))
                    .ok_or_else(|| {
                        ComparisonError::option(
                            "--statistics",
                            format!("'{word}' is none of mean, min, max, pN (a percentile with N from 0 to 100, e.g. p90)"),
                        )
                    })?;
                Statistic::Percentile(p)
            }
        };
        if !out.contains(&statistic) {
            out.push(statistic);
        }
    }
    Ok(out)
}

/// The items of a comma- or blank-separated list.
pub(crate) fn list_items(text: &str) -> impl Iterator<Item = &str> {
    text.split(|c: char| c == ',' || c.is_whitespace())
        .map(str::trim)
        .filter(|s| !s.is_empty())
}

/// Parses a list of numbers (e.g. Ω thresholds `1,1.5,3`).
pub fn parse_numbers(option: &str, text: &str) -> Result<Vec<f64>> {
    list_items(text)
        .map(|w| {
            w.parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| ComparisonError::option(option, format!("'{w}' is not a number")))
        })
        .collect()
}

/// Parses depth layers: `surface` (the top wet cell of each column), `TOP-BOTTOM` or `TOP-`
/// (to the sea floor) in metres, e.g. `surface,0-200,200-1000,1000-`.
pub fn parse_layers(text: &str) -> Result<Vec<Layer>> {
    let bad = |item: &str, message: String| {
        ComparisonError::option("--layers", format!("'{item}': {message}"))
    };
    let mut layers = Vec::new();
    for item in list_items(text) {
        let layer = if item == "surface" {
            Layer::new("surface", LayerKind::SurfaceCell)
        } else if item == "column" {
            Layer::new("whole column", LayerKind::WholeColumn)
        } else {
            let (top, bottom) = item.split_once('-').ok_or_else(|| {
                bad(
                    item,
                    "expected surface, column, TOP-BOTTOM or TOP- (metres)".into(),
                )
            })?;
            let metres = |t: &str| {
                t.trim()
                    .parse::<f64>()
                    .map_err(|_| bad(item, format!("'{t}' is not a depth in metres")))
            };
            let top_m = metres(top)?;
            let bottom_m = match bottom.trim() {
                "" => None,
                b => Some(metres(b)?),
            };
            let name = match bottom_m {
                Some(b) => format!("{top_m}-{b} m"),
                None => format!("below {top_m} m"),
            };
            Layer::new(&name, LayerKind::Depths { top_m, bottom_m })
        };
        layers.push(layer.map_err(|e| bad(item, e.to_string()))?);
    }
    if layers.is_empty() {
        return Err(ComparisonError::option("--layers", "no layer given"));
    }
    Ok(layers)
}

/// The emergence rule users chose, and the field it applies to.
#[derive(Clone, Debug, PartialEq)]
pub struct EmergenceSpec {
    /// The field (its surface cell for 3-D fields).
    pub field: String,
    /// The rule.
    pub rule: EmergenceRule,
    /// The text as given, for messages.
    pub text: String,
}

/// Parses an emergence rule: `FIELD<VALUE` or `FIELD>VALUE` (threshold), or
/// `FIELD:range[:SIDE]` / `FIELD:Ksd[:SIDE]` (departure from the reference window's range of
/// annual means, or its mean ± K sample standard deviations), SIDE one of `below`, `above`,
/// `either` (default).
///
/// ```
/// use acidscape_analysis::windows::TimeWindow;
/// use acidscape_comparison::parse_emergence;
/// let reference = TimeWindow::parse("reference=2015-2034")?;
/// let spec = parse_emergence("omega_aragonite<1", &reference)?;
/// assert_eq!(spec.field, "omega_aragonite");
/// assert!(parse_emergence("ph:2sd:below", &reference).is_ok());
/// assert!(parse_emergence("ph:2 sigma", &reference).is_err());
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn parse_emergence(text: &str, reference: &TimeWindow) -> Result<EmergenceSpec> {
    let bad =
        |message: &str| ComparisonError::option("--emergence", format!("'{text}': {message}"));
    let threshold = |field: &str, value: &str, direction| -> Result<EmergenceSpec> {
        let threshold = value
            .trim()
            .parse::<f64>()
            .ok()
            .filter(|t| t.is_finite())
            .ok_or_else(|| bad(&format!("'{}' is not a number", value.trim())))?;
        Ok(EmergenceSpec {
            field: field.trim().to_string(),
            rule: EmergenceRule::Threshold {
                threshold,
                direction,
            },
            text: text.to_string(),
        })
    };
    let spec = if let Some((field, value)) = text.split_once('<') {
        threshold(field, value, Direction::Below)?
    } else if let Some((field, value)) = text.split_once('>') {
        threshold(field, value, Direction::Above)?
    } else {
        let mut parts = text.split(':').map(str::trim);
        let field = parts.next().unwrap_or_default();
        let band_text = parts.next().ok_or_else(|| {
            bad("expected FIELD<VALUE, FIELD>VALUE, FIELD:range[:SIDE] or FIELD:Ksd[:SIDE]")
        })?;
        let band = if band_text == "range" {
            ReferenceBand::Range
        } else {
            let k = band_text
                .strip_suffix("sd")
                .and_then(|k| k.parse::<f64>().ok())
                .filter(|k| k.is_finite() && *k > 0.0)
                .ok_or_else(|| {
                    bad(&format!(
                        "'{band_text}' is neither range nor Ksd with K > 0 (e.g. 2sd)"
                    ))
                })?;
            ReferenceBand::StandardDeviations(k)
        };
        let departure = match parts.next() {
            None | Some("either") => Departure::Either,
            Some("below") => Departure::Below,
            Some("above") => Departure::Above,
            Some(other) => return Err(bad(&format!("'{other}' is none of below, above, either"))),
        };
        if parts.next().is_some() {
            return Err(bad("too many ':' parts"));
        }
        EmergenceSpec {
            field: field.to_string(),
            rule: EmergenceRule::Reference {
                window: reference.clone(),
                band,
                departure,
            },
            text: text.to_string(),
        }
    };
    if spec.field.is_empty() {
        return Err(bad("no field named before the rule"));
    }
    spec.rule.check().map_err(|e| bad(&e.to_string()))?;
    Ok(spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_need_plain_labels() {
        assert!(parse_run("pathway-moderate=a.nc").is_err());
        assert!(parse_run("1st=a.nc").is_err());
        assert!(parse_run("a=").is_err());
        assert_eq!(parse_run(" control = b.nc ").unwrap().label, "control");
    }

    #[test]
    fn statistics_lists() {
        let s = parse_statistics("max,p90, min p50").unwrap();
        assert_eq!(
            s,
            vec![
                Statistic::Mean,
                Statistic::Max,
                Statistic::Percentile(90.0),
                Statistic::Min,
                Statistic::Percentile(50.0)
            ]
        );
        assert_eq!(Statistic::Percentile(97.5).suffix(), "_p97p5");
        for bad in ["median", "p101", "p", "pten"] {
            assert!(parse_statistics(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn layers_from_text() {
        let layers = parse_layers("surface,0-200, 200-1000,1000-").unwrap();
        let names: Vec<&str> = layers.iter().map(|l| l.name.as_str()).collect();
        assert_eq!(names, ["surface", "0-200 m", "200-1000 m", "below 1000 m"]);
        assert_eq!(
            layers[3].kind,
            LayerKind::Depths {
                top_m: 1000.0,
                bottom_m: None
            }
        );
        for bad in ["deep", "200-100", "-5-10", "", "a-b"] {
            assert!(parse_layers(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn emergence_rules_from_text() {
        let reference = TimeWindow::parse("reference=2015-2034").unwrap();
        let pco2 = parse_emergence("pco2 > 600", &reference).unwrap();
        assert_eq!(
            pco2.rule,
            EmergenceRule::Threshold {
                threshold: 600.0,
                direction: Direction::Above
            }
        );
        let ph = parse_emergence("ph:2.5sd:below", &reference).unwrap();
        assert_eq!(
            ph.rule,
            EmergenceRule::Reference {
                window: reference.clone(),
                band: ReferenceBand::StandardDeviations(2.5),
                departure: Departure::Below
            }
        );
        let range = parse_emergence("omega_aragonite:range", &reference).unwrap();
        assert!(matches!(
            range.rule,
            EmergenceRule::Reference {
                band: ReferenceBand::Range,
                departure: Departure::Either,
                ..
            }
        ));
        for bad in [
            "ph",
            "<1",
            "ph<x",
            "ph:0sd",
            "ph:range:sideways",
            "ph:range:below:x",
        ] {
            assert!(parse_emergence(bad, &reference).is_err(), "{bad}");
        }
    }
}
