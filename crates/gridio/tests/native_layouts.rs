//! Runs laid out as ocean models write them open without a mapping: names, attributes and
//! units as the models' sources write them (NEMO/XIOS field_def and IOIPSL diawri.F90,
//! ROMS varinfo.yaml and def_info.F, MOM6 MOM.F90 and diag_mediator, GFDL COBALT, CMIP6/
//! OMIP), data synthetic (tests/common), grids tiny.

mod common;

use acidscape_gridio::{seawater, Run};
use common::*;
use std::path::Path;
use tempfile::tempdir;

const G: Grid = GRID;

/// A 2-D curvilinear latitude (j, i) of the synthetic grid.
fn lat2() -> Vec<f64> {
    (0..G.rows)
        .flat_map(|j| (0..G.cols).map(move |i| lat(j) + 0.2 * i as f64))
        .collect()
}

fn lon2() -> Vec<f64> {
    (0..G.rows)
        .flat_map(|j| (0..G.cols).map(move |i| lon(i) + 0.1 * j as f64))
        .collect()
}

/// A data variable on (time, level, y, x) dimensions with these names, values of the
/// synthetic `field` × `factor`.
fn field(name: &str, dims: [&str; 4], source: &str, factor: f64, steps: usize) -> Var {
    let mut v = Var::new(name, &dims, field_values(source, "tzyx", 0..steps, G)).f32();
    v.values.iter_mut().for_each(|x| *x *= factor);
    v
}

fn open(dir: &Path) -> Result<Run, String> {
    Run::open(&spec(vec![format!("{}/*.nc", dir.display())])).map_err(|e| e.to_string())
}

/// Monthly mid-points in seconds since 1900-01-01 in the noleap calendar (2015; 115
/// years of 365 days before it).
fn nemo_seconds(steps: usize) -> Vec<f64> {
    noleap_months(steps)
        .iter()
        .map(|d| (d + 115.0 * 365.0) * 86_400.0)
        .collect()
}

/// NEMO/XIOS coordinates of a grid_T-type file (nav_lat, nav_lon, deptht, time_counter).
fn nemo_coordinates(steps: usize) -> Vec<Var> {
    let seconds = nemo_seconds(steps);
    let to_seconds = |d: &f64| (d + 115.0 * 365.0) * 86_400.0;
    let bounds: Vec<f64> = noleap_month_bounds(steps).iter().map(to_seconds).collect();
    vec![
        Var::new("nav_lat", &["y", "x"], lat2())
            .f32()
            .attr("standard_name", "latitude")
            .attr("long_name", "Latitude")
            .attr("units", "degrees_north"),
        Var::new("nav_lon", &["y", "x"], lon2())
            .f32()
            .attr("standard_name", "longitude")
            .attr("long_name", "Longitude")
            .attr("units", "degrees_east"),
        Var::new(
            "deptht",
            &["deptht"],
            (0..G.levels).map(level_depth).collect(),
        )
        .f32()
        .attr("name", "deptht")
        .attr("long_name", "Vertical T levels")
        .attr("units", "m")
        .attr("positive", "down"),
        Var::new("time_centered", &["time_counter"], seconds.clone())
            .attr("standard_name", "time")
            .attr("long_name", "Time axis")
            .attr("calendar", "noleap")
            .attr("units", "seconds since 1900-01-01 00:00:00")
            .attr("time_origin", "1900-01-01 00:00:00"),
        Var::new("time_counter", &["time_counter"], seconds)
            .attr("axis", "T")
            .attr("standard_name", "time")
            .attr("long_name", "Time axis")
            .attr("calendar", "noleap")
            .attr("units", "seconds since 1900-01-01 00:00:00")
            .attr("time_origin", "1900-01-01 00:00:00")
            .attr("bounds", "time_counter_bounds"),
        Var::new(
            "time_counter_bounds",
            &["time_counter", "axis_nbounds"],
            bounds,
        ),
    ]
}

const NEMO_DIMS: [&str; 4] = ["time_counter", "deptht", "y", "x"];

fn nemo_field(name: &str, source: &str, factor: f64, long_name: &str, units: &str) -> Var {
    field(name, NEMO_DIMS, source, factor, 2)
        .attr("long_name", long_name)
        .attr("units", units)
        .attr("online_operation", "average")
        .attr("_FillValue", 1e20_f32)
        .attr("missing_value", 1e20_f32)
        .attr("coordinates", "time_centered nav_lat nav_lon")
}

fn nemo_dims() -> Vec<(&'static str, usize)> {
    vec![
        ("time_counter", 2),
        ("deptht", G.levels),
        ("y", G.rows),
        ("x", G.cols),
        ("axis_nbounds", 2),
    ]
}

/// A NEMO run: grid_T (temperature, salinity) and ptrc_T (PISCES tracers in mmol/m3);
/// without `coordinates` attributes when `named_coordinates` is false.
fn nemo_run(dir: &Path, temperature: Var, salinity: Var, named_coordinates: bool) {
    let strip = |v: Var| {
        if named_coordinates {
            v
        } else {
            v.without("coordinates")
        }
    };
    let mut grid_t = nemo_coordinates(2);
    grid_t.extend([strip(temperature), strip(salinity)]);
    write_nc(
        &dir.join("ORCA_1m_20150101_20150228_grid_T.nc"),
        &nemo_dims(),
        &grid_t,
    );
    let mut ptrc_t = nemo_coordinates(2);
    ptrc_t.extend(
        [
            nemo_field(
                "DIC",
                "dic",
                1000.0,
                "Dissolved inorganic Concentration",
                "mmol/m3",
            ),
            nemo_field(
                "Alkalini",
                "alkalinity",
                1000.0,
                "Total Alkalinity Concentration",
                "mmol/m3",
            ),
            nemo_field(
                "PO4",
                "phosphate",
                1000.0,
                "Phosphate Concentration",
                "mmol/m3",
            ),
            nemo_field(
                "Si",
                "silicate",
                1000.0,
                "Silicate Concentration",
                "mmol/m3",
            ),
        ]
        .map(strip),
    );
    write_nc(
        &dir.join("ORCA_1m_20150101_20150228_ptrc_T.nc"),
        &nemo_dims(),
        &ptrc_t,
    );
}

/// (level, row, col) cell of the checks and its index in a whole-grid slab.
const CELL: (usize, usize, usize) = (2, 3, 1);
const AT: usize = CELL.0 * 20 + CELL.1 * 5 + CELL.2;

/// The synthetic value of `source` at step 1 and [`CELL`], as stored in float32.
fn stored(source: &str, factor: f64) -> f64 {
    (value(source, 1, CELL.0, CELL.1, CELL.2) * factor) as f32 as f64
}

#[test]
fn nemo_grid_t_and_pisces_ptrc_t_files_open_without_a_mapping() {
    let dir = tempdir().unwrap();
    // NEMO 4 (XIOS, field_def_nemo-oce.xml): votemper/vosaline with standard names.
    nemo_run(
        dir.path(),
        nemo_field("votemper", "temperature", 1.0, "temperature", "degC")
            .attr("standard_name", "sea_water_potential_temperature"),
        nemo_field("vosaline", "salinity", 1.0, "salinity", "1e-3")
            .attr("standard_name", "sea_water_practical_salinity"),
        true,
    );
    let run = open(dir.path()).unwrap();
    let report = run.report();
    for needle in [
        "variable 'DIC' (found by NEMO native name)",
        "variable 'Alkalini' (found by NEMO native name)",
        "variable 'PO4' (found by NEMO, ROMS native name)",
        "variable 'Si' (found by NEMO native name)",
        "variable 'votemper' (found by CF standard_name)",
        "curvilinear",
        "latitude 'nav_lat'",
        "z-levels 'deptht'",
        "sampling: monthly (checked against the run's time bounds)",
        "field_def_nemo-pisces.xml",
    ] {
        assert!(report.contains(needle), "lacks {needle}:\n{report}");
    }
    let slab = run.read_slab(1, 0..G.rows).unwrap();
    // mmol/m3 / 1025 kg m-3 (the test's reference density) -> µmol kg-1.
    let dic = stored("dic", 1000.0) * 1e-3 * 1e6 / 1025.0;
    assert!(
        (slab.dic[AT] - dic).abs() < 1e-9,
        "{} vs {dic}",
        slab.dic[AT]
    );
    let po4 = stored("phosphate", 1000.0) * 1e-3 * 1e6 / 1025.0;
    assert!((slab.phosphate[AT] - po4).abs() < 1e-9);
    // Pressure from depth and the 2-D nav_lat of the cell.
    let p = seawater::sea_pressure_from_depth(1000.0, lat2()[CELL.1 * 5 + CELL.2] as f32 as f64)
        .unwrap();
    assert!((slab.pressure_dbar[AT] - p).abs() < 1e-9);
}

#[test]
fn nemo_ioipsl_output_asks_for_the_temperature_kind_then_opens_with_it_alone() {
    let dir = tempdir().unwrap();
    // NEMO 3 IOIPSL (diawri.F90): votemper "Temperature" in "C", vosaline "Salinity" in
    // "PSU", no standard names: EOS-80 and TEOS-10 runs write the same. No `coordinates`
    // attribute either (whether IOIPSL writes one is not checked here): nav_lat is found
    // by its NEMO name.
    nemo_run(
        dir.path(),
        nemo_field("votemper", "temperature", 1.0, "Temperature", "C"),
        nemo_field("vosaline", "salinity", 1.0, "Salinity", "PSU"),
        false,
    );
    let e = open(dir.path()).err().unwrap();
    assert!(
        e.contains(
            "temperature: variable 'votemper' (found by NEMO native name) does not say whether"
        ) && e.contains("--variable temperature.kind=potential")
            && e.contains("temperature = { kind = \"potential\" }"),
        "{e}"
    );
    let mut spec = spec(vec![format!("{}/*.nc", dir.path().display())]);
    spec.mapping.set("temperature.kind", "potential").unwrap();
    let run = Run::open(&spec).unwrap();
    assert!(
        run.report().contains("latitude 'nav_lat'"),
        "{}",
        run.report()
    );
    let slab = run.read_slab(1, 0..G.rows).unwrap();
    // "C" of the NEMO family read as degrees Celsius; potential -> in-situ warms at depth.
    let theta = stored("temperature", 1.0);
    assert!(slab.temperature_c[AT] > theta && slab.temperature_c[AT] - theta < 0.2);
}

const ROMS_DIMS: [&str; 4] = ["ocean_time", "s_rho", "eta_rho", "xi_rho"];

fn roms_field(
    name: &str,
    source: &str,
    factor: f64,
    long_name: &str,
    units: &str,
    standard_name: &str,
) -> Var {
    let mut v = field(name, ROMS_DIMS, source, factor, 2)
        .attr("long_name", long_name)
        .attr("units", units)
        .attr("time", "ocean_time")
        .attr("coordinates", "lon_rho lat_rho s_rho ocean_time")
        .attr("field", format!("{name}, scalar, series").as_str())
        .attr("_FillValue", 1e37_f32);
    if !standard_name.is_empty() {
        v = v.attr("standard_name", standard_name);
    }
    v
}

/// A ROMS history file (terrain-following s_rho, Vtransform 2) with the Fennel carbonate
/// tracers TIC and alkalinity and nutrients PO4, SiOH4 (varinfo.yaml).
fn roms_run(dir: &Path, temp_standard_name: &str) {
    let seconds: Vec<f64> = noleap_months(2).iter().map(|d| d * 86_400.0).collect();
    let h: Vec<f64> = (0..G.rows)
        .flat_map(|j| (0..G.cols).map(move |_| 100.0 + 50.0 * j as f64))
        .collect();
    let mut vars = vec![
        Var::new("ocean_time", &["ocean_time"], seconds)
            .attr("long_name", "time since initialization")
            .attr("units", "seconds since 2015-01-01 00:00:00")
            .attr("calendar", "noleap")
            .attr("field", "time, scalar, series"),
        Var::new("s_rho", &["s_rho"], vec![-0.9, -0.5, -0.1])
            .attr("long_name", "S-coordinate at RHO-points")
            .attr("valid_min", -1.0)
            .attr("valid_max", 0.0)
            .attr("positive", "up")
            .attr("standard_name", "ocean_s_coordinate_g2")
            .attr(
                "formula_terms",
                "s: s_rho C: Cs_r eta: zeta depth: h depth_c: hc",
            )
            .attr("field", "s_rho, scalar"),
        Var::new("Cs_r", &["s_rho"], vec![-0.8, -0.3, -0.05])
            .attr("long_name", "S-coordinate stretching curves at RHO-points")
            .attr("valid_min", -1.0)
            .attr("valid_max", 0.0),
        Var::new("hc", &[], vec![10.0])
            .attr("long_name", "S-coordinate parameter, critical depth")
            .attr("units", "meter"),
        Var::new("h", &["eta_rho", "xi_rho"], h)
            .attr("long_name", "bathymetry at RHO-points")
            .attr("units", "meter")
            .attr("coordinates", "lon_rho lat_rho"),
        Var::new("lat_rho", &["eta_rho", "xi_rho"], lat2())
            .attr("long_name", "latitude of RHO-points")
            .attr("units", "degree_north")
            .attr("standard_name", "grid_latitude_at_cell_center"),
        Var::new("lon_rho", &["eta_rho", "xi_rho"], lon2())
            .attr("long_name", "longitude of RHO-points")
            .attr("units", "degree_east")
            .attr("standard_name", "grid_longitude_at_cell_center"),
        Var::new(
            "zeta",
            &["ocean_time", "eta_rho", "xi_rho"],
            vec![0.25; 2 * G.rows * G.cols],
        )
        .f32()
        .attr("long_name", "free-surface")
        .attr("units", "meter")
        .attr("time", "ocean_time")
        .attr("coordinates", "lon_rho lat_rho ocean_time"),
    ];
    vars.extend([
        roms_field(
            "temp",
            "temperature",
            1.0,
            "potential temperature",
            "Celsius",
            temp_standard_name,
        ),
        roms_field(
            "salt",
            "salinity",
            1.0,
            "salinity",
            "nondimensional",
            "sea_water_practical_salinity",
        ),
        roms_field(
            "TIC",
            "dic",
            1000.0,
            "total inorganic carbon",
            "millimole_carbon meter-3",
            "mole_concentration_of_total_inorganic_carbon_in_sea_water",
        ),
        roms_field(
            "alkalinity",
            "alkalinity",
            1000.0,
            "total alkalinity",
            "milliequivalents meter-3",
            "sea_water_alkalinity_expressed_as_mole_equivalent",
        ),
        roms_field(
            "PO4",
            "phosphate",
            1000.0,
            "phosphate concentration",
            "millimole_PO4 meter-3",
            "mole_concentration_of_phosphate_in_sea_water",
        ),
        roms_field(
            "SiOH4",
            "silicate",
            1000.0,
            "silicate concentration",
            "millimole_silica meter-3",
            "mole_concentration_of_silicate_in_sea_water",
        ),
    ]);
    let dims = [
        ("ocean_time", 2),
        ("s_rho", G.levels),
        ("eta_rho", G.rows),
        ("xi_rho", G.cols),
    ];
    write_nc(&dir.join("roms_his_0001.nc"), &dims, &vars);
}

#[test]
fn roms_terrain_following_runs_open_without_a_mapping() {
    // As ROMS 4 writes temp (with its standard name), and as without one: its long_name
    // "potential temperature" says the kind.
    for temp_standard_name in ["sea_water_potential_temperature", ""] {
        let dir = tempdir().unwrap();
        roms_run(dir.path(), temp_standard_name);
        let run = open(dir.path()).unwrap_or_else(|e| panic!("{temp_standard_name:?}: {e}"));
        let report = run.report();
        for needle in [
            "variable 'TIC' (found by ROMS native name)",
            "variable 'SiOH4'",
            "units \"millimole_silica meter-3\"",
            "parametric ocean_s_coordinate_g2 's_rho'",
            "latitude 'lat_rho'",
            "potential temperature -> in-situ",
        ] {
            assert!(report.contains(needle), "lacks {needle}:\n{report}");
        }
        let slab = run.read_slab(1, 0..G.rows).unwrap();
        // millimole_carbon meter-3: 1e-3 mol m-3 per unit, / 1025 kg m-3.
        let dic = stored("dic", 1000.0) * 1e-3 * 1e6 / 1025.0;
        assert!((slab.dic[AT] - dic).abs() < 1e-9);
        let alk = stored("alkalinity", 1000.0) * 1e-3 * 1e6 / 1025.0;
        assert!((slab.alkalinity[AT] - alk).abs() < 1e-9);
        // CF Appendix D, ocean_s_coordinate_g2 at s = -0.1, C = -0.05, depth_c = 10 m,
        // h = 250 m (row 3), eta = 0.25 m: S = (10 × -0.1 + 250 × -0.05) / 260
        // = -0.0519230769; z = 0.25 + 250.25 × S = -12.7437500 -> depth 12.74375 m.
        assert!(
            (slab.depth_m[AT] - 12.74375).abs() < 1e-6,
            "{}",
            slab.depth_m[AT]
        );
    }
}

const MOM_DIMS: [&str; 4] = ["time", "z_l", "yh", "xh"];

fn mom_field(name: &str, source: &str, factor: f64, long_name: &str, units: &str) -> Var {
    field(name, MOM_DIMS, source, factor, 2)
        .attr("long_name", long_name)
        .attr("units", units)
        .attr("missing_value", 1e20_f32)
        .attr("_FillValue", 1e20_f32)
        .attr(
            "cell_methods",
            "area:mean z_l:mean yh:mean xh:mean time: mean",
        )
}

/// MOM6 coordinates of a z-remapped diagnostic file (xh, yh nominal; z_l; time, bounds).
fn mom_coordinates() -> Vec<Var> {
    // Days since 0001-01-01 in the noleap calendar: 2014 whole years of 365 days.
    let days: Vec<f64> = noleap_months(2)
        .iter()
        .map(|d| d + 2014.0 * 365.0)
        .collect();
    let bounds: Vec<f64> = noleap_month_bounds(2)
        .iter()
        .map(|d| d + 2014.0 * 365.0)
        .collect();
    vec![
        Var::new("xh", &["xh"], (0..G.cols).map(lon).collect())
            .attr("long_name", "h point nominal longitude")
            .attr("units", "degrees_east")
            .attr("cartesian_axis", "X"),
        Var::new("yh", &["yh"], (0..G.rows).map(lat).collect())
            .attr("long_name", "h point nominal latitude")
            .attr("units", "degrees_north")
            .attr("cartesian_axis", "Y"),
        Var::new("z_l", &["z_l"], (0..G.levels).map(level_depth).collect())
            .attr("long_name", "Depth at cell center")
            .attr("units", "meters")
            .attr("cartesian_axis", "Z")
            .attr("positive", "down"),
        Var::new("time", &["time"], days)
            .attr("long_name", "time")
            .attr("units", "days since 0001-01-01 00:00:00")
            .attr("cartesian_axis", "T")
            .attr("calendar_type", "NOLEAP")
            .attr("calendar", "NOLEAP")
            .attr("bounds", "time_bnds"),
        Var::new("time_bnds", &["time", "nv"], bounds)
            .attr("long_name", "time axis boundaries")
            .attr("units", "days since 0001-01-01 00:00:00"),
    ]
}

fn mom_dims() -> Vec<(&'static str, usize)> {
    vec![
        ("time", 2),
        ("z_l", G.levels),
        ("yh", G.rows),
        ("xh", G.cols),
        ("nv", 2),
    ]
}

/// A MOM6 run: physics in ocean_month_z, COBALT tracers (mol/kg) in their own file, and
/// the static file with geolat/geolon and deptho.
fn mom_run(dir: &Path, teos10: bool) {
    let mut physics = mom_coordinates();
    if teos10 {
        physics.push(mom_field(
            "contemp",
            "temperature",
            1.0,
            "Conservative Temperature",
            "Celsius",
        ));
        physics.push(mom_field(
            "abssalt",
            "salinity",
            35.16504 / 35.0,
            "Absolute Salinity",
            "g kg-1",
        ));
    } else {
        physics.push(mom_field(
            "temp",
            "temperature",
            1.0,
            "Potential Temperature",
            "degC",
        ));
        physics.push(mom_field("salt", "salinity", 1.0, "Salinity", "psu"));
    }
    write_nc(
        &dir.join("19000101.ocean_month_z.nc"),
        &mom_dims(),
        &physics,
    );
    let mut tracers = mom_coordinates();
    // mol m-3 of the synthetic fields / 1025 kg m-3 -> mol kg-1.
    tracers.extend([
        mom_field(
            "dic",
            "dic",
            1.0 / 1025.0,
            "Dissolved Inorganic Carbon",
            "mol/kg",
        ),
        mom_field("alk", "alkalinity", 1.0 / 1025.0, "Alkalinity", "mol/kg"),
        mom_field("po4", "phosphate", 1.0 / 1025.0, "Phosphate", "mol/kg"),
        mom_field("sio4", "silicate", 1.0 / 1025.0, "Silicate", "mol/kg"),
    ]);
    write_nc(
        &dir.join("19000101.ocean_cobalt_tracers_month_z.nc"),
        &mom_dims(),
        &tracers,
    );
    let mut statics = mom_coordinates()[..2].to_vec();
    statics.extend([
        Var::new("geolat", &["yh", "xh"], lat2())
            .attr("long_name", "Latitude of tracer (T) points")
            .attr("units", "degrees_north"),
        Var::new("geolon", &["yh", "xh"], lon2())
            .attr("long_name", "Longitude of tracer (T) points")
            .attr("units", "degrees_east"),
        Var::new("deptho", &["yh", "xh"], vec![4000.0; G.rows * G.cols])
            .attr("long_name", "Sea Floor Depth")
            .attr("units", "m")
            .attr("standard_name", "sea_floor_depth_below_geoid"),
    ]);
    write_nc(
        &dir.join("19000101.ocean_static.nc"),
        &[("yh", G.rows), ("xh", G.cols)],
        &statics,
    );
}

#[test]
fn mom6_runs_with_cobalt_tracers_open_without_a_mapping() {
    for teos10 in [false, true] {
        let dir = tempdir().unwrap();
        mom_run(dir.path(), teos10);
        let run = open(dir.path()).unwrap_or_else(|e| panic!("teos10={teos10}: {e}"));
        let report = run.report();
        let (temperature, kind) = if teos10 {
            ("contemp", "conservative temperature")
        } else {
            ("temp", "potential temperature")
        };
        for needle in [
            format!("variable '{temperature}'"),
            kind.to_string(),
            "variable 'dic' (found by MOM native name)".to_string(),
            "variable 'sio4' (found by MOM native name)".to_string(),
            "z-levels 'z_l'".to_string(),
            "calendar noleap".to_string(),
            "sampling: monthly (checked against the run's time bounds)".to_string(),
        ] {
            assert!(
                report.contains(&needle),
                "teos10={teos10} lacks {needle}:\n{report}"
            );
        }
        let slab = run.read_slab(1, 0..G.rows).unwrap();
        // Per mass: mol kg-1 × 1e6, no density involved.
        let dic = stored("dic", 1.0 / 1025.0) * 1e6;
        assert!((slab.dic[AT] - dic).abs() < 1e-9);
        let sp = stored("salinity", if teos10 { 35.16504 / 35.0 } else { 1.0 });
        let sp = if teos10 {
            seawater::practical_from_absolute(sp)
        } else {
            sp
        };
        assert!((slab.salinity[AT] - sp).abs() < 1e-9);
    }
}

#[test]
fn cmip6_omip_output_on_a_curvilinear_grid_opens_without_a_mapping() {
    let dir = tempdir().unwrap();
    let times = noleap_months(2);
    let bounds = noleap_month_bounds(2);
    for var in ["dissic", "talk", "thetao", "so", "po4", "si"] {
        let (source, standard_name, units) = cmip_meta(var);
        let vars = vec![
            Var::new("time", &["time"], times.clone())
                .attr("units", "days since 2015-01-01")
                .attr("calendar", "365_day")
                .attr("standard_name", "time")
                .attr("axis", "T")
                .attr("bounds", "time_bnds"),
            Var::new("time_bnds", &["time", "bnds"], bounds.clone()),
            Var::new("lev", &["lev"], (0..G.levels).map(level_depth).collect())
                .attr("long_name", "ocean depth coordinate")
                .attr("standard_name", "depth")
                .attr("units", "m")
                .attr("positive", "down")
                .attr("axis", "Z"),
            Var::new("j", &["j"], (0..G.rows).map(|j| j as f64).collect())
                .attr("long_name", "cell index along second dimension")
                .attr("units", "1"),
            Var::new("i", &["i"], (0..G.cols).map(|i| i as f64).collect())
                .attr("long_name", "cell index along first dimension")
                .attr("units", "1"),
            Var::new("latitude", &["j", "i"], lat2())
                .attr("standard_name", "latitude")
                .attr("units", "degrees_north"),
            Var::new("longitude", &["j", "i"], lon2())
                .attr("standard_name", "longitude")
                .attr("units", "degrees_east"),
            field(var, ["time", "lev", "j", "i"], source, 1.0, 2)
                .attr("standard_name", standard_name)
                .attr("units", units)
                .attr("_FillValue", 1e20_f32)
                .attr("coordinates", "latitude longitude")
                .attr("cell_methods", "area: mean where sea time: mean"),
        ];
        let dims = [
            ("time", 2),
            ("bnds", 2),
            ("lev", G.levels),
            ("j", G.rows),
            ("i", G.cols),
        ];
        write_nc(
            &dir.path().join(format!(
                "{var}_Omon_SYNTH_omip1_r1i1p1f1_gn_201501-201502.nc"
            )),
            &dims,
            &vars,
        );
    }
    let run = open(dir.path()).unwrap();
    let report = run.report();
    assert!(
        report.contains("curvilinear")
            && report.contains("latitude 'latitude'")
            && report.contains("calendar noleap"),
        "{report}"
    );
    let slab = run.read_slab(1, 0..G.rows).unwrap();
    let dic = stored("dic", 1.0) * 1e6 / 1025.0;
    assert!((slab.dic[AT] - dic).abs() < 1e-9);
}
