//! Helpers shared by the image tests. All fields here are SYNTHETIC test patterns.
#![allow(dead_code)]

use acidscape_figures::{Figure, MapGrid, PageSize};

/// A small page so the tests stay quick (4 in at 100 dpi).
pub fn small_page() -> PageSize {
    PageSize::new(4.0, 100.0).unwrap()
}

/// A rectilinear grid of 1° cells with the given centre longitudes and latitudes.
pub fn one_degree_grid(lons: &[f64], lats: &[f64]) -> MapGrid {
    let bounds = |c: &[f64]| c.iter().map(|&v| [v - 0.5, v + 0.5]).collect::<Vec<_>>();
    MapGrid::rectilinear(bounds(lons), bounds(lats)).unwrap()
}

/// Centre longitudes 200.5 … 211.5 and latitudes 30.5 … 38.5 (the Varnholm Gulf's box).
pub fn gulf_axes() -> (Vec<f64>, Vec<f64>) {
    let lons = (200..212).map(|i| i as f64 + 0.5).collect();
    let lats = (30..39).map(|j| j as f64 + 0.5).collect();
    (lons, lats)
}

/// The pixel at data point (x, y) of the figure's panel.
pub fn pixel_at(figure: &Figure, x: f64, y: f64) -> [u8; 3] {
    let (px, py) = figure.layout().panel.to_pixel(x, y);
    figure.pixel(px as u32, py as u32).unwrap()
}

pub fn colour_distance(a: [u8; 3], b: [u8; 3]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(&p, q)| (p as f64 - q as f64).powi(2))
        .sum::<f64>()
        .sqrt()
}

/// Near-black pixels (text, frames, contour and horizon lines).
pub fn is_ink(c: [u8; 3]) -> bool {
    c.iter().all(|&v| v < 70)
}

/// The colorous gradient's colour at t, the palette library being the reference.
pub fn reference(gradient: colorous::Gradient, t: f64) -> [u8; 3] {
    gradient.eval_continuous(t).into_array()
}
