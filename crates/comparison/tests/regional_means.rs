//! Regional means, fractions and weights through the whole comparison, on synthetic outputs
//! with values whose weighted means are known in closed form.

mod common;

use common::*;

const R: f64 = 6_371_008.771_4;

fn close(a: f64, b: f64, tolerance: f64) -> bool {
    (a - b).abs() <= tolerance * b.abs().max(1e-300)
}

/// Area of a 1° cell between latitudes `south` and `south + 1` on the sphere of radius R:
/// R² Δλ (sin φ₂ − sin φ₁), the integral of R² cos φ dφ dλ (exact on a sphere).
fn zone_cell_area(south: f64) -> f64 {
    R * R * 1f64.to_radians() * ((south + 1.0).to_radians().sin() - south.to_radians().sin())
}

#[test]
fn a_constant_field_has_that_constant_as_every_regional_mean() {
    let (dir, run) = scratch();
    let mut s = Synthetic::new(200.0, 30.0, 6, 4, 3, Time::annual(2015, 6))
        .with(Field::cells("ph", "1", |_, _, _, _| 8.0625))
        .with(Field::cells("omega_aragonite", "1", |_, _, _, _| 1.75))
        .with(Field::columns("horizon_depth_aragonite", "m", |_, _, _| {
            812.5
        }));
    s.land = vec![(0, 0), (3, 5)];
    s.write(&run);
    let regions = region_file(
        dir.path(),
        r#"
[[region]]
name = "east box"
box = { west = 203.0, east = 206.0, south = 30.0, north = 34.0 }
[[region]]
name = "triangle"
polygon = [[200.0, 30.0], [206.0, 30.0], [200.0, 34.0]]
[[region]]
name = "everything"
whole_domain = true
[[layer]]
name = "surface"
surface_cell = true
[[layer]]
name = "upper 25 m"
top = 0
bottom = 25
[[layer]]
name = "deep"
top = 25
"#,
    );
    let mut req = request(
        dir.path(),
        &[("only", &run)],
        &["first=2015-2017", "last=2018-2020"],
    );
    req.regions = Some(regions.clone());
    let summary = compare(&req);
    let mut checked = 0;
    for row in summary.rows.iter().filter(|r| r.statistic == "mean") {
        let expected = match row.quantity.as_str() {
            "ph" => 8.0625,
            "omega_aragonite" => 1.75,
            _ => 812.5,
        };
        let value = row.value.unwrap();
        assert!(close(value, expected, 1e-14), "{row:?}");
        checked += 1;
    }
    // 3 regions × (3 layers × 2 fields + 1 horizon) × (6 steps + 2 windows).
    assert_eq!(checked, 3 * 7 * 8);
    // Per cell, the window mean of a constant is the constant (stored as float32).
    let mean = read(&summary.output, "ph_only");
    assert!(mean.iter().filter(|v| !v.is_nan()).all(|&v| v == 8.0625));
    assert_eq!(
        mean.iter().filter(|v| v.is_nan()).count(),
        2 * 3 * 2,
        "two land columns"
    );
}

#[test]
fn a_known_pattern_gives_its_area_and_volume_weighted_means() {
    // Values = row index j at every level (area weights), and = level index k (volume weights),
    // with the output's own cell_area (a_j = (j + 1) 1e8 m²) and cell_thickness (10, 20, 30 m).
    let (dir, run) = scratch();
    let (cols, rows) = (3, 4);
    let mut s = Synthetic::new(200.0, 30.0, cols, rows, 3, Time::annual(2015, 2))
        .with(Field::cells("by_row", "1", |_, _, j, _| j as f64))
        .with(Field::cells("by_level", "1", |_, k, _, _| k as f64));
    s.cell_area = Some(
        (0..rows)
            .flat_map(|j| vec![(j + 1) as f64 * 1e8; cols])
            .collect(),
    );
    s.cell_thickness = Some(vec![10.0, 20.0, 30.0]);
    s.write(&run);
    let summary = compare(&request(dir.path(), &[("a", &run)], &["all=2015-2016"]));
    // Area-weighted over the surface layer: Σ j (j + 1) / Σ (j + 1) = (0 + 2 + 6 + 12) / 10.
    let surface = pick(&summary, "a/whole domain/surface/2015/by_row/mean").unwrap();
    assert!(close(surface, 2.0, 1e-14), "{surface}");
    // Volume-weighted over the column: Σ k h_k / Σ h_k = (0·10 + 1·20 + 2·30) / 60 = 4/3.
    let column = pick(&summary, "a/whole domain/whole column/all/by_level/mean").unwrap();
    assert!(close(column, 4.0 / 3.0, 1e-14), "{column}");
    let volume = pick(
        &summary,
        "a/whole domain/whole column/2016/by_level/volume_with_value",
    )
    .unwrap();
    assert!(close(volume, 60.0 * 10.0 * 3.0 * 1e8, 1e-14), "{volume}");
    let weights = text_attribute(&summary.output, None, "weights");
    assert!(
        weights.contains("the output's cell_area")
            && weights.contains("the output's cell_thickness"),
        "{weights}"
    );
}

#[test]
fn without_geometry_variables_weights_come_from_the_bounds() {
    // No cell_area: 1° cells on the sphere from the latitude bounds (exact zone areas);
    // no cell_thickness: whole cells from the level bounds (10, 20 m).
    let (dir, run) = scratch();
    Synthetic::new(200.0, 30.0, 2, 3, 2, Time::annual(2015, 1))
        .with(Field::cells("by_row", "1", |_, _, j, _| j as f64))
        .write(&run);
    let summary = compare(&request(dir.path(), &[("a", &run)], &["all=2015"]));
    let areas: Vec<f64> = (0..3).map(|j| zone_cell_area(30.0 + j as f64)).collect();
    let expected = (areas[1] + 2.0 * areas[2]) / areas.iter().sum::<f64>();
    let surface = pick(&summary, "a/whole domain/surface/2015/by_row/mean").unwrap();
    assert!(close(surface, expected, 1e-12), "{surface} vs {expected}");
    let volume = pick(
        &summary,
        "a/whole domain/whole column/2015/by_row/volume_with_value",
    )
    .unwrap();
    assert!(close(volume, 2.0 * 30.0 * areas.iter().sum::<f64>(), 1e-12));
    let weights = text_attribute(&summary.output, None, "weights");
    assert!(
        weights.contains("as the output has no cell_area") && weights.contains("no cell_thickness"),
        "{weights}"
    );
}

#[test]
fn fractions_below_thresholds_on_a_field_with_a_known_area() {
    // Ω = 0.5 in the two western columns, 1.5 in the others, all cells of equal area:
    // 2/5 of the area below 1, all of it below 2. In depth, Ω = 0.8 only in the deepest
    // level (thickness 30 of 60 m): half the volume below 1 in the eastern columns.
    let (dir, run) = scratch();
    let (cols, rows) = (5, 2);
    let mut s = Synthetic::new(10.0, -1.0, cols, rows, 3, Time::annual(2015, 1)).with(
        Field::cells("omega_aragonite", "1", |_, k, _, i| {
            if i < 2 {
                0.5
            } else if k == 2 {
                0.8
            } else {
                1.5
            }
        }),
    );
    s.cell_area = Some(vec![1e9; cols * rows]);
    s.write(&run);
    let mut req = request(dir.path(), &[("a", &run)], &["all=2015"]);
    req.omega_thresholds = Some("1,2".into());
    let summary = compare(&req);
    let below = |layer: &str, t: f64| {
        pick(
            &summary,
            &format!("a/whole domain/{layer}/2015/omega_aragonite/fraction_below/{t}"),
        )
        .unwrap()
    };
    assert!(close(below("surface", 1.0), 0.4, 1e-14));
    assert_eq!(below("surface", 2.0), 1.0);
    // Volume: west 2 columns wholly below 1; east 3 columns half below 1 (the 30 m level).
    assert!(close(
        below("whole column", 1.0),
        (2.0 + 3.0 * 0.5) / 5.0,
        1e-14
    ));
}

#[test]
fn regions_on_edges_across_the_zero_meridian() {
    // Centres at 358.5 .. 2.5 °E (0..360 convention) and 0.5 .. 3.5 °N.
    let (dir, run) = scratch();
    let mut s = Synthetic::new(0.0, 0.0, 5, 4, 1, Time::annual(2015, 1)).with(marker());
    s.grid = Grid::Rectilinear {
        lon: vec![358.5, 359.5, 0.5, 1.5, 2.5],
        lat: vec![0.5, 1.5, 2.5, 3.5],
    };
    s.cell_area = Some(vec![1.0; 20]);
    s.write(&run);
    // A box written in −180..180 across 0°, whose edges pass through centres: the west edge
    // (−0.5) and the south edge (1.5) are inside, the east (1.5) and north (3.5) are not.
    // The same box as a polygon in 0..360 must hold the same centres.
    let regions = region_file(
        dir.path(),
        r#"
[[region]]
name = "box"
box = { west = -0.5, east = 1.5, south = 1.5, north = 3.5 }
[[region]]
name = "polygon"
polygon = [[359.5, 1.5], [1.5, 1.5], [1.5, 3.5], [359.5, 3.5]]
"#,
    );
    let mut req = request(dir.path(), &[("a", &run)], &["all=2015"]);
    req.regions = Some(regions.clone());
    let summary = compare(&req);
    // Centres inside: lon 359.5 and 0.5 (cols 1, 2), lat 1.5 and 2.5 (rows 1, 2).
    let expected = (11.0 + 12.0 + 21.0 + 22.0) / 4.0;
    for region in ["box", "polygon"] {
        let mean = pick(&summary, &format!("a/{region}//2015/marker/mean")).unwrap();
        let area = pick(
            &summary,
            &format!("a/{region}//2015/marker/area_with_value"),
        )
        .unwrap();
        assert_eq!((mean, area), (expected, 4.0), "{region}");
    }
}

#[test]
fn regions_on_a_curvilinear_grid() {
    // A sheared 2-D grid: lon = 200 + i + 0.5 j, lat = 30 + j + 0.25 i. A box holds the
    // centres it contains; which ones is worked out here from the centres directly.
    let (dir, run) = scratch();
    let (rows, cols) = (4, 5);
    let lon: Vec<f64> = (0..rows)
        .flat_map(|j| (0..cols).map(move |i| 200.0 + i as f64 + 0.5 * j as f64))
        .collect();
    let lat: Vec<f64> = (0..rows)
        .flat_map(|j| (0..cols).map(move |i| 30.0 + j as f64 + 0.25 * i as f64))
        .collect();
    let mut s = Synthetic::new(0.0, 0.0, cols, rows, 1, Time::annual(2015, 1)).with(marker());
    s.grid = Grid::Curvilinear {
        lon: lon.clone(),
        lat: lat.clone(),
        rows,
        cols,
    };
    s.cell_area = Some(vec![1.0; rows * cols]);
    s.write(&run);
    let regions = region_file(dir.path(), "[[region]]\nname = \"box\"\nbox = { west = 201.0, east = 203.5, south = 31.0, north = 33.0 }\n");
    let mut req = request(dir.path(), &[("a", &run)], &["all=2015"]);
    req.regions = Some(regions.clone());
    let summary = compare(&req);
    let inside: Vec<f64> = (0..rows * cols)
        .filter(|&c| (201.0..203.5).contains(&lon[c]) && (31.0..33.0).contains(&lat[c]))
        .map(|c| (10 * (c / cols) + c % cols) as f64)
        .collect();
    assert!(inside.len() >= 3, "the box should hold several centres");
    let expected = inside.iter().sum::<f64>() / inside.len() as f64;
    let mean = pick(&summary, "a/box//2015/marker/mean").unwrap();
    assert!(close(mean, expected, 1e-14), "{mean} vs {expected}");
    let area = pick(&summary, "a/box//2015/marker/area_with_value").unwrap();
    assert_eq!(area, inside.len() as f64);
}

#[test]
fn a_region_mask_in_a_netcdf_file() {
    let (dir, run) = scratch();
    let mut s = Synthetic::new(200.0, 30.0, 3, 2, 1, Time::annual(2015, 1)).with(marker());
    s.cell_area = Some(vec![1.0; 6]);
    s.write(&run);
    let mask_path = dir.path().join("mask.nc");
    {
        let mut f = netcdf::create(&mask_path).unwrap();
        f.add_dimension("lat", 2).unwrap();
        f.add_dimension("lon", 3).unwrap();
        let mut v = f.add_variable::<i8>("region", &["lat", "lon"]).unwrap();
        v.set_fill_value(-1i8).unwrap();
        v.put_attribute("flag_values", vec![1i8, 2]).unwrap();
        v.put_attribute("flag_meanings", "west_coast open_sea")
            .unwrap();
        v.put_values(&[1i8, 1, 2, -1, 2, 2], ..).unwrap();
    }
    let mut req = request(dir.path(), &[("a", &run)], &["all=2015"]);
    req.regions = Some(mask_path.display().to_string());
    let summary = compare(&req);
    let west = pick(&summary, "a/west_coast//2015/marker/mean").unwrap();
    let open = pick(&summary, "a/open_sea//2015/marker/mean").unwrap();
    assert_eq!((west, open), (0.5, (2.0 + 11.0 + 12.0) / 3.0));
}

#[test]
fn extra_horizons_add_their_thresholds_and_statuses_are_not_compared() {
    // compute writes horizon_depth_aragonite_1p5 for an extra threshold Ω = 1.5, with status
    // flags: fractions below 1 and 1.5 are reported; the flags are no fields.
    let (dir, run) = scratch();
    let mut s = Synthetic::new(200.0, 30.0, 2, 1, 2, Time::annual(2015, 1))
        .with(Field::cells("omega_aragonite", "1", |_, _, _, i| {
            0.75 + 0.5 * i as f64
        }))
        .with(Field::columns("horizon_depth_aragonite", "m", |_, _, _| {
            500.0
        }))
        .with(Field::columns(
            "horizon_depth_aragonite_1p5",
            "m",
            |_, _, _| 250.0,
        ));
    s.status_flags = vec![
        "horizon_status_aragonite".into(),
        "horizon_status_aragonite_1p5".into(),
    ];
    s.cell_area = Some(vec![1.0, 3.0]);
    s.write(&run);
    let summary = compare(&request(dir.path(), &[("a", &run)], &["all=2015"]));
    // Ω 0.75 (area 1) and 1.25 (area 3): 1/4 of the area below 1, all of it below 1.5.
    assert_eq!(
        pick(
            &summary,
            "a/whole domain/surface/2015/omega_aragonite/fraction_below/1"
        ),
        Some(0.25)
    );
    assert_eq!(
        pick(
            &summary,
            "a/whole domain/surface/2015/omega_aragonite/fraction_below/1.5"
        ),
        Some(1.0)
    );
    assert_eq!(
        pick(
            &summary,
            "a/whole domain//all/horizon_depth_aragonite_1p5/mean"
        ),
        Some(250.0)
    );
    let file = netcdf::open(&summary.output).unwrap();
    assert!(
        file.variable("horizon_shoaling_aragonite_1p5_a").is_none(),
        "one window: no change"
    );
    assert!(file.variable("horizon_depth_aragonite_1p5_a").is_some());
    assert!(file.variable("horizon_status_aragonite_a").is_none());
}
