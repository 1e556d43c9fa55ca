//! Line looks (colour, width, dashes, a pale casing) and the legend row under a panel.

use plotters::prelude::RGBColor;

use crate::page::PixelBox;
use crate::palette::MISSING_GREY;
use crate::style::{fill_box, fill_polygon, outline_box, polyline, Area, Style, INK};
use crate::text::Align;
use crate::FigureError;

/// How a line is drawn.
#[derive(Clone, Copy, Debug)]
pub(crate) struct LineLook {
    pub colour: RGBColor,
    /// Width in pixels.
    pub width: f64,
    /// (on, off) dash lengths in pixels; None for solid.
    pub dash: Option<(f64, f64)>,
    /// A white casing under the line so it shows on dark and light colours alike.
    pub casing: bool,
}

impl LineLook {
    pub(crate) fn draw(&self, area: &Area, points: &[(f64, f64)]) -> Result<(), FigureError> {
        if self.casing {
            let white = RGBColor(255, 255, 255);
            polyline(area, points, white, self.width * 2.6, self.dash)?;
        }
        polyline(area, points, self.colour, self.width, self.dash)
    }
}

/// The small picture before a legend label.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Swatch {
    Line(LineLook),
    /// A shaded band (e.g. the reference window).
    Band(RGBColor),
    /// A filled diamond marker in this colour.
    Marker(RGBColor),
}

#[derive(Clone, Debug)]
pub(crate) struct LegendEntry {
    pub swatch: Swatch,
    pub label: String,
}

impl LegendEntry {
    /// The entry explaining the grey of land, missing or below-floor cells.
    pub(crate) fn missing(label: &str) -> Self {
        let [r, g, b] = MISSING_GREY;
        Self {
            swatch: Swatch::Band(RGBColor(r, g, b)),
            label: label.to_string(),
        }
    }
}

/// A laid-out legend: entries split into rows that fit the width.
pub(crate) struct Legend {
    entries: Vec<LegendEntry>,
    rows: Vec<Vec<usize>>,
}

fn swatch_length(style: &Style) -> f64 {
    style.pt(20.0)
}

impl Legend {
    pub(crate) fn new(style: &Style, entries: Vec<LegendEntry>, max_width: f64) -> Self {
        let mut rows: Vec<Vec<usize>> = Vec::new();
        let mut width = 0.0;
        for (index, entry) in entries.iter().enumerate() {
            let w = Self::entry_width(style, entry);
            match rows.last_mut() {
                Some(row) if width + 3.0 * style.gap + w <= max_width => {
                    row.push(index);
                    width += 3.0 * style.gap + w;
                }
                _ => {
                    rows.push(vec![index]);
                    width = w;
                }
            }
        }
        Self { entries, rows }
    }

    fn entry_width(style: &Style, entry: &LegendEntry) -> f64 {
        swatch_length(style) + style.gap + style.small.width(&entry.label)
    }

    fn row_width(&self, style: &Style, row: &[usize]) -> f64 {
        let items: f64 = row
            .iter()
            .map(|&i| Self::entry_width(style, &self.entries[i]))
            .sum();
        items + 3.0 * style.gap * (row.len().saturating_sub(1)) as f64
    }

    /// Height of the legend (zero when empty).
    pub(crate) fn height(&self, style: &Style) -> f64 {
        Style::block_height(&style.small, self.rows.len())
    }

    /// Draws the rows centred on `centre_x` (kept within the page's margins), the first
    /// row's top at `top`.
    pub(crate) fn draw(
        &self,
        area: &Area,
        style: &Style,
        (centre_x, top): (f64, f64),
    ) -> Result<(), FigureError> {
        let text = &style.small;
        for (r, row) in self.rows.iter().enumerate() {
            let baseline = top + text.cap_height() + r as f64 * text.line_height();
            let middle = baseline - text.cap_height() / 2.0;
            let width = self.row_width(style, row);
            let page_right = style.page.width_px() as f64 - style.margin;
            let mut x = (centre_x - width / 2.0)
                .min(page_right - width)
                .max(style.margin);
            for &i in row {
                let entry = &self.entries[i];
                draw_swatch(area, style, entry.swatch, x, middle)?;
                let label_x = x + swatch_length(style) + style.gap;
                text.draw(area, &entry.label, (label_x, baseline), Align::Left, INK)?;
                x += Self::entry_width(style, entry) + 3.0 * style.gap;
            }
        }
        Ok(())
    }
}

fn draw_swatch(
    area: &Area,
    style: &Style,
    swatch: Swatch,
    x: f64,
    middle: f64,
) -> Result<(), FigureError> {
    let length = swatch_length(style);
    match swatch {
        Swatch::Line(look) => look.draw(area, &[(x, middle), (x + length, middle)]),
        Swatch::Band(colour) => {
            let half = style.small.cap_height() * 0.7;
            let b = PixelBox {
                left: x,
                right: x + length,
                top: middle - half,
                bottom: middle + half,
            };
            fill_box(area, b, colour)?;
            outline_box(area, b, 1.0, RGBColor(150, 150, 150))
        }
        Swatch::Marker(colour) => {
            draw_marker(area, (x + length / 2.0, middle), style.pt(3.2), colour)
        }
    }
}

/// A filled diamond with a thin white rim, centred on `centre`, `radius` pixels to its points.
pub(crate) fn draw_marker(
    area: &Area,
    (cx, cy): (f64, f64),
    radius: f64,
    colour: RGBColor,
) -> Result<(), FigureError> {
    let rim = radius + (radius * 0.3).max(1.0);
    let diamond = |r: f64| [(cx, cy - r), (cx + r, cy), (cx, cy + r), (cx - r, cy)];
    fill_polygon(area, &diamond(rim), RGBColor(255, 255, 255))?;
    fill_polygon(area, &diamond(radius), colour)
}
