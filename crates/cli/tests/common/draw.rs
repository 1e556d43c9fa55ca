//! Helpers of the `draw` tests: requests on a small page, and reading outputs with the netCDF
//! library itself, independently of acidscape's reader.

use acidscape_drawing::{
    FieldRequest, LevelRequest, LineRequest, MapRequest, PageRequest, SectionRequest, WhenRequest,
};
use acidscape_figures::Figure;
use netcdf::Extent;
use std::path::{Path, PathBuf};

pub const FILL: f32 = 1e20;

/// A small page so rendering stays quick: 5 in at 100 dpi.
pub fn page(output: PathBuf) -> PageRequest {
    PageRequest {
        dpi: 100.0,
        width_in: 5.0,
        ..PageRequest::new(output)
    }
}

/// A field of `file` drawn to `out` on the small page.
pub fn field(file: &Path, variable: &str, when: WhenRequest, out: PathBuf) -> FieldRequest {
    FieldRequest {
        when,
        page: page(out.clone()),
        ..FieldRequest::new(file, variable, out)
    }
}

pub fn map_request(file: &Path, variable: &str, out: PathBuf) -> MapRequest {
    MapRequest {
        field: field(file, variable, WhenRequest::default(), out),
        level: LevelRequest::default(),
    }
}

pub fn section_request(
    file: &Path,
    variable: &str,
    when: WhenRequest,
    line: LineRequest,
    out: PathBuf,
) -> SectionRequest {
    SectionRequest {
        field: field(file, variable, when, out),
        line,
        max_depth: None,
    }
}

pub fn surface() -> LevelRequest {
    LevelRequest {
        level: Some("surface".into()),
        depth: None,
    }
}

pub fn step(n: usize) -> WhenRequest {
    WhenRequest {
        step: Some(n),
        ..WhenRequest::default()
    }
}

pub fn window(name: &str) -> WhenRequest {
    WhenRequest {
        window: Some(name.into()),
        ..WhenRequest::default()
    }
}

/// One time step (or window) and level of a float variable, read with the netCDF library
/// itself (fill as NaN): (time, level, lat, lon) layout.
pub fn read_level(file: &Path, name: &str, t: usize, level: usize) -> Vec<f64> {
    read_floats(file, name, &[t, level])
}

/// One time step (or window) of a 2-D float variable, read with the netCDF library itself
/// (fill as NaN): (time, lat, lon) layout.
pub fn read_map(file: &Path, name: &str, t: usize) -> Vec<f64> {
    read_floats(file, name, &[t])
}

/// The leading indices `at` and all of the remaining dimensions of a float variable.
fn read_floats(file: &Path, name: &str, at: &[usize]) -> Vec<f64> {
    let nc = netcdf::open(file).unwrap();
    let var = nc.variable(name).unwrap();
    let extents: Vec<Extent> = (var.dimensions().iter().enumerate())
        .map(|(d, dim)| match at.get(d) {
            Some(&i) => Extent::from(i..i + 1),
            None => Extent::from(0..dim.len()),
        })
        .collect();
    let values: Vec<f32> = var.get_values(extents).unwrap();
    values
        .into_iter()
        .map(|v| if v == FILL { f64::NAN } else { f64::from(v) })
        .collect()
}

/// A 1-D double coordinate (or a (n, 2) bounds variable, flattened).
pub fn read_all(file: &Path, name: &str) -> Vec<f64> {
    let nc = netcdf::open(file).unwrap();
    let values: Vec<f64> = nc.variable(name).unwrap().get_values(..).unwrap();
    values
}

/// Overwrites the surface of `omega_aragonite` at step 0 with a SYNTHETIC ramp across the
/// columns, 0.5 + 1.5 i / (nx - 1), keeping land as fill; returns the ramp (NaN on land).
pub fn write_ramp(file: &Path) -> Vec<f64> {
    let old = read_level(file, "omega_aragonite", 0, 0);
    let nx = read_all(file, "lon").len();
    let ramp: Vec<f64> = old
        .iter()
        .enumerate()
        .map(|(k, v)| {
            if v.is_nan() {
                f64::NAN
            } else {
                0.5 + 1.5 * (k % nx) as f64 / (nx - 1) as f64
            }
        })
        .collect();
    let stored: Vec<f32> = ramp
        .iter()
        .map(|v| if v.is_nan() { FILL } else { *v as f32 })
        .collect();
    let ny = ramp.len() / nx;
    let mut nc = netcdf::append(file).unwrap();
    let mut var = nc.variable_mut("omega_aragonite").unwrap();
    let extents = vec![
        Extent::from(0..1),
        Extent::from(0..1),
        Extent::from(0..ny),
        Extent::from(0..nx),
    ];
    var.put_values(&stored, extents).unwrap();
    ramp
}

pub fn distance(a: [u8; 3], b: [u8; 3]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(&p, q)| (f64::from(p) - f64::from(q)).powi(2))
        .sum::<f64>()
        .sqrt()
}

/// The colour at the centre of cell (j, i) of a rectilinear map.
pub fn cell_colour(figure: &Figure, lons: &[f64], lats: &[f64], j: usize, i: usize) -> [u8; 3] {
    let (x, y) = figure.layout().panel.to_pixel(lons[i], lats[j]);
    figure.pixel(x as u32, y as u32).unwrap()
}

pub fn as_str(args: &[String]) -> Vec<&str> {
    args.iter().map(String::as_str).collect()
}

pub fn png_size(path: &Path) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buffer = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buffer).unwrap();
    buffer.truncate(info.buffer_size());
    (info.width, info.height, buffer)
}
