//! Time series of several runs on one plot, with the reference window shaded and each run's
//! year of emergence marked.

use plotters::prelude::RGBColor;

use crate::axes::TickKind;
use crate::captions::Captions;
use crate::frame::{AxisSpec, Frame, FrameSpec};
use crate::legend::{draw_marker, LegendEntry, LineLook, Swatch};
use crate::page::{paint_figure, Figure, PageSize, Panel, PixelBox};
use crate::palette::Palette;
use crate::style::{fill_box, Area, Style, INK};
use crate::text::Align;
use crate::FigureError;

/// One run's values by year (decimal years; NaN values leave gaps).
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// Legend text, e.g. "pathway-steep".
    pub label: String,
    pub years: Vec<f64>,
    pub values: Vec<f64>,
    /// The run's year of emergence, if it has one.
    pub emergence_year: Option<f64>,
}

/// What a time-series plot shows.
#[derive(Clone, Debug, PartialEq)]
pub struct SeriesSpec {
    /// The quantity and units label the y axis.
    pub text: Captions,
    /// The reference window (first year, last year), shaded.
    pub reference: Option<(f64, f64)>,
    pub page: PageSize,
}

impl SeriesSpec {
    pub fn new(text: Captions) -> Self {
        Self {
            text,
            reference: None,
            page: PageSize::default(),
        }
    }
}

const BAND: RGBColor = RGBColor(222, 222, 222);

/// Colour and dash of run `k` of `n`: evenly spaced along viridis (0 to 0.75, leaving out the
/// pale yellow end) so the runs differ in lightness as well as hue, and a dash pattern each,
/// so they stay apart for colour-blind readers and in greyscale print.
fn run_look(style: &Style, k: usize, n: usize) -> LineLook {
    let t = if n <= 1 {
        0.0
    } else {
        0.75 * k as f64 / (n - 1) as f64
    };
    let [r, g, b] = Palette::Viridis.at(t);
    let dashes = [
        None,
        Some((6.0, 2.5)),
        Some((1.5, 1.8)),
        Some((9.0, 2.0)),
        Some((3.0, 3.0)),
    ];
    LineLook {
        colour: RGBColor(r, g, b),
        width: style.pt(1.4),
        dash: dashes[k % dashes.len()].map(|(on, off)| (style.pt(on), style.pt(off))),
        casing: false,
    }
}

fn check_series(series: &[Series]) -> Result<(), FigureError> {
    if series.is_empty() {
        return Err(FigureError::input("time series: no runs to draw"));
    }
    for s in series {
        FigureError::check_len(
            &format!("time series '{}' values", s.label),
            s.years.len(),
            s.values.len(),
        )?;
        if let Some(bad) = s.years.iter().find(|y| !y.is_finite()) {
            return Err(FigureError::input(format!(
                "time series '{}': year {bad} is not a number",
                s.label
            )));
        }
    }
    Ok(())
}

/// Padded range of all finite values of `items`, or None when there are none.
fn span(items: impl Iterator<Item = f64>, pad: f64) -> Option<(f64, f64)> {
    let (lo, hi) = items
        .filter(|v| v.is_finite())
        .fold((f64::MAX, f64::MIN), |(lo, hi), v| (lo.min(v), hi.max(v)));
    if lo > hi {
        return None;
    }
    let margin = if hi > lo {
        pad * (hi - lo)
    } else {
        lo.abs().max(1.0) * 0.05
    };
    Some((lo - margin, hi + margin))
}

/// Draws every run on one plot.
pub fn render_series(series: &[Series], spec: &SeriesSpec) -> Result<Figure, FigureError> {
    check_series(series)?;
    let style = Style::new(spec.page)?;
    let years = series.iter().flat_map(|s| s.years.iter().copied());
    let x_range = span(years, 0.0).ok_or_else(|| FigureError::input("time series: no years"))?;
    let x_range = if x_range.1 > x_range.0 {
        x_range
    } else {
        (x_range.0 - 1.0, x_range.1 + 1.0)
    };
    let values = series.iter().flat_map(|s| s.values.iter().copied());
    let mut y_range =
        span(values, 0.06).ok_or_else(|| FigureError::input("time series: no valid values"))?;
    if series.iter().any(|s| s.emergence_year.is_some()) {
        // Headroom for the years of emergence written along the top of the panel.
        y_range.1 += 0.12 * (y_range.1 - y_range.0);
    }
    let n = series.len();
    let mut legend: Vec<LegendEntry> = series
        .iter()
        .enumerate()
        .map(|(k, s)| LegendEntry {
            swatch: Swatch::Line(run_look(&style, k, n)),
            label: s.label.clone(),
        })
        .collect();
    if let Some((first, last)) = spec.reference {
        legend.push(LegendEntry {
            swatch: Swatch::Band(BAND),
            label: format!("reference window {first:.0}–{last:.0}"),
        });
    }
    if series.iter().any(|s| s.emergence_year.is_some()) {
        legend.push(LegendEntry {
            swatch: Swatch::Marker(INK),
            label: "year of emergence".to_string(),
        });
    }
    let fit = |available: f64| (available, 0.5 * available);
    let frame = Frame::lay_out(
        &style,
        FrameSpec {
            text: &spec.text,
            legend,
            x: AxisSpec::new(TickKind::Year, x_range, Some("year")),
            y: AxisSpec::new(TickKind::Number, y_range, Some(&spec.text.quantity_label())),
            y_downward: false,
            bar: None,
            fit_panel: &fit,
        },
    );
    paint_figure(frame.size, spec.page.dpi, |area| {
        let panel = &frame.panel;
        if let Some(window) = spec.reference {
            shade_window(area, panel, window)?;
        }
        for (k, s) in series.iter().enumerate() {
            draw_run(area, panel, s, run_look(&style, k, n))?;
        }
        mark_emergence(area, &style, panel, series)?;
        frame.draw(area, &style)
    })
}

fn shade_window(area: &Area, panel: &Panel, (first, last): (f64, f64)) -> Result<(), FigureError> {
    let (x0, _) = panel.to_pixel(first.min(last), 0.0);
    let (x1, _) = panel.to_pixel(first.max(last), 0.0);
    let b = panel.area;
    let band = PixelBox {
        left: x0.clamp(b.left, b.right),
        right: x1.clamp(b.left, b.right),
        ..b
    };
    fill_box(area, band, BAND)
}

fn draw_run(area: &Area, panel: &Panel, s: &Series, look: LineLook) -> Result<(), FigureError> {
    let mut piece = Vec::new();
    for (&year, &value) in s.years.iter().zip(&s.values) {
        if value.is_finite() {
            piece.push(panel.to_pixel(year, value));
        } else if !piece.is_empty() {
            look.draw(area, &std::mem::take(&mut piece))?;
        }
    }
    if !piece.is_empty() {
        look.draw(area, &piece)?;
    }
    Ok(())
}

/// The run's value at `year`, linear between its neighbours.
fn value_at(s: &Series, year: f64) -> Option<f64> {
    let points: Vec<(f64, f64)> = s
        .years
        .iter()
        .zip(&s.values)
        .filter(|(_, v)| v.is_finite())
        .map(|(&y, &v)| (y, v))
        .collect();
    points
        .windows(2)
        .find_map(|w| {
            let ((y0, v0), (y1, v1)) = (w[0], w[1]);
            let inside = (y0.min(y1)..=y0.max(y1)).contains(&year);
            inside.then(|| {
                if y1 == y0 {
                    v0
                } else {
                    v0 + (year - y0) / (y1 - y0) * (v1 - v0)
                }
            })
        })
        .or_else(|| points.iter().find(|(y, _)| *y == year).map(|&(_, v)| v))
}

/// A thin vertical line from the run's value at its year of emergence down to the axis, a
/// marker on the run, and the year written near the top of the panel (staggered if close).
fn mark_emergence(
    area: &Area,
    style: &Style,
    panel: &Panel,
    series: &[Series],
) -> Result<(), FigureError> {
    let n = series.len();
    let mut placed: Vec<(f64, f64)> = Vec::new();
    for (k, s) in series.iter().enumerate() {
        let Some(year) = s.emergence_year else {
            continue;
        };
        let Some(value) = value_at(s, year) else {
            continue;
        };
        let look = run_look(style, k, n);
        let (x, y) = panel.to_pixel(year, value);
        let guide = LineLook {
            width: style.pt(0.7),
            dash: Some((style.pt(2.0), style.pt(2.0))),
            ..look
        };
        guide.draw(area, &[(x, panel.area.bottom), (x, y)])?;
        draw_marker(area, (x, y), style.pt(3.2), look.colour)?;
        let text = format!("{year:.0}");
        let width = style.small.width(&text);
        let mut baseline = panel.area.top + style.gap + style.small.cap_height();
        while placed
            .iter()
            .any(|&(px, pb)| (px - x).abs() < width + style.gap && (pb - baseline).abs() < 1.0)
        {
            baseline += style.small.line_height();
        }
        placed.push((x, baseline));
        style
            .small
            .draw(area, &text, (x, baseline), Align::Centre, INK)?;
    }
    Ok(())
}
