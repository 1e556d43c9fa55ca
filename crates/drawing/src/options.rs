//! The options every figure shares, as given (`...Request`) and once checked: the output and
//! page, the colours, the time and the level.

use crate::error::{DrawError, Result};
use acidscape_figures::{ColourRange, Colouring, PageSize, Palette};
use std::path::{Path, PathBuf};

/// Output and page options, as given.
#[derive(Clone, Debug)]
pub struct PageRequest {
    /// The PNG to write.
    pub output: PathBuf,
    /// Replace an existing output.
    pub overwrite: bool,
    /// Resolution \[dots per inch\].
    pub dpi: f64,
    /// Printed width \[inches\].
    pub width_in: f64,
    /// A title of the user's own instead of the one made from the file.
    pub title: Option<String>,
    /// Words added to the caption (e.g. "SYNTHETIC sample data").
    pub note: Option<String>,
}

impl PageRequest {
    /// A request with the default page: 6.5 in at 300 dpi.
    pub fn new(output: impl Into<PathBuf>) -> Self {
        let page = PageSize::default();
        Self {
            output: output.into(),
            overwrite: false,
            dpi: page.dpi,
            width_in: page.width_in,
            title: None,
            note: None,
        }
    }
}

/// Output and page, checked.
#[derive(Clone, Debug)]
pub struct Page {
    /// The PNG to write.
    pub output: PathBuf,
    /// Width and resolution.
    pub size: PageSize,
    /// The user's title, if any.
    pub title: Option<String>,
    /// The user's note, if any.
    pub note: Option<String>,
}

impl Page {
    /// Checks the page and the output path before any data are read: a `.png` name, a folder
    /// that exists, no existing file unless `overwrite`, never one of the `inputs`.
    pub fn new(request: &PageRequest, inputs: &[&Path]) -> Result<Page> {
        let size = PageSize::new(request.width_in, request.dpi)
            .map_err(|e| DrawError::option("--width/--dpi", e.to_string()))?;
        let output = &request.output;
        let is_png = output
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("png"));
        if !is_png {
            return Err(DrawError::option(
                "--output",
                format!("{}: expected a file name ending in .png", output.display()),
            ));
        }
        let same = |input: &Path| {
            input == output
                || matches!((input.canonicalize(), output.canonicalize()), (Ok(a), Ok(b)) if a == b)
        };
        if inputs.iter().any(|input| same(input)) {
            return Err(DrawError::option(
                "--output",
                format!("{} is an input; choose another name", output.display()),
            ));
        }
        let folder = match output.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        if !folder.is_dir() {
            return Err(DrawError::option(
                "--output",
                format!(
                    "{}: the folder {} does not exist",
                    output.display(),
                    folder.display()
                ),
            ));
        }
        if output.exists() && !request.overwrite {
            return Err(DrawError::option(
                "--output",
                format!(
                    "{} exists; pass --overwrite to replace it",
                    output.display()
                ),
            ));
        }
        Ok(Page {
            output: output.clone(),
            size,
            title: request.title.clone(),
            note: request.note.clone(),
        })
    }
}

/// Colour options of maps and sections, as given.
#[derive(Clone, Debug, Default)]
pub struct ColourRequest {
    /// `viridis`, `cividis`, `purple-orange` or `red-blue`; default by the variable.
    pub palette: Option<String>,
    /// `MIN,MAX` (fixed values) or `pLOW,pHIGH` (percentiles of the values shown).
    pub range: Option<String>,
}

/// Palette names users type, and the palettes.
const PALETTES: [(&str, Palette); 4] = [
    ("viridis", Palette::Viridis),
    ("cividis", Palette::Cividis),
    ("purple-orange", Palette::PurpleOrange),
    ("red-blue", Palette::RedBlue),
];

/// The colouring of a field: the user's palette and range, or by default viridis for single
/// fields and purple–orange centred on zero for signed values (differences, contributions to
/// an uncertainty), over the 2nd–98th percentiles.
pub(crate) fn colouring(request: &ColourRequest, signed: bool) -> Result<Colouring> {
    let mut colouring = if signed {
        Colouring::difference()
    } else {
        Colouring::default()
    };
    if let Some(name) = &request.palette {
        let wanted = name.trim().to_ascii_lowercase();
        colouring.palette = PALETTES
            .iter()
            .find(|(key, _)| *key == wanted)
            .map(|&(_, p)| p)
            .ok_or_else(|| {
                let names: Vec<&str> = PALETTES.iter().map(|(k, _)| *k).collect();
                DrawError::option(
                    "--palette",
                    format!(
                        "unknown palette '{name}'; expected one of {}",
                        names.join(", ")
                    ),
                )
            })?;
    }
    if let Some(text) = &request.range {
        colouring.range = parse_range(text)?;
    }
    Ok(colouring)
}

/// `MIN,MAX` or `pLOW,pHIGH`.
fn parse_range(text: &str) -> Result<ColourRange> {
    let fail = || {
        DrawError::option(
            "--range",
            format!("'{text}': expected MIN,MAX (e.g. 0.5,3.5) or percentiles pLOW,pHIGH (e.g. p5,p95), low below high"),
        )
    };
    let (a, b) = text.split_once(',').ok_or_else(fail)?;
    let (a, b) = (a.trim(), b.trim());
    let percent = |s: &str| s.strip_prefix('p').and_then(|v| v.parse::<f64>().ok());
    let range = match (percent(a), percent(b)) {
        (Some(low), Some(high)) if (0.0..=100.0).contains(&low) && high <= 100.0 => {
            ColourRange::Percentiles { low, high }
        }
        (None, None) => {
            let low: f64 = a.parse().map_err(|_| fail())?;
            let high: f64 = b.parse().map_err(|_| fail())?;
            ColourRange::Fixed { low, high }
        }
        _ => return Err(fail()),
    };
    let (low, high) = match range {
        ColourRange::Percentiles { low, high } | ColourRange::Fixed { low, high } => (low, high),
    };
    if low.is_finite() && high.is_finite() && low < high {
        Ok(range)
    } else {
        Err(fail())
    }
}

/// Which time step to draw, as given (at most one).
#[derive(Clone, Debug, Default)]
pub struct WhenRequest {
    /// A step index (0 = the first).
    pub step: Option<usize>,
    /// The step of this calendar year (years with several steps need `date` or `step`).
    pub year: Option<i64>,
    /// The step whose bounds hold this date, `YYYY-MM-DD`.
    pub date: Option<String>,
    /// A window of an output of compare, by name.
    pub window: Option<String>,
}

/// Which level of a 3-D field to draw on a map, as given (at most one).
#[derive(Clone, Debug, Default)]
pub struct LevelRequest {
    /// `surface` or a level index (0 = the file's first level).
    pub level: Option<String>,
    /// A depth \[m, positive down\]: the level whose centre is nearest.
    pub depth: Option<f64>,
}

/// `LON,LAT:LON,LAT[:...]` (also separated by spaces or semicolons), degrees east and north.
pub(crate) fn parse_path(text: &str) -> Result<Vec<(f64, f64)>> {
    let fail = |why: String| {
        DrawError::option(
            "--path",
            format!("'{text}': {why}; expected two or more points LON,LAT:LON,LAT (degrees east, degrees north), e.g. 201.5,32.5:210,37"),
        )
    };
    let mut points = Vec::new();
    for item in text
        .split([':', ';', ' '])
        .map(str::trim)
        .filter(|s| !s.is_empty())
    {
        let (lon, lat) = item
            .split_once(',')
            .ok_or_else(|| fail(format!("'{item}' is not LON,LAT")))?;
        let lon: f64 = lon
            .trim()
            .parse()
            .map_err(|_| fail(format!("'{lon}' is not a longitude")))?;
        let lat: f64 = lat
            .trim()
            .parse()
            .map_err(|_| fail(format!("'{lat}' is not a latitude")))?;
        if !(lon.is_finite() && lon.abs() <= 720.0 && lat.abs() <= 90.0) {
            return Err(fail(format!("{lon},{lat} is outside the globe")));
        }
        points.push((lon, lat));
    }
    if points.len() < 2 {
        return Err(fail(format!("{} point(s)", points.len())));
    }
    Ok(points)
}

/// `FIRST-LAST` years.
pub(crate) fn parse_years(option: &str, text: &str) -> Result<(i64, i64)> {
    let fail = || {
        DrawError::option(
            option,
            format!("'{text}': expected FIRST-LAST years, e.g. 2015-2034"),
        )
    };
    let (a, b) = text.trim().split_once('-').ok_or_else(fail)?;
    let first: i64 = a.trim().parse().map_err(|_| fail())?;
    let last: i64 = b.trim().parse().map_err(|_| fail())?;
    if first <= last {
        Ok((first, last))
    } else {
        Err(fail())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_fixed_or_percentiles() {
        assert_eq!(
            parse_range("0.5, 3.5").unwrap(),
            ColourRange::Fixed {
                low: 0.5,
                high: 3.5
            }
        );
        assert_eq!(
            parse_range("p5,p95").unwrap(),
            ColourRange::Percentiles {
                low: 5.0,
                high: 95.0
            }
        );
        for bad in ["3,1", "1", "p5,3", "a,b", "p5,p120"] {
            let message = parse_range(bad).unwrap_err().to_string();
            assert!(message.starts_with("--range"), "{message}");
        }
    }

    #[test]
    fn palettes_by_name_and_by_meaning() {
        let plain = ColourRequest::default();
        assert_eq!(colouring(&plain, false).unwrap().palette, Palette::Viridis);
        assert_eq!(
            colouring(&plain, true).unwrap().palette,
            Palette::PurpleOrange
        );
        let chosen = ColourRequest {
            palette: Some("Cividis".into()),
            range: None,
        };
        assert_eq!(colouring(&chosen, false).unwrap().palette, Palette::Cividis);
        let unknown = ColourRequest {
            palette: Some("rainbow".into()),
            range: None,
        };
        let message = colouring(&unknown, false).unwrap_err().to_string();
        assert!(message.contains("viridis, cividis, purple-orange, red-blue"));
    }

    #[test]
    fn paths_of_points() {
        let path = parse_path("201.5,32.5:210,37").unwrap();
        assert_eq!(path, vec![(201.5, 32.5), (210.0, 37.0)]);
        assert_eq!(parse_path("-150,30 -149,31; -148,32").unwrap().len(), 3);
        assert!(parse_path("201.5,32.5").is_err());
        assert!(parse_path("201.5,95:202,30").is_err());
    }

    #[test]
    fn years() {
        assert_eq!(
            parse_years("--reference-years", "2015-2034").unwrap(),
            (2015, 2034)
        );
        assert!(parse_years("--reference-years", "2034-2015").is_err());
    }
}
