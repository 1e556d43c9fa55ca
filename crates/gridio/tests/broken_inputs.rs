//! Each broken input gives a specific error naming the file and the variable; none panics.

mod common;

use acidscape_gridio::Run;
use common::*;
use std::path::Path;
use tempfile::tempdir;

fn open_err(inputs: Vec<String>) -> String {
    match Run::open(&spec(inputs)) {
        Ok(_) => panic!("broken run opened"),
        Err(e) => e.to_string(),
    }
}

fn all(dir: &Path) -> Vec<String> {
    vec![format!("{}/*.nc", dir.display())]
}

#[test]
fn missing_required_variable_lists_what_was_found() {
    let dir = tempdir().unwrap();
    let times = noleap_months(2);
    for var in ["dissic", "thetao", "so"] {
        cmip_file(dir.path(), var, "a", 0..2, &times, "noleap");
    }
    let e = open_err(all(dir.path()));
    assert!(e.contains("no alkalinity variable"), "{e}");
    assert!(
        e.contains("talk") && e.contains("sea_water_alkalinity_expressed_as_mole_equivalent"),
        "{e}"
    );
    assert!(
        e.contains("dissic (dic)") && e.contains("so (salinity)"),
        "{e}"
    );
    assert!(e.contains("--variable alkalinity=NAME"), "{e}");
    assert!(e.contains("alkalinity = { name = \"NAME\""), "{e}");
}

#[test]
fn unknown_units_name_file_and_variable() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    vars.push(data_var(
        "talk",
        "alkalinity",
        "sea_water_alkalinity_expressed_as_mole_equivalent",
        "furlongs per fortnight",
        "tzyx",
        0..1,
        GRID,
    ));
    write_nc(&path, &dims(GRID, 1), &vars);
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("'talk'") && e.contains("furlongs per fortnight"),
        "{e}"
    );
}

#[test]
fn mismatched_grid_shape_names_file_and_variable() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let narrow = Grid { cols: 4, ..GRID };
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(narrow, &times, "days since 2015-01-01", "noleap");
    vars.push(cmip_var("talk", "tzyx", 0..1, narrow));
    write_nc(&path, &dims(narrow, 1), &vars);
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("'talk'") && e.contains("X (columns) length is 4"),
        "{e}"
    );
}

#[test]
fn mismatched_coordinate_values_are_refused() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    vars[2].values[0] += 0.5; // shifted latitude
    vars.push(cmip_var("talk", "tzyx", 0..1, GRID));
    write_nc(&path, &dims(GRID, 1), &vars);
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("'lat'") && e.contains("differ"),
        "{e}"
    );
}

#[test]
fn time_gap_between_files_names_both() {
    let dir = tempdir().unwrap();
    let times = noleap_months(6);
    for var in ["dissic", "talk", "thetao", "so"] {
        cmip_file(dir.path(), var, "a", 0..2, &times[0..2], "noleap");
        // Months 3 and 4 missing.
        cmip_file(dir.path(), var, "c", 4..6, &times[4..6], "noleap");
    }
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("time gap") && e.contains("dissic_a.nc") && e.contains("dissic_c.nc"),
        "{e}"
    );
}

#[test]
fn time_overlap_between_files_names_both() {
    let dir = tempdir().unwrap();
    let times = noleap_months(3);
    for var in ["dissic", "talk", "thetao", "so"] {
        cmip_file(dir.path(), var, "a", 0..2, &times[0..2], "noleap");
        cmip_file(dir.path(), var, "b", 1..3, &times[1..3], "noleap");
    }
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("time overlap") && e.contains("dissic_a.nc") && e.contains("dissic_b.nc"),
        "{e}"
    );
}

#[test]
fn different_time_axes_between_variables_are_refused() {
    let dir = tempdir().unwrap();
    let times = noleap_months(3);
    for var in ["dissic", "thetao", "so"] {
        cmip_file(dir.path(), var, "a", 0..3, &times, "noleap");
    }
    cmip_file(dir.path(), "talk", "a", 0..2, &times[..2], "noleap");
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("'talk'") && e.contains("time axis"),
        "{e}"
    );
}

#[test]
fn truncated_file_is_unreadable_not_a_panic() {
    let dir = tempdir().unwrap();
    let files = cmip_run(dir.path(), 2, "noleap");
    let victim = &files[0];
    let bytes = std::fs::read(victim).unwrap();
    std::fs::write(victim, &bytes[..bytes.len() / 2]).unwrap();
    let e = open_err(all(dir.path()));
    assert!(
        e.contains(&victim.display().to_string()) && e.contains("truncated"),
        "{e}"
    );
}

#[test]
fn not_netcdf_at_all() {
    let dir = tempdir().unwrap();
    let path = dir.path().join("notes.nc");
    std::fs::write(&path, "this is text").unwrap();
    let e = open_err(vec![path.display().to_string()]);
    assert!(
        e.contains("notes.nc") && e.contains("cannot be opened"),
        "{e}"
    );
}

#[test]
fn non_monotonic_depth_is_refused() {
    let dir = tempdir().unwrap();
    let times = noleap_months(1);
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    vars[1].values = vec![5.0, 1000.0, 100.0];
    vars.extend(required_vars("tzyx", 0..1, GRID));
    let path = dir.path().join("run.nc");
    write_nc(&path, &dims(GRID, 1), &vars);
    let e = open_err(vec![path.display().to_string()]);
    assert!(
        e.contains("run.nc") && e.contains("'lev'") && e.contains("monotonic"),
        "{e}"
    );
}

#[test]
fn file_not_found_and_empty_glob() {
    let dir = tempdir().unwrap();
    let missing = dir.path().join("nothing_here.nc");
    let e = open_err(vec![missing.display().to_string()]);
    assert!(
        e.contains("nothing_here.nc") && e.contains("not found"),
        "{e}"
    );
    let e = open_err(vec![format!("{}/*.nc", dir.path().display())]);
    assert!(e.contains("matched no file"), "{e}");
}

#[test]
fn missing_units_attribute_is_an_error() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    let mut talk = data_var(
        "talk",
        "alkalinity",
        "sea_water_alkalinity_expressed_as_mole_equivalent",
        "x",
        "tzyx",
        0..1,
        GRID,
    );
    talk.attrs.retain(|(k, _)| k != "units");
    vars.push(talk);
    write_nc(&path, &dims(GRID, 1), &vars);
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("no `units` attribute"),
        "{e}"
    );
}

#[test]
fn slab_out_of_range_is_an_error() {
    let dir = tempdir().unwrap();
    cmip_run(dir.path(), 2, "noleap");
    let run = Run::open(&spec(all(dir.path()))).unwrap();
    assert!(run.read_slab(2, 0..1).is_err());
    assert!(run.read_slab(0, 3..9).is_err());
}

#[test]
fn different_calendars_between_files_are_refused() {
    let dir = tempdir().unwrap();
    let times = noleap_months(2);
    for var in ["dissic", "talk", "thetao", "so"] {
        cmip_file(dir.path(), var, "a", 0..1, &times[..1], "noleap");
        let calendar = if var == "thetao" { "360_day" } else { "noleap" };
        cmip_file(dir.path(), var, "b", 1..2, &times[1..], calendar);
    }
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("thetao_b.nc") && e.contains("'time'") && e.contains("calendars"),
        "{e}"
    );
}

#[test]
fn mapped_variable_that_does_not_exist() {
    let dir = tempdir().unwrap();
    cmip_run(dir.path(), 2, "noleap");
    let mut spec = spec(all(dir.path()));
    spec.mapping.set("dic", "DIC_total").unwrap();
    let e = Run::open(&spec).err().unwrap().to_string();
    assert!(e.contains("DIC_total") && e.contains("dissic"), "{e}");
}

#[test]
fn dimension_of_unknown_axis_is_refused() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    let mut talk = cmip_var("talk", "tzyx", 0..1, GRID);
    talk.dims[3] = "band".to_string();
    vars.push(talk);
    let mut file_dims = dims(GRID, 1);
    file_dims.push(("band", GRID.cols));
    write_nc(&path, &file_dims, &vars);
    let e = open_err(all(dir.path()));
    assert!(
        e.contains("talk_a.nc") && e.contains("'talk'") && e.contains("dimension 'band'"),
        "{e}"
    );
}

#[test]
fn every_missing_role_is_listed_in_one_message_with_candidates_and_syntax() {
    let dir = tempdir().unwrap();
    let times = noleap_months(1);
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    for (name, field, units, long_name) in [
        ("CARBON", "dic", "mol m-3", "total carbon"),
        ("ALKY", "alkalinity", "mol m-3", "total alkalinity"),
        ("T3D", "temperature", "degC", "sea temperature"),
        ("S3D", "salinity", "psu", "salinity"),
    ] {
        vars.push(
            data_var(name, field, "", units, "tzyx", 0..1, GRID).attr("long_name", long_name),
        );
    }
    let path = dir.path().join("model.nc");
    write_nc(&path, &dims(GRID, 1), &vars);
    let inputs = vec![path.display().to_string()];
    let e = open_err(inputs.clone());
    for needle in [
        "4 input(s) missing",
        "  dic: no dic variable found",
        "  alkalinity: no alkalinity variable found",
        "  temperature: no temperature variable found",
        "  salinity: no salinity variable found",
        "CARBON: long_name \"total carbon\", units \"mol m-3\", dims (time, lev, lat, lon)",
        "--variable dic=NAME",
        "--variable alkalinity=ALKY --variable alkalinity.units='mol m-3'",
        "--variable temperature=T3D --variable temperature.units='degC' --variable temperature.kind=potential",
        "--variable salinity=S3D",
        "[variables]",
        "temperature = { name = \"T3D\", units = \"degC\", kind = \"potential\" }",
        "salinity = { name = \"S3D\", units = \"psu\", kind = \"practical\" }",
    ] {
        assert!(e.contains(needle), "lacks {needle}:\n{e}");
    }
    // Named as the message says, the run opens.
    let mut spec = spec(inputs);
    for (key, value) in [
        ("dic", "CARBON"),
        ("alkalinity", "ALKY"),
        ("temperature", "T3D"),
        ("temperature.kind", "potential"),
        ("salinity", "S3D"),
    ] {
        spec.mapping.set(key, value).unwrap();
    }
    assert!(Run::open(&spec).is_ok());
}

#[test]
fn units_or_kind_alone_apply_to_the_variable_found() {
    let dir = tempdir().unwrap();
    let times = three_of_four(dir.path());
    let path = dir.path().join("talk_a.nc");
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    vars.push(cmip_var("talk", "tzyx", 0..1, GRID).with("units", "mol per m3"));
    write_nc(&path, &dims(GRID, 1), &vars);
    let e = open_err(all(dir.path()));
    assert!(e.contains("mol per m3"), "{e}");
    let mut spec = spec(all(dir.path()));
    spec.mapping.set("alkalinity.units", "mol m-3").unwrap();
    // thetao is potential temperature by name; stating conservative overrides it.
    spec.mapping
        .set("temperature.kind", "conservative")
        .unwrap();
    let run = Run::open(&spec).unwrap();
    let report = run.report();
    assert!(
        report.contains("variable 'talk' (found by CF standard_name)")
            && report.contains("units \"mol m-3\""),
        "{report}"
    );
    assert!(
        report.contains("conservative temperature -> in-situ"),
        "{report}"
    );
}
