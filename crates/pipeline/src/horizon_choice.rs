//! What the user asks of saturation horizons and the extent of corrosive water, and the names
//! of the variables they give.

use crate::indicators::{Indicator, IndicatorChoice};
use crate::plan::ColumnLoad;
use crate::PipelineError;
use acidscape_analysis::extent::{ExtentThresholds, Mineral};

/// Saturation horizons and corrosive extent: on by default whenever an Ω indicator is
/// computed, at Ω = 1 and at any extra thresholds per mineral.
#[derive(Clone, Debug, PartialEq)]
pub struct HorizonChoice {
    /// `false`: neither horizons nor extent (`--no-horizons`).
    pub enabled: bool,
    /// Thresholds besides 1 for Ω aragonite (e.g. 1.5 and 3).
    pub extra_aragonite: Vec<f64>,
    /// Thresholds besides 1 for Ω calcite.
    pub extra_calcite: Vec<f64>,
}

impl Default for HorizonChoice {
    fn default() -> Self {
        HorizonChoice {
            enabled: true,
            extra_aragonite: Vec::new(),
            extra_calcite: Vec::new(),
        }
    }
}

/// The horizons and extent a job computes: the minerals whose Ω it computes and the
/// thresholds of each (1 first, then the extra ones in increasing order).
#[derive(Clone, Debug, PartialEq)]
pub struct HorizonPlan {
    /// Minerals with horizons, in the order aragonite, calcite.
    pub minerals: Vec<Mineral>,
    /// Thresholds per mineral (empty for a mineral whose Ω is not computed).
    pub thresholds: ExtentThresholds,
}

const OPTION: &str = "--omega-thresholds";

impl HorizonChoice {
    /// Adds extra thresholds from text such as `aragonite=1.5,3` (one mineral per call).
    pub fn add_thresholds(&mut self, text: &str) -> Result<(), PipelineError> {
        let refuse = |message: String| PipelineError::Option {
            option: OPTION.into(),
            message,
        };
        let (mineral, list) = text.split_once('=').ok_or_else(|| {
            refuse(format!(
                "expected MINERAL=LIST such as aragonite=1.5,3, got '{text}'"
            ))
        })?;
        let target = match mineral.trim().to_ascii_lowercase().as_str() {
            "aragonite" => &mut self.extra_aragonite,
            "calcite" => &mut self.extra_calcite,
            other => {
                return Err(refuse(format!(
                    "unknown mineral '{other}'; expected aragonite or calcite"
                )))
            }
        };
        for part in list.split(',').filter(|p| !p.trim().is_empty()) {
            let value: f64 = part
                .trim()
                .parse()
                .map_err(|_| refuse(format!("'{}' is not a number (in '{text}')", part.trim())))?;
            if !(value.is_finite() && value > 0.0) {
                return Err(refuse(format!(
                    "{value} is not a saturation threshold; expected a positive number such as 1.5"
                )));
            }
            if value != 1.0 && !target.contains(&value) {
                target.push(value);
            }
        }
        target.sort_by(f64::total_cmp);
        Ok(())
    }

    /// The horizons a job with these indicators computes; `None` when horizons are off or no
    /// Ω is computed. Extra thresholds for a mineral whose Ω is not computed are refused.
    pub fn plan(&self, indicators: &IndicatorChoice) -> Result<Option<HorizonPlan>, PipelineError> {
        let computed = |i: Indicator| indicators.indicators.contains(&i);
        let aragonite = computed(Indicator::OmegaAragonite);
        let calcite = computed(Indicator::OmegaCalcite);
        for (on, extra, key) in [
            (aragonite, &self.extra_aragonite, "omega-aragonite"),
            (calcite, &self.extra_calcite, "omega-calcite"),
        ] {
            let usable = on && self.enabled;
            if !extra.is_empty() && !usable {
                let why = if self.enabled {
                    format!("{key} is not among the indicators computed; add it to --indicators")
                } else {
                    "horizons are turned off (--no-horizons)".to_string()
                };
                return Err(PipelineError::Option {
                    option: OPTION.into(),
                    message: format!("thresholds given, but {why}"),
                });
            }
        }
        if !self.enabled || !(aragonite || calcite) {
            return Ok(None);
        }
        let list = |on: bool, extra: &[f64]| {
            if on {
                std::iter::once(1.0).chain(extra.iter().copied()).collect()
            } else {
                Vec::new()
            }
        };
        let thresholds = ExtentThresholds::new(
            list(aragonite, &self.extra_aragonite),
            list(calcite, &self.extra_calcite),
        )
        .map_err(|e| PipelineError::Option {
            option: OPTION.into(),
            message: e.to_string(),
        })?;
        let minerals = [(aragonite, Mineral::Aragonite), (calcite, Mineral::Calcite)]
            .into_iter()
            .filter_map(|(on, m)| on.then_some(m))
            .collect();
        Ok(Some(HorizonPlan {
            minerals,
            thresholds,
        }))
    }

    /// One line for provenance and resume checks.
    pub fn describe(&self) -> String {
        let list = |v: &[f64]| {
            v.iter()
                .map(|t| t.to_string())
                .collect::<Vec<_>>()
                .join(",")
        };
        format!(
            "horizons={} extra_thresholds aragonite=[{}] calcite=[{}]",
            if self.enabled { "on" } else { "off" },
            list(&self.extra_aragonite),
            list(&self.extra_calcite)
        )
    }
}

impl HorizonPlan {
    /// What this plan adds to a job's memory (see [`ColumnLoad`]).
    pub fn column_load(&self) -> ColumnLoad {
        ColumnLoad {
            minerals: self.minerals.len(),
            horizons: self.horizons().len(),
        }
    }

    /// Every (mineral, threshold) with a horizon field, in output order.
    pub fn horizons(&self) -> Vec<(Mineral, f64)> {
        self.minerals
            .iter()
            .flat_map(|&m| self.thresholds.of(m).iter().map(move |&t| (m, t)))
            .collect()
    }
}

/// The suffix a threshold gives a variable name: none for 1, else `_` and the number with its
/// decimal point written `p` (`_1p5`, `_3`).
pub fn threshold_suffix(threshold: f64) -> String {
    if threshold == 1.0 {
        String::new()
    } else {
        format!("_{}", threshold.to_string().replace('.', "p"))
    }
}

/// Name of the horizon-depth variable of a mineral and threshold (`horizon_depth_aragonite`,
/// `horizon_depth_aragonite_1p5`).
pub fn horizon_depth_name(mineral: Mineral, threshold: f64) -> String {
    format!(
        "horizon_depth_{}{}",
        mineral.name(),
        threshold_suffix(threshold)
    )
}

/// Name of the horizon-status variable of a mineral and threshold (`horizon_status_calcite`).
pub fn horizon_status_name(mineral: Mineral, threshold: f64) -> String {
    format!(
        "horizon_status_{}{}",
        mineral.name(),
        threshold_suffix(threshold)
    )
}

/// Name of the time-series variable of one extent quantity: `{quantity}` for grid-wide
/// quantities, `{quantity}_{mineral}` and `{quantity}_{mineral}_{threshold}` otherwise.
pub fn series_name(quantity: &str, mineral: Option<Mineral>, threshold: Option<f64>) -> String {
    let mut name = quantity.to_string();
    if let Some(m) = mineral {
        name.push('_');
        name.push_str(m.name());
    }
    if let Some(t) = threshold {
        name.push_str(&threshold_suffix(t));
    }
    name
}

#[cfg(test)]
mod tests {
    use super::*;

    fn indicators(list: &[Indicator]) -> IndicatorChoice {
        IndicatorChoice {
            indicators: list.to_vec(),
            ..IndicatorChoice::default()
        }
    }

    #[test]
    fn names_follow_the_threshold() {
        assert_eq!(
            horizon_depth_name(Mineral::Aragonite, 1.0),
            "horizon_depth_aragonite"
        );
        assert_eq!(
            horizon_depth_name(Mineral::Aragonite, 1.5),
            "horizon_depth_aragonite_1p5"
        );
        assert_eq!(
            horizon_status_name(Mineral::Aragonite, 3.0),
            "horizon_status_aragonite_3"
        );
        assert_eq!(
            series_name(
                "volume_fraction_below_threshold",
                Some(Mineral::Aragonite),
                Some(1.5)
            ),
            "volume_fraction_below_threshold_aragonite_1p5"
        );
        assert_eq!(
            series_name("mean_horizon_depth", Some(Mineral::Calcite), Some(1.0)),
            "mean_horizon_depth_calcite"
        );
        assert_eq!(series_name("wet_volume", None, None), "wet_volume");
    }

    #[test]
    fn horizons_follow_the_omega_indicators() {
        let mut choice = HorizonChoice::default();
        choice.add_thresholds("aragonite=3, 1.5,1,1.5").unwrap();
        let plan = choice
            .plan(&indicators(&[Indicator::Ph, Indicator::OmegaAragonite]))
            .unwrap()
            .unwrap();
        assert_eq!(plan.minerals, vec![Mineral::Aragonite]);
        assert_eq!(
            plan.horizons(),
            vec![
                (Mineral::Aragonite, 1.0),
                (Mineral::Aragonite, 1.5),
                (Mineral::Aragonite, 3.0)
            ]
        );
        assert!(plan.thresholds.of(Mineral::Calcite).is_empty());
        assert_eq!(choice.plan(&indicators(&[Indicator::Ph])).unwrap_err().to_string(),
            "--omega-thresholds: thresholds given, but omega-aragonite is not among the indicators computed; add it to --indicators");
        let plain = HorizonChoice::default();
        assert_eq!(plain.plan(&indicators(&[Indicator::Ph])).unwrap(), None);
        let off = HorizonChoice {
            enabled: false,
            ..HorizonChoice::default()
        };
        assert_eq!(off.plan(&IndicatorChoice::default()).unwrap(), None);
    }

    #[test]
    fn bad_thresholds_are_refused() {
        let mut choice = HorizonChoice::default();
        for bad in [
            "aragonite",
            "quartz=1.5",
            "calcite=x",
            "calcite=-1",
            "calcite=inf",
        ] {
            assert!(choice.add_thresholds(bad).is_err(), "{bad}");
        }
    }
}
