//! The shipped font: measuring text and painting it onto a plotters drawing area.
//!
//! Glyphs are rasterised with ab_glyph (the engine behind plotters' own `ab_glyph` text
//! feature) and blended pixel by pixel. plotters 0.3.7's text path drops each glyph's left
//! side bearing, which spaces letters unevenly ("SYNTHE TIC"); placing glyphs here keeps
//! kerning, bearings and sub-pixel positions, and lets callers think in baselines and ems.

use std::sync::OnceLock;

use ab_glyph::{Font, FontRef, PxScale, ScaleFont};
use plotters::prelude::*;

use crate::FigureError;

/// DejaVu Sans from Debian's fonts-dejavu-core (licence: fonts/LICENSE-DejaVu.txt).
static FONT_BYTES: &[u8] = include_bytes!("../fonts/DejaVuSans.ttf");

/// The parsed font.
fn font() -> Result<&'static FontRef<'static>, FigureError> {
    static FONT: OnceLock<Result<FontRef<'static>, String>> = OnceLock::new();
    FONT.get_or_init(|| {
        FontRef::try_from_slice(FONT_BYTES).map_err(|e| format!("bundled font unreadable: {e}"))
    })
    .as_ref()
    .map_err(|message| FigureError::Font(message.clone()))
}

/// Horizontal placement of a text relative to its anchor x.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Align {
    Left,
    Centre,
    Right,
}

/// Text measurer and painter for one em size (pixels per em).
#[derive(Clone, Copy)]
pub(crate) struct TextSize {
    font: &'static FontRef<'static>,
    em: f64,
}

impl TextSize {
    pub(crate) fn new(em_px: f64) -> Result<Self, FigureError> {
        Ok(Self {
            font: font()?,
            em: em_px,
        })
    }

    /// The ab_glyph scale: it counts the font's line height (ascent + descent), not its em.
    fn line_scale(&self) -> f64 {
        let per_em = self.font.units_per_em().unwrap_or(2048.0) as f64;
        self.em * self.font.height_unscaled() as f64 / per_em
    }

    pub(crate) fn em(&self) -> f64 {
        self.em
    }

    /// Distance between baselines of consecutive lines.
    pub(crate) fn line_height(&self) -> f64 {
        1.25 * self.em
    }

    /// Height of capital letters above the baseline.
    pub(crate) fn cap_height(&self) -> f64 {
        let scaled = self.font.as_scaled(PxScale::from(self.line_scale() as f32));
        let glyph = scaled.scaled_glyph('H');
        match scaled.outline_glyph(glyph) {
            Some(outline) => -outline.px_bounds().min.y as f64,
            None => 0.72 * self.em,
        }
    }

    /// Depth of descenders below the baseline.
    pub(crate) fn descent(&self) -> f64 {
        let scaled = self.font.as_scaled(PxScale::from(self.line_scale() as f32));
        -scaled.descent() as f64
    }

    /// Advance width of `text`, measured as plotters lays it out (advances plus kerning).
    pub(crate) fn width(&self, text: &str) -> f64 {
        let scaled = self.font.as_scaled(PxScale::from(self.line_scale() as f32));
        let mut width = 0.0f32;
        let mut previous = None;
        for c in text.chars() {
            let id = scaled.glyph_id(c);
            if let Some(p) = previous {
                width += scaled.kern(p, id);
            }
            width += scaled.h_advance(id);
            previous = Some(id);
        }
        width as f64
    }

    /// Splits `text` into lines no wider than `max_width` (breaking at spaces only).
    pub(crate) fn wrap(&self, text: &str, max_width: f64) -> Vec<String> {
        let mut lines: Vec<String> = Vec::new();
        for paragraph in text.lines() {
            let mut line = String::new();
            for word in paragraph.split_whitespace() {
                let candidate = if line.is_empty() {
                    word.to_string()
                } else {
                    format!("{line} {word}")
                };
                if !line.is_empty() && self.width(&candidate) > max_width {
                    // A separator such as "·" opens the next line rather than ending this one.
                    let carried = match line.rsplit_once(' ') {
                        Some((head, last)) if last.chars().all(|c| !c.is_alphanumeric()) => {
                            let carried = format!("{last} {word}");
                            line = head.to_string();
                            carried
                        }
                        _ => word.to_string(),
                    };
                    lines.push(std::mem::replace(&mut line, carried));
                } else {
                    line = candidate;
                }
            }
            if !line.is_empty() {
                lines.push(line);
            }
        }
        lines
    }

    /// Paints glyph coverage onto the area. `origin` is the pen start on the baseline; for
    /// `upward` text the baseline runs bottom to top and the glyphs stand to its left.
    fn paint<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        text: &str,
        origin: (f64, f64),
        upward: bool,
        colour: RGBColor,
    ) -> Result<(), FigureError> {
        let scale = PxScale::from(self.line_scale() as f32);
        let scaled = self.font.as_scaled(scale);
        let (ox, oy) = if upward {
            (origin.0.round(), origin.1.round())
        } else {
            (origin.0.floor(), origin.1.round())
        };
        let subpixel = if upward { 0.0 } else { (origin.0 - ox) as f32 };
        let mut failure = None;
        let mut pen = subpixel;
        let mut previous = None;
        for c in text.chars() {
            let id = scaled.glyph_id(c);
            if let Some(p) = previous {
                pen += scaled.kern(p, id);
            }
            previous = Some(id);
            let glyph = id.with_scale_and_position(scale, ab_glyph::point(pen, 0.0));
            pen += scaled.h_advance(id);
            let Some(outline) = self.font.outline_glyph(glyph) else {
                continue;
            };
            let bounds = outline.px_bounds();
            outline.draw(|gx, gy, coverage| {
                let dx = (bounds.min.x + gx as f32) as f64;
                let dy = (bounds.min.y + gy as f32) as f64;
                let (x, y) = if upward {
                    (ox + dy, oy - dx)
                } else {
                    (ox + dx, oy + dy)
                };
                let ink = colour.mix(coverage.clamp(0.0, 1.0) as f64);
                if let Err(e) = area.draw_pixel((x as i32, y as i32), &ink) {
                    failure.get_or_insert(e.to_string());
                }
            });
        }
        failure.map_or(Ok(()), |e| Err(FigureError::Drawing(e)))
    }

    /// Draws `text` with its baseline at `baseline` and aligned to `x`.
    pub(crate) fn draw<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        text: &str,
        (x, baseline): (f64, f64),
        align: Align,
        colour: RGBColor,
    ) -> Result<(), FigureError> {
        let left = match align {
            Align::Left => x,
            Align::Centre => x - self.width(text) / 2.0,
            Align::Right => x - self.width(text),
        };
        self.paint(area, text, (left, baseline), false, colour)
    }

    /// Draws `text` reading upwards, centred on `centre_y`, glyphs to the left of `baseline_x`.
    pub(crate) fn draw_upward<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, plotters::coord::Shift>,
        text: &str,
        (baseline_x, centre_y): (f64, f64),
        colour: RGBColor,
    ) -> Result<(), FigureError> {
        let start = centre_y + self.width(text) / 2.0;
        self.paint(area, text, (baseline_x, start), true, colour)
    }
}
