//! End-to-end compute jobs on a small SYNTHETIC run written by the test (tests/common).
//! Expected values come from acidscape_chem::solve on the same converted inputs
//! (Run::read_slab): the pipeline must add nothing but the f32 rounding of the output.

mod common;

use acidscape_chem::{solve, Conditions, ConstantChoice, InputPair};
use acidscape_gridio::{DensityChoice, Run, RunSpec, VariableMapping};
use acidscape_pipeline::{
    partial_path, progress_path, run_job, ConcentrationUnit, Indicator, IndicatorChoice,
    JobOptions, NoProgress, PhScale, PipelineError, FLAG_FILL, VALUE_FILL,
};
use common::*;
use std::path::{Path, PathBuf};

fn open_run(paths: &[PathBuf]) -> Run {
    Run::open(&RunSpec {
        inputs: paths.iter().map(|p| p.display().to_string()).collect(),
        mapping: VariableMapping::default(),
        density: DensityChoice::InSitu,
        ..Default::default()
    })
    .unwrap()
}

fn options(output: &Path, indicators: IndicatorChoice) -> JobOptions {
    JobOptions {
        output: output.to_path_buf(),
        overwrite: false,
        resume: false,
        memory_budget_bytes: 1 << 30,
        constants: ConstantChoice::default(),
        indicators,
        command_line: "acidscape compute (test)".into(),
        deflate_level: 4,
        stop_after_steps: None,
        max_rows_per_slab: None,
    }
}

/// The message of a job that must fail.
fn refusal(run: &Run, options: &JobOptions) -> String {
    run_job(run, options, &mut NoProgress)
        .unwrap_err()
        .to_string()
}

fn every_indicator() -> IndicatorChoice {
    IndicatorChoice {
        indicators: Indicator::ALL.to_vec(),
        ph_scales: vec![PhScale::Total, PhScale::Free],
        concentration_unit: ConcentrationUnit::MolPerCubicMetre,
    }
}

#[test]
fn output_equals_the_solver_and_flags_mark_the_bad_cells() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 2, 2);
    let run = open_run(&inputs);
    let output = dir.path().join("indicators.nc");
    let choice = every_indicator();
    let summary = run_job(&run, &options(&output, choice.clone()), &mut NoProgress).unwrap();
    assert!(output.exists());
    assert!(!partial_path(&output).exists() && !progress_path(&output).exists());

    let fields = choice.fields().unwrap();
    let flags = read_i8(&output, "quality_flag");
    let cells = LEVELS * ROWS * COLS;
    assert_eq!(flags.len(), 2 * cells);
    let mut computed = 0;
    for step in 0..2 {
        let slab = run.read_slab(step, 0..ROWS).unwrap();
        let stored: Vec<Vec<f32>> = fields.iter().map(|f| read_f32(&output, f.name)).collect();
        for cell in 0..cells {
            let at = step * cells + cell;
            let (level, row, col) = (cell / (ROWS * COLS), (cell / COLS) % ROWS, cell % COLS);
            let flag = flags[at];
            if (row, col) == LAND_COLUMN {
                assert_eq!(flag, FLAG_FILL, "land at {cell}");
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL));
                continue;
            }
            if (level, row, col) == MISSING_DIC_CELL {
                assert_eq!(flag, 3, "missing DIC -> missing_input");
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL));
                continue;
            }
            if (level, row, col) == NEGATIVE_ALKALINITY_CELL {
                assert_eq!(flag, 2, "negative alkalinity -> no_solution");
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL));
                continue;
            }
            let conditions = Conditions {
                temperature_c: slab.temperature_c[cell],
                salinity: slab.salinity[cell],
                pressure_dbar: slab.pressure_dbar[cell],
                phosphate: slab.phosphate[cell],
                silicate: slab.silicate[cell],
            };
            let pair = InputPair::AlkalinityDic {
                alkalinity: slab.alkalinity[cell],
                dic: slab.dic[cell],
            };
            let solution = solve(pair, &conditions, &ConstantChoice::default()).unwrap();
            for (field, values) in fields.iter().zip(&stored) {
                let expected = field.value(&solution, slab.density_kg_m3[cell]) as f32;
                assert_eq!(
                    values[at], expected,
                    "{} at step {step} cell {cell}",
                    field.name
                );
            }
            let expected_flag = if solution.validity.is_material() {
                1
            } else {
                0
            };
            assert_eq!(flag, expected_flag, "flag at step {step} cell {cell}");
            if [HOT_CELL, SALTY_CELL].contains(&(level, row, col)) {
                assert_eq!(flag, 1, "40 °C or S = 50 is outside the constants' ranges");
            }
            computed += usize::from(flag == 0);
        }
    }
    assert!(computed > 0);
    let counts = summary.counts;
    assert_eq!(counts.land, 2 * LEVELS as u64);
    assert_eq!(counts.missing_input, 2);
    assert_eq!(counts.no_solution, 2);
    assert_eq!(counts.computed as usize, computed);
    assert_eq!(counts.wet() + counts.land, 2 * cells as u64);
}

#[test]
fn output_carries_cf_attributes() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 1, 1);
    let run = open_run(&inputs);
    let output = dir.path().join("out.nc");
    run_job(
        &run,
        &options(&output, IndicatorChoice::default()),
        &mut NoProgress,
    )
    .unwrap();
    let file = netcdf::open(&output).unwrap();
    let text = |var: Option<&str>, name: &str| -> String {
        let value = match var {
            Some(v) => file.variable(v).unwrap().attribute_value(name),
            None => file.attribute(name).map(|a| a.value()),
        };
        match value {
            Some(Ok(netcdf::AttributeValue::Str(s))) => s,
            other => panic!("{var:?}:{name} is {other:?}"),
        }
    };
    // CF conventions 1.10 section 2.6.1 (Conventions), 3.3 (standard_name), 3.5 (flags).
    assert_eq!(text(None, "Conventions"), "CF-1.10");
    assert!(text(None, "history").contains("acidscape compute (test)"));
    assert!(text(None, "references").contains("Lueker"));
    assert_eq!(
        text(Some("ph"), "standard_name"),
        "sea_water_ph_reported_on_total_scale"
    );
    assert_eq!(text(Some("co3"), "units"), "mol m-3");
    assert_eq!(text(Some("pco2"), "units"), "uatm");
    assert_eq!(text(Some("quality_flag"), "standard_name"), "status_flag");
    assert_eq!(
        text(Some("quality_flag"), "flag_meanings"),
        "computed outside_validity_range no_solution missing_input"
    );
    assert_eq!(
        text(Some("ph"), "cell_methods"),
        "area: mean where sea time: mean"
    );
    let chunking = file.variable("ph").unwrap().chunking().unwrap().unwrap();
    assert_eq!(chunking, vec![1, LEVELS, ROWS, COLS]);
}

#[test]
fn an_interrupted_job_resumes_to_identical_values() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 4, 2);
    let run = open_run(&inputs);
    let whole = dir.path().join("whole.nc");
    let full = run_job(&run, &options(&whole, every_indicator()), &mut NoProgress).unwrap();

    let pieces = dir.path().join("pieces.nc");
    let mut stopping = options(&pieces, every_indicator());
    stopping.stop_after_steps = Some(2);
    stopping.max_rows_per_slab = Some(3);
    let err = run_job(&run, &stopping, &mut NoProgress).unwrap_err();
    assert!(
        matches!(err, PipelineError::Stopped { steps_done: 2, .. }),
        "{err}"
    );
    assert!(
        !pieces.exists(),
        "an interrupted job must not leave a complete-looking file"
    );
    assert!(partial_path(&pieces).exists());

    // Without --resume or --overwrite the leftover is not silently replaced.
    let err = run_job(&run, &options(&pieces, every_indicator()), &mut NoProgress).unwrap_err();
    assert!(err.to_string().contains("--resume"), "{err}");

    let mut resuming = options(&pieces, every_indicator());
    resuming.resume = true;
    resuming.max_rows_per_slab = Some(1);
    let resumed = run_job(&run, &resuming, &mut NoProgress).unwrap();
    assert_eq!(resumed.first_step, 2);
    assert_eq!(resumed.counts, full.counts);
    for field in every_indicator().fields().unwrap() {
        let a: Vec<u32> = read_f32(&whole, field.name)
            .iter()
            .map(|v| v.to_bits())
            .collect();
        let b: Vec<u32> = read_f32(&pieces, field.name)
            .iter()
            .map(|v| v.to_bits())
            .collect();
        assert_eq!(a, b, "{} differs after resume", field.name);
    }
    assert_eq!(
        read_i8(&whole, "quality_flag"),
        read_i8(&pieces, "quality_flag")
    );
}

#[test]
fn resume_refuses_changed_options() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 3, 1);
    let run = open_run(&inputs);
    let output = dir.path().join("out.nc");
    let mut stopping = options(&output, IndicatorChoice::default());
    stopping.stop_after_steps = Some(1);
    run_job(&run, &stopping, &mut NoProgress).unwrap_err();
    let mut changed = options(&output, every_indicator());
    changed.resume = true;
    let err = run_job(&run, &changed, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("differ") && err.contains("indicators="),
        "{err}"
    );
    assert!(
        partial_path(&output).exists(),
        "a refused resume keeps the partial file"
    );
}

#[test]
fn refuses_unsafe_outputs_before_writing() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 1, 1);
    let run = open_run(&inputs);

    // An input is never an output, even with --overwrite.
    let before = std::fs::read(&inputs[0]).unwrap();
    let mut onto_input = options(&inputs[0], IndicatorChoice::default());
    onto_input.overwrite = true;
    let err = run_job(&run, &onto_input, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(err.contains("is an input"), "{err}");
    assert_eq!(std::fs::read(&inputs[0]).unwrap(), before);

    // An existing output needs --overwrite.
    let existing = dir.path().join("existing.nc");
    std::fs::write(&existing, b"keep me").unwrap();
    let err = refusal(&run, &options(&existing, IndicatorChoice::default()));
    assert!(err.contains("--overwrite"), "{err}");
    assert_eq!(std::fs::read(&existing).unwrap(), b"keep me");

    // A missing directory fails before any compute, leaving nothing behind.
    let nowhere = dir.path().join("no-such-dir").join("out.nc");
    let err = refusal(&run, &options(&nowhere, IndicatorChoice::default()));
    assert!(err.contains("no-such-dir"), "{err}");
    assert!(!nowhere.parent().unwrap().exists());

    // --resume with nothing to resume.
    let mut resume = options(&dir.path().join("fresh.nc"), IndicatorChoice::default());
    resume.resume = true;
    let err = run_job(&run, &resume, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(err.contains("no interrupted run"), "{err}");
}
