//! The `draw` subcommand on a comparison of the bundled SYNTHETIC century pathways and on a
//! terrain-following run: difference maps on a diverging palette centred on zero, sections and
//! regional series that carry exactly the data the netCDF library and a CSV reader read, and
//! sections that follow each column's own layers.

mod common;

use acidscape_drawing::{
    LevelRequest, LineRequest, MapPlan, SectionPlan, SeriesPlan, SeriesRequest,
};
use acidscape_figures::Palette;
use common::draw::*;
use common::{acidscape, compute, text};
use std::path::Path;

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

    // A section along grid column 20 shows that column's late-window values and the
    // window-mean horizon depths the comparison wrote.
    let along_column_20 = |file: &Path, out: &str| {
        SectionPlan::new(&section_request(
            file,
            "omega_aragonite_steep",
            window("late"),
            LineRequest {
                column: Some(20),
                ..LineRequest::default()
            },
            dir.path().join(out),
        ))
        .unwrap()
    };
    let section = along_column_20(&pathways, "c.png");
    let horizons = section.horizons();
    assert_eq!(horizons[0].1, "horizon_depth_aragonite_steep");
    assert!(!horizons[0].2, "read from the file, not computed");
    let written = read_map(&pathways, "horizon_depth_aragonite_steep", 1);
    let (columns, lines) = section.data().unwrap();
    assert_eq!(columns.len(), 22);
    let mut found = 0;
    for (j, depth) in lines[0].depths.iter().enumerate() {
        let want = written[j * 30 + 20];
        assert!(
            *depth == want || (depth.is_nan() && want.is_nan()),
            "column {j}"
        );
        found += usize::from(want.is_finite());
    }
    assert!(found > 10);
    let values_of_column_20 = |file: &Path| {
        let centres = read_all(file, "lev");
        let bounds = read_all(file, "lev_bnds");
        let levels: Vec<Vec<f64>> = (0..centres.len())
            .map(|k| read_level(file, "omega_aragonite_steep", 1, k))
            .collect();
        (centres, bounds, levels)
    };
    let (_, bounds, levels) = values_of_column_20(&pathways);
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
    }

    // Without horizon depths in the comparison, the section finds where the window-mean
    // profile crosses 1 (linear in depth on ln Ω between the level centres).
    let omega_only = dir.path().join("omega-only.nc");
    let result = acidscape(&[
        "compare",
        &s,
        "--window",
        "reference=2015-2034,late=2081-2100",
        "--fields",
        "omega_aragonite,omega_calcite",
        "-o",
        omega_only.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    let section = along_column_20(&omega_only, "c2.png");
    assert_eq!(section.horizons()[0].1, "omega_aragonite_steep");
    assert!(
        section.horizons()[0].2,
        "computed from the window-mean profile"
    );
    let (centres, _, levels) = values_of_column_20(&omega_only);
    let (_, lines) = section.data().unwrap();
    let mut crossings = 0;
    for j in 0..22 {
        let expected: Vec<f64> = levels.iter().map(|l| l[j * 30 + 20]).collect();
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
