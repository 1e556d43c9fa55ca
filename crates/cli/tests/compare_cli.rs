//! The `compare` subcommand as a user runs it: `compute` on both pathways of the bundled
//! SYNTHETIC century run (annual means 2015-2100), then `compare` over two windows with the
//! sample region file, and what it refuses.

mod common;

use acidscape_gridio::IndicatorFile;
use common::{acidscape, compute, text};

#[test]
fn compares_the_century_pathways_by_region() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let moderate = compute("century", "pathway-moderate", dir.path());
    let steep = compute("century", "pathway-steep", dir.path());
    let out = dir.path().join("compare.nc");
    let (m, s) = (
        format!("moderate={}", moderate.display()),
        format!("steep={}", steep.display()),
    );
    let args = [
        "compare",
        &m,
        &s,
        "--window",
        "reference=2015-2034",
        "--window",
        "late=2081-2100",
        "--regions",
        "sample-grids/varnholm-regions.toml",
        "--emergence",
        "omega_aragonite<2.5",
        "--statistics",
        "mean,max",
        "-o",
        out.to_str().unwrap(),
    ];
    let result = acidscape(&args);
    let (stdout, stderr) = text(&result);
    assert!(result.status.success(), "{stderr}");
    for region in [
        "northern shelf",
        "Aske river plume coast",
        "Skerra Island shelf",
        "open basin",
        "whole gulf",
    ] {
        assert!(
            stdout.contains(region),
            "{region} missing from the summary:\n{stdout}"
        );
    }
    assert!(
        stdout.contains("year of emergence") && stdout.contains("Where to look"),
        "{stdout}"
    );

    // The comparison's output reads back with the reader of compute outputs: a climatological
    // time axis of two windows, the runs' grid, every variable documented.
    let file = IndicatorFile::open(&out).unwrap();
    let time = file.time().unwrap();
    assert!(time.climatological && time.steps() == 2);
    assert_eq!(file.grid().columns(), 30 * 22);
    let change = file.variable("omega_aragonite_steep_change").unwrap();
    assert!(change
        .long_name
        .as_deref()
        .unwrap()
        .contains("since the reference window"));
    let late = file
        .read_level("omega_aragonite_steep_change", 1, 0)
        .unwrap();
    let wet: Vec<f64> = late.into_iter().filter(|v| !v.is_nan()).collect();
    assert!(
        !wet.is_empty() && wet.iter().all(|&c| c < 0.0),
        "surface Ω falls everywhere in the steep pathway"
    );
    assert!(file
        .variable("emergence_year_moderate")
        .unwrap()
        .long_name
        .is_some());

    // The CSV: one row per run, region, layer, period and quantity, for every region.
    let csv = std::fs::read_to_string(out.with_extension("csv")).unwrap();
    let header = csv.lines().next().unwrap();
    assert_eq!(
        header,
        "run,region,layer,period,window,time,year,quantity,statistic,threshold,value,units,note"
    );
    assert!(csv.lines().any(|l| l.starts_with(
        "steep,Aske river plume coast,200-1000 m,window,late,,,omega_aragonite,fraction_below,1,"
    )));
    assert!(csv.lines().any(
        |l| l.starts_with("moderate,open basin,surface,run,,,") && l.contains("emergence_year")
    ));

    // A run compared with itself: exactly zero, everywhere it has values.
    let same = dir.path().join("same.nc");
    let a = format!("again={}", moderate.display());
    let result = acidscape(&[
        "compare",
        &m,
        &a,
        "--window",
        "w=2090-2100",
        "--fields",
        "ph",
        "-o",
        same.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    let zero = IndicatorFile::open(&same)
        .unwrap()
        .read_step("ph_again_minus_moderate", 0)
        .unwrap();
    assert!(zero
        .iter()
        .filter(|v| !v.is_nan())
        .all(|&v| v.to_bits() == 0));
}

#[test]
fn runs_on_other_grids_are_refused_before_anything_is_written() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let century = compute("century", "pathway-moderate", dir.path());
    let monthly = compute("cmip-style", "pathway-moderate", dir.path());
    let out = dir.path().join("never.nc");
    let (a, b) = (
        format!("a={}", century.display()),
        format!("b={}", monthly.display()),
    );
    let result = acidscape(&[
        "compare",
        &a,
        &b,
        "--window",
        "w=2015",
        "-o",
        out.to_str().unwrap(),
    ]);
    let (_, stderr) = text(&result);
    assert_eq!(result.status.code(), Some(1));
    assert!(
        stderr.contains("century-pathway-moderate.nc")
            && stderr.contains("cmip-style-pathway-moderate.nc"),
        "{stderr}"
    );
    assert!(!out.exists() && !dir.path().join(".never.nc.partial").exists());
    let help = text(&acidscape(&["compare", "--help"])).0;
    assert!(
        help.contains("Comparison cautions") && help.contains("--emergence"),
        "{help}"
    );
}

#[test]
fn uncertainty_fields_are_drawn_but_not_compared_as_indicators() {
    let _serial = common::one_at_a_time();
    let dir = tempfile::tempdir().unwrap();
    let run = dir.path().join("moderate.nc");
    let result = acidscape(&[
        "compute",
        "sample-grids/century/pathway-moderate/*.nc",
        "--indicators",
        "ph,omega-aragonite",
        "--uncertainty",
        "dic=2",
        "--uncertainty-breakdown",
        "-o",
        run.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    let written = IndicatorFile::open(&run).unwrap();
    assert!(written
        .variable("horizon_depth_aragonite_uncertainty")
        .is_ok());
    assert!(written.variable("ph_uncertainty_from_dic").is_ok());

    // Every field of the run by default: the indicators and horizon depths, never their
    // uncertainties (no window mean of an uncertainty, no horizon rule applied to one).
    let out = dir.path().join("compare.nc");
    let result = acidscape(&[
        "compare",
        &format!("moderate={}", run.display()),
        "--window",
        "reference=2015-2034,late=2081-2100",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    let compared = IndicatorFile::open(&out).unwrap();
    let names: Vec<&str> = compared
        .variables()
        .iter()
        .map(|v| v.name.as_str())
        .collect();
    assert!(names.contains(&"ph_moderate"), "{names:?}");
    assert!(
        names.contains(&"horizon_depth_aragonite_moderate"),
        "{names:?}"
    );
    assert!(
        !names.iter().any(|n| n.contains("uncertainty")),
        "{names:?}"
    );

    // An uncertainty map can still be drawn from the compute output.
    let png = dir.path().join("u.png");
    let result = acidscape(&[
        "draw",
        "map",
        run.to_str().unwrap(),
        "ph_uncertainty",
        "--year",
        "2050",
        "--level",
        "surface",
        "--dpi",
        "50",
        "-o",
        png.to_str().unwrap(),
    ]);
    assert!(result.status.success(), "{}", text(&result).1);
    assert!(png.is_file());
}
