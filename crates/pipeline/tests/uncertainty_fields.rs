//! Inputs' standard uncertainties read per cell from NetCDF fields (`UncertaintyRequest::fields`)
//! on a small SYNTHETIC run (tests/common), against the same numbers given as constants: a
//! field goes through the one propagation of Orr, Epitalon, Dickson & Gattuso 2018 (Marine
//! Chemistry 207), so a constant field must give the constant's output bit for bit.

mod common;

use acidscape_chem::{ConstantUncertainties, Source};
use acidscape_pipeline::{
    run_job, JobOptions, JobSummary, NoProgress, PipelineError, UncertaintyAmount,
    UncertaintyFieldSource, UncertaintyRequest, VALUE_FILL,
};
use common::*;
use std::path::{Path, PathBuf};

const STEPS: usize = 2;

/// The uncertainty fields of [`every_indicator`] that a comparison checks.
const UNCERTAINTIES: [&str; 5] = [
    "ph_uncertainty",
    "co3_uncertainty",
    "pco2_uncertainty",
    "omega_aragonite_uncertainty",
    "revelle_factor_uncertainty",
];

/// How a test field is laid out.
struct Layout {
    /// One value per time step (a leading `time` dimension) or the same at every step.
    with_time: bool,
    /// Latitudes written (the run's are -30, -10, 10, 30).
    lat: [f64; ROWS],
    /// Leave out the levels: a (lat, lon) map.
    without_levels: bool,
}

const RUN_GRID: Layout = Layout {
    with_time: false,
    lat: [-30.0, -10.0, 10.0, 30.0],
    without_levels: false,
};

/// The run's grid with its time steps.
const WITH_TIME: Layout = Layout {
    with_time: true,
    ..RUN_GRID
};

/// Writes `variable` with `units` at `path` (SYNTHETIC values from `value(step, cell)`, cells
/// in (level, row, col) order, NaN written as the fill value).
fn write_field(
    path: &Path,
    variable: &str,
    units: &str,
    layout: &Layout,
    value: impl Fn(usize, usize) -> f64,
) {
    let mut file = netcdf::create(path).unwrap();
    file.add_attribute("comment", "SYNTHETIC test data (invented values)")
        .unwrap();
    let mut dims = Vec::new();
    let steps = if layout.with_time { STEPS } else { 1 };
    if layout.with_time {
        file.add_unlimited_dimension("time").unwrap();
        let mut t = file.add_variable::<f64>("time", &["time"]).unwrap();
        t.put_attribute("standard_name", "time").unwrap();
        t.put_attribute("units", "days since 2015-01-01 00:00:00")
            .unwrap();
        t.put_attribute("calendar", "360_day").unwrap();
        let times: Vec<f64> = (0..STEPS).map(|s| 15.5 + 30.0 * s as f64).collect();
        t.put_values(&times, 0..STEPS).unwrap();
        dims.push("time");
    }
    file.add_dimension("bnds", 2).unwrap();
    file.add_dimension("lat", ROWS).unwrap();
    file.add_dimension("lon", COLS).unwrap();
    if !layout.without_levels {
        file.add_dimension("lev", LEVELS).unwrap();
        let bounds = [[0.0, 10.0], [10.0, 200.0], [200.0, 2000.0], [10e3, 11e3]];
        write_depth_levels(&mut file, &DEPTHS, &bounds);
        dims.push("lev");
    }
    write_lat_lon(
        &mut file,
        &layout.lat,
        &[10.0, 30.0, 50.0, 70.0, 90.0],
        10.0,
    );
    dims.extend(["lat", "lon"]);
    let mut v = file.add_variable::<f32>(variable, &dims).unwrap();
    v.set_fill_value(FILL).unwrap();
    v.put_attribute("units", units).unwrap();
    let levels = if layout.without_levels { 1 } else { LEVELS };
    let cells = levels * ROWS * COLS;
    let values: Vec<f32> = (0..steps)
        .flat_map(|step| (0..cells).map(move |cell| (step, cell)))
        .map(|(step, cell)| match value(step, cell) {
            v if v.is_nan() => FILL,
            v => v as f32,
        })
        .collect();
    v.put_values(&values, ..).unwrap();
}

/// A request for `fields` and `inputs`, constants as Orr et al. 2018 recommend, with each
/// source's contribution.
fn request(
    inputs: Vec<(Source, UncertaintyAmount)>,
    fields: Vec<(Source, &Path, &str)>,
) -> UncertaintyRequest {
    UncertaintyRequest {
        inputs,
        fields: (fields.into_iter())
            .map(|(source, path, variable)| UncertaintyFieldSource {
                source,
                path: path.to_path_buf(),
                variable: variable.to_string(),
            })
            .collect(),
        constants: ConstantUncertainties::ORR_2018,
        breakdown: true,
    }
}

fn job(output: &Path, uncertainty: UncertaintyRequest) -> JobOptions {
    let mut options = options(output, every_indicator());
    options.uncertainty = Some(uncertainty);
    options
}

fn compute(
    run_files: &[PathBuf],
    output: &Path,
    uncertainty: UncertaintyRequest,
) -> Result<JobSummary, PipelineError> {
    run_job(
        &open_run(run_files),
        &job(output, uncertainty),
        &mut NoProgress,
    )
}

/// The combined uncertainties and the contribution of `source` (its key) to pH's.
fn assert_same_uncertainties(expected: &Path, actual: &Path, source: &str) {
    let contribution = format!("ph_uncertainty_from_{source}");
    for name in UNCERTAINTIES.into_iter().chain([contribution.as_str()]) {
        let (a, b) = (read_f32(expected, name), read_f32(actual, name));
        let bits = |v: &[f32]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        assert_eq!(bits(&a), bits(&b), "{name} differs");
    }
}

fn comment(path: &Path, variable: &str) -> String {
    let file = netcdf::open(path).unwrap();
    let var = file.variable(variable).unwrap();
    match var.attribute_value("comment") {
        Some(Ok(netcdf::AttributeValue::Str(text))) => text,
        other => panic!("{variable}:comment is {other:?}"),
    }
}

#[test]
fn a_constant_field_gives_the_constant_bit_for_bit() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let static_field = dir.path().join("dic_misfit.nc");
    write_field(
        &static_field,
        "dic_misfit",
        "umol kg-1",
        &RUN_GRID,
        |_, _| 3.0,
    );
    let stepped = dir.path().join("dic_misfit_steps.nc");
    write_field(&stepped, "dic_misfit", "umol kg-1", &WITH_TIME, |_, _| 3.0);
    let dic = |u| vec![(Source::Dic, UncertaintyAmount::Absolute(u))];

    let number = dir.path().join("number.nc");
    compute(&run, &number, request(dic(3.0), vec![])).unwrap();
    for field in [&static_field, &stepped] {
        let out = dir.path().join("field.nc");
        let _ = std::fs::remove_file(&out);
        let from_field = request(vec![], vec![(Source::Dic, field, "dic_misfit")]);
        let summary = compute(&run, &out, from_field).unwrap();
        assert_same_uncertainties(&number, &out, "dic");
        assert_eq!(summary.counts.without_uncertainty, 0);
        // The source is named where users read how the uncertainty was obtained.
        let text = comment(&out, "ph_uncertainty");
        let named = format!(
            "dic per cell from variable 'dic_misfit' of {}",
            field.display()
        );
        assert!(text.contains(&named), "{text}");
    }

    // A relative field in % reads as `5%` does.
    let percent = dir.path().join("percent.nc");
    write_field(&percent, "phosphate_misfit", "%", &RUN_GRID, |_, _| 5.0);
    let (by_number, by_field) = (
        dir.path().join("p_number.nc"),
        dir.path().join("p_field.nc"),
    );
    let relative = vec![(Source::Phosphate, UncertaintyAmount::Relative(5.0 / 100.0))];
    compute(&run, &by_number, request(relative, vec![])).unwrap();
    let field = vec![(Source::Phosphate, percent.as_path(), "phosphate_misfit")];
    compute(&run, &by_field, request(vec![], field)).unwrap();
    assert_same_uncertainties(&by_number, &by_field, "phosphate");
}

#[test]
fn a_field_with_time_steps_gives_each_step_its_own_values() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let field = dir.path().join("by_step.nc");
    let per_step = [2.0, 4.5];
    write_field(&field, "u", "umol kg-1", &WITH_TIME, |step, _| {
        per_step[step]
    });
    let out = dir.path().join("field.nc");
    compute(
        &run,
        &out,
        request(vec![], vec![(Source::Dic, &field, "u")]),
    )
    .unwrap();
    let cells = LEVELS * ROWS * COLS;
    for (step, u) in per_step.into_iter().enumerate() {
        let number = dir.path().join(format!("number{step}.nc"));
        let dic = vec![(Source::Dic, UncertaintyAmount::Absolute(u))];
        compute(&run, &number, request(dic, vec![])).unwrap();
        for name in UNCERTAINTIES {
            let (a, b) = (read_f32(&number, name), read_f32(&out, name));
            let this_step = step * cells..(step + 1) * cells;
            assert_eq!(a[this_step.clone()], b[this_step], "{name} at step {step}");
        }
    }
}

// A difference of 1 K is a difference of 1 °C (SI brochure, 9th edition, section 2.3.1): no
// 273.15 offset applies to an uncertainty of temperature.
#[test]
fn a_temperature_field_in_kelvin_is_the_same_number_in_degrees_celsius() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let number = dir.path().join("number.nc");
    let temperature = vec![(Source::Temperature, UncertaintyAmount::Absolute(0.25))];
    compute(&run, &number, request(temperature, vec![])).unwrap();
    for units in ["K", "degC"] {
        let field = dir.path().join(format!("t_{units}.nc"));
        write_field(&field, "t_misfit", units, &RUN_GRID, |_, _| 0.25);
        let out = dir.path().join(format!("field_{units}.nc"));
        let from_field = vec![(Source::Temperature, field.as_path(), "t_misfit")];
        compute(&run, &out, request(vec![], from_field)).unwrap();
        for name in ["ph_uncertainty", "ph_uncertainty_from_temperature"] {
            let (a, b) = (read_f32(&number, name), read_f32(&out, name));
            assert_eq!(a, b, "{name} in {units}");
        }
    }
}

// A per-volume field is divided by each cell's density, as the run's own per-volume DIC is
// (in-situ density from TEOS-10, IOC, SCOR & IAPSO 2010): 2 µmol kg-1 written as
// 2e-6 × ρ mol m-3 gives the same uncertainties within float precision.
#[test]
fn a_field_per_volume_equals_the_field_per_mass() {
    let dir = tempfile::tempdir().unwrap();
    let run_files = write_cmip_style_run(dir.path(), STEPS, 1);
    let run = open_run(&run_files);
    let density = run.read_slab(0, 0..ROWS).unwrap().density_kg_m3;
    let per_mass = dir.path().join("per_mass.nc");
    write_field(&per_mass, "dic_misfit", "umol kg-1", &RUN_GRID, |_, _| 2.0);
    let per_volume = dir.path().join("per_volume.nc");
    let in_mol_m3 = |_, cell: usize| 2.0e-6 * density[cell];
    write_field(&per_volume, "dic_misfit", "mol m-3", &RUN_GRID, in_mol_m3);
    let (a, b) = (dir.path().join("a.nc"), dir.path().join("b.nc"));
    compute(
        &run_files,
        &a,
        request(vec![], vec![(Source::Dic, &per_mass, "dic_misfit")]),
    )
    .unwrap();
    let per_volume = vec![(Source::Dic, per_volume.as_path(), "dic_misfit")];
    compute(&run_files, &b, request(vec![], per_volume)).unwrap();
    let mut compared = 0;
    for name in ["ph_uncertainty_from_dic", "co3_uncertainty_from_dic"] {
        let (a, b) = (read_f32(&a, name), read_f32(&b, name));
        // The field's density is the first step's (the run changes a little from step to step).
        for (x, y) in a.iter().zip(&b).take(LEVELS * ROWS * COLS) {
            assert_eq!(*x == VALUE_FILL, *y == VALUE_FILL, "{name}");
            if *x != VALUE_FILL {
                // f32 storage of the field (2^-24 relative) and of the output.
                assert!((x - y).abs() <= 4e-7 * x.abs(), "{name}: {x} and {y}");
                compared += 1;
            }
        }
    }
    assert!(compared > 40, "only {compared} cells compared");
}

#[test]
fn a_hole_in_the_field_leaves_exactly_that_cell_without_uncertainty() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let hole = index(1, 1, 3);
    let field = dir.path().join("holed.nc");
    let value = |_, cell| if cell == hole { f64::NAN } else { 2.0 };
    write_field(&field, "alk_misfit", "umol kg-1", &RUN_GRID, value);
    let (whole, holed) = (dir.path().join("whole.nc"), dir.path().join("holed_out.nc"));
    let number = vec![(Source::Alkalinity, UncertaintyAmount::Absolute(2.0))];
    compute(&run, &whole, request(number, vec![])).unwrap();
    let from_field = vec![(Source::Alkalinity, field.as_path(), "alk_misfit")];
    let summary = compute(&run, &holed, request(vec![], from_field)).unwrap();
    // Counted once per time step.
    assert_eq!(summary.counts.without_uncertainty, STEPS as u64);
    let cells = LEVELS * ROWS * COLS;
    for name in ["ph_uncertainty", "omega_aragonite_uncertainty", "ph"] {
        let (a, b) = (read_f32(&whole, name), read_f32(&holed, name));
        for (k, (x, y)) in a.iter().zip(&b).enumerate() {
            let at_hole = k % cells == hole;
            if at_hole && name != "ph" {
                assert!(*x != VALUE_FILL && *y == VALUE_FILL, "{name} at the hole");
            } else {
                assert_eq!(x.to_bits(), y.to_bits(), "{name} at {k}");
            }
        }
    }
    let flags = (
        read_i16(&whole, "quality_flag"),
        read_i16(&holed, "quality_flag"),
    );
    assert_eq!(flags.0, flags.1, "the hole changes no flag");
}

/// The message of a refused job, which must have written nothing.
fn refusal(run: &[PathBuf], dir: &Path, field: &Path, variable: &str, source: Source) -> String {
    let output = dir.join("refused.nc");
    let from_field = request(vec![], vec![(source, field, variable)]);
    let err = compute(run, &output, from_field).unwrap_err().to_string();
    assert!(!output.exists(), "{err}");
    assert!(!acidscape_pipeline::partial_path(&output).exists(), "{err}");
    err
}

#[test]
fn fields_that_do_not_fit_the_run_are_refused_by_name() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let map = Layout {
        without_levels: true,
        ..RUN_GRID
    };
    let shifted = Layout {
        lat: [-31.0, -11.0, 9.0, 29.0],
        ..RUN_GRID
    };
    let negative_at = index(2, 3, 4);
    let negative = |_, cell| if cell == negative_at { -1.5 } else { 2.0 };
    let path = |name: &str| dir.path().join(name);
    let two = |_, _| 2.0;
    write_field(&path("map.nc"), "u", "umol kg-1", &map, two);
    write_field(&path("shifted.nc"), "u", "umol kg-1", &shifted, two);
    write_field(&path("ok.nc"), "u", "umol kg-1", &RUN_GRID, two);
    write_field(&path("furlongs.nc"), "u", "furlongs", &RUN_GRID, two);
    write_field(&path("percent.nc"), "u", "%", &RUN_GRID, two);
    write_field(&path("negative.nc"), "u", "umol kg-1", &RUN_GRID, negative);
    // (file, the variable asked for, the input, what the message says besides the file)
    let cases: [(&str, &str, Source, &[&str]); 7] = [
        (
            "map.nc",
            "u",
            Source::Dic,
            &["'u'", "4 levels", "every level"],
        ),
        (
            "shifted.nc",
            "u",
            Source::Dic,
            &["'lat'", "coordinate values differ"],
        ),
        ("ok.nc", "v", Source::Dic, &["'v'", "no such variable"]),
        ("absent.nc", "u", Source::Dic, &["not found"]),
        (
            "furlongs.nc",
            "u",
            Source::Dic,
            &["\"furlongs\"", "concentration"],
        ),
        (
            "percent.nc",
            "u",
            Source::Temperature,
            &["relative uncertainty of temperature"],
        ),
        (
            "negative.nc",
            "u",
            Source::Dic,
            &["level 3, row 4, column 5", "-1.5"],
        ),
    ];
    for (name, variable, source, expected) in cases {
        let err = refusal(&run, dir.path(), &path(name), variable, source);
        for text in expected.iter().chain([&name]) {
            assert!(err.contains(text), "{name}: '{text}' not in: {err}");
        }
    }
    // A number and a field for the same input.
    let both = request(
        vec![(Source::Dic, UncertaintyAmount::Absolute(2.0))],
        vec![(Source::Dic, &path("ok.nc"), "u")],
    );
    let err = compute(&run, &path("both.nc"), both).unwrap_err();
    assert!(err.to_string().contains("dic is given twice"), "{err}");
}

#[test]
fn a_field_with_other_time_steps_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS + 1, 1);
    let field = dir.path().join("steps.nc");
    write_field(&field, "u", "umol kg-1", &WITH_TIME, |_, _| 2.0);
    let err = refusal(&run, dir.path(), &field, "u", Source::Dic);
    assert!(
        err.contains("time=2") && err.contains("3 time step(s)"),
        "{err}"
    );
}

#[test]
fn a_resume_with_another_field_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let run = write_cmip_style_run(dir.path(), STEPS, 1);
    let (first, second) = (dir.path().join("first.nc"), dir.path().join("second.nc"));
    write_field(&first, "u", "umol kg-1", &RUN_GRID, |_, _| 2.0);
    write_field(&second, "u", "umol kg-1", &RUN_GRID, |_, _| 2.0);
    let output = dir.path().join("out.nc");
    let opened = open_run(&run);
    let mut options = job(&output, request(vec![], vec![(Source::Dic, &first, "u")]));
    options.stop_after_steps = Some(1);
    run_job(&opened, &options, &mut NoProgress).unwrap_err();
    let mut resumed = job(&output, request(vec![], vec![(Source::Dic, &second, "u")]));
    resumed.resume = true;
    let err = run_job(&opened, &resumed, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(err.contains("differ from the interrupted run"), "{err}");
    assert!(err.contains("second.nc"), "{err}");
    // The same field with other values is refused by name (its content is recorded as the
    // run's files' is); put back, it resumes.
    let mut same = job(&output, request(vec![], vec![(Source::Dic, &first, "u")]));
    same.resume = true;
    let kept = dir.path().join("first.kept");
    std::fs::copy(&first, &kept).unwrap();
    std::fs::remove_file(&first).unwrap();
    write_field(&first, "u", "umol kg-1", &RUN_GRID, |_, _| 2.5);
    let err = run_job(&opened, &same, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("first.nc is not the file the interrupted run read"),
        "{err}"
    );
    std::fs::copy(&kept, &first).unwrap();
    run_job(&opened, &same, &mut NoProgress).unwrap();
}
