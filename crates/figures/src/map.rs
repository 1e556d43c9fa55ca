//! Maps of a 2-D field: every cell its own quadrilateral in longitude/latitude.

use plotters::prelude::RGBColor;

use crate::axes::TickKind;
use crate::captions::Captions;
use crate::contour::contour_lines;
use crate::frame::{AxisSpec, Frame, FrameSpec};
use crate::grid::{MapGrid, PlaneGrid};
use crate::legend::{LegendEntry, LineLook, Swatch};
use crate::page::{paint_figure, Figure, PageSize, Panel, PixelBox};
use crate::palette::{ColourScale, Colouring};
use crate::style::{fill_box, fill_polygon, Area, Style, INK};
use crate::FigureError;

/// A contour line drawn over a map or section at one value (e.g. Ω aragonite = 1).
#[derive(Clone, Debug, PartialEq)]
pub struct ContourLevel {
    pub level: f64,
    /// Legend text, e.g. "Ω aragonite = 1".
    pub label: String,
}

/// What a map shows and how.
#[derive(Clone, Debug, PartialEq)]
pub struct MapSpec {
    pub text: Captions,
    pub colouring: Colouring,
    pub contour: Option<ContourLevel>,
    /// The field the contour is drawn on (ny × nx), when it is not the map's own values (e.g.
    /// surface Ω on a map of horizon depth).
    pub contour_values: Option<Vec<f64>>,
    /// Legend text for the grey of missing cells.
    pub missing_label: String,
    pub page: PageSize,
}

impl MapSpec {
    /// A map of a single field: viridis over the 2nd–98th percentiles, no contour, 6.5 in at
    /// 300 dpi.
    pub fn new(text: Captions) -> Self {
        Self {
            text,
            colouring: Colouring::default(),
            contour: None,
            contour_values: None,
            missing_label: "land or no data".to_string(),
            page: PageSize::default(),
        }
    }

    /// A map of a difference: the diverging palette, centred on zero.
    pub fn difference(text: Captions) -> Self {
        Self {
            colouring: Colouring::difference(),
            ..Self::new(text)
        }
    }
}

/// Cosine of the middle latitude, the east–west scale of a degree relative to north–south,
/// kept away from zero near the poles.
fn east_west_scale(plane: &PlaneGrid) -> f64 {
    let middle = 0.5 * (plane.y_range.0 + plane.y_range.1);
    middle.to_radians().cos().max(0.1)
}

/// Draws `values` (ny × nx, row-major; NaN for land and missing cells) on `grid`.
pub fn render_map(grid: &MapGrid, values: &[f64], spec: &MapSpec) -> Result<Figure, FigureError> {
    let (ny, nx) = grid.shape();
    FigureError::check_len("map values", ny * nx, values.len())?;
    let style = Style::new(spec.page)?;
    let scale = spec.colouring.scale_for(values)?;
    let plane = grid.to_plane();
    let dx = plane.x_range.1 - plane.x_range.0;
    let dy = plane.y_range.1 - plane.y_range.0;
    let height_per_width = dy / (dx * east_west_scale(&plane));
    let page_width = spec.page.width_px() as f64;
    let fit = move |available: f64| {
        let h = (available * height_per_width).min(0.9 * page_width);
        (h / height_per_width, h)
    };
    let contour_look = LineLook {
        colour: INK,
        width: style.pt(1.0),
        dash: None,
        casing: true,
    };
    let mut legend = Vec::new();
    if let Some(contour) = &spec.contour {
        legend.push(LegendEntry {
            swatch: Swatch::Line(contour_look),
            label: contour.label.clone(),
        });
    }
    let contoured = spec.contour_values.as_deref().unwrap_or(values);
    FigureError::check_len("map contour values", ny * nx, contoured.len())?;
    if values.iter().any(|v| !v.is_finite()) {
        legend.push(LegendEntry::missing(&spec.missing_label));
    }
    let frame = Frame::lay_out(
        &style,
        FrameSpec {
            text: &spec.text,
            legend,
            x: AxisSpec::new(TickKind::Longitude, plane.x_range, None),
            y: AxisSpec::new(TickKind::Latitude, plane.y_range, None),
            y_downward: false,
            bar: Some((&scale, spec.text.quantity_label())),
            fit_panel: &fit,
        },
    );
    paint_figure(frame.size, spec.page.dpi, |area| {
        paint_cells(area, &frame.panel, &plane, values, &scale)?;
        if let Some(contour) = &spec.contour {
            for line in contour_lines(contoured, (ny, nx), contour.level) {
                let pixels: Vec<(f64, f64)> = line
                    .iter()
                    .map(|&(fj, fi)| plane.at_index(fj, fi))
                    .map(|(x, y)| frame.panel.to_pixel(x, y))
                    .collect();
                contour_look.draw(area, &pixels)?;
            }
        }
        frame.draw(area, &style)
    })
}

fn paint_cells(
    area: &Area,
    panel: &Panel,
    plane: &PlaneGrid,
    values: &[f64],
    scale: &ColourScale,
) -> Result<(), FigureError> {
    for (corners, &value) in plane.corners.iter().zip(values) {
        let [r, g, b_] = scale.colour(value);
        let pixels = corners.map(|(x, y)| panel.to_pixel(x, y));
        match upright_box(&pixels) {
            Some(b) => fill_box(area, b, RGBColor(r, g, b_))?,
            None => fill_polygon(area, &pixels, RGBColor(r, g, b_))?,
        }
    }
    Ok(())
}

/// The box a quadrilateral covers when its sides run along the pixel axes (rectilinear
/// cells). Boxes share rounded edges, so neighbours tile without gaps or overlaps.
pub(crate) fn upright_box(p: &[(f64, f64); 4]) -> Option<PixelBox> {
    let same = |a: f64, b: f64| (a - b).abs() < 1e-6;
    let upright = same(p[0].0, p[3].0)
        && same(p[1].0, p[2].0)
        && same(p[0].1, p[1].1)
        && same(p[2].1, p[3].1);
    upright.then(|| PixelBox {
        left: p[0].0.min(p[1].0),
        right: p[0].0.max(p[1].0),
        top: p[0].1.min(p[2].1),
        bottom: p[0].1.max(p[2].1),
    })
}
