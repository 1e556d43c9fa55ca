//! Vertical sections: depth (downwards) against distance or latitude, each cell a
//! quadrilateral between its column's layer interfaces, with horizon lines on top.

use plotters::prelude::RGBColor;

use crate::axes::TickKind;
use crate::captions::Captions;
use crate::frame::{AxisSpec, Frame, FrameSpec};
use crate::legend::{LegendEntry, LineLook, Swatch};
use crate::map::upright_box;
use crate::page::{paint_figure, Figure, PageSize, Panel};
use crate::palette::{ColourScale, Colouring, MISSING_GREY};
use crate::style::{fill_box, fill_polygon, Area, Style, INK};
use crate::FigureError;

/// One water column along the section.
#[derive(Clone, Debug, PartialEq)]
pub struct SectionColumn {
    /// Where the column starts and ends along the x axis (km along the path, or latitude).
    pub x_start: f64,
    pub x_end: f64,
    /// Depths of the layer interfaces in metres, positive down, top first (one more than
    /// `values`). Terrain-following columns simply have their own interfaces.
    pub interfaces: Vec<f64>,
    /// One value per layer; NaN below the sea floor or where missing.
    pub values: Vec<f64>,
}

/// A depth line across the section, e.g. the aragonite saturation horizon.
#[derive(Clone, Debug, PartialEq)]
pub struct SectionLine {
    /// Legend text, e.g. "aragonite saturation horizon".
    pub label: String,
    /// Depth in metres for each column (NaN where the line does not exist there).
    pub depths: Vec<f64>,
}

/// What the section's x axis measures.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SectionAxis {
    DistanceKm,
    Latitude,
}

/// What a section shows and how.
#[derive(Clone, Debug, PartialEq)]
pub struct SectionSpec {
    pub text: Captions,
    pub colouring: Colouring,
    /// Horizon and threshold lines, drawn in order (solid, dashed, dotted, ...).
    pub lines: Vec<SectionLine>,
    pub axis: SectionAxis,
    /// Deepest depth shown; by default the deepest interface of any column with data.
    pub max_depth: Option<f64>,
    pub page: PageSize,
}

impl SectionSpec {
    /// A section against distance with the single-field colouring and no lines.
    pub fn new(text: Captions) -> Self {
        Self {
            text,
            colouring: Colouring::default(),
            lines: Vec::new(),
            axis: SectionAxis::DistanceKm,
            max_depth: None,
            page: PageSize::default(),
        }
    }
}

/// Line looks for successive section lines: black with a white casing, told apart by dashes
/// (so they read without colour).
fn line_look(style: &Style, index: usize) -> LineLook {
    let dashes = [None, Some((6.0, 3.0)), Some((1.5, 2.0)), Some((10.0, 2.5))];
    LineLook {
        colour: INK,
        width: style.pt(1.2),
        dash: dashes[index % dashes.len()].map(|(on, off)| (style.pt(on), style.pt(off))),
        casing: true,
    }
}

fn check_columns(columns: &[SectionColumn], lines: &[SectionLine]) -> Result<(), FigureError> {
    if columns.is_empty() {
        return Err(FigureError::input("section: no columns"));
    }
    for (c, column) in columns.iter().enumerate() {
        let what = format!("section column {c} interfaces");
        FigureError::check_len(&what, column.values.len() + 1, column.interfaces.len())?;
        if !(column.x_start.is_finite() && column.x_end.is_finite())
            || column.x_start == column.x_end
        {
            return Err(FigureError::input(format!(
                "section column {c}: x_start {} and x_end {} must be finite and differ",
                column.x_start, column.x_end
            )));
        }
    }
    for line in lines {
        let what = format!("section line '{}' depths", line.label);
        FigureError::check_len(&what, columns.len(), line.depths.len())?;
    }
    Ok(())
}

/// Deepest interface below any valid value.
fn deepest_data(columns: &[SectionColumn]) -> f64 {
    columns
        .iter()
        .flat_map(|c| c.values.iter().zip(&c.interfaces[1..]))
        .filter(|(v, d)| v.is_finite() && d.is_finite())
        .map(|(_, &d)| d)
        .fold(0.0, f64::max)
}

/// Whether any grey shows: a missing value, a column ending above the panel's bottom, or a
/// gap between columns.
fn shows_missing(columns: &[SectionColumn], depth: f64) -> bool {
    let missing = columns.iter().any(|c| {
        let shown = c.interfaces.iter().take_while(|&&d| d < depth).count();
        let bottom = c.interfaces.last().copied().unwrap_or(0.0);
        c.values.iter().take(shown).any(|v| !v.is_finite()) || bottom.is_nan() || bottom < depth
    });
    let gaps = columns
        .windows(2)
        .any(|w| (w[0].x_end - w[1].x_start).abs() > 1e-9);
    missing || gaps
}

/// Draws a section of `columns` with its horizon lines.
pub fn render_section(
    columns: &[SectionColumn],
    spec: &SectionSpec,
) -> Result<Figure, FigureError> {
    check_columns(columns, &spec.lines)?;
    let style = Style::new(spec.page)?;
    let all: Vec<f64> = columns
        .iter()
        .flat_map(|c| c.values.iter().copied())
        .collect();
    let scale = spec.colouring.scale_for(&all)?;
    let depth = spec.max_depth.unwrap_or_else(|| deepest_data(columns));
    if !(depth.is_finite() && depth > 0.0) {
        return Err(FigureError::input(format!(
            "section: depth range 0 to {depth} m is empty"
        )));
    }
    let x_lo = columns
        .iter()
        .map(|c| c.x_start.min(c.x_end))
        .fold(f64::MAX, f64::min);
    let x_hi = columns
        .iter()
        .map(|c| c.x_start.max(c.x_end))
        .fold(f64::MIN, f64::max);
    let (x_kind, x_title) = match spec.axis {
        SectionAxis::DistanceKm => (TickKind::Number, "distance along the section (km)"),
        SectionAxis::Latitude => (TickKind::Latitude, "latitude"),
    };
    let fit = |available: f64| (available, 0.5 * available);
    let mut legend: Vec<LegendEntry> = spec
        .lines
        .iter()
        .enumerate()
        .map(|(k, line)| LegendEntry {
            swatch: Swatch::Line(line_look(&style, k)),
            label: line.label.clone(),
        })
        .collect();
    if shows_missing(columns, depth) {
        legend.push(LegendEntry::missing("below the sea floor or no data"));
    }
    let frame = Frame::lay_out(
        &style,
        FrameSpec {
            text: &spec.text,
            legend,
            x: AxisSpec::new(x_kind, (x_lo, x_hi), Some(x_title)),
            y: AxisSpec::new(TickKind::Number, (0.0, depth), Some("depth (m)")),
            y_downward: true,
            bar: Some((&scale, spec.text.quantity_label())),
            fit_panel: &fit,
        },
    );
    paint_figure(frame.size, spec.page.dpi, |area| {
        let [r, g, b] = MISSING_GREY;
        fill_box(area, frame.panel.area, RGBColor(r, g, b))?;
        paint_columns(area, &frame.panel, columns, &scale)?;
        for (k, line) in spec.lines.iter().enumerate() {
            draw_depth_line(
                area,
                &frame.panel,
                columns,
                &line.depths,
                line_look(&style, k),
            )?;
        }
        frame.draw(area, &style)
    })
}

/// Interface depths at a column's left and right edges: shared with an adjacent neighbour of
/// the same layering by averaging, so terrain-following layers slope continuously.
fn edge_interfaces(columns: &[SectionColumn], c: usize) -> (Vec<f64>, Vec<f64>) {
    let own = &columns[c].interfaces;
    let shared = |other: Option<&SectionColumn>,
                  edge: f64,
                  other_edge: fn(&SectionColumn) -> f64| {
        match other {
            Some(o) if o.interfaces.len() == own.len() && (other_edge(o) - edge).abs() < 1e-9 => {
                own.iter()
                    .zip(&o.interfaces)
                    .map(|(&a, &b)| if b.is_finite() { 0.5 * (a + b) } else { a })
                    .collect()
            }
            _ => own.clone(),
        }
    };
    let column = &columns[c];
    let left = shared(c.checked_sub(1).map(|p| &columns[p]), column.x_start, |o| {
        o.x_end
    });
    let right = shared(columns.get(c + 1), column.x_end, |o| o.x_start);
    (left, right)
}

fn paint_columns(
    area: &Area,
    panel: &Panel,
    columns: &[SectionColumn],
    scale: &ColourScale,
) -> Result<(), FigureError> {
    let (top, bottom) = (panel.y_range.0, panel.y_range.1);
    for (c, column) in columns.iter().enumerate() {
        let (left, right) = edge_interfaces(columns, c);
        for (k, &value) in column.values.iter().enumerate() {
            if !value.is_finite() {
                continue;
            }
            let depth = |d: f64| d.clamp(top, bottom);
            let corners = [
                panel.to_pixel(column.x_start, depth(left[k])),
                panel.to_pixel(column.x_end, depth(right[k])),
                panel.to_pixel(column.x_end, depth(right[k + 1])),
                panel.to_pixel(column.x_start, depth(left[k + 1])),
            ];
            let [r, g, b] = scale.colour(value);
            match upright_box(&corners) {
                Some(cell) => fill_box(area, cell, RGBColor(r, g, b))?,
                None => fill_polygon(area, &corners, RGBColor(r, g, b))?,
            }
        }
    }
    Ok(())
}

/// A line through each column's centre at the given depths, broken where a depth is missing;
/// a lone depth is drawn across its column.
fn draw_depth_line(
    area: &Area,
    panel: &Panel,
    columns: &[SectionColumn],
    depths: &[f64],
    look: LineLook,
) -> Result<(), FigureError> {
    let mut piece: Vec<(f64, f64, &SectionColumn)> = Vec::new();
    let flush = |piece: &mut Vec<(f64, f64, &SectionColumn)>| -> Result<(), FigureError> {
        let points: Vec<(f64, f64)> = match piece.as_slice() {
            [] => return Ok(()),
            [(_, d, column)] => vec![(column.x_start, *d), (column.x_end, *d)],
            more => more.iter().map(|&(x, d, _)| (x, d)).collect(),
        };
        piece.clear();
        let pixels: Vec<(f64, f64)> = points.iter().map(|&(x, d)| panel.to_pixel(x, d)).collect();
        look.draw(area, &pixels)
    };
    for (column, &depth) in columns.iter().zip(depths) {
        let joined = piece
            .last()
            .is_some_and(|(_, _, previous)| (previous.x_end - column.x_start).abs() < 1e-9);
        if !joined {
            flush(&mut piece)?;
        }
        if depth.is_finite() {
            let x = 0.5 * (column.x_start + column.x_end);
            piece.push((x, depth.clamp(panel.y_range.0, panel.y_range.1), column));
        } else {
            flush(&mut piece)?;
        }
    }
    flush(&mut piece)
}
