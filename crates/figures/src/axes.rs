//! Axis ticks that never overlap, and drawing the frame, ticks, labels and axis titles.

use crate::page::{Panel, PixelBox};
use crate::style::{fill_box, outline_box, Area, Style, INK};
use crate::text::{Align, TextSize};
use crate::ticks;
use crate::FigureError;

/// How an axis' values are labelled.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum TickKind {
    Number,
    Longitude,
    Latitude,
    /// Whole-number steps, labels without decimals (years; any whole-number field).
    Year,
}

/// Tick positions, their labels and the axis title.
#[derive(Clone, Debug)]
pub(crate) struct Axis {
    pub ticks: Vec<f64>,
    pub labels: Vec<String>,
    pub title: Option<String>,
}

fn ticks_for(kind: TickKind, lo: f64, hi: f64, target: usize) -> (Vec<f64>, Vec<String>) {
    let span = (hi - lo).abs();
    match kind {
        TickKind::Number => {
            let values = ticks::nice_ticks(lo, hi, target);
            let labels = ticks::number_labels(&values);
            (values, labels)
        }
        TickKind::Year => {
            let step = ticks::nice_step(span, target).max(1.0).round();
            let values = ticks::ticks_with_step(lo, hi, step);
            let labels = values.iter().map(|v| format!("{v:.0}")).collect();
            (values, labels)
        }
        TickKind::Longitude | TickKind::Latitude => {
            let step = ticks::degree_step(span, target);
            let decimals = ticks::decimals_for(step);
            let values = ticks::ticks_with_step(lo, hi, step);
            let labels = values
                .iter()
                .map(|&v| match kind {
                    TickKind::Longitude => ticks::longitude_label(v, decimals),
                    _ => ticks::latitude_label(v, decimals),
                })
                .collect();
            (values, labels)
        }
    }
}

/// One axis to be fitted: how its ticks read, its data range (left→right, bottom→top, or
/// for a downward axis top→bottom) and its title.
pub(crate) struct AxisSpec {
    pub kind: TickKind,
    pub range: (f64, f64),
    pub title: Option<String>,
}

impl AxisSpec {
    pub(crate) fn new(kind: TickKind, range: (f64, f64), title: Option<&str>) -> Self {
        Self {
            kind,
            range,
            title: title.map(str::to_string),
        }
    }
}

/// The densest ticks whose labels keep clear of each other along `length` pixels.
pub(crate) fn fit_axis(spec: &AxisSpec, length: f64, horizontal: bool, size: &TextSize) -> Axis {
    let (kind, (lo, hi), title) = (spec.kind, spec.range, spec.title.clone());
    let mut fallback = None;
    for target in (2..=10).rev() {
        let (values, labels) = ticks_for(kind, lo, hi, target);
        if values.len() < 2 {
            fallback.get_or_insert((values, labels));
            continue;
        }
        let spacing = length * (values[1] - values[0]).abs() / (hi - lo).abs();
        let needed = if horizontal {
            labels.iter().map(|l| size.width(l)).fold(0.0, f64::max) + 1.5 * size.em()
        } else {
            2.2 * size.line_height()
        };
        if spacing >= needed {
            return Axis {
                ticks: values,
                labels,
                title,
            };
        }
        fallback = Some((values, labels));
    }
    let (ticks, labels) = fallback.unwrap_or_default();
    Axis {
        ticks,
        labels,
        title,
    }
}

/// Width of the widest label of `labels`.
pub(crate) fn widest(size: &TextSize, labels: &[String]) -> f64 {
    labels.iter().map(|l| size.width(l)).fold(0.0, f64::max)
}

/// Width needed left of the panel for the y axis' ticks, labels and title.
pub(crate) fn left_width(style: &Style, axis: &Axis) -> f64 {
    let labels = widest(&style.label, &axis.labels);
    let title = match axis.title {
        Some(_) => style.gap + style.label.cap_height() + style.label.descent(),
        None => 0.0,
    };
    style.tick + style.gap + labels + title
}

/// Height needed below the panel for the x axis' ticks, labels and title.
pub(crate) fn bottom_height(style: &Style, axis: &Axis) -> f64 {
    let labels = style.label.cap_height() + style.label.descent();
    let title = match axis.title {
        Some(_) => style.label.line_height(),
        None => 0.0,
    };
    style.tick + style.gap + labels + title
}

/// Draws the frame, outward ticks, tick labels and axis titles around `panel`.
pub(crate) fn draw_axes(
    area: &Area,
    style: &Style,
    panel: &Panel,
    x: &Axis,
    y: &Axis,
) -> Result<(), FigureError> {
    let b = panel.area;
    let w = style.thin.round();
    outline_box(area, b, w, INK)?;
    let label = &style.label;
    let x_baseline = b.bottom + style.tick + style.gap + label.cap_height();
    for (&value, text) in x.ticks.iter().zip(&x.labels) {
        let (px, _) = panel.to_pixel(value, panel.y_range.0);
        let px = px.round().clamp(b.left, b.right - w);
        let tick = PixelBox {
            left: px,
            right: px + w,
            top: b.bottom,
            bottom: b.bottom + style.tick,
        };
        fill_box(area, tick, INK)?;
        label.draw(area, text, (px + w / 2.0, x_baseline), Align::Centre, INK)?;
    }
    let label_right = b.left - style.tick - style.gap;
    for (&value, text) in y.ticks.iter().zip(&y.labels) {
        let (_, py) = panel.to_pixel(panel.x_range.0, value);
        let py = py.round().clamp(b.top, b.bottom - w);
        let tick = PixelBox {
            left: b.left - style.tick,
            right: b.left,
            top: py,
            bottom: py + w,
        };
        fill_box(area, tick, INK)?;
        let baseline = py + w / 2.0 + label.cap_height() / 2.0;
        label.draw(area, text, (label_right, baseline), Align::Right, INK)?;
    }
    if let Some(title) = &x.title {
        let baseline = x_baseline + label.line_height();
        let centre = (b.left + b.right) / 2.0;
        label.draw(area, title, (centre, baseline), Align::Centre, INK)?;
    }
    if let Some(title) = &y.title {
        let baseline_x = label_right - widest(label, &y.labels) - style.gap - label.descent();
        let centre = (b.top + b.bottom) / 2.0;
        label.draw_upward(area, title, (baseline_x, centre), INK)?;
    }
    Ok(())
}
