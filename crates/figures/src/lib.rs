//! Publication-ready PNG figures from in-memory fields: maps, vertical sections and time
//! series, plus the geometry to sample a section path through a grid.
//!
//! Rendering only: callers read files and hand over plain vectors. Text uses the bundled
//! DejaVu Sans, so figures look the same on a machine without system fonts.

mod axes;
mod captions;
mod colour_bar;
mod contour;
mod error;
mod frame;
mod grid;
mod legend;
mod map;
mod page;
mod palette;
mod path;
mod section;
mod series;
mod style;
mod text;
mod ticks;

pub use captions::Captions;
pub use error::FigureError;
pub use grid::MapGrid;
pub use map::{render_map, ContourLevel, MapSpec};
pub use page::{BarPlacement, Figure, Layout, PageSize, Panel, PixelBox};
pub use palette::{ColourRange, ColourScale, Colouring, Palette, MISSING_GREY};
pub use path::{great_circle_km, sample_path, PathCell, EARTH_RADIUS_KM};
pub use section::{render_section, SectionAxis, SectionColumn, SectionLine, SectionSpec};
pub use series::{render_series, Series, SeriesSpec};
pub use ticks::pretty_units;
