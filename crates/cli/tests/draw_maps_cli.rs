//! The `draw` subcommand on outputs of `compute` made here from the bundled SYNTHETIC runs:
//! that maps take the palette, range, contour and level the file's variables call for, show a
//! known field at known pixels, use horizon depths the file has, that the PNG written is the
//! figure planned, and what the command refuses (naming the file, the variable and what was
//! expected).

mod common;

use acidscape_drawing::{LevelRequest, LineRequest, MapPlan, SectionPlan, WhenRequest};
use acidscape_figures::{ColourRange, Palette, MISSING_GREY};
use common::draw::*;
use common::{acidscape, compute, text};

#[test]
fn maps_of_a_compute_output_take_the_field_the_palette_and_the_contour_it_calls_for() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("century", "pathway-steep", dir.path());
    let known = dir.path().join("known.nc");
    std::fs::copy(&run, &known).unwrap();
    acidscape_gridio::prepare_hdf5();
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
fn maps_and_sections_use_the_horizon_depths_compute_wrote() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = compute("century", "pathway-moderate", dir.path());
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
    assert_eq!(horizons[1].1, "horizon_depth_calcite");
    assert!(!horizons[1].2);
    // The lines carry the file's depths of the step, column by column along the path,
    // which runs west to east along one row, away from the island.
    let cells = section.cells();
    assert!(cells
        .windows(2)
        .all(|w| w[1].1 > w[0].1 && w[1].0 == w[0].0));
    let columns_of_grid = read_all(&run, "lon").len();
    let (columns, lines) = section.data().unwrap();
    let mut found = 0;
    for (mineral, line) in ["aragonite", "calcite"].iter().zip(&lines) {
        let written = read_map(&run, &format!("horizon_depth_{mineral}"), 3);
        for (&(j, i), depth) in cells.iter().zip(&line.depths) {
            let want = written[j * columns_of_grid + i];
            assert!(
                *depth == want || (depth.is_nan() && want.is_nan()),
                "{mineral} {j} {i}"
            );
            found += usize::from(want.is_finite());
        }
    }
    assert!(found > 0);
    assert_eq!(columns.len(), cells.len());
    assert!(section.title().starts_with("moderate · Ω aragonite from"));
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
