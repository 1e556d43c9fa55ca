//! The page around a data panel, shared by every figure: title on top, the panel with its
//! axes, a colour bar on the right, a legend and a caption below.

pub(crate) use crate::axes::AxisSpec;
use crate::axes::{bottom_height, draw_axes, fit_axis, left_width, Axis};
use crate::captions::Captions;
use crate::colour_bar::ColourBar;
use crate::legend::{Legend, LegendEntry};
use crate::page::{Layout, Panel, PixelBox};
use crate::palette::ColourScale;
use crate::style::{Area, Style, INK};
use crate::text::Align;
use crate::FigureError;

/// What goes around a panel.
pub(crate) struct FrameSpec<'a> {
    /// Title and caption (the quantity goes on an axis or the colour bar by the caller).
    pub text: &'a Captions,
    pub legend: Vec<LegendEntry>,
    pub x: AxisSpec,
    pub y: AxisSpec,
    pub y_downward: bool,
    pub bar: Option<(&'a ColourScale, String)>,
    /// The panel's (width, height) for the widest width available.
    pub fit_panel: &'a dyn Fn(f64) -> (f64, f64),
}

/// A laid-out page.
pub(crate) struct Frame<'a> {
    pub size: (u32, u32),
    pub panel: Panel,
    title_lines: Vec<String>,
    title_box: PixelBox,
    caption_lines: Vec<String>,
    caption_top: f64,
    legend: Legend,
    legend_top: f64,
    x_axis: Axis,
    y_axis: Axis,
    bar: Option<ColourBar<'a>>,
}

/// Axes and colour bar for a panel of `(w, h)` pixels, with the width they take either side.
fn furniture<'a>(
    style: &Style,
    spec: &FrameSpec<'a>,
    (w, h): (f64, f64),
) -> (Axis, Axis, Option<ColourBar<'a>>, f64, f64) {
    let x_axis = fit_axis(&spec.x, w, true, &style.label);
    let y_axis = fit_axis(&spec.y, h, false, &style.label);
    let bar = spec
        .bar
        .as_ref()
        .map(|(scale, label)| ColourBar::new(style, scale, label.clone(), h));
    let left = left_width(style, &y_axis);
    let overhang = x_axis
        .labels
        .last()
        .map(|l| style.label.width(l) / 2.0)
        .unwrap_or(0.0);
    let right = match &bar {
        Some(bar) => bar.width(style),
        None => overhang + style.gap,
    };
    (x_axis, y_axis, bar, left, right)
}

impl<'a> Frame<'a> {
    pub(crate) fn lay_out(style: &Style, spec: FrameSpec<'a>) -> Self {
        let width = style.page.width_px() as f64;
        let inner = width - 2.0 * style.margin;
        let mut dims = fit_panel_checked(&spec, inner * 0.8);
        let mut parts = furniture(style, &spec, dims);
        for _ in 0..3 {
            let available = inner - parts.3 - parts.4;
            dims = fit_panel_checked(&spec, available);
            parts = furniture(style, &spec, dims);
        }
        let (x_axis, y_axis, bar, left, right) = parts;
        let block_left = style.margin + (inner - left - dims.0 - right).max(0.0) / 2.0;

        let title_lines = style.title.wrap(&spec.text.title, inner);
        let title_box = PixelBox {
            left: 0.0,
            right: width,
            top: 0.0,
            bottom: style.margin + Style::block_height(&style.title, title_lines.len()),
        };
        let mut y = title_box.bottom + 3.0 * style.gap;
        let area = PixelBox {
            left: (block_left + left).round(),
            right: (block_left + left + dims.0).round(),
            top: y.round(),
            bottom: (y + dims.1).round(),
        };
        y = area.bottom + bottom_height(style, &x_axis);
        let legend = Legend::new(style, spec.legend, inner);
        let legend_top = y + 2.5 * style.gap;
        if legend.height(style) > 0.0 {
            y = legend_top + legend.height(style);
        }
        let caption_lines = style.small.wrap(&spec.text.caption, inner);
        let caption_top = y + 2.5 * style.gap;
        if !caption_lines.is_empty() {
            y = caption_top + Style::block_height(&style.small, caption_lines.len());
        }
        let height = (y + style.margin).ceil() as u32;
        let panel = Panel {
            area,
            x_range: spec.x.range,
            y_range: spec.y.range,
            y_downward: spec.y_downward,
        };
        Frame {
            size: (width as u32, height),
            panel,
            title_lines,
            title_box,
            caption_lines,
            caption_top,
            legend,
            legend_top,
            x_axis,
            y_axis,
            bar,
        }
    }

    /// Draws everything but the data; call after painting the panel's contents.
    pub(crate) fn draw(&self, area: &Area, style: &Style) -> Result<Layout, FigureError> {
        let centre = self.size.0 as f64 / 2.0;
        Style::draw_block(
            area,
            &style.title,
            &self.title_lines,
            (centre, style.margin),
            Align::Centre,
            INK,
        )?;
        draw_axes(area, style, &self.panel, &self.x_axis, &self.y_axis)?;
        let b = self.panel.area;
        let colour_bar = match &self.bar {
            Some(bar) => Some(bar.draw(area, style, (b.right, b.top, b.bottom))?),
            None => None,
        };
        self.legend
            .draw(area, style, ((b.left + b.right) / 2.0, self.legend_top))?;
        Style::draw_block(
            area,
            &style.small,
            &self.caption_lines,
            (style.margin, self.caption_top),
            Align::Left,
            INK,
        )?;
        Ok(Layout {
            panel: self.panel,
            colour_bar,
            title: self.title_box,
        })
    }
}

/// The panel for `available` width, kept at least a few points in each direction.
fn fit_panel_checked(spec: &FrameSpec, available: f64) -> (f64, f64) {
    let (w, h) = (spec.fit_panel)(available.max(20.0));
    (w.max(20.0), h.max(20.0))
}
