//! Files of one variable that say different things: each file is read by its own metadata
//! (units, standard name, kind, fill, packing, dimension order), or the run is refused
//! naming both files when a file does not say what it holds. All data synthetic.

mod common;

use acidscape_gridio::{seawater, Run, SlabInputs};
use common::*;
use std::path::Path;
use tempfile::tempdir;

const STEPS: usize = 4;

/// A CMIP-style run of 4 monthly steps, two files per variable; `alter` may rewrite the
/// second file's variable (steps 2 and 3).
fn split(dir: &Path, alter: &dyn Fn(&str, Var) -> Var) {
    split_run(dir, &REQUIRED, STEPS, alter);
}

fn open(dir: &Path) -> Result<Run, String> {
    Run::open(&spec(vec![format!("{}/*.nc", dir.display())])).map_err(|e| e.to_string())
}

/// The slab of step 3 of a run whose files all agree.
fn reference_slab() -> SlabInputs {
    let dir = tempdir().unwrap();
    split(dir.path(), &|_, v| v);
    open(dir.path()).unwrap().read_slab(3, 0..4).unwrap()
}

fn assert_close(a: &[f64], b: &[f64], tolerance: f64, what: &str) {
    assert_eq!(a.len(), b.len());
    for (i, (x, y)) in a.iter().zip(b).enumerate() {
        assert!((x - y).abs() <= tolerance, "{what} cell {i}: {x} vs {y}");
    }
}

/// A rewrite of the second file's variable.
type Rewrite = Box<dyn Fn(Var) -> Var>;

fn scaled(v: Var, f: impl Fn(f64) -> f64) -> Var {
    map_values(v, f)
}

#[test]
fn other_units_in_one_year_are_converted_file_by_file() {
    let reference = reference_slab();
    // (what, variable, rewrite of the second file, field compared, tolerance)
    type Field = fn(&SlabInputs) -> &Vec<f64>;
    let variants: [(&str, &str, Rewrite, Field, f64); 4] = [
        (
            "DIC in mmol m-3",
            "dissic",
            Box::new(|v| scaled(v, |x| x * 1000.0).with("units", "mmol m-3")),
            |s| &s.dic,
            1e-3,
        ),
        (
            "alkalinity per mass, µmol kg-1",
            "talk",
            Box::new(|v| {
                // 1 mol m-3 / 1025 kg m-3 (the reference density of the test run).
                scaled(v, |x| x * 1e6 / 1025.0)
                    .with("units", "umol kg-1")
                    .with(
                        "standard_name",
                        "sea_water_alkalinity_per_unit_mass_expressed_as_mole_equivalent",
                    )
            }),
            |s| &s.alkalinity,
            1e-3,
        ),
        (
            "temperature in kelvin",
            "thetao",
            Box::new(|v| scaled(v, |x| x + 273.15).with("units", "K")),
            |s| &s.temperature_c,
            1e-4,
        ),
        (
            "salinity as absolute salinity in g kg-1",
            "so",
            // SA taken as SR = SP × 35.16504/35 (Millero et al. 2008).
            Box::new(|v| {
                scaled(v, |x| x * 35.16504 / 35.0)
                    .with("units", "g kg-1")
                    .with("standard_name", "sea_water_absolute_salinity")
            }),
            |s| &s.salinity,
            1e-5,
        ),
    ];
    for (what, name, rewrite, field, tolerance) in variants {
        let dir = tempdir().unwrap();
        split(dir.path(), &only(name, &rewrite));
        let run = open(dir.path()).unwrap_or_else(|e| panic!("{what}: {e}"));
        let slab = run.read_slab(3, 0..4).unwrap();
        assert_close(field(&slab), field(&reference), tolerance, what);
        // The first year is read as before.
        let early = run.read_slab(0, 0..4).unwrap();
        assert!(field(&early).iter().all(|v| v.is_finite()), "{what}");
        let report = run.report();
        assert!(report.contains("files differ"), "{what}:\n{report}");
        let provenance = run.provenance();
        assert!(
            provenance.iter().any(|(_, v)| v.contains("files differ")),
            "{what}: {provenance:?}"
        );
    }
}

#[test]
fn another_temperature_kind_in_one_file_is_converted_by_its_own_kind() {
    let reference = reference_slab();
    let dir = tempdir().unwrap();
    // The second file holds Conservative Temperature (TEOS-10 CT_from_pt of the same water).
    split(dir.path(), &|var, v| {
        if var != "thetao" {
            return v;
        }
        let mut v = v.with("standard_name", "sea_water_conservative_temperature");
        let salinity = field_values("salinity", "tzyx", 2..STEPS, GRID);
        for (t, s) in v.values.iter_mut().zip(salinity) {
            let sa = seawater::absolute_from_practical(s as f32 as f64);
            *t = seawater::conservative_from_potential(sa, *t as f32 as f64).unwrap();
        }
        v
    });
    let run = open(dir.path()).unwrap();
    let slab = run.read_slab(3, 0..4).unwrap();
    // float32 storage of CT (about 2e-6 °C) and the inversions (1e-10 °C).
    assert_close(
        &slab.temperature_c,
        &reference.temperature_c,
        1e-4,
        "in-situ temperature",
    );
    assert!(run.report().contains("conservative temperature"));
}

#[test]
fn a_file_that_does_not_say_what_it_holds_is_refused_naming_both_files() {
    let variants: [(&str, &str, Rewrite, &str); 3] = [
        (
            "no units in the second file",
            "dissic",
            Box::new(|v| v.without("units")),
            "no `units` attribute",
        ),
        (
            "another quantity's standard name",
            "dissic",
            Box::new(|v| {
                v.with(
                    "standard_name",
                    "mole_concentration_of_dissolved_inorganic_carbon13_in_sea_water",
                )
            }),
            "name different quantities",
        ),
        (
            "units that cannot be read",
            "talk",
            Box::new(|v| v.with("units", "parts per zillion")),
            "parts per zillion",
        ),
    ];
    for (what, name, rewrite, says) in variants {
        let dir = tempdir().unwrap();
        split(dir.path(), &only(name, &rewrite));
        let e = open(dir.path())
            .err()
            .unwrap_or_else(|| panic!("{what}: opened"));
        let a = dir.path().join(format!("{name}_a.nc"));
        let b = dir.path().join(format!("{name}_b.nc"));
        assert!(
            e.contains(&a.display().to_string())
                && e.contains(&b.display().to_string())
                && e.contains(says),
            "{what}: {e}"
        );
    }
}

#[test]
fn a_temperature_whose_kind_one_file_does_not_state_is_refused_naming_both_files() {
    // Temperature under a name of no convention: only its standard_name says the kind,
    // and the second file has none.
    let dir = tempdir().unwrap();
    split(dir.path(), &|_, v| v);
    let times = noleap_months(STEPS);
    for (tag, steps) in [("a", 0..2), ("b", 2..STEPS)] {
        std::fs::remove_file(dir.path().join(format!("thetao_{tag}.nc"))).unwrap();
        let mut vars = coordinates(
            GRID,
            &times[steps.clone()],
            "days since 2015-01-01",
            "noleap",
        );
        let mut data = cmip_var("thetao", "tzyx", steps.clone(), GRID);
        data.name = "TEMPX".to_string();
        if tag == "b" {
            data = data.without("standard_name");
        }
        vars.push(data);
        let path = dir.path().join(format!("tempx_{tag}.nc"));
        write_nc(&path, &dims(GRID, steps.len()), &vars);
    }
    let e = open(dir.path()).err().unwrap();
    assert!(
        e.contains("tempx_a.nc")
            && e.contains("tempx_b.nc")
            && e.contains("cannot tell whether this temperature"),
        "{e}"
    );
    // A thetao file without standard_name is potential temperature by its CMIP name.
    let dir = tempdir().unwrap();
    split(dir.path(), &|var, v| {
        if var == "thetao" {
            v.without("standard_name")
        } else {
            v
        }
    });
    assert!(open(dir.path()).is_ok());
}

#[test]
fn fill_values_and_packing_are_read_per_file() {
    let reference = reference_slab();
    let dir = tempdir().unwrap();
    split(dir.path(), &|var, v| match var {
        // The second DIC file marks two cells with its own missing_value and no _FillValue.
        "dissic" => {
            let mut v = v.without("_FillValue").attr("missing_value", -999.0_f32);
            let per_step = GRID.levels * GRID.rows * GRID.cols;
            v.values[per_step] = -999.0;
            v.values[per_step + 7] = -999.0;
            v
        }
        // The second alkalinity file packed as 16-bit integers (CF section 8.1).
        "talk" => scaled(v, |x| (x - 2.0) / 1e-4)
            .with("scale_factor", 1e-4)
            .with("add_offset", 2.0)
            .with("_FillValue", -32767_i16)
            .i16(),
        _ => v,
    });
    let run = open(dir.path()).unwrap();
    let slab = run.read_slab(3, 0..4).unwrap();
    assert!(slab.dic[0].is_nan() && slab.dic[7].is_nan());
    assert_close(&slab.dic[8..], &reference.dic[8..], 1e-9, "DIC");
    // Packing step 1e-4 mol m-3 is 0.1 µmol kg-1 at 1025 kg m-3; rounding keeps half of it.
    assert_close(&slab.alkalinity, &reference.alkalinity, 0.05, "alkalinity");
    // The first file's cells are all present.
    assert!(run
        .read_slab(1, 0..4)
        .unwrap()
        .dic
        .iter()
        .all(|v| v.is_finite()));
}

#[test]
fn another_dimension_order_is_read_in_that_order() {
    let reference = reference_slab();
    let dir = tempdir().unwrap();
    split(dir.path(), &|var, v| {
        if var == "so" {
            let mut w = cmip_var("so", "txyz", 2..STEPS, GRID);
            w.attrs = v.attrs;
            w
        } else {
            v
        }
    });
    let slab = open(dir.path()).unwrap().read_slab(3, 0..4).unwrap();
    assert_eq!(slab.salinity, reference.salinity);
}

#[test]
fn other_dimension_names_are_refused_naming_both_files() {
    let dir = tempdir().unwrap();
    split(dir.path(), &|_, v| v);
    // The second DIC file puts its levels on a dimension called `depth`.
    let times = noleap_months(STEPS);
    let mut vars = coordinates(GRID, &times[2..], "days since 2015-01-01", "noleap");
    vars[1].name = "depth".to_string();
    vars[1].dims = vec!["depth".to_string()];
    let mut dic = cmip_var("dissic", "tzyx", 2..STEPS, GRID);
    dic.dims[1] = "depth".to_string();
    vars.push(dic);
    let path = dir.path().join("dissic_b.nc");
    write_nc(
        &path,
        &[("time", 2), ("depth", 3), ("lat", 4), ("lon", 5)],
        &vars,
    );
    let e = open(dir.path()).err().unwrap();
    assert!(
        e.contains("dissic_a.nc") && e.contains("dissic_b.nc") && e.contains("dimensions"),
        "{e}"
    );
}
