//! Tests on rendered sections and time series. Data are SYNTHETIC patterns; the palettes'
//! reference is the colorous crate itself.

mod common;

use acidscape_figures::{
    render_section, render_series, Captions, ColourRange, SectionColumn, SectionLine, SectionSpec,
    Series, SeriesSpec, MISSING_GREY,
};
use common::*;

/// Four 10 km columns, layers 0–100–300–600–1000 m; the last column's floor is at 300 m.
fn columns() -> Vec<SectionColumn> {
    (0..4)
        .map(|c| SectionColumn {
            x_start: 10.0 * c as f64,
            x_end: 10.0 * (c + 1) as f64,
            interfaces: vec![0.0, 100.0, 300.0, 600.0, 1000.0],
            values: if c == 3 {
                vec![3.0, 2.0, f64::NAN, f64::NAN]
            } else {
                vec![3.0, 2.0, 1.0, 0.0]
            },
        })
        .collect()
}

fn spec() -> SectionSpec {
    let mut spec = SectionSpec::new(Captions::new("section · synthetic", "Ω aragonite", "1"));
    spec.colouring.range = ColourRange::Fixed {
        low: 0.0,
        high: 3.0,
    };
    spec.page = small_page();
    spec
}

#[test]
fn grey_is_explained_only_when_it_shows() {
    // A 4 × 4 block of grey (anti-aliased text has a few grey pixels of its own).
    let has_grey = |figure: &acidscape_figures::Figure| {
        let grey = |x: u32, y: u32| figure.pixel(x, y) == Some(MISSING_GREY);
        (0..figure.height().saturating_sub(4)).any(|y| {
            (0..figure.width().saturating_sub(4))
                .any(|x| (0..4).all(|d| (0..4).all(|e| grey(x + d, y + e))))
        })
    };
    // The last column ends at 300 m: grey below it, and its legend swatch.
    assert!(has_grey(&render_section(&columns(), &spec()).unwrap()));
    // Every column full to the bottom: no grey anywhere, legend included.
    let full: Vec<SectionColumn> = columns().into_iter().take(3).collect();
    assert!(!has_grey(&render_section(&full, &spec()).unwrap()));
}

#[test]
fn depth_runs_downwards_and_cells_take_their_colours() {
    let figure = render_section(&columns(), &spec()).unwrap();
    let panel = figure.layout().panel;
    assert!(panel.y_downward);
    let (_, top) = panel.to_pixel(0.0, 0.0);
    let (_, bottom) = panel.to_pixel(0.0, 1000.0);
    assert!(top < bottom, "depth 0 must be above depth 1000");
    for (depth, value) in [(50.0, 3.0), (200.0, 2.0), (450.0, 1.0), (800.0, 0.0)] {
        let got = pixel_at(&figure, 15.0, depth);
        assert_eq!(
            got,
            reference(colorous::VIRIDIS, value / 3.0),
            "at {depth} m"
        );
    }
    // Below the last column's floor: grey.
    assert_eq!(pixel_at(&figure, 35.0, 800.0), MISSING_GREY);
    assert_eq!(
        pixel_at(&figure, 35.0, 200.0),
        reference(colorous::VIRIDIS, 2.0 / 3.0)
    );
}

#[test]
fn horizon_lines_are_drawn_at_their_depths() {
    let mut spec = spec();
    spec.lines = vec![SectionLine {
        label: "aragonite saturation horizon".into(),
        depths: vec![400.0, 400.0, 400.0, f64::NAN],
    }];
    let figure = render_section(&columns(), &spec).unwrap();
    let panel = figure.layout().panel;
    let (x, _) = panel.to_pixel(15.0, 0.0);
    let (_, y) = panel.to_pixel(15.0, 400.0);
    let column: Vec<u32> = (panel.area.top as u32 + 3..panel.area.bottom as u32 - 3)
        .filter(|&py| is_ink(figure.pixel(x as u32, py).unwrap()))
        .collect();
    assert!(!column.is_empty(), "no line in column 2");
    assert!(
        column.iter().all(|&py| (py as f64 - y).abs() < 4.0),
        "line rows {column:?}, expected about {y}"
    );
    // Where the line has no depth (last column), nothing is drawn.
    let (x_last, _) = panel.to_pixel(37.0, 0.0);
    let drawn = (panel.area.top as u32 + 3..panel.area.bottom as u32 - 3)
        .any(|py| is_ink(figure.pixel(x_last as u32, py).unwrap()));
    assert!(!drawn);
}

#[test]
fn terrain_following_layers_slope_between_columns() {
    // Two columns whose three layers divide 100 m and 300 m of water.
    let column = |x: f64, h: f64| SectionColumn {
        x_start: x,
        x_end: x + 10.0,
        interfaces: vec![0.0, h / 3.0, 2.0 * h / 3.0, h],
        values: vec![3.0, 1.5, 0.0],
    };
    let mut spec = spec();
    spec.max_depth = Some(300.0);
    let figure = render_section(&[column(0.0, 100.0), column(10.0, 300.0)], &spec).unwrap();
    // At the shared edge the bottom interface lies at the mean, 200 m: just above it is the
    // deepest layer's colour, just below it grey.
    let deepest = reference(colorous::VIRIDIS, 0.0);
    assert_eq!(pixel_at(&figure, 10.0, 190.0), deepest);
    assert_eq!(pixel_at(&figure, 10.0, 210.0), MISSING_GREY);
}

#[test]
fn bad_sections_are_refused_with_the_column_named() {
    let mut broken = columns();
    broken[2].interfaces.pop();
    let err = render_section(&broken, &spec()).unwrap_err();
    assert!(
        err.to_string().contains("section column 2 interfaces"),
        "{err}"
    );
}

fn runs() -> Vec<Series> {
    let years: Vec<f64> = (1990..=2100).map(f64::from).collect();
    let run = |label: &str, slope: f64, emergence| Series {
        label: label.into(),
        years: years.clone(),
        values: years.iter().map(|y| 8.1 - slope * (y - 1990.0)).collect(),
        emergence_year: emergence,
    };
    vec![
        run("pathway-moderate", 0.001, Some(2050.0)),
        run("pathway-steep", 0.003, Some(2030.0)),
    ]
}

fn series_spec() -> SeriesSpec {
    let mut spec = SeriesSpec::new(Captions::new(
        "time series · synthetic",
        "pH (total scale)",
        "1",
    ));
    spec.reference = Some((1995.0, 2014.0));
    spec.page = small_page();
    spec
}

#[test]
fn runs_take_distinct_palette_colours_and_the_window_is_shaded() {
    let runs = runs();
    let figure = render_series(&runs, &series_spec()).unwrap();
    let panel = figure.layout().panel;
    assert_eq!(panel.x_range, (1990.0, 2100.0));
    // Each run's line passes through its value in 2080 in its own colour.
    let colours = [
        reference(colorous::VIRIDIS, 0.0),
        reference(colorous::VIRIDIS, 0.75),
    ];
    for (run, colour) in runs.iter().zip(colours) {
        let (x, y) = panel.to_pixel(2080.0, run.values[90]);
        // Within a few pixels (the steep run is dashed, so a gap may fall on 2080 itself).
        let near = (-6..=6).any(|dx: i32| {
            (-3..=3).any(|dy: i32| {
                figure.pixel((x as i32 + dx) as u32, (y as i32 + dy) as u32) == Some(colour)
            })
        });
        assert!(near, "{} not drawn in {colour:?}", run.label);
    }
    // Inside the reference window, away from the lines: the band's grey, not white.
    let (x, y) = panel.to_pixel(2005.0, 7.85);
    let band = figure.pixel(x as u32, y as u32).unwrap();
    assert!(
        band[0] == band[1] && band[1] == band[2] && band[0] < 240,
        "{band:?}"
    );
    let (x, y) = panel.to_pixel(2060.0, 7.85);
    assert_eq!(figure.pixel(x as u32, y as u32).unwrap(), [255, 255, 255]);
}

#[test]
fn the_year_of_emergence_is_marked_and_labelled() {
    let figure = render_series(&runs(), &series_spec()).unwrap();
    let panel = figure.layout().panel;
    // The steep run's marker sits at (2030, 7.98) in the run's colour.
    let (x, y) = panel.to_pixel(2030.0, 8.1 - 0.003 * 40.0);
    assert_eq!(
        figure.pixel(x as u32, y as u32).unwrap(),
        reference(colorous::VIRIDIS, 0.75)
    );
    // Its year is written near the top of the panel, above the marker.
    let top = panel.area.top as u32;
    let label_ink = (top + 2..top + 40)
        .flat_map(|py| (x as u32 - 15..x as u32 + 15).map(move |px| (px, py)))
        .filter(|&(px, py)| is_ink(figure.pixel(px, py).unwrap()))
        .count();
    assert!(label_ink > 10, "no year label above the marker");
}

#[test]
fn series_of_unequal_length_are_refused() {
    let mut broken = runs();
    broken[1].values.pop();
    let err = render_series(&broken, &series_spec()).unwrap_err();
    assert!(
        err.to_string()
            .contains("time series 'pathway-steep' values"),
        "{err}"
    );
}
