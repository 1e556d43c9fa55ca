#![warn(missing_docs)]
//! The `draw` job: PNG figures straight from the outputs of `acidscape compute` and
//! `acidscape compare`, with no other program needed.
//!
//! - [`MapPlan`]: a 2-D field, or one level (or the level nearest a depth) of a 3-D field, at
//!   a time step or window; palette, colour range and the Ω = 1 contour chosen from what the
//!   variable is (its name and metadata).
//! - [`SectionPlan`]: depth against distance (or latitude) along a path of points or a grid row
//!   or column, with the aragonite and calcite saturation horizons as lines.
//! - [`SeriesPlan`]: regional means from the table `compare` writes, every run on one plot,
//!   the reference window shaded, each run's year of emergence marked.
//!
//! Work goes in two stages, as on the command line: a request (the options as given) becomes a
//! plan (the file opened, every option and name checked, the output path checked) before any
//! field is read; `draw` then reads, renders (`acidscape-figures`) and writes the PNG
//! atomically. Horizons not in the file are found with `acidscape-analysis`.

mod caption;
mod error;
mod field;
mod grid;
mod level;
mod map;
mod naming;
mod options;
mod section;
mod series;
mod source;
mod when;

pub use error::{DrawError, Result};
pub use field::FieldRequest;
pub use map::{MapPlan, MapRequest};
pub use options::{ColourRequest, LevelRequest, Page, PageRequest, WhenRequest};
pub use section::{LineRequest, SectionPlan, SectionRequest};
pub use series::{SeriesPlan, SeriesRequest};
pub use source::{ComparedRuns, Window};

use acidscape_figures::Figure;
use std::path::PathBuf;

/// A figure written.
#[derive(Clone, Debug)]
pub struct Drawn {
    /// The PNG.
    pub path: PathBuf,
    /// Size in pixels.
    pub width: u32,
    /// Size in pixels.
    pub height: u32,
    /// Resolution \[dots per inch\].
    pub dpi: f64,
    /// What the user should know about the figure (e.g. a contour left out, and why).
    pub notes: Vec<String>,
}

impl Drawn {
    fn save(figure: &Figure, page: &Page, notes: Vec<String>) -> Result<Drawn> {
        figure.save_png(&page.output)?;
        Ok(Drawn {
            path: page.output.clone(),
            width: figure.width(),
            height: figure.height(),
            dpi: figure.dpi(),
            notes,
        })
    }
}

/// A title from its non-empty parts: "steep · surface Ω aragonite · late window (2081–2100
/// mean)".
fn title(parts: &[String]) -> String {
    parts
        .iter()
        .map(|p| p.trim())
        .filter(|p| !p.is_empty())
        .collect::<Vec<_>>()
        .join(" · ")
}
