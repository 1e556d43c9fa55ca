//! The compact terminal summary: per region, the reference window against the last window
//! for each run and the change, then what changed most and where to look.

use crate::names;
use crate::options::Statistic;
use crate::plan::ComparisonPlan;
use crate::table::TableRow;
use acidscape_analysis::regions::LayerKind;
use acidscape_analysis::windows::TimeWindow;
use std::fmt::Write;

/// One quantity of the summary: what to look up in the table and how to label it.
struct Line {
    label: String,
    quantity: String,
    layer: String,
    statistic: &'static str,
    threshold: Option<f64>,
}

fn lines(plan: &ComparisonPlan) -> Vec<Line> {
    let surface = plan
        .layers
        .iter()
        .find(|l| l.kind == LayerKind::SurfaceCell)
        .map(|l| l.name.clone());
    let volume_layers: Vec<String> = match plan
        .layers
        .iter()
        .find(|l| l.kind == LayerKind::WholeColumn)
    {
        Some(l) => vec![l.name.clone()],
        None => plan
            .layers
            .iter()
            .filter(|l| !l.weighted_by_area())
            .map(|l| l.name.clone())
            .collect(),
    };
    let mut out = Vec::new();
    for field in &plan.fields {
        let short = field.name.as_str();
        if field.has_levels && matches!(short, "omega_aragonite" | "ph") {
            if let Some(layer) = &surface {
                out.push(Line {
                    label: format!("{short}, {layer} (mean)"),
                    quantity: field.name.clone(),
                    layer: layer.clone(),
                    statistic: "mean",
                    threshold: None,
                });
            }
        }
        if field.has_levels && short == "omega_aragonite" {
            for layer in &volume_layers {
                out.push(Line {
                    label: format!("{short} < 1, share of {layer} volume"),
                    quantity: field.name.clone(),
                    layer: layer.clone(),
                    statistic: "fraction_below",
                    threshold: Some(1.0),
                });
            }
        }
        if short == "horizon_depth_aragonite" {
            out.push(Line {
                label: format!("{short} (mean, {})", field.units),
                quantity: field.name.clone(),
                layer: String::new(),
                statistic: "mean",
                threshold: None,
            });
        }
    }
    out
}

fn find<'a>(
    table: &'a [TableRow],
    run: &str,
    region: &str,
    line: &Line,
    window: &str,
) -> Option<&'a TableRow> {
    table.iter().find(|r| {
        r.period == "window"
            && r.run == run
            && r.region == region
            && r.window == window
            && r.layer == line.layer
            && r.quantity == line.quantity
            && r.statistic == line.statistic
            && r.threshold == line.threshold
    })
}

fn shown(value: Option<f64>) -> String {
    match value {
        Some(v) if v.abs() >= 100.0 => format!("{v:.0}"),
        Some(v) => format!("{v:.3}"),
        None => "-".into(),
    }
}

/// The two windows the summary sets side by side: the reference and the last other one.
struct Columns<'a> {
    reference: &'a TimeWindow,
    late: &'a TimeWindow,
}

/// Width of the quantity column.
const LABEL: usize = 50;

/// One region's block of the summary; returns the region's change of surface Ω aragonite per
/// run, for the closing remark.
fn region_section(
    out: &mut String,
    plan: &ComparisonPlan,
    table: &[TableRow],
    region: &str,
    columns: &Columns,
) -> Vec<(f64, String)> {
    let (reference, late) = (columns.reference, columns.late);
    let _ = writeln!(out, "\n{region}");
    let _ = writeln!(
        out,
        "  {:<LABEL$} {:<12} {:>11} {:>11} {:>9}",
        "quantity", "run", reference.name, late.name, "change"
    );
    let mut changes = Vec::new();
    for line in lines(plan) {
        for (i, run) in plan.runs.iter().map(|r| r.label.as_str()).enumerate() {
            let a = find(table, run, region, &line, &reference.name).and_then(|r| r.value);
            let b = find(table, run, region, &line, &late.name).and_then(|r| r.value);
            let change = a.zip(b).map(|(a, b)| b - a);
            let label = if i == 0 { line.label.as_str() } else { "" };
            let _ = writeln!(
                out,
                "  {label:<LABEL$} {run:<12} {:>11} {:>11} {:>9}",
                shown(a),
                shown(b),
                shown(change)
            );
            if line.statistic == "mean" && line.quantity == "omega_aragonite" {
                if let Some(c) = change {
                    changes.push((
                        c,
                        format!("{region}, run {run}: {} -> {}", shown(a), shown(b)),
                    ));
                }
            }
        }
    }
    for run in &plan.runs {
        let emerged = table
            .iter()
            .find(|r| r.run == run.label && r.region == region && r.statistic == "emergence_year");
        if let Some(r) = emerged {
            let year = r.year.map_or_else(|| "-".to_string(), |y| y.to_string());
            let _ = writeln!(
                out,
                "  {:<LABEL$} {:<12} {year:>11}  ({})",
                "year of emergence", run.label, r.note
            );
        }
    }
    changes
}

/// The summary text.
pub fn text(plan: &ComparisonPlan, table: &[TableRow]) -> String {
    let mut out = String::new();
    let reference = &plan.windows[plan.reference];
    let columns = Columns {
        reference,
        late: plan
            .windows
            .iter()
            .rev()
            .find(|w| w.name != reference.name)
            .unwrap_or(reference),
    };
    let runs: Vec<&str> = plan.runs.iter().map(|r| r.label.as_str()).collect();
    let _ = writeln!(
        out,
        "Compared runs {} (baseline {}) over windows {}.",
        runs.join(", "),
        runs[0],
        crate::output::windows_words(plan)
    );
    let mut changes = Vec::new();
    for region in plan.regions.set.names() {
        changes.extend(region_section(&mut out, plan, table, &region, &columns));
    }
    let largest_fall = changes
        .into_iter()
        .filter(|(c, _)| *c < 0.0)
        .min_by(|a, b| a.0.total_cmp(&b.0));
    if let Some((_, where_)) = largest_fall {
        let _ = writeln!(
            out,
            "\nLargest fall of the surface omega_aragonite mean ({} against {}): {where_}.",
            columns.late.name, reference.name
        );
    }
    if let Some(spec) = &plan.emergence {
        let _ = writeln!(out, "Emergence rule: {}.", spec.text);
    }
    let differences = if plan.runs.len() > 1 {
        format!(
            ", differences between runs ({})",
            example(plan, |f, r| names::difference(f, r, runs[0]))
        )
    } else {
        String::new()
    };
    let _ = writeln!(out, "\nWhere to look:");
    let _ = writeln!(
        out,
        "  {}: maps of window means per run (e.g. {}), changes since {} ({}){differences}",
        plan.output.display(),
        example(plan, |f, r| names::statistic(f, r, Statistic::Mean)),
        reference.name,
        example(plan, names::change),
    );
    let _ = writeln!(
        out,
        "  {}: regional means and fractions per time step and window (one row per quantity)",
        plan.table.display()
    );
    out
}

/// An example variable name for the first field and the last run.
fn example(
    plan: &ComparisonPlan,
    name: impl Fn(&crate::consistency::FieldPlan, &str) -> String,
) -> String {
    let field = plan
        .fields
        .iter()
        .find(|f| f.name == "omega_aragonite")
        .unwrap_or(&plan.fields[0]);
    let run = plan.runs.last().map_or("", |r| r.label.as_str());
    name(field, run)
}
