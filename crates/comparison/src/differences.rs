//! Changes from the reference window (same run) and differences from the baseline run (same
//! window), computed from the window means as stored in the output, so they are exactly what
//! a user gets by subtracting the stored variables; a run compared with itself gives 0.

use crate::error::{ComparisonError, Result};
use crate::names;
use crate::options::Statistic;
use crate::output::Output;
use crate::plan::ComparisonPlan;
use acidscape_analysis::windows::{difference, shoaling_m};
use std::ops::Range;

fn subtract(horizon: bool, earlier_or_baseline: &[f64], other: &[f64]) -> Result<Vec<f64>> {
    let result = if horizon {
        // Shoaling, positive = shallower: baseline (or earlier) depth minus the other.
        shoaling_m(earlier_or_baseline, other)
    } else {
        difference(other, earlier_or_baseline)
    };
    result.map_err(|e| ComparisonError::option("differences", e.to_string()))
}

/// Writes every change and difference variable, a block of rows at a time (this process's
/// blocks, see [`crate::share::turns`]).
pub fn write_changes_and_differences(
    plan: &ComparisonPlan,
    output: &mut Output,
    turns: &[Range<usize>],
) -> Result<()> {
    let baseline = &plan.baseline().label;
    for field in &plan.fields {
        let horizon = field.is_horizon();
        let levels = field.has_levels;
        for block in turns {
            for run in &plan.runs {
                let mean = names::statistic(field, &run.label, Statistic::Mean);
                if plan.windows.len() > 1 {
                    let reference = output.read(&mean, plan.reference, levels, block.clone())?;
                    for w in 0..plan.windows.len() {
                        let window = output.read(&mean, w, levels, block.clone())?;
                        let change = subtract(horizon, &reference, &window)?;
                        output.write(
                            &names::change(field, &run.label),
                            Some(w),
                            levels,
                            block.clone(),
                            &change,
                        )?;
                    }
                }
                if run.label == *baseline {
                    continue;
                }
                let base = names::statistic(field, baseline, Statistic::Mean);
                for w in 0..plan.windows.len() {
                    let base_values = output.read(&base, w, levels, block.clone())?;
                    let values = output.read(&mean, w, levels, block.clone())?;
                    let d = subtract(horizon, &base_values, &values)?;
                    output.write(
                        &names::difference(field, &run.label, baseline),
                        Some(w),
                        levels,
                        block.clone(),
                        &d,
                    )?;
                }
            }
        }
    }
    Ok(())
}
