//! The cells a section runs through: along a path of points (great-circle segments), or along
//! a row or column of the grid; with each cell's extent on the x axis.

use crate::error::{DrawError, Result};
use crate::grid::map_grid;
use crate::options::parse_path;
use crate::source::Source;
use acidscape_figures::{great_circle_km, sample_path, SectionAxis};

/// Where the section runs, as given (exactly one).
#[derive(Clone, Debug, Default)]
pub struct LineRequest {
    /// `LON,LAT:LON,LAT[:...]`.
    pub path: Option<String>,
    /// A grid row (index along the Y dimension, 0 = the file's first).
    pub row: Option<usize>,
    /// A grid column (index along the X dimension).
    pub column: Option<usize>,
}

/// One cell of the section: grid indices and extent on the x axis.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct LineCell {
    pub j: usize,
    pub i: usize,
    pub x_start: f64,
    pub x_end: f64,
}

/// The cells in order, the x axis and the words for the title.
pub(crate) struct Line {
    pub cells: Vec<LineCell>,
    pub axis: SectionAxis,
    pub words: String,
}

/// Resolves the line of a section.
pub(crate) fn line(source: &Source, request: &LineRequest) -> Result<Line> {
    match (&request.path, request.row, request.column) {
        (Some(text), None, None) => path_line(source, text),
        (None, Some(j), None) => grid_line(source, false, j),
        (None, None, Some(i)) => grid_line(source, true, i),
        _ => Err(DrawError::option(
            "--path/--row/--column",
            "give exactly one: a path of points LON,LAT:LON,LAT, or a grid row or column",
        )),
    }
}

/// The cells along great circles through the given points, by distance.
fn path_line(source: &Source, text: &str) -> Result<Line> {
    let points = parse_path(text)?;
    let cells: Vec<LineCell> = sample_path(&map_grid(source)?, &points)
        .map_err(|e| DrawError::option("--path", e.to_string()))?
        .into_iter()
        .map(|c| LineCell {
            j: c.j,
            i: c.i,
            x_start: c.start_km,
            x_end: c.end_km,
        })
        .collect();
    if cells.is_empty() {
        return Err(DrawError::option(
            "--path",
            format!(
                "'{text}' does not cross the grid of {}",
                source.path().display()
            ),
        ));
    }
    let more = points.len() - 2;
    let via = match more {
        0 => String::new(),
        1 => " via 1 point".to_string(),
        n => format!(" via {n} points"),
    };
    let words = format!(
        "from {} to {}{via}",
        place(points[0]),
        place(points[points.len() - 1])
    );
    Ok(Line {
        cells,
        axis: SectionAxis::DistanceKm,
        words,
    })
}

/// Every cell of a grid row (against distance) or column (`along` Y: against latitude where
/// it rises or falls steadily, otherwise distance).
fn grid_line(source: &Source, along: bool, fixed: usize) -> Result<Line> {
    let grid = source.file.grid();
    let (count, what, limit) = if along {
        (grid.rows, "column", grid.cols)
    } else {
        (grid.cols, "row", grid.rows)
    };
    if fixed >= limit {
        return Err(DrawError::option(
            &format!("--{what}"),
            format!(
                "{what} {fixed} is outside the grid of {} ({limit} {what}s, 0 to {})",
                source.path().display(),
                limit - 1
            ),
        ));
    }
    let (lons, lats) = grid.column_centres();
    let at = |k: usize| if along { (k, fixed) } else { (fixed, k) };
    let positions: Vec<(f64, f64)> = (0..count)
        .map(|k| {
            let (j, i) = at(k);
            (lons[j * grid.cols + i], lats[j * grid.cols + i])
        })
        .collect();
    let latitudes: Vec<f64> = positions.iter().map(|p| p.1).collect();
    let steady =
        latitudes.windows(2).all(|w| w[1] > w[0]) || latitudes.windows(2).all(|w| w[1] < w[0]);
    let (axis, x) = if along && steady && count > 1 {
        (SectionAxis::Latitude, latitudes)
    } else {
        let mut x = vec![0.0];
        for w in positions.windows(2) {
            x.push(x[x.len() - 1] + great_circle_km(w[0], w[1]));
        }
        (SectionAxis::DistanceKm, x)
    };
    let edges = acidscape_gridio::bounds_between(&x);
    let cells = (0..count)
        .map(|k| {
            let (j, i) = at(k);
            LineCell {
                j,
                i,
                x_start: edges[k][0],
                x_end: edges[k][1],
            }
        })
        .collect();
    let (lon, lat) = positions[count / 2];
    let words = if along {
        format!("along grid column {fixed} (near {})", lon_words(lon))
    } else {
        format!("along grid row {fixed} (near {})", lat_words(lat))
    };
    Ok(Line { cells, axis, words })
}

/// "158.5°W 32.5°N".
fn place((lon, lat): (f64, f64)) -> String {
    format!("{} {}", lon_words(lon), lat_words(lat))
}

fn lon_words(lon: f64) -> String {
    let east = (lon + 180.0).rem_euclid(360.0) - 180.0;
    if east < 0.0 {
        format!("{}°W", trim(-east))
    } else {
        format!("{}°E", trim(east))
    }
}

fn lat_words(lat: f64) -> String {
    if lat < 0.0 {
        format!("{}°S", trim(-lat))
    } else {
        format!("{}°N", trim(lat))
    }
}

/// One decimal, without a trailing ".0".
fn trim(v: f64) -> String {
    let text = format!("{v:.1}");
    text.strip_suffix(".0").map_or(text.clone(), str::to_string)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn places_read_as_degrees_east_and_west() {
        assert_eq!(place((201.5, 32.5)), "158.5°W 32.5°N");
        assert_eq!(place((-150.0, -10.3)), "150°W 10.3°S");
        assert_eq!(place((20.0, 0.0)), "20°E 0°N");
    }
}
