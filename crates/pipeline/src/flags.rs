//! The per-cell quality flag: a CF bit field (CF Conventions 1.10, section 3.5, `flag_masks`)
//! that says why a cell's indicators deserve care, and the counts of each reason.
//!
//! The flag never changes a value: range bits mark values computed with a constant used
//! outside its published range; outcome bits (`input_outside_seawater_limits`,
//! `no_physical_solution`, `missing_input`) mark cells whose indicators are missing. Range bits
//! describe the cell's temperature, salinity and pressure whenever those are present, whatever
//! the outcome. Breaches of KF's range set no bit (see `Validity::MATERIAL`).

use acidscape_chem::{CellStatus, ChemError, ConstantChoice, OutOfRange};
use std::ops::AddAssign;

/// Stored type of the flag variable: a signed 16-bit integer, because CF 1.8 allows no
/// unsigned types and the eight bits need more than a signed byte's seven.
pub type Flag = i16;

/// The flag's `_FillValue`, for land (no input at all). Every bit set: temperature both below
/// and above its range at once, which no cell can be, so it never reads as a real combination.
pub const FLAG_FILL: Flag = -1;

/// Every bit a wet cell can carry (the flag's `valid_range` is 0 to this).
pub const ALL_FLAG_BITS: Flag = 0xff;

/// One reason in the flag.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FlagBit {
    /// The bit (`flag_masks` entry).
    pub mask: Flag,
    /// The word in `flag_meanings`, also the name `samples` reports.
    pub meaning: &'static str,
    /// What it means for the values, in a sentence.
    pub note: &'static str,
    /// The chemistry's direction bit it stands for, if it is a range bit.
    range: Option<u8>,
}

pub const TEMPERATURE_BELOW: Flag = 1 << 0;
pub const TEMPERATURE_ABOVE: Flag = 1 << 1;
pub const SALINITY_BELOW: Flag = 1 << 2;
pub const SALINITY_ABOVE: Flag = 1 << 3;
pub const PRESSURE_ABOVE: Flag = 1 << 4;
pub const INPUT_OUTSIDE_SEAWATER_LIMITS: Flag = 1 << 5;
pub const NO_PHYSICAL_SOLUTION: Flag = 1 << 6;
pub const MISSING_INPUT: Flag = 1 << 7;
/// Bits that mean the cell's indicators are missing (at most one is set).
pub const WITHOUT_VALUES: Flag =
    INPUT_OUTSIDE_SEAWATER_LIMITS | NO_PHYSICAL_SOLUTION | MISSING_INPUT;

/// The bits, in `flag_masks` order.
pub const FLAG_BITS: [FlagBit; 8] = [
    FlagBit {
        mask: TEMPERATURE_BELOW,
        meaning: "temperature_below_validity_range",
        note: "computed with a constant used below the lowest temperature of its published range",
        range: Some(OutOfRange::TEMPERATURE_BELOW),
    },
    FlagBit {
        mask: TEMPERATURE_ABOVE,
        meaning: "temperature_above_validity_range",
        note: "computed with a constant used above the highest temperature of its published range",
        range: Some(OutOfRange::TEMPERATURE_ABOVE),
    },
    FlagBit {
        mask: SALINITY_BELOW,
        meaning: "salinity_below_validity_range",
        note: "computed with a constant used below the lowest salinity of its published range",
        range: Some(OutOfRange::SALINITY_BELOW),
    },
    FlagBit {
        mask: SALINITY_ABOVE,
        meaning: "salinity_above_validity_range",
        note: "computed with a constant used above the highest salinity of its published range",
        range: Some(OutOfRange::SALINITY_ABOVE),
    },
    FlagBit {
        mask: PRESSURE_ABOVE,
        meaning: "pressure_above_validity_range",
        note: "computed with pressure corrections used beyond the pressures they were fitted to",
        range: Some(OutOfRange::PRESSURE_ABOVE),
    },
    FlagBit {
        mask: INPUT_OUTSIDE_SEAWATER_LIMITS,
        meaning: "input_outside_seawater_limits",
        note: "an input lies outside any seawater (e.g. negative alkalinity, salinity above 60, \
               temperature outside -10 to 60 degC); indicators missing",
        range: None,
    },
    FlagBit {
        mask: NO_PHYSICAL_SOLUTION,
        meaning: "no_physical_solution",
        note: "the inputs admit no physical carbonate system (e.g. alkalinity too low for the \
               DIC); indicators missing",
        range: None,
    },
    FlagBit {
        mask: MISSING_INPUT,
        meaning: "missing_input",
        note: "a wet cell with some input missing or not finite; indicators missing",
        range: None,
    },
];

impl FlagBit {
    /// Which published limits of the chosen constants set this bit (empty for outcome bits).
    pub fn limits(&self, choice: &ConstantChoice) -> String {
        self.range
            .map(|bit| OutOfRange::limits(bit, choice))
            .unwrap_or_default()
    }
}

/// `flag_meanings`: the bits' words, space-separated, in `flag_masks` order.
pub fn flag_meanings() -> String {
    FLAG_BITS.map(|b| b.meaning).join(" ")
}

/// `flag_masks`.
pub fn flag_masks() -> Vec<Flag> {
    FLAG_BITS.iter().map(|b| b.mask).collect()
}

/// The flag bits for the chemistry's directions (a negative pressure sets none: the
/// chemistry refuses it, which sets `input_outside_seawater_limits`).
pub fn range_flag(out_of_range: OutOfRange) -> Flag {
    FLAG_BITS
        .iter()
        .filter(|b| b.range.is_some_and(|r| out_of_range.contains(r)))
        .fold(0, |flag, b| flag | b.mask)
}

/// The outcome bit of a chemistry error.
pub fn error_flag(error: &ChemError) -> Flag {
    outcome_flag(CellStatus::of_error(error))
}

/// The outcome bit of the batch kernel's status of a cell (none for a solved cell).
pub fn outcome_flag(status: CellStatus) -> Flag {
    match status {
        CellStatus::Solved => 0,
        CellStatus::MissingInput => MISSING_INPUT,
        CellStatus::InvalidInput => INPUT_OUTSIDE_SEAWATER_LIMITS,
        CellStatus::NoSolution => NO_PHYSICAL_SOLUTION,
    }
}

/// The meanings of the bits set in `flag`, space-separated ("" for none).
pub fn meanings_of(flag: Flag) -> String {
    FLAG_BITS
        .iter()
        .filter(|b| flag & b.mask != 0)
        .map(|b| b.meaning)
        .collect::<Vec<_>>()
        .join(" ")
}

/// How many cells carried each bit, and how many carried none.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct FlagCounts {
    /// Land cells (flag `_FillValue`).
    pub land: u64,
    /// Every other cell.
    pub wet: u64,
    /// Wet cells with no bit set: computed, every constant inside its range.
    pub no_flag: u64,
    /// Cells with each bit, in [`FLAG_BITS`] order (a cell may count under several).
    pub by_bit: [u64; 8],
    /// Wet cells with indicators but no standard uncertainty (an uncertainty field missing
    /// there, or a propagation that gave no finite number); 0 without uncertainty fields.
    pub without_uncertainty: u64,
}

/// Numbers in [`FlagCounts::as_vec`].
pub const FLAG_COUNT_FIELDS: usize = 12;

impl FlagCounts {
    /// Counts one cell's flag.
    pub fn record(&mut self, flag: Flag) {
        if flag == FLAG_FILL {
            self.land += 1;
            return;
        }
        self.wet += 1;
        if flag == 0 {
            self.no_flag += 1;
        }
        for (count, bit) in self.by_bit.iter_mut().zip(&FLAG_BITS) {
            *count += u64::from(flag & bit.mask != 0);
        }
    }

    /// Cells carrying `mask` (one of [`FLAG_BITS`]).
    pub fn of(&self, mask: Flag) -> u64 {
        FLAG_BITS
            .iter()
            .position(|b| b.mask == mask)
            .map_or(0, |i| self.by_bit[i])
    }

    /// Wet cells whose indicators were written.
    pub fn with_values(&self) -> u64 {
        let without: u64 = FLAG_BITS
            .iter()
            .zip(&self.by_bit)
            .filter(|(b, _)| b.mask & WITHOUT_VALUES != 0)
            .map(|(_, n)| n)
            .sum();
        self.wet - without
    }

    /// land, wet, no flag, each bit, then the cells without uncertainty: for the progress
    /// record.
    pub fn as_vec(&self) -> Vec<u64> {
        let mut all = vec![self.land, self.wet, self.no_flag];
        all.extend(self.by_bit);
        all.push(self.without_uncertainty);
        all
    }

    /// The inverse of [`FlagCounts::as_vec`] (a record written before the count of cells
    /// without uncertainty, one number shorter, reads it as 0); `None` for another length.
    pub fn from_slice(values: &[u64]) -> Option<FlagCounts> {
        let (&[land, wet, no_flag], rest) = values.split_first_chunk::<3>()?;
        let (by_bit, without_uncertainty) = match rest.len() {
            8 => (rest, 0),
            9 => (&rest[..8], rest[8]),
            _ => return None,
        };
        Some(FlagCounts {
            land,
            wet,
            no_flag,
            by_bit: by_bit.try_into().ok()?,
            without_uncertainty,
        })
    }
}

impl AddAssign for FlagCounts {
    fn add_assign(&mut self, other: FlagCounts) {
        self.land += other.land;
        self.wet += other.wet;
        self.no_flag += other.no_flag;
        for (a, b) in self.by_bit.iter_mut().zip(other.by_bit) {
            *a += b;
        }
        self.without_uncertainty += other.without_uncertainty;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bits_are_distinct_and_the_fill_is_no_combination() {
        let masks = flag_masks();
        assert_eq!(masks.iter().fold(0, |a, m| a | m), ALL_FLAG_BITS);
        for (i, a) in masks.iter().enumerate() {
            assert_eq!(a.count_ones(), 1);
            assert!(masks[i + 1..].iter().all(|b| a & b == 0));
        }
        // The fill sets temperature below and above at once: no cell can.
        const { assert!(FLAG_FILL & TEMPERATURE_BELOW != 0 && FLAG_FILL & TEMPERATURE_ABOVE != 0) };
        const { assert!(FLAG_FILL < 0 || FLAG_FILL > ALL_FLAG_BITS) };
        assert_eq!(flag_meanings().split(' ').count(), masks.len());
    }

    #[test]
    fn counts_each_bit_and_round_trip() {
        let mut counts = FlagCounts::default();
        for flag in [
            FLAG_FILL,
            0,
            TEMPERATURE_BELOW,
            TEMPERATURE_BELOW | MISSING_INPUT,
            SALINITY_ABOVE | PRESSURE_ABOVE,
        ] {
            counts.record(flag);
        }
        assert_eq!((counts.land, counts.wet, counts.no_flag), (1, 4, 1));
        assert_eq!(counts.of(TEMPERATURE_BELOW), 2);
        assert_eq!(counts.of(MISSING_INPUT), 1);
        assert_eq!(counts.of(SALINITY_ABOVE), 1);
        assert_eq!(counts.with_values(), 3);
        let values = counts.as_vec();
        assert_eq!(values.len(), FLAG_COUNT_FIELDS);
        assert_eq!(FlagCounts::from_slice(&values), Some(counts));
        assert_eq!(
            FlagCounts::from_slice(&values[..values.len() - 1]),
            Some(counts)
        );
        assert_eq!(FlagCounts::from_slice(&values[2..]), None);
    }

    #[test]
    fn directions_map_to_their_bits() {
        let out = OutOfRange(OutOfRange::TEMPERATURE_BELOW | OutOfRange::PRESSURE_ABOVE);
        assert_eq!(range_flag(out), TEMPERATURE_BELOW | PRESSURE_ABOVE);
        assert_eq!(range_flag(OutOfRange(OutOfRange::PRESSURE_BELOW)), 0);
        assert_eq!(
            meanings_of(TEMPERATURE_BELOW | MISSING_INPUT),
            "temperature_below_validity_range missing_input"
        );
    }
}
