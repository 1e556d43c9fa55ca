//! Standard-uncertainty fields of a compute job on a small SYNTHETIC run (tests/common).
//! Expected values are recomputed per cell with the chemistry crate's `standard_uncertainties`
//! from the same converted inputs (Run::read_slab); the CF links follow CF 1.10 section 3.4
//! (ancillary_variables) and Appendix C (the standard_name modifier standard_error).

mod common;

use acidscape_analysis::horizons::HorizonStatus;
use acidscape_chem::uncertainty_budget;
use acidscape_chem::{equilibrium_constants, solve_with_constants, standard_uncertainties};
use acidscape_chem::{ConstantChoice, ConstantUncertainties};
use acidscape_chem::{InputUncertainties, Output, SolvedSample, Source, Uncertainties};
use acidscape_pipeline::{
    cell_sample, partial_path, run_job, JobOptions, NoProgress, PipelineError, UncertaintyAmount,
    UncertaintyRequest, FLAG_FILL, VALUE_FILL,
};
use common::*;
use std::path::{Path, PathBuf};

/// Every indicator of [`every_indicator`], its output, and whether it is per volume.
const INDICATORS: [(&str, Output, bool); 10] = [
    ("ph", Output::PhTotal, false),
    ("ph_free_scale", Output::PhFree, false),
    ("co3", Output::Carbonate, true),
    ("hco3", Output::Bicarbonate, true),
    ("co2_star", Output::Co2, true),
    ("pco2", Output::Pco2, false),
    ("fco2", Output::Fco2, false),
    ("omega_aragonite", Output::OmegaAragonite, false),
    ("omega_calcite", Output::OmegaCalcite, false),
    ("revelle_factor", Output::RevelleFactor, false),
];

/// DIC ± 3 and alkalinity ± 2 µmol kg-1, temperature ± 0.05 °C, salinity ± 0.005, phosphate
/// ± 10 % and silicate ± 5 %, constants as Orr et al. 2018 recommend (illustrative values).
fn request() -> UncertaintyRequest {
    UncertaintyRequest {
        inputs: vec![
            (Source::Dic, UncertaintyAmount::Absolute(3.0)),
            (Source::Alkalinity, UncertaintyAmount::Absolute(2.0)),
            (Source::Temperature, UncertaintyAmount::Absolute(0.05)),
            (Source::Salinity, UncertaintyAmount::Absolute(0.005)),
            (Source::Phosphate, UncertaintyAmount::Relative(0.1)),
            (Source::Silicate, UncertaintyAmount::Relative(0.05)),
        ],
        fields: Vec::new(),
        constants: ConstantUncertainties::ORR_2018,
        breakdown: false,
    }
}

/// The sources a breakdown of [`request`] writes, with their keys, in `Source::ALL` order.
const BREAKDOWN: [(Source, &str); 14] = [
    (Source::Alkalinity, "alkalinity"),
    (Source::Dic, "dic"),
    (Source::Temperature, "temperature"),
    (Source::Salinity, "salinity"),
    (Source::Phosphate, "phosphate"),
    (Source::Silicate, "silicate"),
    (Source::Pk0, "pk0"),
    (Source::Pk1, "pk1"),
    (Source::Pk2, "pk2"),
    (Source::Pkb, "pkb"),
    (Source::Pkw, "pkw"),
    (Source::PkspAragonite, "pksp_aragonite"),
    (Source::PkspCalcite, "pksp_calcite"),
    (Source::TotalBoron, "total_boron"),
];

fn job(output: &Path, uncertainty: Option<UncertaintyRequest>) -> JobOptions {
    let mut options = options(output, every_indicator());
    options.uncertainty = uncertainty;
    options
}

fn text_attribute(path: &Path, variable: &str, name: &str) -> Option<String> {
    let file = netcdf::open(path).unwrap();
    let var = file.variable(variable).unwrap();
    match var.attribute_value(name) {
        Some(Ok(netcdf::AttributeValue::Str(text))) => Some(text),
        None => None,
        other => panic!("{variable}:{name} is {other:?}"),
    }
}

#[test]
fn uncertainty_fields_equal_the_chemistry_per_cell() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 2, 1);
    let run = open_run(&inputs);
    let plain = dir.path().join("plain.nc");
    let with = dir.path().join("with.nc");
    let broken_down = dir.path().join("broken-down.nc");
    run_job(&run, &job(&plain, None), &mut NoProgress).unwrap();
    run_job(&run, &job(&with, Some(request())), &mut NoProgress).unwrap();
    let breakdown = UncertaintyRequest {
        breakdown: true,
        ..request()
    };
    run_job(&run, &job(&broken_down, Some(breakdown)), &mut NoProgress).unwrap();
    // Each combined uncertainty lists its contributions as ancillary variables (CF 1.10
    // section 3.4); a source without an uncertainty (pressure) has none.
    let mut listed = vec!["quality_flag".to_string()];
    listed.extend(
        BREAKDOWN
            .iter()
            .map(|(_, key)| format!("ph_uncertainty_from_{key}")),
    );
    assert_eq!(
        text_attribute(&broken_down, "ph_uncertainty", "ancillary_variables").unwrap(),
        listed.join(" ")
    );
    let file = netcdf::open(&broken_down).unwrap();
    assert!(file.variable("ph_uncertainty_from_pressure").is_none());
    assert_eq!(
        file.variables()
            .filter(|v| v.name().contains("_from_"))
            .count(),
        INDICATORS.len() * BREAKDOWN.len()
    );
    // The combined uncertainties do not depend on whether the breakdown is written.
    for (name, ..) in INDICATORS {
        let name = format!("{name}_uncertainty");
        assert_eq!(
            read_f32(&with, &name),
            read_f32(&broken_down, &name),
            "{name}"
        );
    }

    // The indicators and flags are the same bits as without uncertainties.
    assert_eq!(
        read_i16(&plain, "quality_flag"),
        read_i16(&with, "quality_flag")
    );
    for (name, ..) in INDICATORS {
        let (a, b) = (read_f32(&plain, name), read_f32(&with, name));
        assert!(
            a.iter().zip(&b).all(|(x, y)| x.to_bits() == y.to_bits()),
            "{name}"
        );
    }

    let flags = read_i16(&with, "quality_flag");
    let stored: Vec<Vec<f32>> = INDICATORS
        .iter()
        .map(|(name, ..)| read_f32(&with, &format!("{name}_uncertainty")))
        .collect();
    let contributions: Vec<Vec<Vec<f32>>> = INDICATORS
        .iter()
        .map(|(name, ..)| {
            (BREAKDOWN.iter())
                .map(|(_, key)| read_f32(&broken_down, &format!("{name}_uncertainty_from_{key}")))
                .collect()
        })
        .collect();
    let cells = LEVELS * ROWS * COLS;
    let choice = ConstantChoice::default();
    let mut checked = 0;
    for step in 0..2 {
        let slab = run.read_slab(step, 0..ROWS).unwrap();
        for cell in 0..cells {
            let at = step * cells + cell;
            let indicator = read_f32(&with, "ph")[at];
            if flags[at] == FLAG_FILL || indicator == VALUE_FILL {
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL), "cell {cell}");
                continue;
            }
            let (pair, conditions) = cell_sample(&slab, cell);
            let constants = equilibrium_constants(&conditions, &choice).unwrap();
            let solution = solve_with_constants(pair, &conditions, &constants).unwrap();
            let sample = SolvedSample {
                pair: &pair,
                conditions: &conditions,
                choice: &choice,
                constants: &constants,
                solution: &solution,
            };
            let u = Uncertainties {
                inputs: InputUncertainties {
                    dic: 3.0,
                    alkalinity: 2.0,
                    temperature: 0.05,
                    salinity: 0.005,
                    phosphate: 0.1 * conditions.phosphate,
                    silicate: 0.05 * conditions.silicate,
                    ..Default::default()
                },
                constants: ConstantUncertainties::ORR_2018,
            };
            let expected = standard_uncertainties(&sample, &u);
            let budget = uncertainty_budget(&sample, &u);
            let indicators = INDICATORS.iter().zip(&stored).zip(&contributions);
            for (((name, output, per_volume), values), from) in indicators {
                // µmol kg-1 to mol m-3 with the run's density.
                let scale = if *per_volume {
                    1e-6 * slab.density_kg_m3[cell]
                } else {
                    1.0
                };
                let value = expected.get(*output) * scale;
                assert_eq!(values[at], value as f32, "{name} step {step} cell {cell}");
                assert!(value > 0.0, "{name} step {step} cell {cell}");
                for ((source, key), from) in BREAKDOWN.iter().zip(from) {
                    let part = budget.get(*source, *output) * scale;
                    assert_eq!(from[at], part as f32, "{name} from {key}, cell {cell}");
                }
            }
            checked += 1;
        }
    }
    assert!(checked > 40, "only {checked} cells checked");
}

#[test]
fn uncertainty_fields_are_cf_linked() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 1, 1);
    let output = dir.path().join("with.nc");
    run_job(
        &open_run(&inputs),
        &job(&output, Some(request())),
        &mut NoProgress,
    )
    .unwrap();
    for (name, ..) in INDICATORS {
        let companion = format!("{name}_uncertainty");
        let ancillary = text_attribute(&output, name, "ancillary_variables").unwrap();
        let listed: Vec<&str> = ancillary.split(' ').collect();
        assert_eq!(listed, vec!["quality_flag", companion.as_str()], "{name}");
        assert_eq!(
            text_attribute(&output, name, "units"),
            text_attribute(&output, &companion, "units"),
            "{name}"
        );
        let standard = text_attribute(&output, name, "standard_name");
        let expected = standard.map(|s| format!("{s} standard_error"));
        assert_eq!(
            text_attribute(&output, &companion, "standard_name"),
            expected,
            "{name}"
        );
        let comment = text_attribute(&output, &companion, "comment").unwrap();
        for part in ["Orr", "dic 3 umol kg-1", "phosphate 10%", "pK2 0.015"] {
            assert!(comment.contains(part), "{companion}: {comment}");
        }
    }
    // The horizon depths (omega = 1: a CF standard name) get theirs through the Ω profile.
    for mineral in ["aragonite", "calcite"] {
        let depth = format!("horizon_depth_{mineral}");
        let companion = format!("{depth}_uncertainty");
        let ancillary = text_attribute(&output, &depth, "ancillary_variables").unwrap();
        assert!(ancillary.split(' ').any(|n| n == companion), "{ancillary}");
        assert_eq!(
            text_attribute(&output, &companion, "standard_name").unwrap(),
            format!("minimum_depth_of_{mineral}_undersaturation_in_sea_water standard_error")
        );
        assert_eq!(text_attribute(&output, &companion, "units").unwrap(), "m");
        let (depths, uncertainties) = (read_f32(&output, &depth), read_f32(&output, &companion));
        let statuses: Vec<i8> = netcdf::open(&output)
            .unwrap()
            .variable(&format!("horizon_status_{mineral}"))
            .unwrap()
            .get_values(..)
            .unwrap();
        let mut with = 0;
        for ((d, u), status) in depths.iter().zip(&uncertainties).zip(&statuses) {
            // A depth between or below two level centres has one; no depth, or 0 m at the
            // surface, none.
            let interpolated = matches!(
                HorizonStatus::from_flag_value(*status),
                Some(
                    HorizonStatus::SingleCrossing
                        | HorizonStatus::SeveralCrossings
                        | HorizonStatus::CrossingInBottomCell
                        | HorizonStatus::CrossingAboveMissingOmega
                )
            );
            with += usize::from(interpolated);
            assert_eq!(
                *u != VALUE_FILL,
                interpolated,
                "depth {d} status {status} u {u}"
            );
            if interpolated {
                assert!(*d != VALUE_FILL && *u >= 0.0 && u.is_finite());
            }
        }
        assert!(with > 0, "no {mineral} horizon between level centres");
    }
    // The pH and pCO2 have CF standard names, so their companions carry the modifier.
    assert_eq!(
        text_attribute(&output, "ph_uncertainty", "standard_name").as_deref(),
        Some("sea_water_ph_reported_on_total_scale standard_error")
    );
}

fn stop_after(inputs: &[PathBuf], output: &Path, steps: usize) {
    let mut options = job(output, Some(request()));
    options.stop_after_steps = Some(steps);
    let err = run_job(&open_run(inputs), &options, &mut NoProgress).unwrap_err();
    assert!(matches!(err, PipelineError::Interrupted { .. }), "{err}");
    assert!(partial_path(output).exists());
}

#[test]
fn resume_with_uncertainties_is_bit_identical_and_keeps_the_request() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 4, 2);
    let whole = dir.path().join("whole.nc");
    run_job(
        &open_run(&inputs),
        &job(&whole, Some(request())),
        &mut NoProgress,
    )
    .unwrap();

    let output = dir.path().join("resumed.nc");
    stop_after(&inputs, &output, 2);
    // Other uncertainties than the interrupted run's are refused.
    let mut other = job(&output, Some(request()));
    other.uncertainty.as_mut().unwrap().constants = ConstantUncertainties::NONE;
    other.resume = true;
    let err = run_job(&open_run(&inputs), &other, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(err.contains("uncertainty"), "{err}");

    let mut resumed = job(&output, Some(request()));
    resumed.resume = true;
    run_job(&open_run(&inputs), &resumed, &mut NoProgress).unwrap();
    assert_same_output(&whole, &output);
}
