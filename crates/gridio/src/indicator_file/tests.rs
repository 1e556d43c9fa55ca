//! Synthetic indicator files written here with the netcdf crate, read back.

use super::*;
use netcdf::FileMut;

const FILL: f32 = 1e20;

/// A value that identifies its cell: 1000 step + 100 level + 10 row + col.
fn marker(step: usize, level: usize, row: usize, col: usize) -> f64 {
    (1000 * step + 100 * level + 10 * row + col) as f64
}

fn put_text(file: &mut FileMut, var: &str, pairs: &[(&str, &str)]) {
    let mut v = file.variable_mut(var).unwrap();
    for (k, value) in pairs {
        v.put_attribute(k, *value).unwrap();
    }
}

fn add_coordinate(
    file: &mut FileMut,
    name: &str,
    dims: &[&str],
    values: &[f64],
    attrs: &[(&str, &str)],
) {
    file.add_variable::<f64>(name, dims).unwrap();
    put_text(file, name, attrs);
    file.variable_mut(name)
        .unwrap()
        .put_values(values, ..)
        .unwrap();
}

/// Time: annual means of 2015–2017 in `calendar`. With bounds (1 January to 1 January) each
/// mean is stamped at the end of its year (1 January of the next), as some models do; without
/// bounds, in the middle of the year (CMIP practice), where the value alone places it.
fn add_annual_time(file: &mut FileMut, calendar: &str, with_bounds: bool) {
    let lengths: [f64; 3] = match calendar {
        "360_day" => [360.0; 3],
        "proleptic_gregorian" => [365.0, 366.0, 365.0],
        _ => [365.0; 3],
    };
    let starts: Vec<f64> = (0..3).map(|k| lengths[..k].iter().sum()).collect();
    file.add_dimension("time", 3).unwrap();
    file.add_dimension("bnds", 2).unwrap();
    let stamps: Vec<f64> = (0..3)
        .map(|k| {
            starts[k]
                + if with_bounds {
                    lengths[k]
                } else {
                    0.5 * lengths[k]
                }
        })
        .collect();
    let mut attrs = vec![
        ("units", "days since 2015-01-01 00:00:00"),
        ("calendar", calendar),
        ("axis", "T"),
        ("standard_name", "time"),
    ];
    if with_bounds {
        attrs.push(("bounds", "time_bnds"));
    }
    add_coordinate(file, "time", &["time"], &stamps, &attrs);
    if with_bounds {
        let b: Vec<f64> = (0..3)
            .flat_map(|k| [starts[k], starts[k] + lengths[k]])
            .collect();
        add_coordinate(file, "time_bnds", &["time", "bnds"], &b, &[]);
    }
}

/// A 3-D float field on (time, lev, lat, lon) with marker values, land at (row 0, col 0).
fn add_field(
    file: &mut FileMut,
    name: &str,
    dims: &[&str],
    levels: usize,
    rows: usize,
    cols: usize,
    attrs: &[(&str, &str)],
) {
    let mut values = Vec::new();
    for s in 0..3 {
        for k in 0..levels {
            for j in 0..rows {
                for i in 0..cols {
                    let land = j == 0 && i == 0;
                    values.push(if land {
                        FILL
                    } else {
                        marker(s, k, j, i) as f32
                    });
                }
            }
        }
    }
    let mut v = file.add_variable::<f32>(name, dims).unwrap();
    v.set_fill_value(FILL).unwrap();
    for (k, value) in attrs {
        v.put_attribute(k, *value).unwrap();
    }
    v.put_values(&values, ..).unwrap();
}

fn rectilinear(path: &std::path::Path, ours: bool) {
    let mut f = netcdf::create(path).unwrap();
    add_annual_time(&mut f, "noleap", true);
    f.add_dimension("lev", 2).unwrap();
    f.add_dimension("lat", 3).unwrap();
    f.add_dimension("lon", 4).unwrap();
    let z = [
        ("units", "m"),
        ("positive", "down"),
        ("axis", "Z"),
        ("bounds", "lev_bnds"),
    ];
    add_coordinate(&mut f, "lev", &["lev"], &[5.0, 30.0], &z);
    add_coordinate(
        &mut f,
        "lev_bnds",
        &["lev", "bnds"],
        &[0.0, 10.0, 10.0, 50.0],
        &[],
    );
    let lat = [
        ("units", "degrees_north"),
        ("standard_name", "latitude"),
        ("bounds", "lat_bnds"),
    ];
    add_coordinate(&mut f, "lat", &["lat"], &[30.5, 31.5, 32.5], &lat);
    add_coordinate(
        &mut f,
        "lat_bnds",
        &["lat", "bnds"],
        &[30.0, 31.0, 31.0, 32.0, 32.0, 33.0],
        &[],
    );
    let lon = [
        ("units", "degrees_east"),
        ("standard_name", "longitude"),
        ("bounds", "lon_bnds"),
    ];
    add_coordinate(&mut f, "lon", &["lon"], &[200.5, 201.5, 202.5, 203.5], &lon);
    let lb: Vec<f64> = (0..4)
        .flat_map(|i| [200.0 + i as f64, 201.0 + i as f64])
        .collect();
    add_coordinate(&mut f, "lon_bnds", &["lon", "bnds"], &lb, &[]);
    let dims = ["time", "lev", "lat", "lon"];
    add_field(
        &mut f,
        "omega_aragonite",
        &dims,
        2,
        3,
        4,
        &[
            ("units", "1"),
            (
                "long_name",
                "Saturation state of sea water with respect to aragonite",
            ),
        ],
    );
    let ph = [
        ("units", "1"),
        ("standard_name", "sea_water_ph_reported_on_total_scale"),
    ];
    add_field(&mut f, "ph", &dims, 2, 3, 4, &ph);
    add_field(
        &mut f,
        "horizon_depth_aragonite",
        &["time", "lat", "lon"],
        1,
        3,
        4,
        &[("units", "m"), ("positive", "down")],
    );
    let uncertainty = [
        ("units", "1"),
        (
            "standard_name",
            "sea_water_ph_reported_on_total_scale standard_error",
        ),
    ];
    add_field(&mut f, "ph_uncertainty", &dims, 2, 3, 4, &uncertainty);
    add_field(
        &mut f,
        "ph_uncertainty_from_dic",
        &dims,
        2,
        3,
        4,
        &[("units", "1")],
    );
    add_field(&mut f, "ph_spread", &dims, 2, 3, 4, &uncertainty);
    let mut q = f.add_variable::<i16>("quality_flag", &dims).unwrap();
    q.set_fill_value(-1i16).unwrap();
    q.put_attribute("flag_masks", vec![1i16, 2]).unwrap();
    q.put_attribute("flag_meanings", "a b").unwrap();
    add_coordinate(
        &mut f,
        "wet_volume",
        &["time"],
        &[1.0, 2.0, 3.0],
        &[("units", "m3")],
    );
    add_coordinate(
        &mut f,
        "cell_area",
        &["lat", "lon"],
        &[1e8; 12],
        &[("units", "m2"), ("standard_name", "cell_area")],
    );
    if ours {
        f.add_attribute(VERSION_ATTRIBUTE, "0.1.0").unwrap();
    }
}

#[test]
fn reads_a_rectilinear_output() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("out.nc");
    rectilinear(&path, true);
    let file = IndicatorFile::open(&path).unwrap();
    assert_eq!(file.version(), "0.1.0");
    let kinds: Vec<(&str, FieldKind)> = file
        .variables()
        .iter()
        .map(|v| (v.name.as_str(), v.kind))
        .collect();
    assert_eq!(
        kinds,
        [
            ("omega_aragonite", FieldKind::Field),
            ("ph", FieldKind::Field),
            ("horizon_depth_aragonite", FieldKind::Field),
            // Uncertainties by name or by the standard_error modifier: not indicators.
            ("ph_uncertainty", FieldKind::Uncertainty),
            ("ph_uncertainty_from_dic", FieldKind::Uncertainty),
            ("ph_spread", FieldKind::Uncertainty),
            ("quality_flag", FieldKind::Flag),
            ("wet_volume", FieldKind::TimeSeries),
            ("cell_area", FieldKind::Geometry),
        ]
    );
    let ph = file.variable("ph").unwrap();
    assert_eq!(
        ph.standard_name.as_deref(),
        Some("sea_water_ph_reported_on_total_scale")
    );
    assert!(ph.has_time && ph.has_levels && ph.on_grid);
    let horizon = file.variable("horizon_depth_aragonite").unwrap();
    assert!(!horizon.has_levels);

    // Annual means stamped on 1 January of the next year count in their own year.
    let time = file.time().unwrap();
    assert_eq!(time.years, vec![2015, 2016, 2017]);
    assert_eq!(time.lengths_days, vec![365.0; 3]);
    assert!(time.bounds_from_file);
    assert_eq!(time.midpoint(0).unwrap().month, 7);

    let grid = file.grid();
    assert_eq!((grid.rows, grid.cols, grid.is_curvilinear()), (3, 4, false));
    let (lon, lat) = grid.column_centres();
    assert_eq!((lon[5], lat[5]), (201.5, 31.5));
    match &grid.layout {
        GridLayout::Rectilinear {
            lat_bounds,
            lon_bounds,
            ..
        } => {
            assert_eq!(lat_bounds.as_ref().unwrap()[2], [32.0, 33.0]);
            assert_eq!(lon_bounds.as_ref().unwrap()[0], [200.0, 201.0]);
        }
        other => panic!("{other:?}"),
    }
    let v = file.vertical();
    assert_eq!((v.levels(), v.surface_level()), (2, 0));
    match &v.coordinate {
        VerticalCoordinate::Depths {
            depth_m, bounds_m, ..
        } => {
            assert_eq!(depth_m, &vec![5.0, 30.0]);
            assert_eq!(bounds_m.as_ref().unwrap()[1], [10.0, 50.0]);
        }
        other => panic!("{other:?}"),
    }

    // Values in (level, row, col) order, fill as NaN.
    let step = file.read_step("omega_aragonite", 2).unwrap();
    assert_eq!(step.len(), 24);
    assert!(step[0].is_nan());
    assert_eq!(step[12 + 4 + 3], marker(2, 1, 1, 3));
    let level = file.read_level("omega_aragonite", 1, 1).unwrap();
    assert_eq!(level.len(), 12);
    assert_eq!(level[11], marker(1, 1, 2, 3));
    let rows = file.read_rows("ph", 0, 1..3).unwrap();
    assert_eq!(rows.len(), 16);
    assert_eq!(rows[8], marker(0, 1, 1, 0));
    let horizon = file.read_step("horizon_depth_aragonite", 1).unwrap();
    assert_eq!(horizon[1], marker(1, 0, 0, 1));
    let flags = file.read_step("quality_flag", 0).unwrap();
    assert!(
        flags.iter().all(|f| f.is_nan()),
        "never written: fill everywhere"
    );
    assert_eq!(file.cell_area().unwrap().unwrap(), vec![1e8; 12]);
    assert_eq!(file.cell_thickness(0, 0..3).unwrap(), None);
    assert_eq!(
        file.centre_depths(0, 0..1).unwrap(),
        vec![5.0, 5.0, 5.0, 5.0, 30.0, 30.0, 30.0, 30.0]
    );
}

#[test]
fn errors_name_the_file_and_the_variable() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("foreign.nc");
    rectilinear(&path, false);
    let message = IndicatorFile::open(&path).unwrap_err().to_string();
    assert!(
        message.contains("foreign.nc") && message.contains("acidscape_version"),
        "{message}"
    );

    let ours = dir.path().join("ours.nc");
    rectilinear(&ours, true);
    let file = IndicatorFile::open(&ours).unwrap();
    let message = file.read_step("co3", 0).unwrap_err().to_string();
    assert!(
        message.contains("ours.nc") && message.contains("co3") && message.contains("ph"),
        "{message}"
    );
    let message = file.read_step("ph", 3).unwrap_err().to_string();
    assert!(message.contains("time step 3"), "{message}");
    assert!(file.read_level("ph", 0, 2).is_err());
    assert!(file.read_step("wet_volume", 0).is_err());
    let missing = IndicatorFile::open(dir.path().join("absent.nc")).unwrap_err();
    assert!(missing.to_string().contains("absent.nc"));
}

/// A rotated 2 × 3 patch with 2-D latitude/longitude stored (i, j) and 4-vertex bounds,
/// a field stored (time, i, j), heights positive up, a 360_day calendar, no time bounds.
fn curvilinear(path: &std::path::Path) {
    let mut f = netcdf::create(path).unwrap();
    add_annual_time(&mut f, "360_day", false);
    f.add_dimension("lev", 2).unwrap();
    f.add_dimension("j", 2).unwrap();
    f.add_dimension("i", 3).unwrap();
    f.add_dimension("vertices", 4).unwrap();
    let z = [("units", "m"), ("positive", "up"), ("axis", "Z")];
    add_coordinate(&mut f, "lev", &["lev"], &[-5.0, -30.0], &z);
    // lat(i, j) = 30 + j + 0.1 i; lon(i, j) = 200 + i + 0.2 j.
    let mut lat = Vec::new();
    let mut lon = Vec::new();
    let mut lat_v = Vec::new();
    let mut lon_v = Vec::new();
    for i in 0..3 {
        for j in 0..2 {
            let (y, x) = (
                30.0 + j as f64 + 0.1 * i as f64,
                200.0 + i as f64 + 0.2 * j as f64,
            );
            lat.push(y);
            lon.push(x);
            lat_v.extend([y - 0.5, y - 0.5, y + 0.5, y + 0.5]);
            lon_v.extend([x - 0.5, x + 0.5, x + 0.5, x - 0.5]);
        }
    }
    let lat_attrs = [
        ("units", "degrees_north"),
        ("standard_name", "latitude"),
        ("bounds", "lat_vertices"),
    ];
    add_coordinate(&mut f, "lat", &["i", "j"], &lat, &lat_attrs);
    add_coordinate(&mut f, "lat_vertices", &["i", "j", "vertices"], &lat_v, &[]);
    let lon_attrs = [
        ("units", "degrees_east"),
        ("standard_name", "longitude"),
        ("bounds", "lon_vertices"),
    ];
    add_coordinate(&mut f, "lon", &["i", "j"], &lon, &lon_attrs);
    add_coordinate(&mut f, "lon_vertices", &["i", "j", "vertices"], &lon_v, &[]);
    // Field value = marker(step, level, j, i), stored in (time, lev, i, j) order.
    let mut values = Vec::new();
    for s in 0..3 {
        for k in 0..2 {
            for i in 0..3 {
                for j in 0..2 {
                    values.push(marker(s, k, j, i) as f32);
                }
            }
        }
    }
    let mut v = f
        .add_variable::<f32>("ph", &["time", "lev", "i", "j"])
        .unwrap();
    v.put_attribute("units", "1").unwrap();
    v.put_attribute("coordinates", "lat lon").unwrap();
    v.put_values(&values, ..).unwrap();
    f.add_attribute(VERSION_ATTRIBUTE, "0.1.0").unwrap();
}

#[test]
fn reads_a_curvilinear_output_in_any_dimension_order() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("curvilinear.nc");
    curvilinear(&path);
    let file = IndicatorFile::open(&path).unwrap();
    let grid = file.grid();
    assert_eq!(
        (
            grid.y_dim.as_str(),
            grid.x_dim.as_str(),
            grid.rows,
            grid.cols
        ),
        ("j", "i", 2, 3)
    );
    let (lon, lat) = grid.column_centres();
    // Row j = 1, column i = 2: lat 31.2, lon 202.2.
    assert!((lat[5] - 31.2).abs() < 1e-12 && (lon[5] - 202.2).abs() < 1e-12);
    match &grid.layout {
        GridLayout::Curvilinear {
            lat_vertices,
            lon_vertices,
            ..
        } => {
            assert!((lat_vertices.as_ref().unwrap()[5][2] - 31.7).abs() < 1e-12);
            assert!((lon_vertices.as_ref().unwrap()[5][1] - 202.7).abs() < 1e-12);
        }
        other => panic!("{other:?}"),
    }
    let step = file.read_step("ph", 1).unwrap();
    for k in 0..2 {
        for j in 0..2 {
            for i in 0..3 {
                assert_eq!(step[k * 6 + j * 3 + i], marker(1, k, j, i));
            }
        }
    }
    // Heights positive up become depths; without time bounds, bounds lie half-way between
    // the values and the 360-day years still fall in 2015-2017.
    assert_eq!(file.centre_depths(0, 0..2).unwrap()[6], 30.0);
    let time = file.time().unwrap();
    assert!(!time.bounds_from_file);
    assert_eq!(time.years, vec![2015, 2016, 2017]);
    assert_eq!(time.calendar().cf_name(), "360_day");
    assert_eq!(time.lengths_days, vec![360.0; 3]);
}

/// Bottom-first `ocean_sigma_coordinate` (two levels at sigma -0.75 and -0.25), free surface
/// zeta(time, lat, lon) = 0.1 step, depth h = 100 m.
fn terrain_following(path: &std::path::Path) {
    let mut f = netcdf::create(path).unwrap();
    add_annual_time(&mut f, "proleptic_gregorian", true);
    f.add_dimension("sigma", 2).unwrap();
    f.add_dimension("lat", 1).unwrap();
    f.add_dimension("lon", 2).unwrap();
    let s = [
        ("standard_name", "ocean_sigma_coordinate"),
        ("positive", "up"),
        ("units", "1"),
        ("formula_terms", "sigma: sigma eta: zeta depth: h"),
    ];
    add_coordinate(&mut f, "sigma", &["sigma"], &[-0.75, -0.25], &s);
    add_coordinate(
        &mut f,
        "lat",
        &["lat"],
        &[35.0],
        &[("units", "degrees_north")],
    );
    add_coordinate(
        &mut f,
        "lon",
        &["lon"],
        &[200.0, 201.0],
        &[("units", "degrees_east")],
    );
    add_coordinate(
        &mut f,
        "h",
        &["lat", "lon"],
        &[100.0, 100.0],
        &[("units", "m")],
    );
    let zeta: Vec<f64> = (0..3).flat_map(|s| [0.1 * s as f64; 2]).collect();
    add_coordinate(
        &mut f,
        "zeta",
        &["time", "lat", "lon"],
        &zeta,
        &[("units", "m")],
    );
    let mut v = f
        .add_variable::<f32>("ph", &["time", "sigma", "lat", "lon"])
        .unwrap();
    v.put_attribute("units", "1").unwrap();
    v.put_values(&[8.0f32; 12], ..).unwrap();
    f.add_attribute(VERSION_ATTRIBUTE, "0.1.0").unwrap();
}

#[test]
fn reads_a_terrain_following_output_and_copies_its_coordinates() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sigma.nc");
    terrain_following(&path);
    let file = IndicatorFile::open(&path).unwrap();
    assert_eq!(file.vertical().surface_level(), 1);
    assert_eq!(
        file.time().unwrap().lengths_days[1],
        366.0,
        "2016 is a leap year"
    );
    // CF Appendix D: z = eta + sigma (depth + eta); depth below the surface = eta - z.
    let depths = file.centre_depths(2, 0..1).unwrap();
    let eta = 0.2;
    assert!((depths[0] - 0.75 * (100.0 + eta)).abs() < 1e-12);
    assert!((depths[3] - 0.25 * (100.0 + eta)).abs() < 1e-12);
    let columns = file.parametric_columns(2, 0..1).unwrap().unwrap();
    assert_eq!(columns.sea_floor_m, vec![100.0, 100.0]);
    assert!((columns.free_surface_m[1] - eta).abs() < 1e-12);

    let out_path = dir.path().join("copy.nc");
    let mut out = netcdf::create(&out_path).unwrap();
    let copied = file.copy_coordinates(&mut out).unwrap();
    assert_eq!(copied.free_surface.as_deref(), Some("zeta"));
    assert_eq!(copied.z_dim.as_deref(), Some("sigma"));
    for name in ["sigma", "h", "lat", "lon"] {
        assert!(out.variable(name).is_some(), "{name}");
    }
    assert!(out.variable("zeta").is_none() && out.variable("time").is_none());
}
