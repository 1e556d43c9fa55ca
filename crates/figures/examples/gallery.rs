//! Writes one figure of each kind from SYNTHETIC data set in the invented Varnholm Gulf
//! (200–212 °E, 30–39 °N; see sample-grids/README.md), so reviewers can look at them.
//!
//! cargo run --release -p acidscape-figures --example gallery -- OUT_DIR [DPI]
//!
//! Every number here is invented for the pictures; none is a model result.

use std::f64::consts::PI;
use std::path::{Path, PathBuf};

use acidscape_figures::{
    render_map, render_section, render_series, sample_path, Captions, ContourLevel, Figure,
    FigureError, MapGrid, MapSpec, PageSize, Palette, SectionAxis, SectionColumn, SectionLine,
    SectionSpec, Series, SeriesSpec,
};

/// Invented gulf geometry: land to the west and north, Skerra Island in the middle.
fn is_land(lon: f64, lat: f64) -> bool {
    let west_coast =
        200.9 + 0.35 * (lat * 1.7).sin() + if lat > 36.0 { (lat - 36.0) * 0.9 } else { 0.0 };
    let north_coast = 38.3
        - 0.25 * ((lon - 200.0) * 0.9).cos()
        - if lon < 203.0 {
            (203.0 - lon) * 0.3
        } else {
            0.0
        };
    let river_mouth = (lat - 33.2).abs() < 0.15 && lon < west_coast + 0.4;
    let island = ((lon - 206.6) / 0.9).powi(2) + ((lat - 34.6) / 0.55).powi(2) < 1.0;
    (lon < west_coast && !river_mouth) || lat > north_coast || island
}

/// Distance in degrees to the nearest coast, roughly (for coastal upwelling).
fn coast_distance(lon: f64, lat: f64) -> f64 {
    let mut best: f64 = 3.0;
    for step in 1..=30 {
        let r = step as f64 * 0.1;
        let hits = (0..16).any(|a| {
            let angle = a as f64 * PI / 8.0;
            is_land(lon + r * angle.cos() / 0.82, lat + r * angle.sin())
        });
        if hits {
            best = r;
            break;
        }
    }
    best
}

/// Invented Ω aragonite at 300 m late in the steep pathway: lower to the north and near the
/// coasts (upwelling), with a few eddies.
fn omega_300m(lon: f64, lat: f64) -> f64 {
    let eddies = 0.06 * ((lon - 203.0) * 1.3).sin() * ((lat - 31.0) * 1.1).cos()
        + 0.04 * ((lon + lat) * 2.1).sin();
    1.32 - 0.045 * (lat - 30.0) - 0.18 * (-coast_distance(lon, lat) / 0.6).exp() + eddies
}

struct Gulf {
    grid: MapGrid,
    lons: Vec<f64>,
    lats: Vec<f64>,
}

fn gulf(step: f64) -> Result<Gulf, FigureError> {
    let nx = (12.0 / step).round() as usize;
    let ny = (9.0 / step).round() as usize;
    let lons: Vec<f64> = (0..nx).map(|i| 200.0 + (i as f64 + 0.5) * step).collect();
    let lats: Vec<f64> = (0..ny).map(|j| 30.0 + (j as f64 + 0.5) * step).collect();
    let grid = MapGrid::rectilinear_from_centres(&lons, &lats)?;
    Ok(Gulf { grid, lons, lats })
}

fn field(g: &Gulf, f: impl Fn(f64, f64) -> f64) -> Vec<f64> {
    let mut values = Vec::with_capacity(g.lons.len() * g.lats.len());
    for &lat in &g.lats {
        for &lon in &g.lons {
            values.push(if is_land(lon, lat) {
                f64::NAN
            } else {
                f(lon, lat)
            });
        }
    }
    values
}

fn write(
    out: &Path,
    name: &str,
    figure: Figure,
    written: &mut Vec<PathBuf>,
) -> Result<(), FigureError> {
    let path = out.join(name);
    figure.save_png(&path)?;
    written.push(path);
    Ok(())
}

const CAPTION: &str = "SYNTHETIC: invented data for illustration, not model output. Constants: \
                       K1, K2 Lueker et al. 2000; Ksp Mucci 1983; pressure Millero 1995.";

/// Ω aragonite map settings with the Ω = 1 contour.
fn omega_spec(title: &str, page: PageSize) -> MapSpec {
    let mut spec = MapSpec::new(Captions::new(title, "Ω aragonite", "1").with_caption(CAPTION));
    spec.contour = Some(ContourLevel {
        level: 1.0,
        label: "Ω aragonite = 1".to_string(),
    });
    spec.page = page;
    spec
}

fn omega_map(g: &Gulf, page: PageSize) -> Result<Figure, FigureError> {
    let omega = field(g, omega_300m);
    let title = "Varnholm Gulf · pathway-steep · Ω aragonite at 300 m · 2095";
    render_map(&g.grid, &omega, &omega_spec(title, page))
}

/// Invented surface Ω aragonite difference (steep − moderate) in 2095: larger where the
/// surface water is fresher near the river and weaker offshore.
fn difference_map(g: &Gulf, page: PageSize) -> Result<Figure, FigureError> {
    let difference = field(g, |lon, lat| {
        -0.42 + 0.02 * (lat - 30.0)
            - 0.12 * (-((lon - 201.2).powi(2) + (lat - 33.2).powi(2)) / 1.5).exp()
            + 0.03 * ((lon - 200.0) * 0.8).sin()
    });
    let text = Captions::new(
        "Varnholm Gulf · surface Ω aragonite · pathway-steep minus pathway-moderate · 2095",
        "Δ Ω aragonite",
        "1",
    );
    let mut spec = MapSpec::difference(text.with_caption(CAPTION));
    spec.page = page;
    render_map(&g.grid, &difference, &spec)
}

fn run(out: &Path, page: PageSize) -> Result<Vec<PathBuf>, FigureError> {
    let g = gulf(0.25)?;
    let mut written = Vec::new();
    write(
        out,
        "map-omega-aragonite.png",
        omega_map(&g, page)?,
        &mut written,
    )?;
    write(
        out,
        "map-difference.png",
        difference_map(&g, page)?,
        &mut written,
    )?;
    write(
        out,
        "map-curvilinear.png",
        curvilinear_map(page)?,
        &mut written,
    )?;
    write(
        out,
        "section-omega-aragonite.png",
        section(&g, page)?,
        &mut written,
    )?;
    write(
        out,
        "section-terrain-following.png",
        terrain_section(page)?,
        &mut written,
    )?;
    write(out, "series-surface-ph.png", series(page)?, &mut written)?;
    Ok(written)
}

/// A patch of the gulf on a grid rotated by 30°, about 6.6° × 4.8°, with 4-vertex bounds.
fn curvilinear_map(page: PageSize) -> Result<Figure, FigureError> {
    let (ny, nx) = (32, 44);
    let (du, dv) = (6.6 / nx as f64, 4.8 / ny as f64);
    let (lon0, lat0, turn) = (206.0f64, 34.5f64, 30f64.to_radians());
    let place = |u: f64, v: f64| {
        let lon = lon0 + (u * turn.cos() - v * turn.sin()) / lat0.to_radians().cos();
        (lon, lat0 + u * turn.sin() + v * turn.cos())
    };
    let (mut lon, mut lat, mut lon_v, mut lat_v, mut values) =
        (vec![], vec![], vec![], vec![], vec![]);
    for j in 0..ny {
        for i in 0..nx {
            let (u, v) = (-3.3 + (i as f64 + 0.5) * du, -2.4 + (j as f64 + 0.5) * dv);
            let centre = place(u, v);
            let corners = [(-0.5, -0.5), (0.5, -0.5), (0.5, 0.5), (-0.5, 0.5)]
                .map(|(a, b)| place(u + a * du, v + b * dv));
            lon.push(centre.0);
            lat.push(centre.1);
            lon_v.push(corners.map(|c| c.0));
            lat_v.push(corners.map(|c| c.1));
            values.push(if is_land(centre.0, centre.1) {
                f64::NAN
            } else {
                omega_300m(centre.0, centre.1)
            });
        }
    }
    let grid = MapGrid::curvilinear((ny, nx), lon, lat, lon_v, lat_v)?;
    let title =
        "Varnholm Gulf, rotated curvilinear grid · pathway-steep · Ω aragonite at 300 m · 2095";
    let mut spec = omega_spec(title, page);
    spec.colouring.palette = Palette::Cividis;
    render_map(&grid, &values, &spec)
}

/// Invented sea-floor depth (m): a shelf within ~70 km of the coast, a slope, a 4000 m basin.
fn floor_depth(lon: f64, lat: f64) -> f64 {
    let d = coast_distance(lon, lat);
    if d < 0.6 {
        60.0 + 140.0 * d / 0.6
    } else {
        let t = ((d - 0.6) / 0.9).min(1.0);
        200.0 + 3800.0 * t * t * (3.0 - 2.0 * t)
    }
}

/// Invented Ω aragonite against depth, shallower horizons to the north; calcite is 1.5 ×.
fn omega_profile(depth: f64, lat: f64) -> f64 {
    let north = 0.03 * (lat - 30.0);
    1.0 + 2.2 * (-depth / 250.0).exp() - (0.55 + north) * (1.0 - (-depth / 1500.0).exp())
}

/// Depth where `omega` crosses 1 going down the column (linear between layer centres).
fn horizon(centres: &[f64], omega: &[f64]) -> f64 {
    for k in 1..centres.len() {
        let (a, b) = (omega[k - 1], omega[k]);
        if a.is_finite() && b.is_finite() && a >= 1.0 && b < 1.0 {
            return centres[k - 1] + (a - 1.0) / (a - b) * (centres[k] - centres[k - 1]);
        }
    }
    f64::NAN
}

fn section_spec(
    title: &str,
    columns: &[SectionColumn],
    centres: impl Fn(&SectionColumn) -> Vec<f64>,
    page: PageSize,
) -> SectionSpec {
    let line = |label: &str, factor: f64| SectionLine {
        label: label.to_string(),
        depths: columns
            .iter()
            .map(|c| {
                horizon(
                    &centres(c),
                    &c.values.iter().map(|v| v * factor).collect::<Vec<_>>(),
                )
            })
            .collect(),
    };
    let mut spec = SectionSpec::new(Captions::new(title, "Ω aragonite", "1").with_caption(CAPTION));
    spec.lines = vec![
        line("aragonite saturation horizon", 1.0),
        line("calcite saturation horizon", 1.5),
    ];
    spec.page = page;
    spec
}

fn layer_centres(c: &SectionColumn) -> Vec<f64> {
    c.interfaces
        .windows(2)
        .map(|w| 0.5 * (w[0] + w[1]))
        .collect()
}

/// A z-level section along a path from the west shelf across the basin to the north coast.
fn section(g: &Gulf, page: PageSize) -> Result<Figure, FigureError> {
    let interfaces = [
        0.0, 20.0, 40.0, 60.0, 80.0, 100.0, 125.0, 150.0, 200.0, 250.0, 300.0, 400.0, 500.0, 700.0,
        1000.0, 1500.0, 2000.0, 3000.0, 4000.0,
    ];
    let path = sample_path(&g.grid, &[(201.0, 32.0), (205.0, 33.2), (210.5, 37.9)])?;
    let columns: Vec<SectionColumn> = path
        .iter()
        .map(|cell| {
            let (lon, lat) = (g.lons[cell.i], g.lats[cell.j]);
            let floor = if is_land(lon, lat) {
                0.0
            } else {
                floor_depth(lon, lat)
            };
            let values = interfaces
                .windows(2)
                .map(|w| {
                    let z = 0.5 * (w[0] + w[1]);
                    if z < floor {
                        omega_profile(z, lat)
                    } else {
                        f64::NAN
                    }
                })
                .collect();
            SectionColumn {
                x_start: cell.start_km,
                x_end: cell.end_km,
                interfaces: interfaces.to_vec(),
                values,
            }
        })
        .collect();
    let title = "Varnholm Gulf · pathway-steep · Ω aragonite along the west-shelf to north-coast section · 2095";
    let spec = section_spec(title, &columns, layer_centres, page);
    render_section(&columns, &spec)
}

/// A terrain-following section along 209.1 °E against latitude: 18 layers in every column.
fn terrain_section(page: PageSize) -> Result<Figure, FigureError> {
    let g = gulf(0.25)?;
    let i = g.lons.iter().position(|&lon| lon > 209.0).unwrap_or(0);
    let layers = 18;
    let mut columns = Vec::new();
    for (j, &lat) in g.lats.iter().enumerate() {
        let lon = g.lons[i];
        if is_land(lon, lat) {
            continue;
        }
        let h = floor_depth(lon, lat);
        let interfaces: Vec<f64> = (0..=layers)
            .map(|k| h * (k as f64 / layers as f64).powf(1.8))
            .collect();
        let values = interfaces
            .windows(2)
            .map(|w| omega_profile(0.5 * (w[0] + w[1]), lat))
            .collect();
        let half = 0.5 * (g.lats[1] - g.lats[0]);
        let _ = j;
        columns.push(SectionColumn {
            x_start: lat - half,
            x_end: lat + half,
            interfaces,
            values,
        });
    }
    let title = "Varnholm Gulf, terrain-following layers · pathway-steep · Ω aragonite along 150.9°W · 2095";
    let mut spec = section_spec(title, &columns, layer_centres, page);
    spec.axis = SectionAxis::Latitude;
    render_section(&columns, &spec)
}

/// Invented regional-mean surface pH for two pathways and a control, 1990–2100.
fn series(page: PageSize) -> Result<Figure, FigureError> {
    let years: Vec<f64> = (1990..=2100).map(f64::from).collect();
    let wiggle =
        |y: f64, phase: f64| 0.006 * (y * 0.9 + phase).sin() + 0.004 * (y * 2.3 + phase).sin();
    let run = |label: &str, trend: f64, phase: f64, emergence: Option<f64>| Series {
        label: label.to_string(),
        years: years.clone(),
        values: years
            .iter()
            .map(|&y| {
                8.085 - 0.0016 * (y - 1990.0) - trend * (y - 2015.0).max(0.0) + wiggle(y, phase)
            })
            .collect(),
        emergence_year: emergence,
    };
    let runs = vec![
        run("constant-carbon control", -0.0016, 0.3, None),
        run("pathway-moderate", 0.0006, 1.1, Some(2041.0)),
        run("pathway-steep", 0.0024, 2.0, Some(2029.0)),
    ];
    let caption = format!(
        "{CAPTION} Emergence: first year the 10-year mean leaves the reference window's range."
    );
    let text = Captions::new(
        "Varnholm Gulf · regional mean surface pH, every run",
        "pH (total scale)",
        "1",
    );
    let mut spec = SeriesSpec::new(text.with_caption(caption));
    spec.reference = Some((1995.0, 2014.0));
    spec.page = page;
    render_series(&runs, &spec)
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let out = PathBuf::from(args.get(1).map(String::as_str).unwrap_or("gallery"));
    let dpi = args.get(2).and_then(|d| d.parse().ok()).unwrap_or(300.0);
    let result = PageSize::new(6.5, dpi).and_then(|page| {
        std::fs::create_dir_all(&out)
            .map_err(|e| FigureError::Input(format!("{}: {e}", out.display())))?;
        run(&out, page)
    });
    match result {
        Ok(paths) => {
            for p in paths {
                println!("wrote {}", p.display());
            }
        }
        Err(e) => {
            eprintln!("gallery: {e}");
            std::process::exit(1);
        }
    }
}
