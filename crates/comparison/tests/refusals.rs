//! What a comparison refuses, before anything is written, and what its messages name.

mod common;

use acidscape_comparison::ComparisonPlan;
use common::*;

/// A change to a valid request.
type Change = Box<dyn Fn(&mut acidscape_comparison::ComparisonRequest)>;

fn refused(request: &acidscape_comparison::ComparisonRequest) -> String {
    ComparisonPlan::new(request).unwrap_err().to_string()
}

fn simple(path: &std::path::Path, cols: usize, units: &str, time: Time) {
    let units = units.to_string();
    Synthetic::new(200.0, 30.0, cols, 2, 2, time)
        .with(Field {
            name: "ph".into(),
            units,
            has_levels: true,
            values: Box::new(|_, _, _, _| 8.0),
        })
        .write(path);
}

#[test]
fn runs_that_differ_are_refused_naming_both_files() {
    let dir = tempfile::tempdir().unwrap();
    let (a, wide, other_units) = (
        dir.path().join("a.nc"),
        dir.path().join("wide.nc"),
        dir.path().join("units.nc"),
    );
    simple(&a, 3, "1", Time::annual(2015, 5));
    simple(&wide, 4, "1", Time::annual(2015, 5));
    simple(&other_units, 3, "0.001", Time::annual(2015, 5));
    let message = refused(&request(
        dir.path(),
        &[("a", &a), ("b", &wide)],
        &["w=2015-2019"],
    ));
    assert!(
        message.contains("a.nc") && message.contains("wide.nc") && message.contains("columns"),
        "{message}"
    );
    let message = refused(&request(
        dir.path(),
        &[("a", &a), ("b", &other_units)],
        &["w=2015-2019"],
    ));
    assert!(
        message.contains("a.nc")
            && message.contains("units.nc")
            && message.contains("'ph'")
            && message.contains("0.001"),
        "{message}"
    );
    assert!(
        !dir.path().join("compare.nc").exists() && !dir.path().join(".compare.nc.partial").exists()
    );
}

#[test]
fn windows_must_lie_in_whole_years_of_every_run() {
    let dir = tempfile::tempdir().unwrap();
    let (a, short) = (dir.path().join("a.nc"), dir.path().join("short.nc"));
    simple(&a, 3, "1", Time::annual(2015, 5));
    simple(&short, 3, "1", Time::annual(2015, 3));
    let message = refused(&request(
        dir.path(),
        &[("a", &a), ("b", &short)],
        &["w=2016-2019"],
    ));
    assert!(
        message.contains("short.nc") && message.contains("2018, 2019") && message.contains("'w'"),
        "{message}"
    );
    for bad in ["w=2019-2016", "w", "2w=2015"] {
        assert!(
            refused(&request(dir.path(), &[("a", &a)], &[bad])).contains("--window"),
            "{bad}"
        );
    }
    let mut req = request(dir.path(), &[("a", &a)], &["w=2015-2016"]);
    req.reference_window = Some("other".into());
    assert!(refused(&req).contains("--reference-window"));
}

#[test]
fn outputs_never_replace_inputs_or_existing_files_unasked() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.nc");
    simple(&a, 3, "1", Time::annual(2015, 2));
    let mut req = request(dir.path(), &[("a", &a)], &["w=2015-2016"]);
    req.output = a.clone();
    req.overwrite = true;
    assert!(refused(&req).contains("is the input of run 'a'"));
    let mut req = request(dir.path(), &[("a", &a)], &["w=2015-2016"]);
    req.table = Some(a.clone());
    req.overwrite = true;
    assert!(refused(&req).contains("--table"));
    let req = request(dir.path(), &[("a", &a)], &["w=2015-2016"]);
    compare(&req);
    assert!(refused(&req).contains("--overwrite"));
    let mut again = req.clone();
    again.overwrite = true;
    compare(&again);
    let names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert!(names.iter().all(|n| !n.ends_with(".partial")), "{names:?}");
}

#[test]
fn options_that_say_nothing_usable_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.nc");
    simple(&a, 3, "1", Time::annual(2015, 2));
    let foreign = dir.path().join("foreign.nc");
    netcdf::create(&foreign).unwrap();
    assert!(refused(&request(dir.path(), &[("a", &foreign)], &["w=2015"])).contains("foreign.nc"));
    let cases: Vec<(&str, Change)> = vec![
        (
            "two runs are labelled",
            Box::new(|r| r.runs.push(r.runs[0].clone())),
        ),
        (
            "label must start",
            Box::new(|r| r.runs[0] = r.runs[0].replace("a=", "my-run=")),
        ),
        (
            "--fields",
            Box::new(|r| r.fields = Some("quality_flag".into())),
        ),
        ("co3", Box::new(|r| r.fields = Some("co3".into()))),
        (
            "--statistics",
            Box::new(|r| r.statistics = Some("mean,p200".into())),
        ),
        (
            "--layers",
            Box::new(|r| r.layers = Some("surface,deep".into())),
        ),
        (
            "--emergence",
            Box::new(|r| r.emergence = Some("ph:3 sigma".into())),
        ),
        (
            "nowhere.toml",
            Box::new(|r| r.regions = Some("nowhere.toml".into())),
        ),
    ];
    for (expected, change) in cases {
        let mut req = request(dir.path(), &[("a", &a)], &["w=2015"]);
        change(&mut req);
        let message = refused(&req);
        assert!(message.contains(expected), "{expected}: {message}");
    }
}

#[test]
fn a_window_over_part_of_a_year_is_refused() {
    // Monthly steps of 2015 and January–June 2016 only: 2016 is not a whole year.
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.nc");
    let time = Time {
        first_year: 2015,
        years: 2,
        steps_per_year: 12,
        calendar: "360_day",
    };
    simple(&a, 2, "1", time);
    // Cut the second year in half by rewriting with 18 steps.
    let path = dir.path().join("half.nc");
    {
        let src = netcdf::open(&a).unwrap();
        let mut f = netcdf::create(&path).unwrap();
        f.add_dimension("time", 18).unwrap();
        f.add_dimension("bnds", 2).unwrap();
        f.add_dimension("lev", 2).unwrap();
        f.add_dimension("lat", 2).unwrap();
        f.add_dimension("lon", 2).unwrap();
        for name in [
            "time",
            "time_bnds",
            "lev",
            "lev_bnds",
            "lat",
            "lat_bnds",
            "lon",
            "lon_bnds",
            "ph",
        ] {
            let v = src.variable(name).unwrap();
            let dims: Vec<String> = v.dimensions().iter().map(|d| d.name()).collect();
            let refs: Vec<&str> = dims.iter().map(String::as_str).collect();
            let values: Vec<f64> = v.get_values::<f64, _>(..).unwrap();
            let keep = if dims[0] == "time" {
                values.len() / 24 * 18
            } else {
                values.len()
            };
            let mut out = f.add_variable::<f64>(name, &refs).unwrap();
            for a in v.attributes() {
                if a.name() != "_FillValue" {
                    out.put_attribute(a.name(), a.value().unwrap()).unwrap();
                }
            }
            out.put_values(&values[..keep], ..).unwrap();
        }
        f.add_attribute("acidscape_version", "0.1.0").unwrap();
    }
    let message = refused(&request(dir.path(), &[("a", &path)], &["w=2015-2016"]));
    assert!(
        message.contains("half.nc") && message.contains("180.0 of the 360 days of 2016"),
        "{message}"
    );
    // The whole year alone is fine.
    ComparisonPlan::new(&request(dir.path(), &[("a", &path)], &["w=2015"])).unwrap();
}
