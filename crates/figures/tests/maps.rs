//! Tests on rendered map images: size, colours at known cells, grey land, the colour bar,
//! the diverging centre, contour placement, text and aspect. Fields are SYNTHETIC patterns
//! in the Varnholm Gulf's box (200–212 °E, 30–39 °N); the palettes' reference is the
//! colorous crate itself.

mod common;

use acidscape_figures::{
    render_map, Captions, ColourRange, ContourLevel, MapSpec, PageSize, Palette, MISSING_GREY,
};
use common::*;

/// v = i + 0.1 j on the 12 × 9 gulf box, with a land block at i < 2, j > 5.
fn ramp_field(lons: &[f64], lats: &[f64]) -> Vec<f64> {
    let mut values = Vec::new();
    for j in 0..lats.len() {
        for i in 0..lons.len() {
            let land = i < 2 && j > 5;
            values.push(if land {
                f64::NAN
            } else {
                i as f64 + 0.1 * j as f64
            });
        }
    }
    values
}

fn fixed_spec(low: f64, high: f64) -> MapSpec {
    let mut spec = MapSpec::new(Captions::new(
        "test pattern · synthetic",
        "test value",
        "umol kg-1",
    ));
    spec.colouring.range = ColourRange::Fixed { low, high };
    spec.page = small_page();
    spec
}

#[test]
fn size_follows_width_and_dpi() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let values = ramp_field(&lons, &lats);
    let mut spec = fixed_spec(0.0, 12.0);
    spec.page = PageSize::new(4.0, 100.0).unwrap();
    let low = render_map(&grid, &values, &spec).unwrap();
    spec.page = PageSize::new(4.0, 200.0).unwrap();
    let high = render_map(&grid, &values, &spec).unwrap();
    assert_eq!(low.width(), 400);
    assert_eq!(high.width(), 800);
    // Fonts and margins scale with dpi, so the whole layout doubles.
    let ratio = high.height() as f64 / low.height() as f64;
    assert!((ratio - 2.0).abs() < 0.02, "height ratio {ratio}");
    let (pl, ph) = (low.layout().panel.area, high.layout().panel.area);
    assert!((ph.width() / pl.width() - 2.0).abs() < 0.03);
    assert_eq!(low.rgb().len(), 3 * 400 * low.height() as usize);
}

#[test]
fn known_cells_take_the_palette_colour_and_land_is_grey() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let values = ramp_field(&lons, &lats);
    let figure = render_map(&grid, &values, &fixed_spec(0.0, 12.0)).unwrap();
    for (j, &lat) in lats.iter().enumerate() {
        for (i, &lon) in lons.iter().enumerate() {
            let got = pixel_at(&figure, lon, lat);
            let v = values[j * lons.len() + i];
            let want = if v.is_nan() {
                MISSING_GREY
            } else {
                reference(colorous::VIRIDIS, v / 12.0)
            };
            assert_eq!(got, want, "cell ({j}, {i}) value {v}");
        }
    }
}

#[test]
fn the_colour_bar_runs_through_the_palette_in_order() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let values = ramp_field(&lons, &lats);
    let figure = render_map(&grid, &values, &fixed_spec(0.0, 12.0)).unwrap();
    let bar = figure.layout().colour_bar.expect("a map has a colour bar");
    assert_eq!((bar.low, bar.high), (0.0, 12.0));
    let x = ((bar.area.left + bar.area.right) / 2.0) as u32;
    let samples: Vec<[u8; 3]> = (0..=1000)
        .map(|k| reference(colorous::VIRIDIS, k as f64 / 1000.0))
        .collect();
    let position = |c: [u8; 3]| {
        (0..samples.len())
            .min_by(|&a, &b| {
                colour_distance(samples[a], c).total_cmp(&colour_distance(samples[b], c))
            })
            .unwrap()
    };
    // Skip the outline at each end; read upwards from low to high.
    let rows = (bar.area.top as u32 + 3)..(bar.area.bottom as u32 - 3);
    let along: Vec<usize> = rows
        .rev()
        .map(|y| position(figure.pixel(x, y).unwrap()))
        .collect();
    assert!(along.windows(2).all(|w| w[1] >= w[0]), "not monotonic");
    assert!(
        along[0] < 20 && *along.last().unwrap() > 980,
        "{} … {}",
        along[0],
        along.last().unwrap()
    );
}

#[test]
fn a_diverging_map_puts_zero_on_the_palette_centre() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    // Lopsided on purpose: −0.2 … 1.0; zero must still be the centre colour.
    let values: Vec<f64> = (0..lons.len() * lats.len())
        .map(|k| {
            if k % 5 == 0 {
                0.0
            } else {
                -0.2 + 1.2 * (k % 7) as f64 / 6.0
            }
        })
        .collect();
    let mut spec = MapSpec::difference(Captions::new("difference · synthetic", "Δ value", "1"));
    spec.page = small_page();
    let figure = render_map(&grid, &values, &spec).unwrap();
    let centre = reference(colorous::PURPLE_ORANGE, 0.5);
    let bar = figure.layout().colour_bar.unwrap();
    assert!(
        (bar.low + bar.high).abs() < 1e-12,
        "range {} to {}",
        bar.low,
        bar.high
    );
    for k in (0..values.len()).step_by(5) {
        let (j, i) = (k / lons.len(), k % lons.len());
        assert_eq!(
            pixel_at(&figure, lons[i], lats[j]),
            centre,
            "cell ({j}, {i})"
        );
    }
    // And the bar's middle row shows that same colour.
    let (x, y) = (
        (bar.area.left + bar.area.right) / 2.0,
        (bar.area.top + bar.area.bottom) / 2.0,
    );
    let middle = figure.pixel(x as u32, y as u32).unwrap();
    assert!(
        colour_distance(middle, centre) < 4.0,
        "{middle:?} vs {centre:?}"
    );
}

#[test]
fn contour_pixels_lie_between_the_cells_either_side_of_the_level() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let values: Vec<f64> = (0..lons.len() * lats.len())
        .map(|k| (k % lons.len()) as f64)
        .collect();
    let mut spec = fixed_spec(0.0, 11.0);
    spec.contour = Some(ContourLevel {
        level: 4.3,
        label: "value = 4.3".into(),
    });
    let figure = render_map(&grid, &values, &spec).unwrap();
    let panel = figure.layout().panel;
    let (below, _) = panel.to_pixel(lons[4], 0.0);
    let (above, _) = panel.to_pixel(lons[5], 0.0);
    let (expected, _) = panel.to_pixel(lons[4] + 0.3, 0.0);
    let inner = panel.area;
    let mut ink = Vec::new();
    for y in (inner.top as u32 + 4)..(inner.bottom as u32 - 4) {
        for x in (inner.left as u32 + 4)..(inner.right as u32 - 4) {
            if is_ink(figure.pixel(x, y).unwrap()) {
                ink.push(x as f64);
            }
        }
    }
    assert!(!ink.is_empty(), "no contour drawn");
    assert!(
        ink.iter().all(|&x| x > below && x < above),
        "contour outside cells 4…5"
    );
    let mean = ink.iter().sum::<f64>() / ink.len() as f64;
    assert!(
        (mean - expected).abs() < 2.0,
        "contour at {mean}, expected {expected}"
    );
}

#[test]
fn a_contour_can_follow_another_field_than_the_colours() {
    // Colours: a constant; contour: the column index at 6.5 (e.g. surface Ω on a horizon map).
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let cells = lons.len() * lats.len();
    let mut spec = fixed_spec(0.0, 11.0);
    spec.contour = Some(ContourLevel {
        level: 6.5,
        label: "other field = 6.5".into(),
    });
    spec.contour_values = Some((0..cells).map(|k| (k % lons.len()) as f64).collect());
    spec.missing_label = "no horizon".into();
    let figure = render_map(&grid, &vec![2.0; cells], &spec).unwrap();
    let panel = figure.layout().panel;
    let (left, _) = panel.to_pixel(lons[6], 0.0);
    let (right, _) = panel.to_pixel(lons[7], 0.0);
    let inner = panel.area;
    let y = ((inner.top + inner.bottom) / 2.0) as u32;
    let ink: Vec<f64> = ((inner.left as u32 + 4)..(inner.right as u32 - 4))
        .filter(|&x| is_ink(figure.pixel(x, y).unwrap()))
        .map(f64::from)
        .collect();
    assert!(!ink.is_empty(), "no contour drawn");
    assert!(ink.iter().all(|&x| x > left && x < right), "{ink:?}");
    spec.contour_values = Some(vec![0.0; 3]);
    let err = render_map(&grid, &vec![2.0; cells], &spec).unwrap_err();
    assert!(err.to_string().contains("map contour values"), "{err}");
}

#[test]
fn the_title_is_drawn_with_the_bundled_font() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let values = ramp_field(&lons, &lats);
    let count_ink = |title: &str| {
        let mut spec = fixed_spec(0.0, 12.0);
        spec.text.title = title.to_string();
        let figure = render_map(&grid, &values, &spec).unwrap();
        let band = figure.layout().title;
        let mut n = 0;
        for y in band.top as u32..band.bottom as u32 {
            for x in 0..figure.width() {
                n += is_ink(figure.pixel(x, y).unwrap()) as usize;
            }
        }
        n
    };
    assert!(count_ink("Varnholm Gulf · Ω aragonite · 2095") > 200);
    assert_eq!(count_ink(""), 0);
}

#[test]
fn the_map_keeps_a_true_aspect_at_high_latitude() {
    // 12° of longitude at 60 °N are as wide as 6° of latitude (cos 60° = 0.5).
    let lons: Vec<f64> = (0..12).map(|i| 200.5 + i as f64).collect();
    let lats: Vec<f64> = (0..6).map(|j| 57.5 + j as f64).collect();
    let grid = one_degree_grid(&lons, &lats);
    let values = vec![1.0; 72];
    let mut spec = fixed_spec(0.0, 2.0);
    spec.page = PageSize::new(6.0, 100.0).unwrap();
    let figure = render_map(&grid, &values, &spec).unwrap();
    let area = figure.layout().panel.area;
    let ratio = area.width() / area.height();
    let expected = 12.0 * 60f64.to_radians().cos() / 6.0;
    assert!(
        (ratio - expected).abs() < 0.02,
        "width/height {ratio}, expected {expected}"
    );
}

#[test]
fn a_domain_across_the_dateline_is_drawn_in_one_piece() {
    // Centres 170.5 … 179.5 then −179.5 … −170.5, written the −180…180 way.
    let lons = dateline_lons(170.5, 20);
    let lats = vec![-0.5, 0.5];
    let grid = one_degree_grid(&lons, &lats);
    let values: Vec<f64> = (0..40).map(|k| (k % 20) as f64).collect();
    let figure = render_map(&grid, &values, &fixed_spec(0.0, 19.0)).unwrap();
    assert_eq!(figure.layout().panel.x_range, (170.0, 190.0));
    for i in 0..20 {
        let got = pixel_at(&figure, 170.5 + i as f64, 0.5);
        assert_eq!(
            got,
            reference(colorous::VIRIDIS, i as f64 / 19.0),
            "column {i}"
        );
    }
}

#[test]
fn curvilinear_cells_are_drawn_where_their_corners_are() {
    // A 3 × 3 patch of 1° cells rotated by 30°.
    let (grid, lon, lat) = turned_patch(3, 1.0);
    let values: Vec<f64> = (0..9).map(f64::from).collect();
    let mut spec = fixed_spec(0.0, 8.0);
    spec.colouring.palette = Palette::Cividis;
    let figure = render_map(&grid, &values, &spec).unwrap();
    for k in 0..9 {
        let got = pixel_at(&figure, lon[k], lat[k]);
        assert_eq!(
            got,
            reference(colorous::CIVIDIS, k as f64 / 8.0),
            "cell {k}"
        );
    }
    // Outside the rotated patch but inside the panel's box: background, not a cell.
    let corner = figure.layout().panel.area;
    let blank = figure
        .pixel(corner.left as u32 + 6, corner.top as u32 + 6)
        .unwrap();
    assert_eq!(blank, [255, 255, 255]);
}

#[test]
fn a_field_without_valid_values_is_refused() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let err = render_map(
        &grid,
        &vec![f64::NAN; 108],
        &MapSpec::new(Captions::new("t", "q", "1")),
    )
    .unwrap_err();
    assert!(err.to_string().contains("no valid values"), "{err}");
    let err = render_map(
        &grid,
        &[1.0; 5],
        &MapSpec::new(Captions::new("t", "q", "1")),
    )
    .unwrap_err();
    assert!(
        err.to_string()
            .contains("map values: expected 108 values, got 5"),
        "{err}"
    );
}

#[test]
fn the_png_records_its_resolution_and_no_partial_file_is_left() {
    let (lons, lats) = gulf_axes();
    let grid = one_degree_grid(&lons, &lats);
    let figure = render_map(&grid, &ramp_field(&lons, &lats), &fixed_spec(0.0, 12.0)).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("map.png");
    figure.save_png(&path).unwrap();
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["map.png"]);
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&path).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let dims = reader.info().pixel_dims.unwrap();
    assert_eq!(dims.xppu, (100.0f64 / 0.0254).round() as u32);
    let mut buffer = vec![0; reader.output_buffer_size().unwrap()];
    let frame = reader.next_frame(&mut buffer).unwrap();
    assert_eq!(
        (frame.width, frame.height),
        (figure.width(), figure.height())
    );
    assert_eq!(&buffer[..frame.buffer_size()], figure.rgb());
}
