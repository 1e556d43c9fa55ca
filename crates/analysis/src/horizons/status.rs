//! The status of a column's saturation horizon, written as a CF flag variable.

use serde::{Deserialize, Serialize};

/// How a column's saturation horizon was found, one value per column and time step.
///
/// Written as a flag variable with `flag_values` = [`HorizonStatus::flag_values`] and
/// `flag_meanings` = [`HorizonStatus::flag_meanings`] (CF Conventions 1.10, section 3.5: a
/// blank-separated list of words, one per value). The words are our own plain names.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[repr(i8)]
pub enum HorizonStatus {
    /// Saturated at the top wet level; Ω falls below the threshold once, between two level
    /// centres, and stays below it down to the deepest level. Depth interpolated.
    SingleCrossing = 0,
    /// Saturated at the top; Ω falls below the threshold, then rises above it again deeper down
    /// (a corrosive layer over saturated deeper water). Depth of the shallowest crossing.
    SeveralCrossings = 1,
    /// Ω is already below the threshold at the top wet level and at every level down to the
    /// first missing value (or the floor). Depth 0 m: corrosive from the sea surface.
    UndersaturatedAtSurface = 2,
    /// Ω is below the threshold at the top wet level, but some deeper level is saturated (a
    /// corrosive surface layer, e.g. a river plume). Depth 0 m.
    UndersaturatedAtSurfaceSaturatedBelow = 3,
    /// Saturated at every level centre; the line through the two deepest centres (linear in
    /// depth on ln Ω) reaches the threshold between the deepest centre and the sea floor. Depth
    /// extrapolated, inside the bottom cell.
    CrossingInBottomCell = 4,
    /// Saturated at every level centre and no crossing above the sea floor. Depth missing.
    DeeperThanSeaFloor = 5,
    /// The shallowest crossing lies between two centres above the first level whose Ω is
    /// missing; whether the water re-saturates below the gap is unknown. Depth interpolated.
    CrossingAboveMissingOmega = 6,
    /// Ω is missing at a level above any crossing (or at the top wet level): the depth is
    /// unknown. Depth missing.
    OmegaMissing = 7,
    /// No wet level. Depth missing.
    Land = 8,
}

impl HorizonStatus {
    /// Every status, in flag-value order.
    pub const ALL: [HorizonStatus; 9] = [
        HorizonStatus::SingleCrossing,
        HorizonStatus::SeveralCrossings,
        HorizonStatus::UndersaturatedAtSurface,
        HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow,
        HorizonStatus::CrossingInBottomCell,
        HorizonStatus::DeeperThanSeaFloor,
        HorizonStatus::CrossingAboveMissingOmega,
        HorizonStatus::OmegaMissing,
        HorizonStatus::Land,
    ];

    /// The value written in the flag variable (a byte, like the per-cell quality flag).
    pub fn flag_value(self) -> i8 {
        self as i8
    }

    /// The status of a flag value, if it is one.
    pub fn from_flag_value(value: i8) -> Option<HorizonStatus> {
        usize::try_from(value)
            .ok()
            .and_then(|i| HorizonStatus::ALL.get(i).copied())
    }

    /// The word for this status in `flag_meanings`.
    pub fn word(self) -> &'static str {
        match self {
            HorizonStatus::SingleCrossing => "single_crossing",
            HorizonStatus::SeveralCrossings => "several_crossings",
            HorizonStatus::UndersaturatedAtSurface => "undersaturated_at_surface",
            HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow => {
                "undersaturated_at_surface_saturated_below"
            }
            HorizonStatus::CrossingInBottomCell => "crossing_in_bottom_cell",
            HorizonStatus::DeeperThanSeaFloor => "deeper_than_sea_floor",
            HorizonStatus::CrossingAboveMissingOmega => "crossing_above_missing_omega",
            HorizonStatus::OmegaMissing => "omega_missing",
            HorizonStatus::Land => "land",
        }
    }

    /// One plain sentence for output metadata and reports.
    pub fn explanation(self) -> &'static str {
        match self {
            HorizonStatus::SingleCrossing => {
                "one crossing between level centres; depth interpolated linearly in depth on ln(omega)"
            }
            HorizonStatus::SeveralCrossings => {
                "saturated water again below a corrosive layer; depth of the shallowest crossing"
            }
            HorizonStatus::UndersaturatedAtSurface => {
                "undersaturated from the top level down; depth 0 m"
            }
            HorizonStatus::UndersaturatedAtSurfaceSaturatedBelow => {
                "undersaturated at the top level with saturated water below; depth 0 m"
            }
            HorizonStatus::CrossingInBottomCell => {
                "crossing between the deepest level centre and the sea floor, extrapolated from the two deepest centres"
            }
            HorizonStatus::DeeperThanSeaFloor => {
                "saturated down to the sea floor; no depth"
            }
            HorizonStatus::CrossingAboveMissingOmega => {
                "crossing found above a level with missing omega; deeper levels not examined"
            }
            HorizonStatus::OmegaMissing => {
                "omega missing at a level above any crossing; no depth"
            }
            HorizonStatus::Land => "no wet level; no depth",
        }
    }

    /// Whether columns of this status have a horizon depth.
    pub fn has_depth(self) -> bool {
        !matches!(
            self,
            HorizonStatus::DeeperThanSeaFloor | HorizonStatus::OmegaMissing | HorizonStatus::Land
        )
    }

    /// `flag_values` for the flag variable, in order.
    pub fn flag_values() -> Vec<i8> {
        HorizonStatus::ALL.iter().map(|s| s.flag_value()).collect()
    }

    /// `flag_meanings` for the flag variable: the words, blank-separated, in flag-value order.
    pub fn flag_meanings() -> String {
        HorizonStatus::ALL.map(HorizonStatus::word).join(" ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flag_attributes_pair_up() {
        // CF Conventions 1.10 section 3.5: flag_values and flag_meanings have the same number of
        // entries; each meaning is one word (no blanks).
        let words: Vec<&str> = HorizonStatus::ALL.map(HorizonStatus::word).to_vec();
        let meanings = HorizonStatus::flag_meanings();
        assert_eq!(
            meanings.split(' ').count(),
            HorizonStatus::flag_values().len()
        );
        for (w, s) in words.iter().zip(HorizonStatus::ALL) {
            assert!(!w.contains(' '));
            assert!(w.chars().all(|c| c.is_ascii_lowercase() || c == '_'));
            assert_eq!(HorizonStatus::from_flag_value(s.flag_value()), Some(s));
        }
        let mut sorted = words.clone();
        sorted.sort();
        sorted.dedup();
        assert_eq!(sorted.len(), words.len(), "words must be distinct");
        assert_eq!(HorizonStatus::from_flag_value(9), None);
    }
}
