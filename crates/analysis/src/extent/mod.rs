//! The extent of corrosive water at one time step: volumes with Ω below thresholds, the wet
//! volume, the sea-surface area with surface Ω below thresholds, and the area-weighted mean
//! saturation-horizon depth.
//!
//! # Determinism
//! Each column's terms are added in a fixed order of level indices (four interleaved lanes,
//! see `volume_sum`) in ordinary `f64` arithmetic; the column totals are then added to exact sums ([`ExactSum`]), which are rounded
//! once when the summary is read. The result therefore depends only on the set of columns: it is
//! bitwise the same whatever the split into slabs, the order in which slabs or threads finish,
//! or the tree in which per-process accumulators are merged. Because the wet volume and a
//! corrosive volume add the same terms in the same order, a field with Ω below the threshold
//! everywhere gives a corrosive volume exactly equal to the wet volume.

mod rows;
#[cfg(test)]
mod tests;

pub use rows::ExtentRow;

use crate::sum::{append_flat, merge_flat};
use crate::{check_length, ExactSum};
use serde::{Deserialize, Serialize};
use thiserror::Error;

/// The two calcium-carbonate minerals whose saturation states are tracked.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Mineral {
    /// Aragonite (corals, pteropods, many larval shells).
    Aragonite,
    /// Calcite (coccolithophores, foraminifera).
    Calcite,
}

impl Mineral {
    /// Both minerals, in the order used throughout this module.
    pub const BOTH: [Mineral; 2] = [Mineral::Aragonite, Mineral::Calcite];

    /// Plain lower-case name (`aragonite`, `calcite`).
    pub fn name(self) -> &'static str {
        match self {
            Mineral::Aragonite => "aragonite",
            Mineral::Calcite => "calcite",
        }
    }
}

/// Inputs that cannot be accumulated.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum ExtentError {
    /// A threshold is not a positive finite number, or is repeated.
    #[error("{mineral} thresholds must be distinct positive numbers, got {threshold}")]
    Threshold {
        /// The mineral (`aragonite`, `calcite`).
        mineral: &'static str,
        /// The offending threshold.
        threshold: f64,
    },
    /// A column's arrays disagree in length.
    #[error(transparent)]
    Length(#[from] crate::LengthError),
    /// An area or volume is negative or not finite.
    #[error("{what} must be a finite, non-negative number, got {value}")]
    Measure {
        /// What the number is.
        what: &'static str,
        /// The number.
        value: f64,
    },
    /// Two accumulators with different thresholds cannot be merged.
    #[error("cannot merge extents accumulated with different thresholds")]
    DifferentThresholds,
    /// A flat list of sums (see [`CorrosiveExtent::to_flat`]) that does not fit these thresholds.
    #[error("a flat list of extent sums does not fit these thresholds")]
    FlatList,
}

/// The Ω thresholds \[1\] below which water counts as corrosive, per mineral (e.g. 1, plus 1.5
/// and 3 for aragonite, common practice in reports on shell-forming organisms).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ExtentThresholds {
    /// Thresholds for Ω aragonite.
    pub aragonite: Vec<f64>,
    /// Thresholds for Ω calcite.
    pub calcite: Vec<f64>,
}

impl ExtentThresholds {
    /// Checks that every threshold is positive, finite and listed once per mineral.
    pub fn new(aragonite: Vec<f64>, calcite: Vec<f64>) -> Result<Self, ExtentError> {
        for (mineral, list) in [
            (Mineral::Aragonite, &aragonite),
            (Mineral::Calcite, &calcite),
        ] {
            for (i, &t) in list.iter().enumerate() {
                if !(t.is_finite() && t > 0.0) || list[..i].contains(&t) {
                    return Err(ExtentError::Threshold {
                        mineral: mineral.name(),
                        threshold: t,
                    });
                }
            }
        }
        Ok(ExtentThresholds { aragonite, calcite })
    }

    /// The thresholds of one mineral.
    pub fn of(&self, mineral: Mineral) -> &[f64] {
        match mineral {
            Mineral::Aragonite => &self.aragonite,
            Mineral::Calcite => &self.calcite,
        }
    }
}

/// One mineral's values in one column.
#[derive(Clone, Copy, Debug)]
pub struct MineralColumn<'a> {
    /// Ω \[1\] per wet cell, from the surface down; NaN where missing.
    pub omega: &'a [f64],
    /// The column's horizon depth \[m\] for each threshold of this mineral (same order), `None`
    /// where it has none. Pass `None` for statuses you choose not to average.
    pub horizon_m: &'a [Option<f64>],
}

/// One water column at one time step.
#[derive(Clone, Copy, Debug)]
pub struct ExtentColumn<'a> {
    /// Horizontal area of the column \[m²\].
    pub area_m2: f64,
    /// Volume of each wet cell \[m³\], from the surface down (the top one is the surface cell).
    pub volume_m3: &'a [f64],
    /// Aragonite values.
    pub aragonite: MineralColumn<'a>,
    /// Calcite values.
    pub calcite: MineralColumn<'a>,
}

/// Exact sums of one mineral.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct MineralSums {
    volume_with_omega: ExactSum,
    surface_area_with_omega: ExactSum,
    /// Per threshold: volume with Ω < t.
    volume_below: Vec<ExactSum>,
    /// Per threshold: surface area with surface Ω < t.
    surface_area_below: Vec<ExactSum>,
    /// Per threshold: area of columns with a horizon depth.
    horizon_area: Vec<ExactSum>,
    /// Per threshold: Σ area × horizon depth.
    horizon_area_depth: Vec<ExactSum>,
}

impl MineralSums {
    fn new(thresholds: usize) -> Self {
        let zeros = || vec![ExactSum::new(); thresholds];
        MineralSums {
            volume_with_omega: ExactSum::new(),
            surface_area_with_omega: ExactSum::new(),
            volume_below: zeros(),
            surface_area_below: zeros(),
            horizon_area: zeros(),
            horizon_area_depth: zeros(),
        }
    }

    /// Every sum, in a fixed order.
    fn sums_mut(&mut self) -> impl Iterator<Item = &mut ExactSum> {
        [
            &mut self.volume_with_omega,
            &mut self.surface_area_with_omega,
        ]
        .into_iter()
        .chain(&mut self.volume_below)
        .chain(&mut self.surface_area_below)
        .chain(&mut self.horizon_area)
        .chain(&mut self.horizon_area_depth)
    }

    fn merge(&mut self, other: &MineralSums) {
        self.volume_with_omega.merge(&other.volume_with_omega);
        self.surface_area_with_omega
            .merge(&other.surface_area_with_omega);
        let pairs = [
            (&mut self.volume_below, &other.volume_below),
            (&mut self.surface_area_below, &other.surface_area_below),
            (&mut self.horizon_area, &other.horizon_area),
            (&mut self.horizon_area_depth, &other.horizon_area_depth),
        ];
        for (mine, theirs) in pairs {
            for (a, b) in mine.iter_mut().zip(theirs) {
                a.merge(b);
            }
        }
    }
}

/// Accumulator of the corrosive-water extent of one time step: add columns from any slab in
/// any order, merge accumulators of other slabs or processes, then read the [`ExtentSummary`].
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CorrosiveExtent {
    thresholds: ExtentThresholds,
    wet_volume: ExactSum,
    sea_surface_area: ExactSum,
    minerals: [MineralSums; 2],
}

/// Ω is a saturation state when positive and finite (NaN fails both comparisons).
fn valid_omega(w: f64) -> bool {
    (w > 0.0) & (w < f64::INFINITY)
}

fn check_measure(what: &'static str, value: f64) -> Result<(), ExtentError> {
    if (0.0..f64::INFINITY).contains(&value) {
        Ok(())
    } else {
        Err(ExtentError::Measure { what, value })
    }
}

impl CorrosiveExtent {
    /// An empty accumulator for these thresholds.
    pub fn new(thresholds: ExtentThresholds) -> Self {
        let minerals = Mineral::BOTH.map(|m| MineralSums::new(thresholds.of(m).len()));
        CorrosiveExtent {
            thresholds,
            wet_volume: ExactSum::new(),
            sea_surface_area: ExactSum::new(),
            minerals,
        }
    }

    /// The thresholds accumulated.
    pub fn thresholds(&self) -> &ExtentThresholds {
        &self.thresholds
    }

    /// Adds one water column (a land column, with no wet cell, adds nothing).
    pub fn add_column(&mut self, column: &ExtentColumn) -> Result<(), ExtentError> {
        let cells = column.volume_m3.len();
        if cells == 0 {
            return Ok(());
        }
        check_measure("a column's area [m2]", column.area_m2)?;
        for &v in column.volume_m3 {
            check_measure("a cell's volume [m3]", v)?;
        }
        for (i, mineral) in Mineral::BOTH.into_iter().enumerate() {
            let values = match mineral {
                Mineral::Aragonite => &column.aragonite,
                Mineral::Calcite => &column.calcite,
            };
            check_length("omega per wet cell", cells, values.omega.len())?;
            let thresholds = self.thresholds.of(mineral).len();
            check_length(
                "horizon depths per threshold",
                thresholds,
                values.horizon_m.len(),
            )?;
            let sums = &mut self.minerals[i];
            add_mineral(sums, self.thresholds.of(mineral), column, values);
        }
        let omega = column.aragonite.omega;
        self.wet_volume
            .add(volume_sum(column.volume_m3, omega, |_| true));
        self.sea_surface_area.add(column.area_m2);
        Ok(())
    }

    /// Adds everything another accumulator (same thresholds) has seen.
    pub fn merge(&mut self, other: &CorrosiveExtent) -> Result<(), ExtentError> {
        if self.thresholds != other.thresholds {
            return Err(ExtentError::DifferentThresholds);
        }
        self.wet_volume.merge(&other.wet_volume);
        self.sea_surface_area.merge(&other.sea_surface_area);
        for (mine, theirs) in self.minerals.iter_mut().zip(&other.minerals) {
            mine.merge(theirs);
        }
        Ok(())
    }

    /// Every sum, in a fixed order.
    fn sums_mut(&mut self) -> impl Iterator<Item = &mut ExactSum> {
        let [aragonite, calcite] = &mut self.minerals;
        [&mut self.wet_volume, &mut self.sea_surface_area]
            .into_iter()
            .chain(aragonite.sums_mut())
            .chain(calcite.sums_mut())
    }

    /// Every sum as one flat list of numbers (each sum's count of partials, then its
    /// partials), e.g. to send to another process; [`CorrosiveExtent::merge_flat`] adds it
    /// back exactly.
    pub fn to_flat(&self) -> Vec<f64> {
        let mut copy = self.clone();
        let mut flat = Vec::new();
        append_flat(copy.sums_mut().map(|sum| &*sum), &mut flat);
        flat
    }

    /// Adds the sums of [`CorrosiveExtent::to_flat`] from an accumulator with the same
    /// thresholds.
    pub fn merge_flat(&mut self, flat: &[f64]) -> Result<(), ExtentError> {
        merge_flat(self.sums_mut(), flat).ok_or(ExtentError::FlatList)
    }

    /// The totals so far.
    pub fn summary(&self) -> ExtentSummary {
        let mineral = |i: usize, m: Mineral| {
            let sums = &self.minerals[i];
            let below = self
                .thresholds
                .of(m)
                .iter()
                .enumerate()
                .map(|(t, &threshold)| {
                    let area = sums.horizon_area[t].value();
                    ThresholdExtent {
                        threshold,
                        volume_m3: sums.volume_below[t].value(),
                        surface_area_m2: sums.surface_area_below[t].value(),
                        horizon_area_m2: area,
                        mean_horizon_depth_m: (area > 0.0)
                            .then(|| sums.horizon_area_depth[t].value() / area),
                    }
                })
                .collect();
            MineralExtent {
                volume_with_omega_m3: sums.volume_with_omega.value(),
                surface_area_with_omega_m2: sums.surface_area_with_omega.value(),
                below,
            }
        };
        ExtentSummary {
            wet_volume_m3: self.wet_volume.value(),
            sea_surface_area_m2: self.sea_surface_area.value(),
            aragonite: mineral(0, Mineral::Aragonite),
            calcite: mineral(1, Mineral::Calcite),
        }
    }
}

/// Σ of the volumes of a column's cells whose Ω passes `keep`, in a fixed order: four
/// interleaved partial sums over the level index modulo 4, combined as (s0 + s1) + (s2 + s3).
/// The order depends only on level indices, never on slabs or threads, so sums stay
/// deterministic; the independent lanes let the processor overlap the additions.
fn volume_sum(volumes: &[f64], omega: &[f64], keep: impl Fn(f64) -> bool) -> f64 {
    let mut lanes = [0.0f64; 4];
    let (v4, w4) = (volumes.chunks_exact(4), omega.chunks_exact(4));
    let (v_rest, w_rest) = (v4.remainder(), w4.remainder());
    for (v, w) in v4.zip(w4) {
        for i in 0..4 {
            lanes[i] += if keep(w[i]) { v[i] } else { 0.0 };
        }
    }
    for (i, (&v, &w)) in v_rest.iter().zip(w_rest).enumerate() {
        lanes[i] += if keep(w) { v } else { 0.0 };
    }
    (lanes[0] + lanes[1]) + (lanes[2] + lanes[3])
}

/// One column's terms for one mineral: plain sums in a fixed order, then exact accumulation.
fn add_mineral(
    sums: &mut MineralSums,
    thresholds: &[f64],
    column: &ExtentColumn,
    values: &MineralColumn,
) {
    let (volumes, omega) = (column.volume_m3, values.omega);
    sums.volume_with_omega
        .add(volume_sum(volumes, omega, valid_omega));
    let surface = omega[0];
    if valid_omega(surface) {
        sums.surface_area_with_omega.add(column.area_m2);
    }
    for (t, &threshold) in thresholds.iter().enumerate() {
        sums.volume_below[t].add(volume_sum(volumes, omega, |w| w < threshold));
        if surface < threshold {
            sums.surface_area_below[t].add(column.area_m2);
        }
        if let Some(depth) = values.horizon_m[t].filter(|d| d.is_finite()) {
            sums.horizon_area[t].add(column.area_m2);
            sums.horizon_area_depth[t].add(column.area_m2 * depth);
        }
    }
}

/// Totals of one time step.
#[derive(Clone, Debug, PartialEq)]
pub struct ExtentSummary {
    /// Volume of all wet cells \[m³\].
    pub wet_volume_m3: f64,
    /// Area of all wet columns \[m²\].
    pub sea_surface_area_m2: f64,
    /// Aragonite totals.
    pub aragonite: MineralExtent,
    /// Calcite totals.
    pub calcite: MineralExtent,
}

/// One mineral's totals.
#[derive(Clone, Debug, PartialEq)]
pub struct MineralExtent {
    /// Volume of wet cells whose Ω is known \[m³\] (the wet volume minus cells without a
    /// solution or with missing inputs).
    pub volume_with_omega_m3: f64,
    /// Area of columns whose surface Ω is known \[m²\].
    pub surface_area_with_omega_m2: f64,
    /// Totals per threshold, in the order given.
    pub below: Vec<ThresholdExtent>,
}

/// Totals for one threshold of one mineral.
#[derive(Clone, Debug, PartialEq)]
pub struct ThresholdExtent {
    /// The threshold \[1\].
    pub threshold: f64,
    /// Volume of water with Ω < threshold \[m³\].
    pub volume_m3: f64,
    /// Area of sea surface where the top wet cell has Ω < threshold \[m²\].
    pub surface_area_m2: f64,
    /// Area of columns that have a horizon depth for this threshold \[m²\].
    pub horizon_area_m2: f64,
    /// Area-weighted mean horizon depth over those columns \[m\]; `None` when there are none.
    pub mean_horizon_depth_m: Option<f64>,
}
