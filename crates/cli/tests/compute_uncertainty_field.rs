//! `compute --uncertainty-field` as a user runs it, on a copy of the bundled SYNTHETIC
//! cmip-style sample run, with the field written here (netcdf crate) on the run's own grid.
//! A field that holds one number everywhere must give what `--uncertainty` with that number
//! gives, bit for bit: one propagation (Orr, Epitalon, Dickson & Gattuso 2018, Marine
//! Chemistry 207) whatever the amounts come from.

mod common;

use common::{acidscape, copy_sample_run, one_at_a_time, text};
use std::path::{Path, PathBuf};

const DIC_FILE: &str = "dissic_pathway-moderate_201501-201506.nc";

/// Writes `dic_misfit` (µmol kg-1, `value` everywhere the run's DIC has a value at its first
/// step, missing elsewhere) on the grid of the copied run's DIC file.
fn write_misfit_map(run_dir: &Path, path: &Path, value: f32) {
    // Defining attributes probes for existing ones, which HDF5 reports on stderr.
    acidscape_gridio::prepare_hdf5();
    let source = netcdf::open(run_dir.join(DIC_FILE)).unwrap();
    let mut file = netcdf::create(path).unwrap();
    file.add_attribute("comment", "SYNTHETIC misfit map (invented values)")
        .unwrap();
    let dims = ["lev", "lat", "lon"];
    for name in dims {
        let coordinate = source.variable(name).unwrap();
        let values: Vec<f64> = coordinate.get_values(..).unwrap();
        file.add_dimension(name, values.len()).unwrap();
        let mut copy = file.add_variable::<f64>(name, &[name]).unwrap();
        for attribute in coordinate.attributes() {
            copy.put_attribute(attribute.name(), attribute.value().unwrap())
                .unwrap();
        }
        copy.put_values(&values, ..).unwrap();
    }
    let dic: Vec<f32> = (source.variable("dissic").unwrap())
        .get_values((0, .., .., ..))
        .unwrap();
    let fill = 1.0e20_f32;
    let misfit: Vec<f32> = (dic.iter())
        .map(|v| if *v == fill { fill } else { value })
        .collect();
    let mut variable = file.add_variable::<f32>("dic_misfit", &dims).unwrap();
    variable.set_fill_value(fill).unwrap();
    variable.put_attribute("units", "umol kg-1").unwrap();
    variable.put_values(&misfit, ..).unwrap();
}

fn bits(path: &Path, name: &str) -> Vec<u32> {
    let file = netcdf::open(path).unwrap();
    let values: Vec<f32> = file.variable(name).unwrap().get_values(..).unwrap();
    values.iter().map(|v| v.to_bits()).collect()
}

fn comment(path: &Path, name: &str) -> String {
    let file = netcdf::open(path).unwrap();
    match file.variable(name).unwrap().attribute_value("comment") {
        Some(Ok(netcdf::AttributeValue::Str(text))) => text,
        other => panic!("{name}:comment is {other:?}"),
    }
}

fn compute(run: &[PathBuf], output: &Path, options: &[&str]) -> (String, String, bool) {
    let mut args = vec!["compute".to_string()];
    args.extend(run.iter().map(|p| p.display().to_string()));
    args.extend(["-o".to_string(), output.display().to_string()]);
    args.extend(options.iter().map(|s| s.to_string()));
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let out = acidscape(&args);
    let (stdout, stderr) = text(&out);
    (stdout, stderr, out.status.success())
}

/// A copy of the sample run with a misfit map of DIC ± 2 µmol kg-1 beside it, and the option's
/// value naming it.
fn run_and_misfit_map() -> (tempfile::TempDir, Vec<PathBuf>, PathBuf, String) {
    let dir = tempfile::tempdir().unwrap();
    let run = copy_sample_run(dir.path());
    let map = dir.path().join("misfit.nc");
    write_misfit_map(dir.path(), &map, 2.0);
    let field = format!("dic={}:dic_misfit", map.display());
    (dir, run, map, field)
}

#[test]
fn a_constant_misfit_map_gives_what_the_number_gives() {
    let _alone = one_at_a_time();
    let (dir, run, _, field) = run_and_misfit_map();
    let indicators = ["--indicators", "ph,omega-aragonite"];

    let by_number = dir.path().join("number.nc");
    let mut options = vec!["--uncertainty", "dic=2"];
    options.extend(indicators);
    let (_, stderr, ok) = compute(&run, &by_number, &options);
    assert!(ok, "{stderr}");
    let by_field = dir.path().join("field.nc");
    let mut options = vec!["--uncertainty-field", &field];
    options.extend(indicators);
    let (stdout, stderr, ok) = compute(&run, &by_field, &options);
    assert!(ok, "{stderr}");

    for name in [
        "ph_uncertainty",
        "omega_aragonite_uncertainty",
        "horizon_depth_aragonite_uncertainty",
    ] {
        assert_eq!(bits(&by_number, name), bits(&by_field, name), "{name}");
    }
    let text = comment(&by_field, "ph_uncertainty");
    assert!(
        text.contains("dic per cell from variable 'dic_misfit' of") && text.contains("misfit.nc"),
        "{text}"
    );
    // Every wet cell has the field's value: none goes without an uncertainty.
    assert!(
        stdout.contains("no standard uncertainty (an uncertainty field missing there, or none could be propagated): 0"),
        "{stdout}"
    );
}

#[test]
fn the_field_options_are_explained_checked_and_counted() {
    let _alone = one_at_a_time();
    let (dir, run, map, field) = run_and_misfit_map();

    let help = acidscape(&["compute", "--help"]);
    let (help, _) = text(&help);
    assert!(
        help.contains("--uncertainty-field <ROLE=FILE:VARIABLE>"),
        "{help}"
    );

    // A number and a field for one input: refused before anything is written.
    let output = dir.path().join("both.nc");
    let both = ["--uncertainty", "dic=2", "--uncertainty-field", &field];
    let (_, stderr, ok) = compute(&run, &output, &both);
    assert!(!ok && stderr.contains("dic is given twice"), "{stderr}");
    assert!(!output.exists());

    // describe opens the field against the run and counts it in the memory estimate.
    let pattern = format!("{}/*pathway-moderate*.nc", dir.path().display());
    let out = acidscape(&["describe", &pattern, "--uncertainty-field", &field]);
    let (stdout, stderr) = text(&out);
    assert!(out.status.success(), "{stderr}");
    assert!(
        stdout.contains("Standard uncertainty of dic from variable 'dic_misfit'"),
        "{stdout}"
    );
    assert!(
        stdout.contains("1 input uncertainty field(s) read"),
        "{stdout}"
    );
    let missing = format!("dic={}:no_such_variable", map.display());
    let out = acidscape(&["describe", &pattern, "--uncertainty-field", &missing]);
    let (_, stderr) = text(&out);
    assert!(
        !out.status.success()
            && stderr.contains("no_such_variable")
            && stderr.contains("misfit.nc"),
        "{stderr}"
    );
}
