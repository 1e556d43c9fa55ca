//! Figure size and resolution, the finished raster, and writing it as PNG.

use std::fs;
use std::io::BufWriter;
use std::path::{Path, PathBuf};

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::FigureError;

/// Width and resolution of a figure. Fonts and line widths are set in points, so a higher
/// `dpi` gives the same figure with more pixels.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PageSize {
    /// Printed width in inches (height follows from the content).
    pub width_in: f64,
    /// Pixels per inch.
    pub dpi: f64,
}

impl Default for PageSize {
    /// 6.5 in (the text width of a letter or A4 report page) at 300 dpi (common practice for
    /// print).
    fn default() -> Self {
        Self {
            width_in: 6.5,
            dpi: 300.0,
        }
    }
}

impl PageSize {
    /// Checks the size: 1–30 inches wide, 50–1200 dpi.
    pub fn new(width_in: f64, dpi: f64) -> Result<Self, FigureError> {
        if !(1.0..=30.0).contains(&width_in) {
            return Err(FigureError::input(format!(
                "figure width {width_in} in: expected 1 to 30 inches"
            )));
        }
        if !(50.0..=1200.0).contains(&dpi) {
            return Err(FigureError::input(format!(
                "figure resolution {dpi} dpi: expected 50 to 1200 dpi"
            )));
        }
        Ok(Self { width_in, dpi })
    }

    /// Width in pixels.
    pub fn width_px(&self) -> u32 {
        (self.width_in * self.dpi).round() as u32
    }

    /// Pixels for a length in points (1/72 in).
    pub(crate) fn pt(&self, points: f64) -> f64 {
        points * self.dpi / 72.0
    }
}

/// A rectangle on the figure, in pixels (y grows downwards).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PixelBox {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl PixelBox {
    pub fn width(&self) -> f64 {
        self.right - self.left
    }
    pub fn height(&self) -> f64 {
        self.bottom - self.top
    }
    pub(crate) fn to_i32(self) -> [(i32, i32); 2] {
        [
            (self.left.round() as i32, self.top.round() as i32),
            (self.right.round() as i32, self.bottom.round() as i32),
        ]
    }
}

/// The data panel of a figure: where it lies and which data values its edges show.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Panel {
    pub area: PixelBox,
    /// Data x at the left and right edges.
    pub x_range: (f64, f64),
    /// Data y at the bottom and top edges (for a downward axis: at the top and bottom).
    pub y_range: (f64, f64),
    /// True when y grows downwards (depth).
    pub y_downward: bool,
}

impl Panel {
    /// Pixel position of a data point.
    pub fn to_pixel(&self, x: f64, y: f64) -> (f64, f64) {
        let fx = (x - self.x_range.0) / (self.x_range.1 - self.x_range.0);
        let fy = (y - self.y_range.0) / (self.y_range.1 - self.y_range.0);
        let px = self.area.left + fx * self.area.width();
        let py = if self.y_downward {
            self.area.top + fy * self.area.height()
        } else {
            self.area.bottom - fy * self.area.height()
        };
        (px, py)
    }
}

/// Where the colour bar's gradient lies and the values at its ends.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BarPlacement {
    /// The gradient itself (without the end triangles); the low end is at the bottom.
    pub area: PixelBox,
    pub low: f64,
    pub high: f64,
}

/// What lies where on a finished figure (for callers that annotate it and for tests).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Layout {
    pub panel: Panel,
    pub colour_bar: Option<BarPlacement>,
    /// The band holding the title.
    pub title: PixelBox,
}

/// A finished figure: an RGB raster and its layout.
#[derive(Clone, Debug)]
pub struct Figure {
    width: u32,
    height: u32,
    dpi: f64,
    rgb: Vec<u8>,
    layout: Layout,
}

impl Figure {
    pub fn width(&self) -> u32 {
        self.width
    }
    pub fn height(&self) -> u32 {
        self.height
    }
    pub fn dpi(&self) -> f64 {
        self.dpi
    }
    pub fn layout(&self) -> &Layout {
        &self.layout
    }
    /// Row-major RGB bytes, three per pixel.
    pub fn rgb(&self) -> &[u8] {
        &self.rgb
    }

    /// The colour of one pixel, or None outside the figure.
    pub fn pixel(&self, x: u32, y: u32) -> Option<[u8; 3]> {
        if x >= self.width || y >= self.height {
            return None;
        }
        let at = 3 * (y as usize * self.width as usize + x as usize);
        Some([self.rgb[at], self.rgb[at + 1], self.rgb[at + 2]])
    }

    /// The figure as PNG bytes, with its resolution recorded (pHYs) so it prints at size.
    pub fn encode_png(&self) -> Result<Vec<u8>, FigureError> {
        let mut bytes = Vec::new();
        write_png(&mut bytes, self).map_err(|message| FigureError::Write {
            path: PathBuf::from("<memory>"),
            message,
        })?;
        Ok(bytes)
    }

    /// Writes the figure as PNG: first to a hidden `.NAME.partial` beside `path`, renamed
    /// when complete, so no half-written file is ever left under the final name.
    pub fn save_png(&self, path: &Path) -> Result<(), FigureError> {
        let fail = |message: String| FigureError::Write {
            path: path.to_path_buf(),
            message,
        };
        let name = path
            .file_name()
            .ok_or_else(|| fail("the path names no file".into()))?;
        let partial = path.with_file_name(format!(".{}.partial", name.to_string_lossy()));
        let written = fs::File::create(&partial)
            .map_err(|e| e.to_string())
            .and_then(|file| {
                let mut out = BufWriter::new(file);
                write_png(&mut out, self)?;
                let file = out.into_inner().map_err(|e| e.to_string())?;
                file.sync_all().map_err(|e| e.to_string())
            })
            .and_then(|()| fs::rename(&partial, path).map_err(|e| e.to_string()));
        if let Err(message) = written {
            let _ = fs::remove_file(&partial);
            return Err(fail(message));
        }
        Ok(())
    }
}

fn write_png<W: std::io::Write>(out: W, figure: &Figure) -> Result<(), String> {
    let mut encoder = png::Encoder::new(out, figure.width, figure.height);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    let per_metre = (figure.dpi / 0.0254).round() as u32;
    encoder.set_pixel_dims(Some(png::PixelDimensions {
        xppu: per_metre,
        yppu: per_metre,
        unit: png::Unit::Meter,
    }));
    let mut writer = encoder.write_header().map_err(|e| e.to_string())?;
    writer
        .write_image_data(&figure.rgb)
        .map_err(|e| e.to_string())?;
    writer.finish().map_err(|e| e.to_string())
}

/// Paints a `width` × `height` white raster with `paint` and returns it as a figure.
pub(crate) fn paint_figure(
    size: (u32, u32),
    dpi: f64,
    paint: impl FnOnce(&DrawingArea<BitMapBackend<'_>, Shift>) -> Result<Layout, FigureError>,
) -> Result<Figure, FigureError> {
    let (width, height) = size;
    let mut rgb = vec![255u8; 3 * width as usize * height as usize];
    let layout = {
        let area = BitMapBackend::with_buffer(&mut rgb, (width, height)).into_drawing_area();
        let layout = paint(&area)?;
        area.present().map_err(FigureError::drawing)?;
        layout
    };
    Ok(Figure {
        width,
        height,
        dpi,
        rgb,
        layout,
    })
}
