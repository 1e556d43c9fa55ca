//! The words of the NetCDF output: `long_name`, `comment` and `cell_methods` of each kind of
//! variable, and the global attributes.

use crate::consistency::FieldPlan;
use crate::options::Statistic;
use crate::plan::ComparisonPlan;

/// `cell_methods` of a statistic over a climatological time axis (CF Conventions 1.10
/// section 7.4): the annual means of the run's steps ("mean within years"), then the statistic
/// over the window's years. CF has no method for percentiles other than the median: those
/// variables carry none, and say what they hold in their `comment`.
pub fn cell_methods(statistic: Statistic) -> Option<String> {
    let over = match statistic {
        Statistic::Mean => "mean",
        Statistic::Min => "minimum",
        Statistic::Max => "maximum",
        Statistic::Percentile(50.0) => "median",
        Statistic::Percentile(_) => return None,
    };
    Some(format!("time: mean within years time: {over} over years"))
}

/// `long_name` of a window statistic.
pub fn statistic_long_name(field: &FieldPlan, label: &str, statistic: Statistic) -> String {
    let what = match statistic {
        Statistic::Mean => "mean over the time window".to_string(),
        other => format!("{} over the time window", other.words()),
    };
    format!("{}, {what}, run {label}", field.long_name)
}

/// `comment` of a window statistic.
pub fn statistic_comment(field: &FieldPlan, statistic: Statistic) -> String {
    let mut words = String::from(
        "Annual means of the run's time steps (weighted by step length), then over the years of each window (each year weighs the same); the time axis is climatological: climatology_bounds give each window's first and last year.",
    );
    if let Statistic::Percentile(p) = statistic {
        words.push_str(&format!(
            " The {p}th percentile of the window's annual means by linear interpolation between order statistics (Hyndman & Fan 1996, definition 7); CF 1.10 has no cell method for it."
        ));
    }
    if field.is_horizon() {
        words.push_str(" Years in which a column has no horizon (e.g. saturated down to the sea floor) are left out of its statistic.");
    }
    if let Some(methods) = &field.cell_methods {
        words.push_str(&format!(" The run's values: cell_methods \"{methods}\"."));
    }
    words
}

/// `long_name` and `comment` of the change from the reference window within a run.
pub fn change_words(field: &FieldPlan, label: &str, plan: &ComparisonPlan) -> (String, String) {
    let reference = &plan.windows[plan.reference];
    let period = format!(
        "the reference window '{}' ({}-{})",
        reference.name, reference.first_year, reference.last_year
    );
    if field.is_horizon() {
        (
            format!("shoaling of the {} since {period}, run {label}", field.long_name),
            format!("Depth of the horizon averaged over {period} minus its depth averaged over each window, from the stored window means: positive where the horizon is shallower (has risen). Missing where either window has no horizon."),
        )
    } else {
        (
            format!("change of the {} since {period}, run {label}", field.long_name),
            format!("Mean over each window minus the mean over {period}, from the stored window means (zero for the reference window itself)."),
        )
    }
}

/// `long_name` and `comment` of the difference between a run and the baseline.
pub fn difference_words(field: &FieldPlan, label: &str, baseline: &str) -> (String, String) {
    if field.is_horizon() {
        (
            format!("shoaling of the {} in run {label} relative to run {baseline}", field.long_name),
            format!("Window mean horizon depth of run {baseline} minus that of run {label}, from the stored window means: positive where the horizon is shallower in {label}. Missing where either has no horizon."),
        )
    } else {
        (
            format!("{}: run {label} minus run {baseline}, window means", field.long_name),
            format!("Window mean of run {label} minus window mean of run {baseline}, from the stored window means (a run compared with itself gives exactly zero)."),
        )
    }
}

/// The windows in words, e.g. "reference (2015-2034), late (2081-2100)".
pub fn windows_words(plan: &ComparisonPlan) -> String {
    plan.windows
        .iter()
        .map(|w| format!("{} ({}-{})", w.name, w.first_year, w.last_year))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Global attributes of the output.
pub fn global_attributes(
    plan: &ComparisonPlan,
    geometry: &str,
    emergence: Option<&str>,
) -> Vec<(&'static str, String)> {
    let labels: Vec<&str> = plan.runs.iter().map(|r| r.label.as_str()).collect();
    let runs = plan
        .runs
        .iter()
        .map(|r| format!("{}: {}", r.label, r.file.path().display()))
        .collect::<Vec<_>>()
        .join("; ");
    let mut attributes = vec![
        ("Conventions", "CF-1.10".to_string()),
        (
            "title",
            format!("Runs {} compared over time windows", labels.join(", ")),
        ),
        ("history", plan.history.clone()),
        (
            "source",
            format!(
                "acidscape {} compare, from outputs of acidscape compute",
                env!("CARGO_PKG_VERSION")
            ),
        ),
        ("acidscape_version", env!("CARGO_PKG_VERSION").to_string()),
        ("compared_runs", runs),
        ("baseline_run", plan.baseline().label.clone()),
        ("time_windows", windows_words(plan)),
        (
            "reference_window",
            plan.windows[plan.reference].name.clone(),
        ),
        ("weights", geometry.to_string()),
        ("regions", plan.regions.description.clone()),
        (
            "references",
            "Window statistics: CF Conventions 1.10 section 7.4 (climatological statistics); percentiles: Hyndman & Fan 1996, The American Statistician 50, 361-365, definition 7; cell areas from bounds on the GRS80 mean sphere (Moritz 2000) where the runs give none".to_string(),
        ),
    ];
    if let Some(rule) = emergence {
        attributes.push(("emergence_rule", rule.to_string()));
    }
    attributes.extend(run_constants(plan));
    let synthetic = plan
        .runs
        .iter()
        .filter_map(|r| r.file.global_attribute("comment"))
        .find(|c| c.contains("SYNTHETIC"));
    if let Some(comment) = synthetic {
        attributes.push(("comment", comment));
    }
    attributes
}

/// The constant choices `compute` records (`carbonic_acid_constants`, ...), copied from the
/// runs so that figures and readers of the comparison can name them: the runs' common value,
/// or each run's as "LABEL: VALUE; LABEL: VALUE" when they differ.
fn run_constants(plan: &ComparisonPlan) -> Vec<(&'static str, String)> {
    const KEYS: [&str; 3] = [
        "carbonic_acid_constants",
        "hydrogen_fluoride_constant",
        "total_boron",
    ];
    KEYS.into_iter()
        .filter_map(|key| {
            let values: Vec<(String, String)> = plan
                .runs
                .iter()
                .filter_map(|r| Some((r.label.clone(), r.file.global_attribute(key)?)))
                .collect();
            if values.len() != plan.runs.len() {
                return None;
            }
            let shared = values.iter().all(|(_, v)| *v == values[0].1);
            let text = if shared {
                values[0].1.clone()
            } else {
                values
                    .iter()
                    .map(|(label, v)| format!("{label}: {v}"))
                    .collect::<Vec<_>>()
                    .join("; ")
            };
            Some((key, text))
        })
        .collect()
}
