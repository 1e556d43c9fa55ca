//! `draw`: PNG maps, sections and time series from outputs of `compute` and `compare`.

use acidscape_drawing::{
    ColourRequest, Drawn, FieldRequest, LevelRequest, LineRequest, MapPlan, MapRequest,
    PageRequest, SectionPlan, SectionRequest, SeriesPlan, SeriesRequest, WhenRequest,
};
use clap::{Args, Subcommand};
use std::error::Error;
use std::io::Write;
use std::path::PathBuf;

#[derive(Args, Debug)]
pub struct DrawArgs {
    #[command(subcommand)]
    pub kind: DrawKind,
}

#[derive(Subcommand, Debug)]
pub enum DrawKind {
    /// A map of a 2-D field, or of one level of a 3-D field, at a time step or window
    Map(MapArgs),
    /// Depth against distance (or latitude) along a path or a grid row or column, with the
    /// aragonite and calcite saturation horizons
    Section(SectionArgs),
    /// Regional means from the table of `compare`: every run, the reference window shaded,
    /// each run's year of emergence marked
    Series(SeriesArgs),
}

/// Output and page options of every figure.
#[derive(Args, Debug)]
pub struct PageArgs {
    /// The PNG to write (written as .NAME.partial beside it and renamed when complete)
    #[arg(short, long, value_name = "FILE.png")]
    pub output: PathBuf,

    /// Replace an existing output
    #[arg(long)]
    pub overwrite: bool,

    /// Resolution in dots per inch (50 to 1200)
    #[arg(long, default_value_t = 300.0)]
    pub dpi: f64,

    /// Printed width in inches (1 to 30); the height follows from the content
    #[arg(long, value_name = "INCHES", default_value_t = 6.5)]
    pub width: f64,

    /// A title of your own instead of the one made from the file (run, quantity, time)
    #[arg(long)]
    pub title: Option<String>,

    /// Words added to the caption line (e.g. where the data come from)
    #[arg(long)]
    pub note: Option<String>,
}

/// Colour options of maps and sections.
#[derive(Args, Debug)]
pub struct ColourArgs {
    /// viridis, cividis (single fields), purple-orange, red-blue (differences, centred on
    /// zero). Default: viridis, or purple-orange for changes and differences
    #[arg(long)]
    pub palette: Option<String>,

    /// Colour range MIN,MAX, or percentiles pLOW,pHIGH of the values shown (default p2,p98)
    #[arg(long, value_name = "MIN,MAX", allow_hyphen_values = true)]
    pub range: Option<String>,
}

/// The time step or window (at most one).
#[derive(Args, Debug)]
pub struct WhenArgs {
    /// Time step by index (0 = the first)
    #[arg(long, value_name = "N")]
    pub step: Option<usize>,

    /// The time step of this calendar year (in the file's calendar)
    #[arg(long, value_name = "YYYY", allow_hyphen_values = true)]
    pub year: Option<i64>,

    /// The time step whose bounds hold this date
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub date: Option<String>,

    /// A window of an output of `compare`, by name (e.g. late)
    #[arg(long, value_name = "NAME")]
    pub window: Option<String>,
}

/// What maps and sections share: the file, the variable, its time step, colours and page.
#[derive(Args, Debug)]
pub struct FieldArgs {
    /// An output of `compute` or `compare`
    pub file: PathBuf,

    /// The variable to draw (e.g. omega_aragonite, ph, horizon_depth_aragonite,
    /// omega_aragonite_steep_minus_moderate); sections need a 3-D one
    pub variable: String,

    #[command(flatten)]
    pub when: WhenArgs,

    /// The run's name in the title, for outputs of `compute` (default: the file's name)
    #[arg(long, value_name = "NAME")]
    pub run_label: Option<String>,

    #[command(flatten)]
    pub colours: ColourArgs,

    #[command(flatten)]
    pub page: PageArgs,
}

#[derive(Args, Debug)]
pub struct MapArgs {
    #[command(flatten)]
    pub field: FieldArgs,

    /// For a 3-D field: surface, or a level index (0 = the file's first level)
    #[arg(long, value_name = "surface|N")]
    pub level: Option<String>,

    /// For a 3-D field: the level whose centre is nearest this depth in metres (no
    /// interpolation); terrain-following grids take each column's nearest layer
    #[arg(long, value_name = "METRES")]
    pub depth: Option<f64>,
}

#[derive(Args, Debug)]
pub struct SectionArgs {
    #[command(flatten)]
    pub field: FieldArgs,

    /// Points the section runs through, LON,LAT:LON,LAT[:...] in degrees (great circles
    /// between them)
    #[arg(long, value_name = "LON,LAT:LON,LAT", allow_hyphen_values = true)]
    pub path: Option<String>,

    /// A grid row (index along the file's Y dimension), drawn against distance
    #[arg(long, value_name = "J")]
    pub row: Option<usize>,

    /// A grid column (index along the file's X dimension), drawn against latitude
    #[arg(long, value_name = "I")]
    pub column: Option<usize>,

    /// Deepest depth shown, in metres (default: the deepest water along the section)
    #[arg(long, value_name = "METRES")]
    pub max_depth: Option<f64>,
}

#[derive(Args, Debug)]
pub struct SeriesArgs {
    /// The regional table (CSV) written by `compare`
    pub table: PathBuf,

    /// The quantity (e.g. omega_aragonite, ph, horizon_depth_aragonite)
    pub quantity: String,

    /// The region, as named in the table (needed when it has several)
    #[arg(long)]
    pub region: Option<String>,

    /// The depth layer, as named in the table (default surface; 2-D fields have none)
    #[arg(long)]
    pub layer: Option<String>,

    /// mean (default), fraction_below, area_with_value or volume_with_value
    #[arg(long)]
    pub statistic: Option<String>,

    /// The Ω threshold of a fraction_below
    #[arg(long)]
    pub threshold: Option<f64>,

    /// The reference window's years FIRST-LAST (default: from the comparison's NetCDF)
    #[arg(long, value_name = "FIRST-LAST")]
    pub reference_years: Option<String>,

    /// The comparison's NetCDF output, for its windows, emergence rule and constants
    /// (default: the table's path with .nc)
    #[arg(long, value_name = "FILE")]
    pub comparison: Option<PathBuf>,

    #[command(flatten)]
    pub page: PageArgs,
}

fn page(args: &PageArgs) -> PageRequest {
    PageRequest {
        output: args.output.clone(),
        overwrite: args.overwrite,
        dpi: args.dpi,
        width_in: args.width,
        title: args.title.clone(),
        note: args.note.clone(),
    }
}

fn field(args: &FieldArgs) -> FieldRequest {
    FieldRequest {
        file: args.file.clone(),
        variable: args.variable.clone(),
        when: WhenRequest {
            step: args.when.step,
            year: args.when.year,
            date: args.when.date.clone(),
            window: args.when.window.clone(),
        },
        colours: ColourRequest {
            palette: args.colours.palette.clone(),
            range: args.colours.range.clone(),
        },
        run_label: args.run_label.clone(),
        page: page(&args.page),
    }
}

pub fn run(args: &DrawArgs) -> Result<(), Box<dyn Error>> {
    // Stage 1: the options as given; stage 2: the file opened and every name checked, nothing
    // read but metadata; then the figure is drawn and written.
    let drawn = match &args.kind {
        DrawKind::Map(a) => MapPlan::new(&MapRequest {
            field: field(&a.field),
            level: LevelRequest {
                level: a.level.clone(),
                depth: a.depth,
            },
        })?
        .draw()?,
        DrawKind::Section(a) => SectionPlan::new(&SectionRequest {
            field: field(&a.field),
            line: LineRequest {
                path: a.path.clone(),
                row: a.row,
                column: a.column,
            },
            max_depth: a.max_depth,
        })?
        .draw()?,
        DrawKind::Series(a) => SeriesPlan::new(&SeriesRequest {
            table: a.table.clone(),
            quantity: a.quantity.clone(),
            region: a.region.clone(),
            layer: a.layer.clone(),
            statistic: a.statistic.clone(),
            threshold: a.threshold,
            reference_years: a.reference_years.clone(),
            comparison: a.comparison.clone(),
            page: page(&a.page),
        })?
        .draw()?,
    };
    report(&drawn);
    Ok(())
}

fn report(drawn: &Drawn) {
    let mut out = std::io::stdout();
    let _ = writeln!(
        out,
        "Wrote {} ({} × {} px, {} dpi)",
        drawn.path.display(),
        drawn.width,
        drawn.height,
        drawn.dpi
    );
    for note in &drawn.notes {
        let _ = writeln!(out, "  note: {note}");
    }
}
