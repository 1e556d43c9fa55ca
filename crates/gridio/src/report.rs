//! The accounts of a run: the human-readable report (`Run::report`, printed by `describe`)
//! and the provenance copied into outputs (`Run::provenance`).

use crate::conversion::density_label;
use crate::roles::Role;
use crate::run::{Input, Run};
use crate::vertical::Vertical;
use std::fmt::Write;
use std::path::PathBuf;

/// Files of one input, shortened when there are many.
fn file_list(files: &[PathBuf]) -> String {
    match files {
        [] => "none".to_string(),
        [one] => one.display().to_string(),
        [first, .., last] if files.len() > 3 => format!(
            "{} files: {} ... {}",
            files.len(),
            first.display(),
            last.display()
        ),
        many => many
            .iter()
            .map(|f| f.display().to_string())
            .collect::<Vec<_>>()
            .join(", "),
    }
}

/// Optional inputs absent from the run, which the chemistry takes as zero.
const ASSUMED_ZERO: [Role; 2] = [Role::Phosphate, Role::Silicate];

/// For an input whose files differ: one line per distinct meaning, with its files.
fn per_file_meanings(run: &Run, input: &Input) -> Vec<String> {
    let mut groups: Vec<(String, Vec<PathBuf>)> = Vec::new();
    for (piece, meaning) in input.source.pieces.iter().zip(&input.meanings) {
        let label = format!(
            "units \"{}\", standard_name {}: {}{}",
            meaning.units,
            meaning.standard_name.as_deref().unwrap_or("(none)"),
            meaning.conversion.describe(run.density),
            if meaning.salinity_scale != 1.0 {
                format!(", values × {}", meaning.salinity_scale)
            } else {
                String::new()
            }
        );
        let path = run.paths[piece.file].clone();
        match groups.iter_mut().find(|(l, _)| *l == label) {
            Some((_, files)) => files.push(path),
            None => groups.push((label, vec![path])),
        }
    }
    groups
        .into_iter()
        .map(|(label, files)| format!("{label} — {}", file_list(&files)))
        .collect()
}

pub(crate) fn report(run: &Run) -> String {
    let mut out = String::new();
    let files = run.input_files();
    let _ = writeln!(out, "Run of {} file(s)", files.len());
    let _ = writeln!(out, "Inputs:");
    for input in &run.inputs {
        let holders: Vec<PathBuf> = input
            .source
            .pieces
            .iter()
            .map(|p| run.paths[p.file].clone())
            .collect();
        let first = &input.meanings[0];
        let _ = writeln!(
            out,
            "  {:<16} variable '{}' (found by {}), standard_name {}, units \"{}\"",
            input.role.key(),
            input.name,
            input.found_by,
            first.standard_name.as_deref().unwrap_or("(none)"),
            first.units
        );
        let _ = writeln!(out, "  {:<16}   files: {}", "", file_list(&holders));
        if input.found_by.ends_with("native name") {
            let _ = writeln!(
                out,
                "  {:<16}   native name as documented in: {}",
                "",
                crate::native::sources(input.role, &input.name)
            );
        }
        if input.uniform() {
            let _ = writeln!(
                out,
                "  {:<16}   conversion: {}",
                "",
                first.conversion.describe(run.density)
            );
        } else {
            let _ = writeln!(
                out,
                "  {:<16}   files differ; each converted by its own metadata:",
                ""
            );
            for line in per_file_meanings(run, input) {
                let _ = writeln!(out, "  {:<16}     {line}", "");
            }
        }
    }
    for role in ASSUMED_ZERO {
        if run.input(role).is_none() {
            let _ = writeln!(
                out,
                "  {:<16} not in the run: assumed zero (0 µmol kg-1); recorded in the output's metadata",
                role.key()
            );
        }
    }
    let shape = run.shape;
    let h = &run.horizontal;
    let _ = writeln!(
        out,
        "Grid: {} levels × {} rows × {} columns, {} (Y dimension '{}', X dimension '{}'{}{})",
        shape.levels,
        shape.rows,
        shape.cols,
        if h.curvilinear {
            "curvilinear"
        } else {
            "rectilinear"
        },
        h.y_dim,
        h.x_dim,
        h.lat_name
            .as_ref()
            .map(|l| format!(", latitude '{l}'"))
            .unwrap_or_default(),
        h.lon_name
            .as_ref()
            .map(|l| format!(", longitude '{l}'"))
            .unwrap_or_default(),
    );
    let _ = writeln!(out, "Vertical: {}", run.vertical.describe());
    let cells = shape.cells() as u64;
    let _ = writeln!(
        out,
        "Wet cells per time step: {} of {} ({:.1} %)",
        run.wet_cells,
        cells,
        if cells > 0 {
            100.0 * run.wet_cells as f64 / cells as f64
        } else {
            0.0
        }
    );
    match (&run.time, run.time_span()) {
        (Some(t), Some((first, last))) => {
            let _ = writeln!(
                out,
                "Time: {} steps from {} to {}, calendar {}, units \"{}\"",
                t.values.len(),
                first,
                last,
                t.axis.calendar.cf_name(),
                t.axis.units_attribute()
            );
            let _ = writeln!(out, "  {}", sampling_line(run));
        }
        _ => {
            let _ = writeln!(out, "Time: none (one step)");
        }
    }
    let _ = writeln!(
        out,
        "Density for per-volume concentrations: {}",
        match run.density {
            crate::DensityChoice::InSitu => "in-situ (TEOS-10)".to_string(),
            crate::DensityChoice::Reference(r) => format!("reference {r} kg m-3"),
        }
    );
    checks_section(run, &mut out);
    out
}

fn sampling_line(run: &Run) -> String {
    let Some(t) = &run.time else {
        return String::new();
    };
    let check = &t.sampling;
    let how = if check.from_bounds {
        "checked against the run's time bounds"
    } else {
        "inferred from the time steps, in the run's calendar"
    };
    if check.breaks.is_empty() {
        format!("sampling: {} ({how}); no gaps", check.sampling)
    } else {
        format!(
            "sampling: {} ({how}); {} break(s) accepted as intended (--irregular-time)",
            check.sampling,
            check.breaks.len()
        )
    }
}

fn checks_section(run: &Run, out: &mut String) {
    let _ = writeln!(out, "Checks:");
    let other = crate::integrity::Format::Other;
    let mut formats: Vec<&str> = run
        .formats
        .iter()
        .filter(|f| **f != other)
        .map(|f| f.label())
        .collect();
    formats.sort_unstable();
    formats.dedup();
    let checked = run.formats.iter().filter(|f| **f != other).count();
    let _ = writeln!(
        out,
        "  files: {checked} of {} complete, as long as their headers describe ({}){}",
        run.paths.len(),
        formats.join(", "),
        if checked < run.paths.len() {
            "; the others are of a format read by libnetcdf alone"
        } else {
            ""
        }
    );
    let _ = writeln!(
        out,
        "  values: {} time step(s) sampled (the first step of each file{}), judged against plausible ranges (common practice):",
        run.sampled_steps.len(),
        if run.sampled_steps.len() >= crate::plausibility::MAX_SAMPLED_STEPS {
            ", thinned evenly"
        } else {
            ""
        }
    );
    for c in &run.value_checks {
        let share = |n: u64, of: u64| 100.0 * n as f64 / of.max(1) as f64;
        let verdict = match (&c.refusal, run.checks.accept_implausible) {
            (None, _) => "ok".to_string(),
            (Some(_), true) => "IMPLAUSIBLE, accepted with --accept-implausible-inputs".to_string(),
            (Some(_), false) => "IMPLAUSIBLE: compute refuses it (see below)".to_string(),
        };
        let _ = writeln!(
            out,
            "    {:<12} '{}': {} to {} {} (plausible {} to {}); {:.1} % outside; missing at {:.1} % of the cells where the others have values: {verdict}",
            c.role.key(),
            c.name,
            rounded(c.min),
            rounded(c.max),
            c.unit,
            c.low,
            c.high,
            share(c.outside, c.values),
            share(c.missing, c.others_present),
        );
    }
    for c in &run.value_checks {
        if let Some(r) = &c.refusal {
            let _ = writeln!(out, "    {r}");
        }
    }
}

fn rounded(x: f64) -> String {
    if x.is_finite() {
        format!("{x:.4}")
    } else {
        "(no values)".to_string()
    }
}

/// Conversions applied, checks accepted and approximations made, for output metadata.
pub(crate) fn provenance(run: &Run) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for input in &run.inputs {
        let first = &input.meanings[0];
        let text = if input.uniform() {
            format!(
                "variable '{}' ({}; units \"{}\"): {}",
                input.name,
                first.standard_name.as_deref().unwrap_or("no standard_name"),
                first.units,
                first.conversion.describe(run.density)
            )
        } else {
            format!(
                "variable '{}', files differ, each converted by its own metadata: {}",
                input.name,
                per_file_meanings(run, input).join("; ")
            )
        };
        out.push((format!("{}_input", input.role.key()), text));
    }
    for role in ASSUMED_ZERO {
        if run.input(role).is_none() {
            out.push((
                format!("{}_input", role.key()),
                "absent from the run: assumed zero (0 µmol kg-1)".to_string(),
            ));
        }
    }
    out.push(("density".to_string(), density_label(run.density)));
    out.push(("vertical_coordinate".to_string(), run.vertical.describe()));
    let pressure = if run.input(Role::Pressure).is_some() {
        "from the run's pressure variable".to_string()
    } else {
        match run.vertical {
            Vertical::Pressures { .. } => "from the pressure vertical coordinate".to_string(),
            Vertical::Surface => "0 dbar (surface values)".to_string(),
            _ => {
                "sea pressure from depth below the sea surface and latitude, TEOS-10 p_from_z (gsw)"
                    .to_string()
            }
        }
    };
    out.push(("pressure".to_string(), pressure));
    if let Some(salinity) = run.input(Role::Salinity) {
        if salinity.meanings.iter().any(|m| m.salinity_scale != 1.0) && salinity.uniform() {
            out.push((
                "salinity_scale".to_string(),
                format!(
                    "salinity values look like mass fractions; multiplied by {}",
                    salinity.meanings[0].salinity_scale
                ),
            ));
        }
    }
    if let Some(t) = &run.time {
        if !t.sampling.breaks.is_empty() {
            out.push((
                "time_sampling".to_string(),
                format!(
                    "{}; {} break(s) of it accepted as intended (--irregular-time)",
                    t.sampling.sampling,
                    t.sampling.breaks.len()
                ),
            ));
        }
    }
    let refusals = run.implausible_inputs();
    if !refusals.is_empty() {
        out.push((
            "implausible_inputs_accepted".to_string(),
            format!(
                "processed as given with --accept-implausible-inputs: {}",
                refusals.join(" | ")
            ),
        ));
    }
    for (key, text) in crate::seawater::PROVENANCE_NOTES {
        out.push((key.to_string(), text.to_string()));
    }
    out
}
