//! The vertical colour bar beside a panel: gradient, pointed ends when values lie beyond the
//! range, ticks, labels and the quantity with its units.

use plotters::prelude::RGBColor;

use crate::axes::{fit_axis, widest, Axis, AxisSpec, TickKind};
use crate::page::{BarPlacement, PixelBox};
use crate::palette::ColourScale;
use crate::style::{fill_box, fill_polygon, outline_box, polyline, Area, Style, INK};
use crate::text::Align;
use crate::FigureError;

/// A colour bar for one scale, with its label text ("quantity (units)").
pub(crate) struct ColourBar<'a> {
    pub scale: &'a ColourScale,
    pub label: String,
    /// Ticks fitted to the bar's length.
    axis: Axis,
}

fn bar_thickness(style: &Style) -> f64 {
    style.pt(9.0).round()
}

impl<'a> ColourBar<'a> {
    /// A bar spanning `length` pixels (end triangles included).
    pub(crate) fn new(style: &Style, scale: &'a ColourScale, label: String, length: f64) -> Self {
        let gradient = length - 2.0 * bar_thickness(style);
        let kind = if scale.whole_numbers() {
            TickKind::Year
        } else {
            TickKind::Number
        };
        let spec = AxisSpec::new(kind, (scale.low(), scale.high()), None);
        let axis = fit_axis(&spec, gradient, false, &style.label);
        Self { scale, label, axis }
    }

    /// Width the bar takes to the right of the panel.
    pub(crate) fn width(&self, style: &Style) -> f64 {
        let labels = widest(&style.label, &self.axis.labels);
        let text = &style.label;
        3.0 * style.gap
            + bar_thickness(style)
            + style.tick
            + style.gap
            + labels
            + style.gap
            + text.cap_height()
            + text.descent()
    }

    /// Draws the bar from `top` to `bottom`, starting `left` (the panel's right edge).
    pub(crate) fn draw(
        &self,
        area: &Area,
        style: &Style,
        (left, top, bottom): (f64, f64, f64),
    ) -> Result<BarPlacement, FigureError> {
        let thickness = bar_thickness(style);
        let x0 = (left + 3.0 * style.gap).round();
        let x1 = x0 + thickness;
        let cap = thickness;
        let gradient = PixelBox {
            left: x0,
            right: x1,
            top: (top + if self.scale.values_above() { cap } else { 0.0 }).round(),
            bottom: (bottom - if self.scale.values_below() { cap } else { 0.0 }).round(),
        };
        self.paint_gradient(area, gradient)?;
        self.paint_ends(area, style, gradient, cap)?;
        outline_box(area, gradient, style.thin, INK)?;
        self.draw_ticks(area, style, gradient)?;
        let text = &style.label;
        let labels = widest(text, &self.axis.labels);
        let baseline_x = x1 + style.tick + 2.0 * style.gap + labels + text.cap_height();
        text.draw_upward(area, &self.label, (baseline_x, (top + bottom) / 2.0), INK)?;
        Ok(BarPlacement {
            area: gradient,
            low: self.scale.low(),
            high: self.scale.high(),
        })
    }

    /// One row of pixels per colour, low values at the bottom.
    fn paint_gradient(&self, area: &Area, b: PixelBox) -> Result<(), FigureError> {
        let rows = b.height().max(1.0) as i64;
        for row in 0..rows {
            let t = (row as f64 + 0.5) / rows as f64;
            let [r, g, bl] = self.scale.palette().at(t);
            let y = b.bottom - 1.0 - row as f64;
            let line = PixelBox {
                top: y,
                bottom: y + 1.0,
                ..b
            };
            fill_box(area, line, RGBColor(r, g, bl))?;
        }
        Ok(())
    }

    /// Triangles in the end colours where values lie beyond the range.
    fn paint_ends(
        &self,
        area: &Area,
        style: &Style,
        b: PixelBox,
        cap: f64,
    ) -> Result<(), FigureError> {
        let middle = (b.left + b.right) / 2.0;
        let ends = [
            (self.scale.values_above(), b.top, b.top - cap, 1.0),
            (self.scale.values_below(), b.bottom, b.bottom + cap, 0.0),
        ];
        for (shown, base, tip, t) in ends {
            if !shown {
                continue;
            }
            let [r, g, bl] = self.scale.palette().at(t);
            let triangle = [(b.left, base), (b.right, base), (middle, tip)];
            fill_polygon(area, &triangle, RGBColor(r, g, bl))?;
            let edge = [(b.left, base), (middle, tip), (b.right, base)];
            polyline(area, &edge, INK, style.thin, None)?;
        }
        Ok(())
    }

    fn draw_ticks(&self, area: &Area, style: &Style, b: PixelBox) -> Result<(), FigureError> {
        let w = style.thin.round();
        let label_x = b.right + style.tick + style.gap;
        for (&value, text) in self.axis.ticks.iter().zip(&self.axis.labels) {
            let y = b.bottom - self.scale.fraction(value) * b.height();
            let y = y.round().clamp(b.top, b.bottom - w);
            let tick = PixelBox {
                left: b.right,
                right: b.right + style.tick,
                top: y,
                bottom: y + w,
            };
            fill_box(area, tick, INK)?;
            let baseline = y + w / 2.0 + style.label.cap_height() / 2.0;
            style
                .label
                .draw(area, text, (label_x, baseline), Align::Left, INK)?;
        }
        Ok(())
    }
}
