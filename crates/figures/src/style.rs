//! Type sizes, spacings and line widths, all in points and scaled by the page's resolution,
//! and the drawing primitives every figure shares.

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::page::{PageSize, PixelBox};
use crate::text::{Align, TextSize};
use crate::FigureError;

/// Near-black for text and frames (softer than pure black on screen, prints as black).
pub(crate) const INK: RGBColor = RGBColor(25, 25, 25);

pub(crate) type Area<'a> = DrawingArea<BitMapBackend<'a>, Shift>;

/// Sizes for one page, in pixels.
#[derive(Clone, Copy)]
pub(crate) struct Style {
    pub page: PageSize,
    /// Title: 10.5 pt.
    pub title: TextSize,
    /// Tick labels, axis titles, colour-bar label: 8 pt.
    pub label: TextSize,
    /// Caption and legend: 7 pt.
    pub small: TextSize,
    /// Outer margin: 8 pt.
    pub margin: f64,
    /// Gap between neighbouring items: 4 pt.
    pub gap: f64,
    /// Tick length: 3 pt.
    pub tick: f64,
    /// Frame and tick line width: 0.6 pt.
    pub thin: f64,
}

impl Style {
    pub(crate) fn new(page: PageSize) -> Result<Self, FigureError> {
        Ok(Self {
            page,
            title: TextSize::new(page.pt(10.5))?,
            label: TextSize::new(page.pt(8.0))?,
            small: TextSize::new(page.pt(7.0))?,
            margin: page.pt(8.0),
            gap: page.pt(4.0),
            tick: page.pt(3.0),
            thin: page.pt(0.6).max(1.0),
        })
    }

    /// Pixels for a length in points.
    pub(crate) fn pt(&self, points: f64) -> f64 {
        self.page.pt(points)
    }

    /// Height of a block of `lines` lines of `size` text (first baseline at cap height).
    pub(crate) fn block_height(size: &TextSize, lines: usize) -> f64 {
        if lines == 0 {
            0.0
        } else {
            size.cap_height() + size.descent() + (lines - 1) as f64 * size.line_height()
        }
    }

    /// Draws lines of text from `top` downwards, each aligned at `x`; returns the bottom.
    pub(crate) fn draw_block(
        area: &Area,
        size: &TextSize,
        lines: &[String],
        (x, top): (f64, f64),
        align: Align,
        colour: RGBColor,
    ) -> Result<f64, FigureError> {
        let mut baseline = top + size.cap_height();
        for line in lines {
            size.draw(area, line, (x, baseline), align, colour)?;
            baseline += size.line_height();
        }
        Ok(top + Self::block_height(size, lines.len()))
    }
}

/// Fills a pixel box (the bitmap backend fills right and bottom edges exclusively).
pub(crate) fn fill_box(area: &Area, b: PixelBox, colour: RGBColor) -> Result<(), FigureError> {
    let [(x0, y0), (x1, y1)] = b.to_i32();
    if x1 <= x0 || y1 <= y0 {
        return Ok(());
    }
    area.draw(&Rectangle::new([(x0, y0), (x1, y1)], colour.filled()))
        .map_err(FigureError::drawing)
}

/// Outlines a pixel box with a line `width` pixels wide, drawn inside the box.
pub(crate) fn outline_box(
    area: &Area,
    b: PixelBox,
    width: f64,
    colour: RGBColor,
) -> Result<(), FigureError> {
    let w = width.round().max(1.0);
    let sides = [
        PixelBox {
            bottom: b.top + w,
            ..b
        },
        PixelBox {
            top: b.bottom - w,
            ..b
        },
        PixelBox {
            right: b.left + w,
            ..b
        },
        PixelBox {
            left: b.right - w,
            ..b
        },
    ];
    sides
        .into_iter()
        .try_for_each(|side| fill_box(area, side, colour))
}

/// Points rounded to whole pixels.
fn rounded(points: &[(f64, f64)]) -> Vec<(i32, i32)> {
    points
        .iter()
        .map(|&(x, y)| (x.round() as i32, y.round() as i32))
        .collect()
}

/// Fills a polygon given in pixels.
pub(crate) fn fill_polygon(
    area: &Area,
    points: &[(f64, f64)],
    colour: RGBColor,
) -> Result<(), FigureError> {
    area.draw(&Polygon::new(rounded(points), colour.filled()))
        .map_err(FigureError::drawing)
}

/// A line through pixel points; `dash` is (on, off) lengths in pixels, or None for solid.
pub(crate) fn polyline(
    area: &Area,
    points: &[(f64, f64)],
    colour: RGBColor,
    width: f64,
    dash: Option<(f64, f64)>,
) -> Result<(), FigureError> {
    let style = ShapeStyle {
        color: colour.to_rgba(),
        filled: false,
        stroke_width: width.round().max(1.0) as u32,
    };
    let pieces = match dash {
        None => vec![points.to_vec()],
        Some((on, off)) => dash_pieces(points, on, off),
    };
    for piece in pieces.into_iter().filter(|p| p.len() > 1) {
        area.draw(&PathElement::new(rounded(&piece), style))
            .map_err(FigureError::drawing)?;
    }
    Ok(())
}

/// Splits a polyline into the "on" pieces of a dash pattern.
fn dash_pieces(points: &[(f64, f64)], on: f64, off: f64) -> Vec<Vec<(f64, f64)>> {
    let mut pieces = Vec::new();
    let mut current = vec![points[0]];
    let (mut drawing, mut left) = (true, on);
    for pair in points.windows(2) {
        let (mut from, to) = (pair[0], pair[1]);
        let mut length = ((to.0 - from.0).powi(2) + (to.1 - from.1).powi(2)).sqrt();
        while length > left {
            let t = left / length;
            let cut = (from.0 + t * (to.0 - from.0), from.1 + t * (to.1 - from.1));
            if drawing {
                current.push(cut);
                pieces.push(std::mem::take(&mut current));
            } else {
                current = vec![cut];
            }
            drawing = !drawing;
            length -= left;
            from = cut;
            left = if drawing { on } else { off };
        }
        left -= length;
        if drawing {
            current.push(to);
        }
    }
    if drawing && current.len() > 1 {
        pieces.push(current);
    }
    pieces
}

#[cfg(test)]
mod tests {
    use super::dash_pieces;

    #[test]
    fn dashes_alternate_along_the_line() {
        let pieces = dash_pieces(&[(0.0, 0.0), (10.0, 0.0)], 2.0, 1.0);
        let starts: Vec<f64> = pieces.iter().map(|p| p[0].0).collect();
        assert_eq!(starts, vec![0.0, 3.0, 6.0, 9.0]);
        assert_eq!(pieces[0].last().unwrap().0, 2.0);
        assert_eq!(pieces[3].last().unwrap().0, 10.0);
    }
}
