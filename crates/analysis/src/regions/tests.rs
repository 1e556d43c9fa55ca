use super::*;
use crate::geometry::{rectilinear_cell_areas, EARTH_MEAN_RADIUS_M};
use proptest::prelude::*;

fn boxed(west: f64, east: f64, south: f64, north: f64) -> LonLatBox {
    let b = LonLatBox {
        west,
        east,
        south,
        north,
    };
    b.check("test").unwrap();
    b
}

/// Points every 0.25° over a patch, many of them exactly on the test shapes' edges.
fn grid_points(west: f64, south: f64, n: usize) -> Vec<(f64, f64)> {
    let mut points = Vec::new();
    for j in 0..n {
        for i in 0..n {
            points.push((west + 0.25 * i as f64, south + 0.25 * j as f64));
        }
    }
    points
}

#[test]
fn adjacent_boxes_count_edge_centres_once() {
    let west = boxed(200.0, 205.0, 30.0, 35.0);
    let east = boxed(205.0, 210.0, 30.0, 35.0);
    let north = boxed(200.0, 210.0, 35.0, 39.0);
    for (lon, lat) in grid_points(199.0, 29.0, 50) {
        let count: u8 = [&west, &east, &north]
            .iter()
            .map(|b| u8::from(b.contains(lon, lat)))
            .sum();
        let in_union = (200.0..210.0).contains(&lon) && (30.0..39.0).contains(&lat);
        assert_eq!(count, u8::from(in_union), "({lon}, {lat})");
    }
}

#[test]
fn adjacent_polygons_count_edge_centres_once() {
    // A square split along its diagonal into two triangles; points on the diagonal, the shared
    // edge, fall in exactly one of them.
    let lower =
        LonLatPolygon::new("lower", &[[200.0, 30.0], [205.0, 30.0], [205.0, 35.0]]).unwrap();
    let upper =
        LonLatPolygon::new("upper", &[[200.0, 30.0], [205.0, 35.0], [200.0, 35.0]]).unwrap();
    let square = boxed(200.0, 205.0, 30.0, 35.0);
    for (lon, lat) in grid_points(199.0, 29.0, 32) {
        let count = u8::from(lower.contains(lon, lat)) + u8::from(upper.contains(lon, lat));
        assert_eq!(count, u8::from(square.contains(lon, lat)), "({lon}, {lat})");
    }
}

#[test]
fn a_box_and_the_same_rectangle_as_a_polygon_agree_on_edges() {
    let b = boxed(200.0, 205.0, 30.0, 35.0);
    let p = LonLatPolygon::new(
        "rectangle",
        &[
            [200.0, 30.0],
            [205.0, 30.0],
            [205.0, 35.0],
            [200.0, 35.0],
            [200.0, 30.0],
        ],
    )
    .unwrap();
    for (lon, lat) in grid_points(199.0, 29.0, 32) {
        assert_eq!(b.contains(lon, lat), p.contains(lon, lat), "({lon}, {lat})");
    }
}

#[test]
fn shapes_across_the_zero_meridian_in_either_convention() {
    let b = boxed(350.0, 10.0, 0.0, 10.0);
    let p360 = LonLatPolygon::new(
        "p",
        &[[350.0, 0.0], [10.0, 0.0], [10.0, 10.0], [350.0, 10.0]],
    )
    .unwrap();
    let p180 = LonLatPolygon::new(
        "p",
        &[[-10.0, 0.0], [10.0, 0.0], [10.0, 10.0], [-10.0, 10.0]],
    )
    .unwrap();
    let cases = [
        (0.0, true),
        (359.0, true),
        (-1.0, true),
        (350.0, true),
        (-10.0, true),
        (9.99, true),
        (10.0, false),
        (370.0, false),
        (20.0, false),
        (180.0, false),
    ];
    for (lon, inside) in cases {
        for shape in [
            b.contains(lon, 5.0),
            p360.contains(lon, 5.0),
            p180.contains(lon, 5.0),
        ] {
            assert_eq!(shape, inside, "lon {lon}");
        }
    }
    // Across the 180° meridian.
    let pacific = boxed(170.0, -170.0, -5.0, 5.0);
    assert!(pacific.contains(180.0, 0.0) && pacific.contains(-175.0, 0.0));
    assert!(!pacific.contains(160.0, 0.0) && !pacific.contains(-170.0, 0.0));
    // Every longitude, and the pole with a northern edge at 90°.
    let cap = boxed(0.0, 360.0, 80.0, 90.0);
    assert!(cap.contains(123.0, 90.0) && cap.contains(-50.0, 80.0) && !cap.contains(0.0, 79.9));
}

#[test]
fn curvilinear_grid_membership_uses_each_centre() {
    // A curvilinear grid (2-D lon/lat) whose rows run along meridians and whose columns run along
    // parallels, with longitudes in 0..360 crossing 0°: centres at lon = −4.5 + j, lat = 0.5 + i
    // for row j, col i. The box 358°–3°E, 2°–5°N holds j with −2 ≤ −4.5 + j < 3 (j = 3..=7,
    // five rows) and i with 2 ≤ 0.5 + i < 5 (i = 2..=4, three cols): 15 centres.
    let (rows, cols) = (10, 8);
    let mut lon = Vec::new();
    let mut lat = Vec::new();
    for j in 0..rows {
        for i in 0..cols {
            lon.push((-4.5 + j as f64).rem_euclid(360.0));
            lat.push(0.5 + i as f64);
        }
    }
    let set = RegionSet::new(vec![Region {
        name: "box".into(),
        shape: RegionShape::Box(boxed(358.0, 3.0, 2.0, 5.0)),
    }])
    .unwrap();
    let m = set.membership(&lon, &lat, None).unwrap();
    assert_eq!(m.counts(), vec![15]);
    for c in 0..rows * cols {
        let (j, i) = (c / cols, c % cols);
        let expected = (3..=7).contains(&j) && (2..=4).contains(&i);
        assert_eq!(m.of(c).len() == 1, expected);
    }
}

#[test]
fn bad_polygons_are_errors() {
    assert!(LonLatPolygon::new("p", &[[0.0, 0.0], [1.0, 0.0]]).is_err());
    assert!(LonLatPolygon::new("p", &[[0.0, 0.0], [1.0, 0.0], [1.0, 95.0]]).is_err());
    // Around the north pole: longitudes wind through 360°.
    let ring: Vec<[f64; 2]> = (0..8).map(|k| [45.0 * k as f64, 80.0]).collect();
    let err = LonLatPolygon::new("arctic", &ring).unwrap_err();
    assert!(err.to_string().contains("encircles a pole"));
    let b = LonLatBox {
        west: 10.0,
        east: 10.0,
        south: 0.0,
        north: 1.0,
    };
    assert!(b.check("b").is_err());
}

#[test]
fn mask_regions_and_the_whole_domain() {
    // Values and names as a mask's flag_values and flag_meanings give them (CF 1.10 §3.5).
    let set = RegionSet::from_mask(
        &[1, 2, 5],
        &["shelf".into(), "plume".into(), "basin".into()],
    )
    .unwrap();
    let mask = [1, 2, 5, 5, -1, 1];
    let coords = [0.0; 6];
    let m = set.membership(&coords, &coords, Some(&mask)).unwrap();
    assert_eq!(m.counts(), vec![2, 1, 2]);
    assert!(m.of(4).is_empty());
    assert!(set.membership(&coords, &coords, None).is_err());
    assert!(RegionSet::from_mask(&[1, 2], &["a".into(), "a".into()]).is_err());
    assert!(RegionSet::from_mask(&[1], &[]).is_err());
    let all = RegionSet::whole_domain("everywhere").unwrap();
    assert_eq!(
        all.membership(&coords, &coords, None).unwrap().counts(),
        vec![6]
    );
}

const SAMPLE_FILE: &str = r#"
[[region]]
name = "northern shelf"
box = { west = 200.0, east = 212.0, south = 38.0, north = 39.0 }

[[region]]
name = "river plume"
polygon = [[200.2, 34.0], [201.6, 34.3], [201.4, 35.2], [200.2, 35.0]]

[[region]]
name = "whole gulf"
whole_domain = true

[[layer]]
name = "surface"
surface_cell = true

[[layer]]
name = "0-200 m"
top = 0
bottom = 200

[[layer]]
name = "below 1000 m"
top = 1000
"#;

#[test]
fn region_file_parses() {
    let f = RegionFile::from_toml_str(SAMPLE_FILE, "gulf.toml").unwrap();
    assert_eq!(
        f.regions.names(),
        ["northern shelf", "river plume", "whole gulf"]
    );
    assert!(matches!(
        f.regions.regions()[1].shape,
        RegionShape::Polygon(_)
    ));
    assert_eq!(f.layers.len(), 3);
    assert_eq!(f.layers[0].kind, LayerKind::SurfaceCell);
    assert_eq!(
        f.layers[2].kind,
        LayerKind::Depths {
            top_m: 1000.0,
            bottom_m: None
        }
    );
}

#[test]
fn region_file_errors_name_the_file_and_the_problem() {
    let cases = [
        ("[[region]]\nname = \"a\"\nbox = { west = 0, east = 1, south = 0, nort = 1 }", "nort"),
        ("[[region]]\nname = \"a\"\nwhole_domain = true\npolygon = [[0,0],[1,0],[1,1]]", "exactly one"),
        ("[[region]]\nname = \"a\"\nwhole_domain = true\n[[region]]\nname = \"a\"\nwhole_domain = true", "distinct"),
        ("[[layer]]\nname = \"s\"\nsurface_cell = true", "no [[region]]"),
        ("[[region]]\nname = \"a\"\nwhole_domain = true\n[[layer]]\nname = \"x\"\ntop = 200\nbottom = 100", "top < bottom"),
        ("[[region]]\nname = \"a\"\nbox = { west = 0, east = 1, south = 5, north = 1 }", "south < north"),
        ("[[regions]]\nname = \"a\"", "regions"),
    ];
    for (text, expected) in cases {
        let message = RegionFile::from_toml_str(text, "my-regions.toml")
            .unwrap_err()
            .to_string();
        assert!(message.starts_with("my-regions.toml: "), "{message}");
        assert!(message.contains(expected), "{message} lacks {expected}");
    }
}

/// Surface columns of a global 1° grid with one wet cell each: returns (lon, lat, areas).
fn global_grid() -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let lon_b: Vec<[f64; 2]> = (0..360).map(|i| [i as f64, i as f64 + 1.0]).collect();
    let lat_b: Vec<[f64; 2]> = (0..180)
        .map(|j| [j as f64 - 90.0, j as f64 - 89.0])
        .collect();
    let areas = rectilinear_cell_areas(&lon_b, &lat_b, EARTH_MEAN_RADIUS_M).unwrap();
    let lon_c: Vec<f64> = lon_b.iter().map(|b| b[0] + 0.5).collect();
    let lat_c: Vec<f64> = lat_b.iter().map(|b| b[0] + 0.5).collect();
    let (lon, lat) = expand_rectilinear(&lon_c, &lat_c);
    (lon, lat, areas)
}

fn field(name: &str, thresholds: Vec<f64>) -> FieldSpec {
    FieldSpec {
        name: name.into(),
        units: "1".into(),
        thresholds,
    }
}

#[test]
fn known_pattern_gives_its_analytic_area_weighted_mean_and_fraction() {
    // Per cell, the exact area mean of sin φ, (sin φ1 + sin φ2) / 2. Over the northern
    // hemisphere its area-weighted mean is ∫ sin φ cos φ dφ / ∫ cos φ dφ = 1/2, and the value is
    // below 1/2 exactly on the cells south of 30°N: an area fraction of sin 30° = 1/2.
    let (lon, lat, areas) = global_grid();
    let north = RegionSet::new(vec![Region {
        name: "north".into(),
        shape: RegionShape::Box(boxed(0.0, 360.0, 0.0, 90.0)),
    }])
    .unwrap();
    let m = north.membership(&lon, &lat, None).unwrap();
    let surface = Layer::new("surface", LayerKind::SurfaceCell).unwrap();
    let mut stats = RegionStatistics::new(&north, &[surface], vec![field("s", vec![0.5])], vec![]);
    for c in 0..lon.len() {
        let (a, b) = (
            (lat[c] - 0.5).to_radians().sin(),
            (lat[c] + 0.5).to_radians().sin(),
        );
        let value = [(a + b) / 2.0];
        let column = RegionColumn {
            area_m2: areas[c],
            depth_m: &[5.0],
            volume_m3: &[areas[c] * 10.0],
            cell_values: &[&value],
            column_values: &[],
        };
        stats.add_column(&m, c, &column).unwrap();
    }
    let rows = stats.rows();
    assert_eq!(rows.len(), 1);
    assert_eq!(rows[0].weighting, Weighting::Area);
    assert!((rows[0].mean.unwrap() - 0.5).abs() < 1e-12);
    assert!((rows[0].fraction_below[0].1.unwrap() - 0.5).abs() < 1e-12);
}

#[test]
fn layers_weight_by_volume_and_constant_fields_keep_their_value() {
    // One column: cells centred at 50, 150, 600 and 1500 m with volumes 1, 1, 8, 10 (× 1e9 m³)
    // and values 10, 20, 30, 40; a 2-D field (a horizon depth) of 700 m.
    let set = RegionSet::whole_domain("all").unwrap();
    let m = set.membership(&[0.0], &[0.0], None).unwrap();
    let layers = [
        Layer::new(
            "0-200 m",
            LayerKind::Depths {
                top_m: 0.0,
                bottom_m: Some(200.0),
            },
        )
        .unwrap(),
        Layer::new(
            "200-1000 m",
            LayerKind::Depths {
                top_m: 200.0,
                bottom_m: Some(1000.0),
            },
        )
        .unwrap(),
        Layer::new("all", LayerKind::WholeColumn).unwrap(),
    ];
    let fields = vec![field("x", vec![25.0]), field("constant", vec![])];
    let mut stats = RegionStatistics::new(&set, &layers, fields, vec![field("horizon", vec![])]);
    let volumes = [1e9, 1e9, 8e9, 10e9];
    let column = RegionColumn {
        area_m2: 1e7,
        depth_m: &[50.0, 150.0, 600.0, 1500.0],
        volume_m3: &volumes,
        cell_values: &[&[10.0, 20.0, 30.0, 40.0], &[7.25; 4]],
        column_values: &[700.0],
    };
    stats.add_column(&m, 0, &column).unwrap();
    let rows = stats.rows();
    let get = |layer: &str, f: &str| {
        rows.iter()
            .find(|r| r.layer.as_deref() == Some(layer) && r.field == f)
            .unwrap()
            .clone()
    };
    assert_eq!(get("0-200 m", "x").mean, Some(15.0));
    assert_eq!(get("200-1000 m", "x").mean, Some(30.0));
    // (10 + 20 + 240 + 400) / 20 = 33.5; below 25: (1 + 1) / 20.
    assert_eq!(get("all", "x").mean, Some(33.5));
    assert_eq!(get("all", "x").fraction_below, vec![(25.0, Some(0.1))]);
    for layer in ["0-200 m", "200-1000 m", "all"] {
        let mean = get(layer, "constant").mean.unwrap();
        assert!((mean - 7.25).abs() <= 2.0 * f64::EPSILON * 7.25);
    }
    let horizon = rows.iter().find(|r| r.field == "horizon").unwrap();
    assert_eq!((horizon.layer.clone(), horizon.mean), (None, Some(700.0)));
}

#[test]
fn missing_values_are_left_out_and_counted() {
    let set = RegionSet::whole_domain("all").unwrap();
    let m = set.membership(&[0.0, 1.0], &[0.0, 0.0], None).unwrap();
    let layers = [Layer::new("all", LayerKind::WholeColumn).unwrap()];
    let mut stats = RegionStatistics::new(
        &set,
        &layers,
        vec![field("x", vec![])],
        vec![field("h", vec![])],
    );
    let column = |values: &'static [f64], h: f64| (values, h);
    for (c, (values, h)) in [
        column(&[1.0, f64::NAN], f64::NAN),
        column(&[3.0, 5.0], 10.0),
    ]
    .into_iter()
    .enumerate()
    {
        let col = RegionColumn {
            area_m2: 2.0,
            depth_m: &[1.0, 2.0],
            volume_m3: &[2.0, 2.0],
            cell_values: &[values],
            column_values: &[h],
        };
        stats.add_column(&m, c, &col).unwrap();
    }
    let rows = stats.rows();
    assert_eq!(
        (rows[0].mean, rows[0].weight, rows[0].missing_weight),
        (Some(3.0), 6.0, 2.0)
    );
    assert_eq!(
        (rows[1].mean, rows[1].weight, rows[1].missing_weight),
        (Some(10.0), 2.0, 2.0)
    );
}

#[test]
fn inconsistent_inputs_are_errors() {
    let set = RegionSet::whole_domain("all").unwrap();
    let m = set.membership(&[0.0], &[0.0], None).unwrap();
    let layers = [Layer::new("all", LayerKind::WholeColumn).unwrap()];
    let mut stats = RegionStatistics::new(&set, &layers, vec![field("x", vec![])], vec![]);
    let col = RegionColumn {
        area_m2: 1.0,
        depth_m: &[1.0],
        volume_m3: &[1.0],
        cell_values: &[&[1.0, 2.0]],
        column_values: &[],
    };
    assert!(matches!(
        stats.add_column(&m, 0, &col),
        Err(RegionError::Length { .. })
    ));
    let ok = RegionColumn {
        cell_values: &[&[1.0]],
        ..col
    };
    assert!(matches!(
        stats.add_column(&m, 1, &ok),
        Err(RegionError::Column { .. })
    ));
    let other = RegionStatistics::new(&set, &layers, vec![field("y", vec![])], vec![]);
    assert_eq!(stats.merge(&other), Err(RegionError::Mismatch));
}

fn stats_bits(stats: &RegionStatistics) -> Vec<u64> {
    stats
        .rows()
        .iter()
        .flat_map(|r| {
            let mut v = vec![r.weight.to_bits(), r.missing_weight.to_bits()];
            v.extend(r.mean.map(f64::to_bits));
            v.extend(
                r.fraction_below
                    .iter()
                    .filter_map(|f| f.1.map(f64::to_bits)),
            );
            v
        })
        .collect()
}

proptest! {
    #[test]
    fn any_split_and_merge_order_gives_the_same_bits(
        values in prop::collection::vec(prop::collection::vec(-2.0f64..40.0, 1..8), 2..30),
        cut in 1usize..29,
    ) {
        let columns = values.len();
        let lon: Vec<f64> = (0..columns).map(|c| 200.0 + c as f64 * 0.4).collect();
        let lat = vec![35.0; columns];
        let set = RegionSet::new(vec![
            Region { name: "west".into(), shape: RegionShape::Box(boxed(200.0, 205.0, 30.0, 40.0)) },
            Region { name: "all".into(), shape: RegionShape::WholeDomain },
        ]).unwrap();
        let m = set.membership(&lon, &lat, None).unwrap();
        let layers = [
            Layer::new("surface", LayerKind::SurfaceCell).unwrap(),
            Layer::new("0-200 m", LayerKind::Depths { top_m: 0.0, bottom_m: Some(200.0) }).unwrap(),
        ];
        let fresh = || RegionStatistics::new(&set, &layers, vec![field("x", vec![1.0, 20.0])], vec![field("h", vec![])]);
        let add = |stats: &mut RegionStatistics, range: std::ops::Range<usize>| {
            for c in range {
                let cells = values[c].len();
                let depth: Vec<f64> = (0..cells).map(|k| 10.0 + 40.0 * k as f64).collect();
                let volume: Vec<f64> = (0..cells).map(|k| 1e9 * (1.0 + k as f64) / 3.0).collect();
                let col = RegionColumn {
                    area_m2: 1e8 / 7.0,
                    depth_m: &depth,
                    volume_m3: &volume,
                    cell_values: &[&values[c]],
                    column_values: &[values[c][0] * 100.0],
                };
                stats.add_column(&m, c, &col).unwrap();
            }
        };
        let mut whole = fresh();
        add(&mut whole, 0..columns);
        let cut = cut.min(columns);
        let (mut a, mut b) = (fresh(), fresh());
        add(&mut a, 0..cut);
        add(&mut b, cut..columns);
        // As ranks send them: flat lists, merged in any order, give the whole grid's bits.
        let (flat_a, flat_b) = (a.to_flat(), b.to_flat());
        let mut by_flat = fresh();
        by_flat.merge_flat(&flat_b).unwrap();
        by_flat.merge_flat(&flat_a).unwrap();
        prop_assert_eq!(stats_bits(&by_flat), stats_bits(&whole));
        b.merge(&a).unwrap();
        prop_assert_eq!(stats_bits(&b), stats_bits(&whole));
    }
}

#[test]
fn a_flat_list_that_does_not_fit_is_refused() {
    let set = RegionSet::whole_domain("all").unwrap();
    let layers = [Layer::new("surface", LayerKind::SurfaceCell).unwrap()];
    let one = RegionStatistics::new(&set, &layers, vec![field("x", vec![1.0])], vec![]);
    let two = RegionStatistics::new(&set, &layers, vec![field("x", vec![1.0, 2.0])], vec![]);
    let flat = one.to_flat();
    let mut other = one.clone();
    assert_eq!(other.merge_flat(&flat[1..]), Err(RegionError::Mismatch));
    assert_eq!(
        other.merge_flat(&flat[..flat.len() - 1]),
        Err(RegionError::Mismatch)
    );
    let mut other = two.clone();
    assert_eq!(other.merge_flat(&flat), Err(RegionError::Mismatch));
    let mut same = one.clone();
    assert_eq!(same.merge_flat(&flat), Ok(()));
    assert_eq!(stats_bits(&same), stats_bits(&one));
}

#[test]
fn statistics_survive_a_round_trip_through_text() {
    // Accumulators travel between processes serialised; TOML stands in for any serde format.
    let set = RegionSet::whole_domain("all").unwrap();
    let m = set.membership(&[0.0], &[0.0], None).unwrap();
    let layers = [
        Layer::new("surface", LayerKind::SurfaceCell).unwrap(),
        Layer::new(
            "below 100 m",
            LayerKind::Depths {
                top_m: 100.0,
                bottom_m: None,
            },
        )
        .unwrap(),
    ];
    let mut stats = RegionStatistics::new(&set, &layers, vec![field("x", vec![1.0])], vec![]);
    let col = RegionColumn {
        area_m2: 3.0,
        depth_m: &[10.0, 150.0],
        volume_m3: &[30.0, 1e5 / 3.0],
        cell_values: &[&[0.5, 2.5]],
        column_values: &[],
    };
    stats.add_column(&m, 0, &col).unwrap();
    let back: RegionStatistics = toml::from_str(&toml::to_string(&stats).unwrap()).unwrap();
    assert_eq!(stats_bits(&back), stats_bits(&stats));
    let mut merged = back.clone();
    merged.merge(&stats).unwrap();
    assert_eq!(merged.rows()[1].weight, 2.0 * stats.rows()[1].weight);
}
