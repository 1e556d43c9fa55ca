//! Names of the output variables, all in one place.
//!
//! For a field `F` (a variable of the runs, e.g. `omega_aragonite`), a run labelled `L` and the
//! baseline run `B` (the first given):
//! - `F_L`: mean over each window (the climatological time axis); `F_L_min`, `F_L_max`,
//!   `F_L_p90` for the other statistics;
//! - `F_L_change`: each window's mean minus the reference window's (same run);
//! - `F_L_minus_B`: run `L` minus the baseline, window by window;
//! - for a horizon depth `horizon_depth_X`: `horizon_shoaling_X_L` (reference window's depth
//!   minus each window's) and `horizon_shoaling_X_L_versus_B` (the baseline's depth minus
//!   `L`'s), in metres, positive where the horizon is shallower;
//! - `emergence_year_L` and `emergence_status_L`: time of emergence of each column.

use crate::consistency::{FieldPlan, HORIZON_PREFIX};
use crate::options::Statistic;

/// A window statistic of a field in one run.
pub fn statistic(field: &FieldPlan, label: &str, statistic: Statistic) -> String {
    format!("{}_{label}{}", field.name, statistic.suffix())
}

/// `horizon_shoaling_X` for a horizon depth `horizon_depth_X`.
fn shoaling_base(field: &FieldPlan) -> Option<String> {
    field
        .name
        .strip_prefix(HORIZON_PREFIX)
        .map(|rest| format!("horizon_shoaling_{rest}"))
}

/// Change from the reference window within a run (shoaling for horizons).
pub fn change(field: &FieldPlan, label: &str) -> String {
    match shoaling_base(field) {
        Some(base) => format!("{base}_{label}"),
        None => format!("{}_{label}_change", field.name),
    }
}

/// Difference between a run and the baseline (shoaling for horizons).
pub fn difference(field: &FieldPlan, label: &str, baseline: &str) -> String {
    match shoaling_base(field) {
        Some(base) => format!("{base}_{label}_versus_{baseline}"),
        None => format!("{}_{label}_minus_{baseline}", field.name),
    }
}

/// Year of emergence of each column.
pub fn emergence_year(label: &str) -> String {
    format!("emergence_year_{label}")
}

/// Status of the time of emergence of each column.
pub fn emergence_status(label: &str) -> String {
    format!("emergence_status_{label}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn field(name: &str) -> FieldPlan {
        FieldPlan {
            name: name.into(),
            units: "1".into(),
            long_name: name.into(),
            standard_name: None,
            cell_methods: None,
            has_levels: false,
            thresholds: Vec::new(),
        }
    }

    #[test]
    fn names_are_plain_and_distinct() {
        let omega = field("omega_aragonite");
        let horizon = field("horizon_depth_aragonite_1p5");
        assert_eq!(
            statistic(&omega, "steep", Statistic::Mean),
            "omega_aragonite_steep"
        );
        assert_eq!(
            statistic(&omega, "steep", Statistic::Percentile(90.0)),
            "omega_aragonite_steep_p90"
        );
        assert_eq!(change(&omega, "steep"), "omega_aragonite_steep_change");
        assert_eq!(
            difference(&omega, "steep", "moderate"),
            "omega_aragonite_steep_minus_moderate"
        );
        assert_eq!(
            change(&horizon, "steep"),
            "horizon_shoaling_aragonite_1p5_steep"
        );
        assert_eq!(
            difference(&horizon, "steep", "moderate"),
            "horizon_shoaling_aragonite_1p5_steep_versus_moderate"
        );
    }
}
