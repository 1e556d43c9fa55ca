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

/// Position (u, v) degrees from 206 °E, 34.5 °N along axes turned by 30°.
pub fn turned(u: f64, v: f64) -> (f64, f64) {
    let turn = 30f64.to_radians();
    (
        206.0 + u * turn.cos() - v * turn.sin(),
        34.5 + u * turn.sin() + v * turn.cos(),
    )
}

/// An n × n patch of `cell`-degree cells on axes turned by 30° about 206 °E, 34.5 °N, with
/// 4-vertex bounds; returns the grid and its centre longitudes and latitudes.
pub fn turned_patch(n: usize, cell: f64) -> (MapGrid, Vec<f64>, Vec<f64>) {
    let middle = (n as f64 - 1.0) / 2.0;
    let (mut lon, mut lat, mut lon_v, mut lat_v) = (vec![], vec![], vec![], vec![]);
    for j in 0..n {
        for i in 0..n {
            let (u, v) = (cell * (i as f64 - middle), cell * (j as f64 - middle));
            let c = turned(u, v);
            let corners = [(-0.5, -0.5), (0.5, -0.5), (0.5, 0.5), (-0.5, 0.5)]
                .map(|(a, b)| turned(u + cell * a, v + cell * b));
            lon.push(c.0);
            lat.push(c.1);
            lon_v.push(corners.map(|p| p.0));
            lat_v.push(corners.map(|p| p.1));
        }
    }
    let grid = MapGrid::curvilinear((n, n), lon.clone(), lat.clone(), lon_v, lat_v).unwrap();
    (grid, lon, lat)
}

/// `count` 1° centre longitudes from `first`, written the −180…180 way (so a run across
/// the dateline jumps from 179.5 to −179.5).
pub fn dateline_lons(first: f64, count: usize) -> Vec<f64> {
    (0..count)
        .map(|i| (first + i as f64 + 180.0).rem_euclid(360.0) - 180.0)
        .collect()
}
