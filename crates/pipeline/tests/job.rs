//! End-to-end compute jobs on a small SYNTHETIC run written by the test (tests/common).
//! Expected values come from acidscape_chem::solve on the same converted inputs
//! (Run::read_slab): the pipeline must add nothing but the f32 rounding of the output.

mod common;

use acidscape_chem::{solve, ConstantChoice, OutOfRange};
use acidscape_gridio::Run;
use acidscape_pipeline::{
    cell_sample, partial_path, progress_path, run_job, IndicatorChoice, JobOptions, NoProgress,
    PipelineError, FLAG_BITS, FLAG_FILL, VALUE_FILL,
};
use common::*;
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

/// The message of a job that must fail.
fn refusal(run: &Run, options: &JobOptions) -> String {
    run_job(run, options, &mut NoProgress)
        .unwrap_err()
        .to_string()
}

/// Each bit's meaning as the output file declares it (`flag_masks`, `flag_meanings`), so the
/// flags are decoded as a user of the file would decode them (CF 1.10 section 3.5).
fn declared_bits(path: &Path) -> Vec<(i16, String)> {
    let file = netcdf::open(path).unwrap();
    let flag = file.variable("quality_flag").unwrap();
    let masks = match flag.attribute_value("flag_masks") {
        Some(Ok(netcdf::AttributeValue::Shorts(m))) => m,
        other => panic!("flag_masks is {other:?}"),
    };
    let meanings = match flag.attribute_value("flag_meanings") {
        Some(Ok(netcdf::AttributeValue::Str(m))) => m,
        other => panic!("flag_meanings is {other:?}"),
    };
    let words: Vec<String> = meanings.split(' ').map(String::from).collect();
    assert_eq!(words.len(), masks.len());
    masks.into_iter().zip(words).collect()
}

fn decode(flag: i16, bits: &[(i16, String)]) -> BTreeSet<String> {
    bits.iter()
        .filter(|(mask, _)| flag & mask != 0)
        .map(|(_, meaning)| meaning.clone())
        .collect()
}

fn set(meanings: &[&str]) -> BTreeSet<String> {
    meanings.iter().map(|m| m.to_string()).collect()
}

/// The chemistry's directions and the words the output must use for them.
const DIRECTIONS: [(u8, &str); 5] = [
    (
        OutOfRange::TEMPERATURE_BELOW,
        "temperature_below_validity_range",
    ),
    (
        OutOfRange::TEMPERATURE_ABOVE,
        "temperature_above_validity_range",
    ),
    (OutOfRange::SALINITY_BELOW, "salinity_below_validity_range"),
    (OutOfRange::SALINITY_ABOVE, "salinity_above_validity_range"),
    (OutOfRange::PRESSURE_ABOVE, "pressure_above_validity_range"),
];

#[test]
fn output_equals_the_solver_and_flags_say_why() {
    let dir = tempfile::tempdir().unwrap();
    let inputs = write_cmip_style_run(dir.path(), 2, 2);
    let run = open_run(&inputs);
    let output = dir.path().join("indicators.nc");
    let choice = every_indicator();
    let summary = run_job(&run, &options(&output, choice.clone()), &mut NoProgress).unwrap();
    assert!(output.exists());
    assert!(!partial_path(&output).exists() && !progress_path(&output).exists());

    let fields = choice.fields().unwrap();
    let flags = read_i16(&output, "quality_flag");
    let bits = declared_bits(&output);
    let cells = LEVELS * ROWS * COLS;
    assert_eq!(flags.len(), 2 * cells);
    let stored: Vec<Vec<f32>> = fields.iter().map(|f| read_f32(&output, &f.name)).collect();
    let mut seen = BTreeMap::<String, u64>::new();
    for step in 0..2 {
        let slab = run.read_slab(step, 0..ROWS).unwrap();
        for cell in 0..cells {
            let at = step * cells + cell;
            let (level, row, col) = (cell / (ROWS * COLS), (cell / COLS) % ROWS, cell % COLS);
            let flag = flags[at];
            let rock = level == 3 && (row, col) != TRENCH_COLUMN;
            if (row, col) == LAND_COLUMN || rock {
                assert_eq!(flag, FLAG_FILL, "land at {cell}");
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL));
                continue;
            }
            let meanings = decode(flag, &bits);
            for meaning in &meanings {
                *seen.entry(meaning.clone()).or_default() += 1;
            }
            let (t, s, p) = (
                slab.temperature_c[cell],
                slab.salinity[cell],
                slab.pressure_dbar[cell],
            );
            let ranges: BTreeSet<String> = DIRECTIONS
                .iter()
                .filter(|(bit, _)| {
                    OutOfRange::assess(t, s, p, &ConstantChoice::default()).contains(*bit)
                })
                .map(|(_, meaning)| meaning.to_string())
                .collect();
            let without_values = [
                (MISSING_DIC_CELL, "missing_input"),
                (NEGATIVE_ALKALINITY_CELL, "input_outside_seawater_limits"),
                (NO_SOLUTION_CELL, "no_physical_solution"),
            ];
            if let Some((_, why)) = without_values.iter().find(|(c, _)| *c == (level, row, col)) {
                let mut expected = ranges.clone();
                expected.insert(why.to_string());
                assert_eq!(meanings, expected, "step {step} cell {cell}");
                assert!(stored.iter().all(|v| v[at] == VALUE_FILL));
                continue;
            }
            let (pair, conditions) = cell_sample(&slab, cell);
            let solution = solve(pair, &conditions, &ConstantChoice::default()).unwrap();
            // Flags never change a value: flagged cells hold the solver's numbers too.
            for (field, values) in fields.iter().zip(&stored) {
                let expected = field.value(&solution, slab.density_kg_m3[cell]) as f32;
                assert_eq!(
                    values[at], expected,
                    "{} at step {step} cell {cell}",
                    field.name
                );
            }
            assert_eq!(meanings, ranges, "flag at step {step} cell {cell}");
            // The cells made to breach one range each (Lueker et al. 2000: 2-35 °C, S 19-43;
            // Millero 1995 pressure corrections to 1000 bar).
            let cell_id = (level, row, col);
            if cell_id == HOT_CELL {
                assert_eq!(meanings, set(&["temperature_above_validity_range"]));
            }
            if cell_id == SALTY_CELL {
                assert_eq!(meanings, set(&["salinity_above_validity_range"]));
            }
            if level == 2 {
                assert!(
                    meanings.contains("temperature_below_validity_range"),
                    "{cell_id:?} is below 5 °C"
                );
            }
            if (row, col) == TRENCH_COLUMN && level == 3 {
                assert_eq!(
                    meanings,
                    set(&[
                        "temperature_below_validity_range",
                        "pressure_above_validity_range"
                    ])
                );
            }
        }
    }
    let counts = summary.counts;
    assert_eq!(counts.land, 2 * (LEVELS + ROWS * COLS - 2) as u64);
    assert_eq!(counts.land + counts.wet, 2 * cells as u64);
    assert_eq!(
        counts.no_flag,
        flags.iter().filter(|f| **f == 0).count() as u64
    );
    assert!(counts.no_flag > 0);
    for bit in FLAG_BITS {
        let in_file = seen.get(bit.meaning).copied().unwrap_or(0);
        assert_eq!(counts.of(bit.mask), in_file, "{}", bit.meaning);
    }
    assert_eq!(counts.of(acidscape_pipeline::flags::MISSING_INPUT), 2);
    assert_eq!(
        counts.of(acidscape_pipeline::flags::NO_PHYSICAL_SOLUTION),
        2
    );
    assert_eq!(
        counts.of(acidscape_pipeline::flags::INPUT_OUTSIDE_SEAWATER_LIMITS),
        2
    );
    assert_eq!(counts.of(acidscape_pipeline::flags::PRESSURE_ABOVE), 2);
    assert_eq!(counts.with_values(), counts.wet - 6);
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
        "temperature_below_validity_range temperature_above_validity_range \
         salinity_below_validity_range salinity_above_validity_range \
         pressure_above_validity_range input_outside_seawater_limits no_physical_solution \
         missing_input"
    );
    // A bit field: one distinct bit per meaning, a signed type CF 1.8 allows, a fill outside
    // the valid range of bit combinations.
    let flag = file.variable("quality_flag").unwrap();
    assert_eq!(
        flag.vartype(),
        netcdf::types::NcVariableType::Int(netcdf::types::IntType::I16)
    );
    assert_eq!(
        declared_bits(&output)
            .iter()
            .map(|(m, _)| *m)
            .collect::<Vec<_>>(),
        [1, 2, 4, 8, 16, 32, 64, 128]
    );
    assert!(matches!(
        flag.attribute_value("_FillValue"),
        Some(Ok(netcdf::AttributeValue::Short(-1)))
    ));
    assert!(matches!(
        flag.attribute_value("valid_range"),
        Some(Ok(netcdf::AttributeValue::Shorts(r))) if r == [0, 255]
    ));
    assert!(flag.attribute_value("flag_values").is_none());
    let comment = text(Some("quality_flag"), "comment");
    assert!(
        comment.contains("below 2 °C (Lueker et al. 2000: K1, K2)"),
        "{comment}"
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
        matches!(
            err,
            PipelineError::Interrupted {
                steps_done: 2,
                steps_total: 4,
                ..
            }
        ),
        "{err}"
    );
    let message = err.to_string();
    assert!(
        message.contains("2 of 4 time steps are finished")
            && message.contains("--resume")
            && message.contains("--overwrite"),
        "{message}"
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
    assert_same_output(&whole, &pieces);
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
    // Other horizon thresholds would give other variables: refused as well.
    let mut thresholds = options(&output, IndicatorChoice::default());
    thresholds.resume = true;
    thresholds.horizons.add_thresholds("aragonite=1.5").unwrap();
    let err = run_job(&run, &thresholds, &mut NoProgress)
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("differ") && err.contains("aragonite=[1.5]"),
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
