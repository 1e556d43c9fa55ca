//! Opening runs written in the test (synthetic data) and reading converted slabs.

mod common;

use acidscape_gridio::{seawater, DensityChoice, Run, RunSpec, VariableMapping};
use common::*;
use tempfile::tempdir;

fn pattern(dir: &std::path::Path) -> Vec<String> {
    vec![format!("{}/*.nc", dir.display())]
}

#[test]
fn cmip_one_variable_per_file_split_in_time() {
    let dir = tempdir().unwrap();
    cmip_run(dir.path(), 4, "noleap");
    let run = Run::open(&spec(pattern(dir.path()))).unwrap();
    assert_eq!(run.time_steps(), 4);
    let shape = run.shape();
    assert_eq!((shape.levels, shape.rows, shape.cols), (3, 4, 5));
    assert_eq!(run.wet_cells_per_step(), 60);
    assert_eq!(run.input_files().len(), 8);
    // Step 3 lies in the second file of each variable.
    let slab = run.read_slab(3, 1..3).unwrap();
    assert_eq!(slab.shape, [3, 2, 5]);
    // Cell (k=2, row 2 -> local 1, col 4): DIC in mol m-3 divided by the reference density.
    let c = 2 * 10 + 5 + 4;
    let dic_mol_m3 = value("dic", 3, 2, 2, 4) as f32 as f64;
    // 1 mol m-3 / 1025 kg m-3 = 975.6098 µmol kg-1 (hand: 1e6 / 1025).
    assert!(
        (slab.dic[c] - dic_mol_m3 * 1e6 / 1025.0).abs() < 1e-6,
        "{}",
        slab.dic[c]
    );
    assert_eq!(slab.density_kg_m3[c], 1025.0);
    // Depth from the z coordinate; pressure from depth and latitude (TEOS-10 p_from_z).
    assert_eq!(slab.depth_m[c], 1000.0);
    let p = seawater::sea_pressure_from_depth(1000.0, lat(2)).unwrap();
    assert!((slab.pressure_dbar[c] - p).abs() < 1e-9);
    // UNESCO 1983 (Fofonoff & Millard) table: 1000 m is close to 1008 dbar at mid latitudes
    // (from memory: ~1.008 dbar per m near 1000 m); a loose check of the order of magnitude.
    assert!((1000.0..1015.0).contains(&slab.pressure_dbar[c]));
    // Potential temperature became in-situ: warmer at depth by the adiabatic heating.
    let theta = value("temperature", 3, 2, 2, 4) as f32 as f64;
    assert!(slab.temperature_c[c] > theta && slab.temperature_c[c] - theta < 0.2);
    let report = run.report();
    for needle in [
        "dissic",
        "talk",
        "thetao",
        "so",
        "noleap",
        "rectilinear",
        "2015-01-16",
        "60 of 60",
    ] {
        assert!(report.contains(needle), "report lacks {needle}:\n{report}");
    }
}

#[test]
fn several_variables_per_file_per_mass_insitu_absolute() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let times = [0.5, 1.5];
    let mut vars = coordinates(g, &times, "days since 2000-01-01", "proleptic_gregorian");
    // Per-mass concentrations in µmol kg-1: values × 1e6 of the mol fields.
    let mut per_mass = |name: &str, field: &str, sn: &str| {
        let mut v = data_var(name, field, sn, "umol kg-1", "tzyx", 0..2, g);
        v.values.iter_mut().for_each(|x| *x *= 1000.0);
        vars.push(v);
    };
    per_mass(
        "DIC",
        "dic",
        "mole_concentration_of_dissolved_inorganic_carbon_in_sea_water",
    );
    per_mass(
        "ALK",
        "alkalinity",
        "sea_water_alkalinity_expressed_as_mole_equivalent",
    );
    per_mass(
        "PO4",
        "phosphate",
        "mole_concentration_of_phosphate_in_sea_water",
    );
    per_mass(
        "SIL",
        "silicate",
        "mole_concentration_of_silicate_in_sea_water",
    );
    vars.push(data_var(
        "T",
        "temperature",
        "sea_water_temperature",
        "K",
        "tzyx",
        0..2,
        g,
    ));
    vars.last_mut()
        .unwrap()
        .values
        .iter_mut()
        .for_each(|x| *x += 273.15);
    vars.push(data_var(
        "SA",
        "salinity",
        "sea_water_absolute_salinity",
        "g kg-1",
        "tzyx",
        0..2,
        g,
    ));
    let path = dir.path().join("all.nc");
    write_nc(&path, &dims(g, 2), &vars);
    let spec = RunSpec {
        inputs: vec![path.display().to_string()],
        mapping: VariableMapping::default(),
        density: DensityChoice::InSitu,
        ..Default::default()
    };
    let run = Run::open(&spec).unwrap();
    let slab = run.read_slab(1, 0..4).unwrap();
    let c = 40 + 5 + 2; // k=2, row 1, col 2 (20 cells per level)
    let raw = |f: &str| (value(f, 1, 2, 1, 2) * 1000.0) as f32 as f64;
    // µmol kg-1 are taken as they are: no density involved.
    assert!(
        (slab.dic[c] - raw("dic")).abs() < 1e-9,
        "{} vs {}",
        slab.dic[c],
        raw("dic")
    );
    assert!((slab.phosphate[c] - raw("phosphate")).abs() < 1e-9);
    assert!((slab.silicate[c] - raw("silicate")).abs() < 1e-9);
    // Kelvin -> °C, in-situ kept.
    let t = ((value("temperature", 1, 2, 1, 2) + 273.15) as f32 as f64) - 273.15;
    assert!((slab.temperature_c[c] - t).abs() < 1e-9);
    // SP = SA × 35 / 35.16504 (Millero et al. 2008, reference-composition salinity).
    let sa = value("salinity", 1, 2, 1, 2) as f32 as f64;
    assert!((slab.salinity[c] - sa * 35.0 / 35.16504).abs() < 1e-9);
    // In-situ density of seawater at 1000 m is 1030-1035 kg m-3 (common practice).
    assert!(
        (1028.0..1036.0).contains(&slab.density_kg_m3[c]),
        "{}",
        slab.density_kg_m3[c]
    );
    let report = run.report();
    assert!(
        report.contains("absolute salinity -> practical"),
        "{report}"
    );
    assert!(report.contains("in-situ temperature"), "{report}");
    let prov = run.provenance();
    assert!(prov
        .iter()
        .any(|(k, v)| k == "density" && v.contains("in-situ")));
}

#[test]
fn dimension_order_does_not_change_the_slab() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let times = [15.5];
    let mut read = Vec::new();
    for order in ["tzyx", "txyz"] {
        let sub = dir.path().join(order);
        std::fs::create_dir(&sub).unwrap();
        let mut vars = coordinates(g, &times, "days since 2015-01-01", "noleap");
        vars.extend(required_vars(order, 0..1, g));
        let path = sub.join("run.nc");
        write_nc(&path, &dims(g, 1), &vars);
        let run = Run::open(&spec(vec![path.display().to_string()])).unwrap();
        read.push(run.read_slab(0, 1..4).unwrap());
    }
    assert_eq!(read[0].temperature_c, read[1].temperature_c);
    assert_eq!(read[0].dic, read[1].dic);
    assert_eq!(read[0].salinity, read[1].salinity);
    assert_eq!(read[0].pressure_dbar, read[1].pressure_dbar);
    // And both match the synthetic field at a known cell (k=1, row 2, col 3).
    let c = 15 + 5 + 3;
    let s = value("salinity", 0, 1, 2, 3) as f32 as f64;
    assert_eq!(read[1].salinity[c], s);
}

#[test]
fn positive_up_and_down_give_the_same_depths() {
    let dir = tempdir().unwrap();
    let mut depths = Vec::new();
    for (tag, sign, positive) in [("down", 1.0, "down"), ("up", -1.0, "up")] {
        let sub = dir.path().join(tag);
        std::fs::create_dir(&sub).unwrap();
        let mut coords = coordinates(GRID, &[15.5], "days since 2015-01-01", "noleap");
        coords[1] = common::Var::new(
            "lev",
            &["lev"],
            (0..3).map(|k| sign * level_depth(k)).collect(),
        )
        .attr("units", "m")
        .attr("positive", positive);
        let run = single_file_run(&sub, coords, &[]);
        depths.push(run.read_slab(0, 0..4).unwrap().depth_m);
    }
    assert_eq!(depths[0], depths[1]);
    assert_eq!(depths[0][40], 1000.0);
}

#[test]
fn ocean_sigma_coordinate_depth_matches_hand_evaluation() {
    let dir = tempdir().unwrap();
    let coords = parametric_coords("ocean_sigma_coordinate", "sigma: lev eta: zeta depth: h");
    let run = single_file_run(dir.path(), coords, &[]);
    let slab = run.read_slab(0, 0..4).unwrap();
    // Cell k=1 (sigma -0.25), row 2 (h = 200 m), col 2 (eta = 1.0 m).
    // CF Appendix D: z = eta + sigma (depth + eta) = 1 - 0.25 × 201 = -49.25 -> depth 49.25 m.
    let c = 20 + 2 * 5 + 2;
    assert!(
        (slab.depth_m[c] - 49.25).abs() < 1e-9,
        "{}",
        slab.depth_m[c]
    );
    // Pressure from depth below the free surface: 49.25 + 1.0 m.
    let p = seawater::sea_pressure_from_depth(50.25, lat(2)).unwrap();
    assert!((slab.pressure_dbar[c] - p).abs() < 1e-9);
    assert!(run.report().contains("ocean_sigma_coordinate"));
}

#[test]
fn ocean_s_coordinate_g2_depth_matches_hand_evaluation() {
    let dir = tempdir().unwrap();
    let coords = parametric_coords(
        "ocean_s_coordinate_g2",
        "s: lev C: Cs eta: zeta depth: h depth_c: hc",
    );
    let run = single_file_run(dir.path(), coords, &[]);
    let slab = run.read_slab(0, 0..4).unwrap();
    // Cell k=1 (s = -0.5, C = -0.3), row 2 (h = 200 m), col 2 (eta = 1.0 m), depth_c = 10 m.
    // CF Appendix D: S = (10 × -0.5 + 200 × -0.3) / (10 + 200) = -65/210 = -0.3095238095;
    // z = eta + (eta + h) S = 1 + 201 × -0.3095238095 = -61.2142857143.
    let c = 20 + 2 * 5 + 2;
    assert!(
        (slab.depth_m[c] - 61.214_285_714_3).abs() < 1e-6,
        "{}",
        slab.depth_m[c]
    );
}

#[test]
fn calendars_360_day_join_and_report() {
    let dir = tempdir().unwrap();
    // 360_day: every month 30 days; mid-month values 15, 45, 75, 105 days since 2000-01-01.
    let times = [15.0, 45.0, 75.0, 105.0];
    for var in REQUIRED {
        for (tag, range) in [("a", 0..2), ("b", 2..4)] {
            let when = &times[range.clone()];
            cmip_file_with(
                dir.path(),
                var,
                tag,
                range,
                when,
                "days since 2000-01-01",
                "360_day",
            );
        }
    }
    let run = Run::open(&spec(pattern(dir.path()))).unwrap();
    assert_eq!(run.time_steps(), 4);
    let report = run.report();
    // 15 days after 2000-01-01 is 2000-01-16; 105 days is 3 months + 15 days = 2000-04-16 (360_day).
    assert!(report.contains("360_day"), "{report}");
    assert!(
        report.contains("2000-01-16") && report.contains("2000-04-16"),
        "{report}"
    );
}

#[test]
fn masks_fill_missing_value_and_valid_range() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let mut vars = coordinates(g, &[15.5], "days since 2015-01-01", "noleap");
    let mut dic = cmip_var("dissic", "tzyx", 0..1, g);
    dic.values[0] = 1e20; // _FillValue
    let mut alk = cmip_var("talk", "tzyx", 0..1, g).attr("missing_value", -999.0_f32);
    alk.values[1] = -999.0;
    let mut temp = cmip_var("thetao", "tzyx", 0..1, g).attr("valid_range", vec![-3.0_f32, 40.0]);
    temp.values[2] = 45.0;
    let mut so = cmip_var("so", "tzyx", 0..1, g);
    so.values[3] = f64::NAN;
    vars.extend([dic, alk, temp, so]);
    let path = dir.path().join("masked.nc");
    write_nc(&path, &dims(g, 1), &vars);
    let run = Run::open(&spec(vec![path.display().to_string()])).unwrap();
    assert_eq!(run.wet_cells_per_step(), 60 - 4);
    let slab = run.read_slab(0, 0..4).unwrap();
    assert!(slab.dic[0].is_nan());
    assert!(slab.alkalinity[1].is_nan());
    assert!(slab.temperature_c[2].is_nan());
    assert!(slab.salinity[3].is_nan());
    assert!(slab.dic[4].is_finite() && slab.temperature_c[4].is_finite());
    // No phosphate/silicate in the run: zeros.
    assert!(slab.phosphate.iter().all(|v| *v == 0.0));
}

#[test]
fn curvilinear_grid_through_coordinates_attribute() {
    let dir = tempdir().unwrap();
    let g = GRID;
    // Dimensions j, i without coordinate variables; 2-D lat/lon rotated a little.
    let lat2: Vec<f64> = (0..g.rows)
        .flat_map(|j| (0..g.cols).map(move |i| lat(j) + 0.5 * i as f64))
        .collect();
    let lon2: Vec<f64> = (0..g.rows)
        .flat_map(|j| (0..g.cols).map(move |i| lon(i) + 0.3 * j as f64))
        .collect();
    let mut vars = vec![
        common::Var::new("time", &["time"], vec![15.5])
            .attr("units", "days since 2015-01-01")
            .attr("calendar", "standard"),
        common::Var::new("lev", &["lev"], (0..3).map(level_depth).collect())
            .attr("units", "m")
            .attr("positive", "down"),
        common::Var::new("nav_lat", &["j", "i"], lat2.clone())
            .attr("units", "degrees_north")
            .attr("standard_name", "latitude"),
        common::Var::new("nav_lon", &["j", "i"], lon2)
            .attr("units", "degrees_east")
            .attr("standard_name", "longitude"),
    ];
    let bigthetao = data_var(
        "bigthetao",
        "temperature",
        "sea_water_conservative_temperature",
        "degC",
        "tzyx",
        0..1,
        g,
    );
    for var in ["dissic", "talk", "so"]
        .map(|v| cmip_var(v, "tzyx", 0..1, g))
        .into_iter()
        .chain([bigthetao])
    {
        let mut v = var
            .attr("coordinates", "nav_lat nav_lon")
            .attr("grid_mapping", "crs");
        v.dims = vec!["time".into(), "lev".into(), "j".into(), "i".into()];
        vars.push(v);
    }
    // A grid-mapping variable (CF section 5.6): attributes only, no data.
    vars.push(
        common::Var::new("crs", &[], vec![])
            .attr("grid_mapping_name", "latitude_longitude")
            .attr("semi_major_axis", 6_371_000.0),
    );
    let path = dir.path().join("curv.nc");
    write_nc(
        &path,
        &[("time", 1), ("lev", 3), ("j", g.rows), ("i", g.cols)],
        &vars,
    );
    let run = Run::open(&spec(vec![path.display().to_string()])).unwrap();
    let report = run.report();
    assert!(report.contains("curvilinear"), "{report}");
    let slab = run.read_slab(0, 2..4).unwrap();
    // Cell k=2, local row 1 (row 3), col 4: latitude from the 2-D field.
    let c = 2 * 10 + 5 + 4;
    let p = seawater::sea_pressure_from_depth(1000.0, lat2[3 * 5 + 4]).unwrap();
    assert!((slab.pressure_dbar[c] - p).abs() < 1e-9);
    // Conservative temperature: in-situ differs from the CT value but only by a little.
    let ct = value("temperature", 0, 2, 3, 4) as f32 as f64;
    assert!(
        (slab.temperature_c[c] - ct).abs() < 0.3,
        "{} vs {ct}",
        slab.temperature_c[c]
    );
    // Coordinates: 2-D latitude/longitude and the grid mapping reach the output.
    let out_path = dir.path().join("out.nc");
    let mut out = netcdf::create(&out_path).unwrap();
    let axes = run.write_coordinates(&mut out, 0..1).unwrap();
    out.close().unwrap();
    assert_eq!(axes.dims, vec!["time", "lev", "j", "i"]);
    assert_eq!(axes.coordinates_attr.as_deref(), Some("nav_lat nav_lon"));
    assert_eq!(axes.grid_mapping.as_deref(), Some("crs"));
    let f = netcdf::open(&out_path).unwrap();
    let copied: Vec<f64> = f.variable("nav_lat").unwrap().get_values(..).unwrap();
    assert_eq!(copied, lat2);
    let name: String = f
        .variable("crs")
        .unwrap()
        .attribute_value("grid_mapping_name")
        .unwrap()
        .unwrap()
        .try_into()
        .unwrap();
    assert_eq!(name, "latitude_longitude");
}

#[test]
fn user_mapping_names_unlabelled_variables() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let mut vars = coordinates(g, &[15.5], "days since 2015-01-01", "noleap");
    for (name, field, units) in [
        ("DIC", "dic", "mmol m-3"),
        ("ALK", "alkalinity", "mmol m-3"),
        ("temp", "temperature", "degC"),
        ("salt", "salinity", "psu"),
    ] {
        let mut v = data_var(name, field, "", units, "tzyx", 0..1, g);
        if units == "mmol m-3" {
            v.values.iter_mut().for_each(|x| *x *= 1000.0);
        }
        vars.push(v);
    }
    let path = dir.path().join("model.nc");
    write_nc(&path, &dims(g, 1), &vars);
    let inputs = vec![path.display().to_string()];
    // DIC and salt are native names (NEMO/ROMS, ROMS/MOM); temp says no kind and ALK is
    // no name any role knows: one message names both problems and proposes ALK.
    let err = Run::open(&spec(inputs.clone())).err().unwrap().to_string();
    for needle in [
        "2 input(s)",
        "alkalinity: no alkalinity variable",
        "temperature: variable 'temp'",
        "ALK: units \"mmol m-3\", dims (time, lev, lat, lon)",
        "--variable alkalinity=ALK --variable alkalinity.units='mmol m-3'",
        "--variable temperature.kind=potential",
        "alkalinity = { name = \"ALK\", units = \"mmol m-3\" }",
        "temperature = { kind = \"potential\" }",
    ] {
        assert!(err.contains(needle), "lacks {needle}:\n{err}");
    }
    let mapping = VariableMapping::from_toml_str(
        "[variables]\ndic = \"DIC\"\nalkalinity = \"ALK\"\ntemperature = { name = \"temp\", kind = \"potential\" }\nsalinity = \"salt\"\n",
        "test mapping",
    )
    .unwrap();
    let run = Run::open(&RunSpec {
        inputs,
        mapping,
        density: DensityChoice::Reference(1025.0),
        ..Default::default()
    })
    .unwrap();
    let slab = run.read_slab(0, 0..1).unwrap();
    // 2.05 mol m-3 written as 2050 mmol m-3; / 1025 kg m-3 -> 2000 µmol kg-1 (hand: 2.05e6/1025).
    let raw = (value("dic", 0, 0, 0, 0) * 1000.0) as f32 as f64;
    assert!((slab.dic[0] - raw / 1000.0 * 1e6 / 1025.0).abs() < 1e-6);
    assert!((slab.dic[0] - 2000.0).abs() < 1e-3, "{}", slab.dic[0]);
    assert!(run.report().contains("user mapping"));
}

#[test]
fn write_coordinates_copies_time_and_grid() {
    let dir = tempdir().unwrap();
    cmip_run(dir.path(), 4, "noleap");
    let run = Run::open(&spec(pattern(dir.path()))).unwrap();
    let out_path = dir.path().join("out").with_extension("nc4");
    {
        let mut out = netcdf::create(&out_path).unwrap();
        let axes = run.write_coordinates(&mut out, 1..3).unwrap();
        assert_eq!(axes.dims, vec!["time", "lev", "lat", "lon"]);
        assert!(axes.coordinates_attr.is_none());
        // The pipeline defines its chunked, compressed variables after the coordinates.
        let dims: Vec<&str> = axes.dims.iter().map(String::as_str).collect();
        let mut ph = out.add_variable::<f32>("ph", &dims).unwrap();
        ph.set_chunking(&[1, 3, 2, 5]).unwrap();
        ph.set_compression(4, true).unwrap();
        ph.set_fill_value(1e20_f32).unwrap();
        ph.put_values(&vec![8.0_f32; 2 * 3 * 4 * 5], ..).unwrap();
        out.close().unwrap();
    }
    let f = netcdf::open(&out_path).unwrap();
    let time = f.variable("time").unwrap();
    let t: Vec<f64> = time.get_values(..).unwrap();
    let months = noleap_months(4);
    assert_eq!(t, months[1..3].to_vec());
    let units: String = time
        .attribute_value("units")
        .unwrap()
        .unwrap()
        .try_into()
        .unwrap();
    assert!(units.starts_with("days since 2015-01-01"), "{units}");
    let cal: String = time
        .attribute_value("calendar")
        .unwrap()
        .unwrap()
        .try_into()
        .unwrap();
    assert_eq!(cal, "noleap");
    let lev: Vec<f64> = f.variable("lev").unwrap().get_values(..).unwrap();
    assert_eq!(lev, vec![5.0, 100.0, 1000.0]);
    let positive: String = f
        .variable("lev")
        .unwrap()
        .attribute_value("positive")
        .unwrap()
        .unwrap()
        .try_into()
        .unwrap();
    assert_eq!(positive, "down");
    assert_eq!(f.dimension_len("lat"), Some(4));
}

#[test]
fn write_coordinates_copies_parametric_terms() {
    let dir = tempdir().unwrap();
    let coords = parametric_coords(
        "ocean_s_coordinate_g2",
        "s: lev C: Cs eta: zeta depth: h depth_c: hc",
    );
    let run = single_file_run(dir.path(), coords, &[]);
    let out_path = dir.path().join("out.nc4");
    let mut out = netcdf::create(&out_path).unwrap();
    run.write_coordinates(&mut out, 0..1).unwrap();
    out.close().unwrap();
    let f = netcdf::open(&out_path).unwrap();
    for name in ["lev", "Cs", "hc", "h", "zeta", "lat", "lon", "time"] {
        assert!(f.variable(name).is_some(), "output lacks {name}");
    }
    let ft: String = f
        .variable("lev")
        .unwrap()
        .attribute_value("formula_terms")
        .unwrap()
        .unwrap()
        .try_into()
        .unwrap();
    assert_eq!(ft, "s: lev C: Cs eta: zeta depth: h depth_c: hc");
    let zeta: Vec<f64> = f.variable("zeta").unwrap().get_values(..).unwrap();
    assert_eq!(zeta[2], 1.0);
}

#[test]
fn run_can_be_shared_with_a_reader_thread() {
    fn assert_send_sync<T: Send + Sync>() {}
    assert_send_sync::<Run>();
}

#[test]
fn mapping_units_override_and_pressure_variable() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let mut vars = coordinates(g, &[15.5], "days since 2015-01-01", "noleap");
    // Wrong units for alkalinity in the file: the mapping corrects them.
    for mut var in required_vars("tzyx", 0..1, g) {
        if var.name == "talk" {
            var.attrs.retain(|(k, _)| k != "units");
            var = var.attr("units", "kg");
        }
        vars.push(var);
    }
    // Sea pressure in bar: 1 bar = 10 dbar (synthetic constant 50 bar).
    let mut pres = data_var(
        "pres",
        "dic",
        "sea_water_pressure_due_to_sea_water",
        "bar",
        "tzyx",
        0..1,
        g,
    );
    pres.values.iter_mut().for_each(|v| *v = 50.0);
    vars.push(pres);
    let path = dir.path().join("run.nc");
    write_nc(&path, &dims(g, 1), &vars);
    let inputs = vec![path.display().to_string()];
    let e = Run::open(&spec(inputs.clone())).err().unwrap().to_string();
    assert!(e.contains("'talk'") && e.contains("\"kg\""), "{e}");
    let mut mapping = VariableMapping::default();
    mapping.set("alkalinity", "talk").unwrap();
    mapping.set("alkalinity.units", "mol m-3").unwrap();
    let run = Run::open(&RunSpec {
        inputs,
        mapping,
        density: DensityChoice::Reference(1025.0),
        ..Default::default()
    })
    .unwrap();
    let slab = run.read_slab(0, 0..4).unwrap();
    assert!(slab.pressure_dbar.iter().all(|p| *p == 500.0));
    let raw = value("alkalinity", 0, 0, 0, 0) as f32 as f64;
    assert!((slab.alkalinity[0] - raw * 1e6 / 1025.0).abs() < 1e-6);
    assert!(run
        .provenance()
        .iter()
        .any(|(k, v)| k == "pressure" && v.contains("pressure variable")));
}

#[test]
fn run_without_time_axis_has_one_step() {
    let dir = tempdir().unwrap();
    let g = GRID;
    let mut vars = coordinates(g, &[0.0], "days since 2015-01-01", "noleap");
    vars.remove(0);
    vars.extend(required_vars("zyx", 0..1, g));
    let path = dir.path().join("climatology.nc");
    write_nc(&path, &[("lev", 3), ("lat", 4), ("lon", 5)], &vars);
    let run = Run::open(&spec(vec![path.display().to_string()])).unwrap();
    assert_eq!(run.time_steps(), 1);
    assert!(run.report().contains("Time: none"));
    let slab = run.read_slab(0, 0..4).unwrap();
    assert_eq!(slab.shape, [3, 4, 5]);
    let out_path = dir.path().join("out.nc");
    let mut out = netcdf::create(&out_path).unwrap();
    let axes = run.write_coordinates(&mut out, 0..1).unwrap();
    assert_eq!(axes.dims, vec!["lev", "lat", "lon"]);
}

#[test]
fn ocean_s_coordinate_g1_depth_matches_hand_evaluation() {
    let dir = tempdir().unwrap();
    let coords = parametric_coords(
        "ocean_s_coordinate_g1",
        "s: lev C: Cs eta: zeta depth: h depth_c: hc",
    );
    let run = single_file_run(dir.path(), coords, &[]);
    let slab = run.read_slab(0, 0..4).unwrap();
    // Cell k=0 (s = -0.9, C = -0.8), row 1 (h = 150 m), col 0 (eta = 0.5 m), depth_c = 10 m.
    // CF Appendix D: S = depth_c s + (depth - depth_c) C = -9 + 140 × -0.8 = -121;
    // z = S + eta (1 + S / depth) = -121 + 0.5 × (1 - 121/150) = -120.9033333.
    let c = 5;
    assert!(
        (slab.depth_m[c] - 120.903_333_333).abs() < 1e-6,
        "{}",
        slab.depth_m[c]
    );
}

#[test]
fn pressure_levels_give_pressure_directly() {
    let dir = tempdir().unwrap();
    let mut coords = coordinates(GRID, &[15.5], "days since 2015-01-01", "noleap");
    coords[1] = common::Var::new("lev", &["lev"], vec![0.5, 1.0, 2.0])
        .attr("units", "MPa")
        .attr("positive", "down")
        .attr("standard_name", "sea_water_pressure_due_to_sea_water");
    let run = single_file_run(dir.path(), coords, &[]);
    let slab = run.read_slab(0, 0..4).unwrap();
    // 1 MPa = 100 dbar (SI definition of the bar: 1 bar = 0.1 MPa = 10 dbar).
    assert_eq!(slab.pressure_dbar[0], 50.0);
    assert_eq!(slab.pressure_dbar[59], 200.0);
    let depth = seawater::depth_from_sea_pressure(200.0, lat(3));
    assert!((slab.depth_m[59] - depth).abs() < 1e-9);
}

#[test]
fn reading_back_and_forth_across_files_and_in_two_stages_gives_the_same_slab() {
    // Synthetic run: every variable split in two files along time. Each variable keeps one
    // file open for reading; jumping between files must reopen the right one.
    let dir = tempdir().unwrap();
    cmip_run(dir.path(), 4, "noleap");
    let mut spec = spec(pattern(dir.path()));
    spec.density = DensityChoice::InSitu;
    let run = Run::open(&spec).unwrap();
    let late = run.read_slab(3, 0..4).unwrap();
    let early = run.read_slab(0, 0..4).unwrap();
    let late_again = run.read_slab(3, 0..4).unwrap();
    assert_eq!(late.dic, late_again.dic);
    assert_eq!(late.temperature_c, late_again.temperature_c);
    assert_ne!(late.dic, early.dic);
    // Step 0 is in the first file: its raw DIC is the value the test wrote there.
    let c = 2 * 20 + 3 * 5 + 1;
    let two_stage = run.convert_slab(run.read_raw_slab(0, 0..4).unwrap());
    assert_eq!(two_stage.dic, early.dic);
    assert_eq!(two_stage.pressure_dbar, early.pressure_dbar);
    assert_eq!(two_stage.density_kg_m3, early.density_kg_m3);
    // The one-pass temperature and density equal the separate functions (whose check
    // values are in tests/conversions.rs).
    let theta = value("temperature", 0, 2, 3, 1) as f32 as f64;
    let (sp, p) = (early.salinity[c], early.pressure_dbar[c]);
    let t = seawater::in_situ_from_potential(sp, theta, p);
    assert!((early.temperature_c[c] - t).abs() < 1e-9);
    let rho = seawater::in_situ_density(sp, t, p).unwrap();
    assert!((early.density_kg_m3[c] - rho).abs() < 1e-8);
    let dic_mol_m3 = value("dic", 0, 2, 3, 1) as f32 as f64;
    assert!((early.dic[c] - dic_mol_m3 * 1e6 / rho).abs() < 1e-6);
}
