//! The human-readable account of a run (`Run::report`).

use crate::roles::Role;
use crate::run::Run;
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
        let _ = writeln!(
            out,
            "  {:<16} variable '{}' (found by {}), standard_name {}, units \"{}\"",
            input.role.key(),
            input.name,
            input.found_by,
            input.standard_name.as_deref().unwrap_or("(none)"),
            input.units
        );
        let _ = writeln!(out, "  {:<16}   files: {}", "", file_list(&holders));
        let _ = writeln!(
            out,
            "  {:<16}   conversion: {}",
            "",
            input.conversion.describe(run.density)
        );
    }
    for role in [Role::Phosphate, Role::Silicate] {
        if run.input(role).is_none() {
            let _ = writeln!(
                out,
                "  {:<16} not in the run: taken as 0 µmol kg-1",
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
    out
}
