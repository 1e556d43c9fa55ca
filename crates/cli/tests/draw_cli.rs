//! The `draw` subcommand on outputs made here from the bundled SYNTHETIC runs: that it picks
//! the palette, range, contour and level the file's variables call for, that sections and
//! series read the right data (checked against the netCDF library and a CSV reader directly),
//! that the PNG it writes is the figure it planned, and what it refuses.

mod common;

use acidscape_drawing::{
    FieldRequest, LevelRequest, LineRequest, MapPlan, MapRequest, PageRequest, SectionPlan,
    SectionRequest, SeriesPlan, SeriesRequest, WhenRequest,
};
use acidscape_figures::{ColourRange, Figure, Palette, MISSING_GREY};
use common::{acidscape, compute, text};
use netcdf::Extent;
use std::path::{Path, PathBuf};

const FILL: f32 = 1e20;

/// A small page so rendering stays quick: 5 in at 100 dpi.
fn page(output: PathBuf) -> PageRequest {
    PageRequest {
        dpi: 100.0,
        width_in: 5.0,
        ..PageRequest::new(output)
    }
}

/// A field of `file` drawn to `out` on the small page.
fn field(file: &Path, variable: &str, when: WhenRequest, out: PathBuf) -> FieldRequest {
    FieldRequest {
        when,
        page: page(out.clone()),
        ..FieldRequest::new(file, variable, out)
    }
}

fn map_request(file: &Path, variable: &str, out: PathBuf) -> MapRequest {
    MapRequest {
        field: field(file, variable, WhenRequest::default(), out),
        level: LevelRequest::default(),
    }
}

fn section_request(
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

fn surface() -> LevelRequest {
    LevelRequest {
        level: Some("surface".into()),
        depth: None,
    }
}

fn step(n: usize) -> WhenRequest {
    WhenRequest {
        step: Some(n),
        ..WhenRequest::default()
    }
}

fn window(name: &str) -> WhenRequest {
    WhenRequest {
        window: Some(name.into()),
        ..WhenRequest::default()
    }
}

/// One time step (or window) and level of a float variable, read with the netCDF library
/// itself (fill as NaN): (time, level, lat, lon) layout.
fn read_level(file: &Path, name: &str, t: usize, level: usize) -> Vec<f64> {
    let nc = netcdf::open(file).unwrap();
    let var = nc.variable(name).unwrap();
    let dims: Vec<usize> = var.dimensions().iter().map(|d| d.len()).collect();
    let extents = vec![
        Extent::from(t..t + 1),
        Extent::from(level..level + 1),
        Extent::from(0..dims[2]),
        Extent::from(0..dims[3]),
    ];
    let values: Vec<f32> = var.get_values(extents).unwrap();
    values
        .into_iter()
        .map(|v| if v == FILL { f64::NAN } else { f64::from(v) })
        .collect()
}

/// A 1-D double coordinate (or a (n, 2) bounds variable, flattened).
fn read_all(file: &Path, name: &str) -> Vec<f64> {
    let nc = netcdf::open(file).unwrap();
    let values: Vec<f64> = nc.variable(name).unwrap().get_values(..).unwrap();
    values
}

/// Overwrites the surface of `omega_aragonite` at step 0 with a SYNTHETIC ramp across the
/// columns, 0.5 + 1.5 i / (nx - 1), keeping land as fill; returns the ramp (NaN on land).
fn write_ramp(file: &Path) -> Vec<f64> {
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

fn distance(a: [u8; 3], b: [u8; 3]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(&p, q)| (f64::from(p) - f64::from(q)).powi(2))
        .sum::<f64>()
        .sqrt()
}

/// The colour at the centre of cell (j, i) of a rectilinear map.
fn cell_colour(figure: &Figure, lons: &[f64], lats: &[f64], j: usize, i: usize) -> [u8; 3] {
    let (x, y) = figure.layout().panel.to_pixel(lons[i], lats[j]);
    figure.pixel(x as u32, y as u32).unwrap()
}

fn as_str(args: &[String]) -> Vec<&str> {
    args.iter().map(String::as_str).collect()
}

fn png_size(path: &Path) -> (u32, u32, Vec<u8>) {
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buffer = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buffer).unwrap();
    buffer.truncate(info.buffer_size());
    (info.width, info.height, buffer)
}

#[test]
fn maps_of_a_compute_output_take_the_field_the_palette_and_the_contour_it_calls_for() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("century", "pathway-steep", dir.path());
    let known = dir.path().join("known.nc");
    std::fs::copy(&run, &known).unwrap();
    acidscape_gridio::silence_hdf5_diagnostics();
    let ramp = write_ramp(&known);
    let (lons, lats) = (read_all(&known, "lon"), read_all(&known, "lat"));
    let nx = lons.len();

    let out = dir.path().join("ramp.png");
    let mut request = map_request(&known, "omega_aragonite", out.clone());
    request.field.when = step(0);
    request.level = surface();
    request.field.colours.range = Some("0.5,2".into());
    let plan = MapPlan::new(&request).unwrap();
    assert_eq!(plan.colouring().palette, Palette::Viridis);
    assert_eq!(
        plan.colouring().range,
        ColourRange::Fixed {
            low: 0.5,
            high: 2.0
        }
    );
    assert_eq!(plan.contour(), Some((1.0, "omega_aragonite".to_string())));
    assert!(
        plan.title().contains("surface Ω aragonite"),
        "{}",
        plan.title()
    );
    assert!(plan.title().starts_with("known ·") && plan.title().ends_with("2015"));
    let (figure, notes) = plan.render().unwrap();
    assert!(notes.is_empty(), "{notes:?}");
    assert_eq!(figure.width(), 500);

    // The known field at known pixels: every wet cell away from the contour shows viridis at
    // its place in the fixed range (the palette library's own colour), land is grey.
    let mut wet = 0;
    for (k, &v) in ramp.iter().enumerate() {
        let (j, i) = (k / nx, k % nx);
        let colour = cell_colour(&figure, &lons, &lats, j, i);
        if v.is_nan() {
            assert_eq!(colour, MISSING_GREY, "land cell {j},{i}");
        } else if (v - 1.0).abs() > 0.15 {
            let expected = colorous::VIRIDIS
                .eval_continuous((v - 0.5) / 1.5)
                .into_array();
            assert!(
                distance(colour, expected) < 6.0,
                "cell {j},{i}: {colour:?} vs {expected:?}"
            );
            wet += 1;
        }
    }
    assert!(wet > 300, "{wet} wet cells checked");

    // The Ω = 1 contour lies between the two columns whose values bracket 1.
    let crossing = (0.5 / 1.5 * (nx - 1) as f64).floor() as usize;
    let panel = figure.layout().panel;
    let (left, top) = panel.to_pixel(lons[crossing], lats[lats.len() / 2]);
    let (right, _) = panel.to_pixel(lons[crossing + 1], lats[lats.len() / 2]);
    let row = top as u32;
    let ink = (left as u32..right as u32)
        .filter(|&x| figure.pixel(x, row).unwrap().iter().all(|&c| c < 70))
        .count();
    assert!(
        ink > 0,
        "no contour between columns {crossing} and the next"
    );

    // The colour bar runs from 0.5 to 2 and through viridis in order.
    let bar = figure.layout().colour_bar.unwrap();
    assert_eq!((bar.low, bar.high), (0.5, 2.0));
    let x = ((bar.area.left + bar.area.right) / 2.0) as u32;
    let place = |c: [u8; 3]| {
        (0..=255)
            .min_by(|&a, &b| {
                let at = |t: i32| colorous::VIRIDIS.eval_continuous(f64::from(t) / 255.0);
                distance(c, at(a).into_array()).total_cmp(&distance(c, at(b).into_array()))
            })
            .unwrap()
    };
    let along: Vec<i32> = ((bar.area.top as u32 + 1)..(bar.area.bottom as u32 - 1))
        .rev()
        .map(|y| place(figure.pixel(x, y).unwrap()))
        .collect();
    assert!(along.windows(2).all(|w| w[1] >= w[0]), "{along:?}");
    assert!(along[0] < 10 && *along.last().unwrap() > 245);

    // The command writes exactly that figure, atomically, and says so.
    let args = [
        "draw",
        "map",
        known.to_str().unwrap(),
        "omega_aragonite",
        "--step",
        "0",
        "--level",
        "surface",
        "--range",
        "0.5,2",
        "--dpi",
        "100",
        "--width",
        "5",
        "-o",
        out.to_str().unwrap(),
    ];
    let result = acidscape(&args);
    let (stdout, stderr) = text(&result);
    assert!(result.status.success(), "{stderr}");
    assert!(
        stdout.contains("Wrote") && stdout.contains("500 ×"),
        "{stdout}"
    );
    let (w, h, rgb) = png_size(&out);
    assert_eq!((w, h), (figure.width(), figure.height()));
    assert!(rgb == figure.rgb(), "the PNG is not the planned figure");
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().ends_with(".partial"))
        .collect();
    assert!(leftovers.is_empty());

    // pH: no contour, the robust percentile range; a depth: the nearest level, by name.
    let mut request = map_request(&run, "ph", dir.path().join("ph.png"));
    request.field.when = WhenRequest {
        year: Some(2100),
        ..WhenRequest::default()
    };
    request.level = surface();
    let plan = MapPlan::new(&request).unwrap();
    assert_eq!(plan.contour(), None);
    assert!(matches!(
        plan.colouring().range,
        ColourRange::Percentiles { .. }
    ));
    assert_eq!(plan.step(), 85);
    request.field.variable = "omega_aragonite".into();
    request.level = LevelRequest {
        level: None,
        depth: Some(500.0),
    };
    let plan = MapPlan::new(&request).unwrap();
    let depths = read_all(&run, "lev");
    let nearest = (0..depths.len())
        .min_by(|&a, &b| {
            (depths[a] - 500.0)
                .abs()
                .total_cmp(&(depths[b] - 500.0).abs())
        })
        .unwrap();
    assert!(
        plan.title()
            .contains(&format!("at 500 m (nearest level: {nearest}, centre")),
        "{}",
        plan.title()
    );
}

#[test]
fn maps_and_sections_use_horizon_depths_the_file_has() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("century", "pathway-moderate", dir.path());
    acidscape_gridio::silence_hdf5_diagnostics();
    // A stand-in for the horizon output of compute: a SYNTHETIC constant depth of 321 m in
    // every wet column, so the section must show exactly that.
    let surface_omega = read_level(&run, "omega_aragonite", 0, 0);
    {
        let mut nc = netcdf::append(&run).unwrap();
        let steps = nc.dimension("time").unwrap().len();
        let mut var = nc
            .add_variable::<f32>("horizon_depth_aragonite", &["time", "lat", "lon"])
            .unwrap();
        var.set_fill_value(FILL).unwrap();
        var.put_attribute("units", "m").unwrap();
        var.put_attribute("positive", "down").unwrap();
        let values: Vec<f32> = (0..steps)
            .flat_map(|_| surface_omega.iter())
            .map(|v| if v.is_nan() { FILL } else { 321.0 })
            .collect();
        var.put_values(&values, ..).unwrap();
    }
    let mut request = map_request(&run, "horizon_depth_aragonite", dir.path().join("h.png"));
    request.field.when = step(3);
    let plan = MapPlan::new(&request).unwrap();
    assert_eq!(plan.contour(), Some((1.0, "omega_aragonite".to_string())));
    assert_eq!(plan.colouring().palette, Palette::Viridis);
    assert!(plan.title().contains("aragonite saturation horizon depth"));
    plan.render().unwrap();

    let mut request = section_request(
        &run,
        "omega_aragonite",
        step(3),
        LineRequest {
            path: Some("201.5,33.1:211.5,33.1".into()),
            ..LineRequest::default()
        },
        dir.path().join("s.png"),
    );
    request.field.run_label = Some("moderate".into());
    let section = SectionPlan::new(&request).unwrap();
    let horizons = section.horizons();
    assert_eq!(horizons[0].1, "horizon_depth_aragonite");
    assert!(!horizons[0].2, "read from the file, not computed");
    assert_eq!(horizons[1].1, "omega_calcite");
    assert!(horizons[1].2);
    let (columns, lines) = section.data().unwrap();
    for (column, depth) in columns.iter().zip(&lines[0].depths) {
        let wet = column.values.iter().any(|v| v.is_finite());
        assert_eq!(wet, depth.is_finite());
        assert!(!wet || *depth == 321.0, "{depth}");
    }
    // The path runs west to east along one row, away from the island.
    let cells = section.cells();
    assert!(cells
        .windows(2)
        .all(|w| w[1].1 > w[0].1 && w[1].0 == w[0].0));
    assert!(section.title().starts_with("moderate · Ω aragonite from"));
}

#[test]
fn comparisons_give_difference_maps_sections_and_regional_series_of_the_right_data() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let moderate = compute("century", "pathway-moderate", dir.path());
    let steep = compute("century", "pathway-steep", dir.path());
    let pathways = dir.path().join("pathways.nc");
    let (m, s) = (
        format!("moderate={}", moderate.display()),
        format!("steep={}", steep.display()),
    );
    let result = acidscape(&[
        "compare",
        &m,
        &s,
        "--window",
        "reference=2015-2034,late=2081-2100",
        "--regions",
        "sample-grids/varnholm-regions.toml",
        "--emergence",
        "omega_aragonite:2sd:below",
        "-o",
        pathways.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    // The comparison keeps the runs' constants, for the figures' captions.
    let compared = acidscape_gridio::IndicatorFile::open(&pathways).unwrap();
    let constants = compared.global_attribute("carbonic_acid_constants");
    assert_eq!(constants.as_deref(), Some("lueker2000"));

    // A difference between runs: diverging palette, zero at the colour bar's centre.
    let mut request = map_request(
        &pathways,
        "omega_aragonite_steep_minus_moderate",
        dir.path().join("d.png"),
    );
    request.field.when = window("late");
    request.level = surface();
    let plan = MapPlan::new(&request).unwrap();
    assert_eq!(plan.colouring().palette, Palette::PurpleOrange);
    assert_eq!(plan.contour(), None);
    assert_eq!(plan.step(), 1);
    assert_eq!(
        plan.title(),
        "steep minus moderate · surface Ω aragonite · late window (2081–2100 mean)"
    );
    let (figure, _) = plan.render().unwrap();
    let bar = figure.layout().colour_bar.unwrap();
    assert_eq!(bar.low, -bar.high);
    let middle = figure
        .pixel(
            ((bar.area.left + bar.area.right) / 2.0) as u32,
            ((bar.area.top + bar.area.bottom) / 2.0) as u32,
        )
        .unwrap();
    let centre = colorous::PURPLE_ORANGE.eval_continuous(0.5).into_array();
    assert!(distance(middle, centre) < 4.0, "{middle:?} vs {centre:?}");
    // A change since the reference window is a difference too; a window mean is not.
    request.field.variable = "ph_steep_change".into();
    assert!(MapPlan::new(&request)
        .unwrap()
        .colouring()
        .palette
        .is_diverging());
    request.field.variable = "omega_aragonite_steep".into();
    let plan = MapPlan::new(&request).unwrap();
    assert_eq!(plan.colouring().palette, Palette::Viridis);
    assert_eq!(
        plan.contour(),
        Some((1.0, "omega_aragonite_steep".to_string()))
    );

    // A section along grid column 20 shows that column's late-window values and the horizon
    // where they cross 1 (linear in depth on ln Ω between the level centres).
    let section = SectionPlan::new(&section_request(
        &pathways,
        "omega_aragonite_steep",
        window("late"),
        LineRequest {
            column: Some(20),
            ..LineRequest::default()
        },
        dir.path().join("c.png"),
    ))
    .unwrap();
    let centres = read_all(&pathways, "lev");
    let bounds = read_all(&pathways, "lev_bnds");
    let levels: Vec<Vec<f64>> = (0..centres.len())
        .map(|k| read_level(&pathways, "omega_aragonite_steep", 1, k))
        .collect();
    let (columns, lines) = section.data().unwrap();
    assert_eq!(columns.len(), 22);
    let mut crossings = 0;
    for (j, column) in columns.iter().enumerate() {
        let expected: Vec<f64> = levels.iter().map(|l| l[j * 30 + 20]).collect();
        let same = column
            .values
            .iter()
            .zip(&expected)
            .all(|(a, b)| a == b || (a.is_nan() && b.is_nan()));
        assert!(same, "column {j}: {:?} vs {expected:?}", column.values);
        assert_eq!(column.interfaces[0], bounds[0]);
        assert_eq!(column.interfaces[1], bounds[1]);
        let first_below = expected.iter().position(|&v| v < 1.0);
        if let Some(k) = first_below.filter(|&k| k > 0) {
            let (w0, w1) = (expected[k - 1], expected[k]);
            let z = centres[k - 1]
                + (centres[k] - centres[k - 1]) * (0.0 - w0.ln()) / (w1.ln() - w0.ln());
            assert!((lines[0].depths[j] - z).abs() < 1e-6, "column {j}");
            crossings += 1;
        }
    }
    assert!(crossings > 10);

    // The regional series: both runs, every year, the table's values, its emergence years
    // and the reference window from the NetCDF beside it.
    let table = pathways.with_extension("csv");
    let series = SeriesPlan::new(&SeriesRequest {
        table: table.clone(),
        quantity: "omega_aragonite".into(),
        region: Some("Aske river plume coast".into()),
        layer: None,
        statistic: None,
        threshold: None,
        reference_years: None,
        comparison: None,
        page: page(dir.path().join("t.png")),
    })
    .unwrap();
    assert_eq!(series.reference(), Some((2015.0, 2034.0)));
    let runs = series.series();
    assert_eq!(runs.len(), 2);
    let mut reader = csv::Reader::from_path(&table).unwrap();
    let rows: Vec<csv::StringRecord> = reader.records().map(|r| r.unwrap()).collect();
    for run in runs {
        let own: Vec<&csv::StringRecord> = rows
            .iter()
            .filter(|r| {
                &r[0] == run.label.as_str()
                    && &r[1] == "Aske river plume coast"
                    && &r[2] == "surface"
                    && &r[3] == "time_step"
                    && &r[7] == "omega_aragonite"
                    && &r[8] == "mean"
            })
            .collect();
        let years: Vec<f64> = own.iter().map(|r| r[6].parse().unwrap()).collect();
        let values: Vec<f64> = own.iter().map(|r| r[10].parse().unwrap()).collect();
        assert_eq!(years.len(), 86);
        assert_eq!(run.years, years);
        assert_eq!(run.values, values);
        let emergence = rows
            .iter()
            .find(|r| {
                &r[0] == run.label.as_str()
                    && &r[1] == "Aske river plume coast"
                    && &r[8] == "emergence_year"
            })
            .unwrap();
        assert_eq!(&emergence[12], "emerged");
        assert_eq!(run.emergence_year, Some(emergence[10].parse().unwrap()));
    }
    assert_eq!(runs[0].label, "moderate");

    // The commands write their PNGs.
    for args in [
        vec![
            "draw",
            "section",
            pathways.to_str().unwrap(),
            "omega_aragonite_steep",
            "--window",
            "late",
            "--path",
            "209,38.7:209,30.2",
        ],
        vec![
            "draw",
            "series",
            table.to_str().unwrap(),
            "omega_aragonite",
            "--region",
            "whole gulf",
        ],
    ] {
        let out = dir.path().join(format!("{}.png", args[1]));
        let mut args = args.clone();
        args.extend(["--dpi", "100", "--width", "5", "-o", out.to_str().unwrap()]);
        let result = acidscape(&args);
        assert!(result.status.success(), "{}", text(&result).1);
        assert_eq!(png_size(&out).0, 500);
    }
}

#[test]
fn terrain_following_sections_follow_each_columns_layers() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("terrain-following", "pathway-steep", dir.path());
    let section = SectionPlan::new(&section_request(
        &run,
        "omega_aragonite",
        step(2),
        LineRequest {
            column: Some(30),
            ..LineRequest::default()
        },
        dir.path().join("tf.png"),
    ))
    .unwrap();
    // The floor below the sea surface of each column, from formula terms read directly:
    // h (sea-floor depth below the datum) plus zeta (free surface) at that step.
    let nc = netcdf::open(&run).unwrap();
    let h: Vec<f32> = nc.variable("h").unwrap().get_values(..).unwrap();
    let zeta: Vec<f64> = nc
        .variable("zeta")
        .unwrap()
        .get_values([2..3, 0..32, 0..44])
        .unwrap();
    let (columns, _) = section.data().unwrap();
    let mut wet = 0;
    for (j, column) in columns.iter().enumerate() {
        let k = j * 44 + 30;
        if column.values.iter().all(|v| v.is_nan()) {
            continue; // land
        }
        let interfaces = &column.interfaces;
        assert_eq!(interfaces[0], 0.0);
        assert!(interfaces.windows(2).all(|w| w[1] > w[0]), "column {j}");
        if column.values.iter().all(|v| v.is_finite()) {
            let floor = f64::from(h[k]) + zeta[k];
            assert!(
                (interfaces.last().unwrap() - floor).abs() < 1e-3,
                "column {j}"
            );
            wet += 1;
        }
    }
    assert!(wet > 20);
    let mut request = map_request(&run, "omega_aragonite", dir.path().join("m.png"));
    request.field.when = step(2);
    request.level = LevelRequest {
        level: None,
        depth: Some(300.0),
    };
    let plan = MapPlan::new(&request).unwrap();
    assert!(plan
        .title()
        .contains("at 300 m (nearest layer of each column)"));
    plan.render().unwrap();
}

#[test]
fn refusals_name_the_file_the_variable_and_what_was_expected() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("century", "pathway-moderate", dir.path());
    let run_arg = run.to_str().unwrap();
    let compared = dir.path().join("one.nc");
    let result = acidscape(&[
        "compare",
        &format!("moderate={run_arg}"),
        "--window",
        "reference=2015-2034,late=2081-2100",
        "--fields",
        "omega_aragonite",
        "-o",
        compared.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    let out = dir.path().join("never.png");
    let out_arg = out.to_str().unwrap();
    let refused = |args: &[&str], needles: &[&str]| {
        let result = acidscape(args);
        let (_, stderr) = text(&result);
        assert_eq!(result.status.code(), Some(1), "{args:?}: {stderr}");
        for needle in needles {
            assert!(
                stderr.contains(needle),
                "{args:?}: '{needle}' not in {stderr}"
            );
        }
        assert!(!out.exists(), "{args:?} wrote a figure");
    };
    let compared_arg = compared.to_str().unwrap();
    refused(
        &[
            "draw",
            "map",
            run_arg,
            "omega_argonite",
            "--level",
            "0",
            "-o",
            out_arg,
        ],
        &[
            run_arg,
            "variable 'omega_argonite'",
            "no such variable",
            "omega_aragonite",
        ],
    );
    refused(
        &[
            "draw",
            "map",
            run_arg,
            "omega_aragonite",
            "--year",
            "2050",
            "-o",
            out_arg,
        ],
        &[
            run_arg,
            "'omega_aragonite'",
            "3-D field",
            "--level surface",
            "--depth",
        ],
    );
    refused(
        &["draw", "map", run_arg, "ph", "--level", "0", "-o", out_arg],
        &[run_arg, "'ph'", "86 time steps", "--year"],
    );
    refused(
        &[
            "draw",
            "map",
            run_arg,
            "quality_flag",
            "--level",
            "0",
            "--step",
            "0",
            "-o",
            out_arg,
        ],
        &["'quality_flag'", "status flag"],
    );
    refused(
        &[
            "draw",
            "map",
            compared_arg,
            "omega_aragonite_moderate",
            "--level",
            "0",
            "--window",
            "middle",
            "-o",
            out_arg,
        ],
        &[
            "--window",
            compared_arg,
            "no window 'middle'",
            "reference (2015-2034), late (2081-2100)",
        ],
    );
    refused(
        &[
            "draw", "map", run_arg, "ph", "--level", "0", "--window", "late", "-o", out_arg,
        ],
        &["--window", run_arg, "no time windows"],
    );
    refused(
        &[
            "draw",
            "section",
            run_arg,
            "ph",
            "--step",
            "0",
            "--path",
            "150,10:151,11",
            "-o",
            out_arg,
        ],
        &["--path", "does not cross the grid", run_arg],
    );
    refused(
        &[
            "draw",
            "series",
            &compared.with_extension("csv").to_string_lossy(),
            "ph",
            "-o",
            out_arg,
        ],
        &["quantity 'ph'", "omega_aragonite"],
    );
    // A surface pH map of the first step, with options added.
    let ph_map = |more: &[&str]| -> Vec<String> {
        let mut args = ["draw", "map", run_arg, "ph", "--level", "0", "--step", "0"].to_vec();
        args.extend(more);
        args.into_iter().map(String::from).collect()
    };
    let pdf = dir.path().join("x.pdf");
    refused(
        &as_str(&ph_map(&["-o", pdf.to_str().unwrap()])),
        &["--output", "ending in .png"],
    );
    refused(
        &as_str(&ph_map(&["--range", "3,1", "-o", out_arg])),
        &["--range", "'3,1'"],
    );

    // An existing output is kept unless --overwrite.
    let existing = dir.path().join("existing.png");
    std::fs::write(&existing, b"keep").unwrap();
    let args = ph_map(&["--dpi", "60", "-o", existing.to_str().unwrap()]);
    let result = acidscape(&as_str(&args));
    assert_eq!(result.status.code(), Some(1));
    assert!(text(&result).1.contains("exists; pass --overwrite"));
    assert_eq!(std::fs::read(&existing).unwrap(), b"keep");
    let mut args = as_str(&args);
    args.push("--overwrite");
    assert!(acidscape(&args).status.success());
    assert!(png_size(&existing).0 > 0);
}
