//! What a variable of a compute or compare output shows, decoded from its name (the names
//! `compare` gives: `F_L`, `F_L_min`, `F_L_change`, `F_L_minus_B`, `horizon_shoaling_X_L`,
//! `horizon_shoaling_X_L_versus_B`, `emergence_year_L`), in words for titles and colour bars.

use crate::source::ComparedRuns;
use acidscape_comparison::HORIZON_PREFIX as HORIZON_DEPTH;
use acidscape_gridio::{uncertainty_of, FieldInfo};
const HORIZON_SHOALING: &str = "horizon_shoaling_";

/// How a compare variable relates to the runs.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Relation {
    /// The field itself (an output of compute), or a run's window mean in a comparison.
    Values,
    /// Another window statistic of a run (`min`, `max`, `p90`).
    Statistic(String),
    /// A run's change since the reference window.
    Change,
    /// A run minus the baseline run.
    Difference { baseline: String },
    /// The year of emergence of each column.
    EmergenceYear,
    /// A field's standard uncertainty (`F_uncertainty`), or one source's signed contribution
    /// to it (`F_uncertainty_from_SOURCE`), as `compute` writes them.
    Uncertainty { source: Option<String> },
}

/// A variable's meaning.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Meaning {
    /// The field of compute it derives from (`omega_aragonite`, `horizon_depth_calcite`).
    pub base: String,
    /// The run it belongs to (compare outputs).
    pub run: Option<String>,
    pub relation: Relation,
}

impl Meaning {
    /// Decodes `name`; `compared` holds the labels of a comparison (None for compute outputs).
    pub(crate) fn of(name: &str, compared: Option<&ComparedRuns>) -> Meaning {
        let plain = |base: &str, run: Option<&str>, relation| Meaning {
            base: base.to_string(),
            run: run.map(str::to_string),
            relation,
        };
        if let Some((base, source)) = uncertainty_of(name) {
            let source = source.map(source_words);
            return plain(base, None, Relation::Uncertainty { source });
        }
        let Some(compared) = compared else {
            return plain(name, None, Relation::Values);
        };
        let labels = &compared.labels;
        // Differences first, then changes, then a run's own values: `ph_steep_minus_moderate`
        // also ends in `_moderate`.
        for label in labels {
            for baseline in labels {
                let versus = format!("_{label}_versus_{baseline}");
                let difference = Relation::Difference {
                    baseline: baseline.clone(),
                };
                if let Some(mineral) = name
                    .strip_prefix(HORIZON_SHOALING)
                    .and_then(|rest| rest.strip_suffix(&versus))
                {
                    let base = format!("{HORIZON_DEPTH}{mineral}");
                    return plain(&base, Some(label), difference);
                }
                if let Some(base) = name.strip_suffix(&format!("_{label}_minus_{baseline}")) {
                    return plain(base, Some(label), difference);
                }
            }
        }
        for label in labels {
            if let Some(mineral) = name
                .strip_prefix(HORIZON_SHOALING)
                .and_then(|rest| rest.strip_suffix(&format!("_{label}")))
            {
                return plain(
                    &format!("{HORIZON_DEPTH}{mineral}"),
                    Some(label),
                    Relation::Change,
                );
            }
            if let Some(base) = name.strip_suffix(&format!("_{label}_change")) {
                return plain(base, Some(label), Relation::Change);
            }
        }
        for label in labels {
            if name == format!("emergence_year_{label}") {
                return plain("emergence_year", Some(label), Relation::EmergenceYear);
            }
            if let Some(base) = name.strip_suffix(&format!("_{label}")) {
                return plain(base, Some(label), Relation::Values);
            }
            for statistic in ["min", "max"] {
                if let Some(base) = name.strip_suffix(&format!("_{label}_{statistic}")) {
                    return plain(base, Some(label), Relation::Statistic(statistic.into()));
                }
            }
            if let Some((rest, p)) = name.rsplit_once("_p") {
                if let Some(base) = rest.strip_suffix(&format!("_{label}")) {
                    if p.parse::<f64>().is_ok() {
                        return plain(base, Some(label), Relation::Statistic(format!("p{p}")));
                    }
                }
            }
        }
        plain(name, None, Relation::Values)
    }

    /// Whether it is a difference (drawn on a diverging palette centred on zero).
    pub(crate) fn is_difference(&self) -> bool {
        matches!(
            self.relation,
            Relation::Change | Relation::Difference { .. }
        )
    }

    /// Whether signed values around zero: differences and contributions to an uncertainty
    /// (drawn on a diverging palette centred on zero).
    pub(crate) fn is_signed(&self) -> bool {
        self.is_difference() || matches!(self.relation, Relation::Uncertainty { source: Some(_) })
    }

    /// Whether an uncertainty (combined or one source's contribution) of the base field.
    fn is_uncertainty(&self) -> bool {
        matches!(self.relation, Relation::Uncertainty { .. })
    }

    /// Whether the uncertainty of a horizon depth (missing where the depth is, and where it is
    /// 0 m at the surface).
    pub(crate) fn is_horizon_depth_uncertainty(&self) -> bool {
        self.is_uncertainty() && self.base.starts_with(HORIZON_DEPTH)
    }

    /// Whether the shoaling of a horizon (positive = shallower), not a depth difference.
    fn is_shoaling(&self) -> bool {
        self.is_difference() && self.base.starts_with(HORIZON_DEPTH)
    }

    /// The mineral of an Ω field or a horizon depth at Ω = 1 (`aragonite`, `calcite`).
    pub(crate) fn omega_mineral(&self) -> Option<&str> {
        let mineral = self
            .base
            .strip_prefix("omega_")
            .or_else(|| self.base.strip_prefix(HORIZON_DEPTH))?;
        ["aragonite", "calcite"].into_iter().find(|m| *m == mineral)
    }

    /// Whether the values are Ω itself (a map gets its Ω = 1 contour).
    pub(crate) fn is_omega(&self) -> bool {
        !self.is_difference()
            && !self.is_uncertainty()
            && self.relation != Relation::EmergenceYear
            && self.base.starts_with("omega_")
            && self.omega_mineral().is_some()
    }

    /// Whether the values are years of emergence.
    pub(crate) fn is_emergence_year(&self) -> bool {
        self.relation == Relation::EmergenceYear
    }

    /// Whether the values are a horizon depth.
    pub(crate) fn is_horizon_depth(&self) -> bool {
        !self.is_difference() && !self.is_uncertainty() && self.base.starts_with(HORIZON_DEPTH)
    }

    /// The name of another field of the same run and kind of values (e.g. `omega_calcite`
    /// beside `omega_aragonite_steep` → `omega_calcite_steep`); differences refer to the
    /// run's own window means.
    pub(crate) fn sibling(&self, base: &str) -> String {
        match &self.run {
            Some(label) => format!("{base}_{label}"),
            None => base.to_string(),
        }
    }

    /// The quantity, e.g. "Ω aragonite", "Δ pH (total scale)", "aragonite horizon shoaling".
    pub(crate) fn quantity(&self, info: &FieldInfo) -> String {
        if self.relation == Relation::EmergenceYear {
            return "year of emergence".to_string();
        }
        let words = quantity_words(&self.base, info.long_name.as_deref());
        if let Relation::Uncertainty { source } = &self.relation {
            return match source {
                None => format!("standard uncertainty of {words}"),
                Some(source) => format!("contribution of {source} to the uncertainty of {words}"),
            };
        }
        if self.is_shoaling() {
            format!("{} shoaling", words.trim_end_matches(" depth"))
        } else if self.is_difference() {
            format!("Δ {words}")
        } else {
            words
        }
    }

    /// The units shown: the variable's, except for years of emergence (stored with units
    /// "1", drawn as calendar years).
    pub(crate) fn units(&self, info: &FieldInfo) -> String {
        if self.relation == Relation::EmergenceYear {
            return "calendar year".to_string();
        }
        info.units.clone().unwrap_or_else(|| "1".to_string())
    }

    /// The quantity as the title names it: differences without the Δ, since the run words
    /// ("steep minus moderate") say what is subtracted.
    pub(crate) fn title_quantity(&self, info: &FieldInfo) -> String {
        let quantity = self.quantity(info);
        quantity
            .strip_prefix("Δ ")
            .map_or(quantity.clone(), str::to_string)
    }

    /// Whose values, in words: a compute output's run label, or "steep", "steep minus
    /// moderate", "steep, change since reference".
    pub(crate) fn run_words(&self, run_label: &str, compared: Option<&ComparedRuns>) -> String {
        let Some(label) = &self.run else {
            return run_label.to_string();
        };
        let reference = compared
            .and_then(|c| c.reference.clone())
            .unwrap_or_else(|| "the reference window".into());
        match &self.relation {
            Relation::Difference { baseline } if self.is_shoaling() => {
                format!("{label} relative to {baseline}")
            }
            Relation::Difference { baseline } => format!("{label} minus {baseline}"),
            Relation::Change => format!("{label}, change since {reference}"),
            _ => label.clone(),
        }
    }

    /// What the window statistic is, for the time words ("mean", "maximum of annual means").
    pub(crate) fn statistic_words(&self) -> &str {
        match &self.relation {
            Relation::Statistic(s) if s == "min" => "minimum of annual means",
            Relation::Statistic(s) if s == "max" => "maximum of annual means",
            Relation::Statistic(_) => "percentile of annual means",
            _ => "mean",
        }
    }
}

/// A source of uncertainty as `compute` names it, in words: `dic` → DIC, `pksp_aragonite` →
/// pKsp aragonite, `total_boron` → total boron.
fn source_words(key: &str) -> String {
    match key {
        "dic" => "DIC".to_string(),
        _ => match key.strip_prefix("pk") {
            Some(rest) => format!("pK{}", rest.replace('_', " ")),
            None => key.replace('_', " "),
        },
    }
}

/// Plain words for the fields of compute; others by their `long_name` or name.
pub(crate) fn quantity_words(base: &str, long_name: Option<&str>) -> String {
    let known = match base {
        "ph" => Some("pH (total scale)"),
        "ph_seawater" => Some("pH (seawater scale)"),
        "ph_free" => Some("pH (free scale)"),
        "omega_aragonite" => Some("Ω aragonite"),
        "omega_calcite" => Some("Ω calcite"),
        "co3" => Some("CO₃²⁻"),
        "hco3" => Some("HCO₃⁻"),
        "co2" => Some("CO₂*"),
        "pco2" => Some("pCO₂"),
        "fco2" => Some("fCO₂"),
        "revelle_factor" => Some("Revelle factor"),
        "sea_floor_depth" => Some("sea-floor depth"),
        _ => None,
    };
    if let Some(words) = known {
        return words.to_string();
    }
    if let Some(rest) = base.strip_prefix(HORIZON_DEPTH) {
        let (mineral, threshold) = match rest.split_once('_') {
            Some((m, t)) => (m, Some(t.replace('p', "."))),
            None => (rest, None),
        };
        return match threshold {
            None => format!("{mineral} saturation horizon depth"),
            Some(t) => format!("depth of Ω {mineral} = {t}"),
        };
    }
    long_name.unwrap_or(base).to_string()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::Window;

    fn compared() -> ComparedRuns {
        ComparedRuns {
            labels: vec!["moderate".into(), "steep".into()],
            baseline: "moderate".into(),
            windows: vec![Window {
                name: "late".into(),
                first_year: 2081,
                last_year: 2100,
            }],
            reference: Some("reference".into()),
        }
    }

    #[test]
    fn compare_names_decode() {
        let c = compared();
        let m = Meaning::of("omega_aragonite_steep_minus_moderate", Some(&c));
        assert_eq!(m.base, "omega_aragonite");
        assert_eq!(m.run.as_deref(), Some("steep"));
        assert!(m.is_difference() && !m.is_omega());
        assert_eq!(m.run_words("x", Some(&c)), "steep minus moderate");
        let m = Meaning::of("omega_aragonite_steep", Some(&c));
        assert!(m.is_omega() && !m.is_difference());
        assert_eq!(m.sibling("omega_calcite"), "omega_calcite_steep");
        let m = Meaning::of("ph_steep_minus_moderate", Some(&c));
        assert_eq!((m.base.as_str(), m.run.as_deref()), ("ph", Some("steep")));
        let m = Meaning::of("ph_moderate_change", Some(&c));
        assert_eq!(
            (m.base.as_str(), m.relation.clone()),
            ("ph", Relation::Change)
        );
        let m = Meaning::of(
            "horizon_shoaling_aragonite_1p5_steep_versus_moderate",
            Some(&c),
        );
        assert_eq!(m.base, "horizon_depth_aragonite_1p5");
        assert!(m.is_difference());
        let m = Meaning::of("horizon_shoaling_calcite_steep", Some(&c));
        assert_eq!(
            (m.base.as_str(), m.relation.clone()),
            ("horizon_depth_calcite", Relation::Change)
        );
        let m = Meaning::of("omega_calcite_steep_p90", Some(&c));
        assert_eq!(m.relation, Relation::Statistic("p90".into()));
        let m = Meaning::of("emergence_year_steep", Some(&c));
        assert_eq!(m.relation, Relation::EmergenceYear);
        let m = Meaning::of("omega_aragonite", None);
        assert!(m.is_omega() && m.run.is_none());
        assert_eq!(m.omega_mineral(), Some("aragonite"));
        let m = Meaning::of("horizon_depth_calcite", None);
        assert!(m.is_horizon_depth() && m.omega_mineral() == Some("calcite"));
        assert_eq!(
            Meaning::of("horizon_depth_aragonite_1p5", None).omega_mineral(),
            None
        );
    }

    #[test]
    fn uncertainty_names_decode() {
        let m = Meaning::of("omega_aragonite_uncertainty", None);
        assert_eq!(m.base, "omega_aragonite");
        assert!(
            !m.is_omega() && !m.is_signed(),
            "no Ω = 1 contour, one-sided values"
        );
        let m = Meaning::of("horizon_depth_aragonite_uncertainty", None);
        assert_eq!(m.base, "horizon_depth_aragonite");
        assert!(!m.is_horizon_depth() && m.is_horizon_depth_uncertainty());
        let m = Meaning::of("ph_uncertainty_from_pksp_aragonite", None);
        assert_eq!(
            m.relation,
            Relation::Uncertainty {
                source: Some("pKsp aragonite".into())
            }
        );
        let m = Meaning::of("ph_uncertainty_from_total_boron", None);
        assert_eq!(m.base, "ph");
        assert!(m.is_signed() && !m.is_difference());
        assert_eq!(
            m.relation,
            Relation::Uncertainty {
                source: Some("total boron".into())
            }
        );
    }
}
