//! Weighted statistics per region and layer, accumulated column by column.
//!
//! Per region, layer and 3-D field: the volume-weighted mean (area-weighted for the surface-cell
//! layer), the weight with a value, the weight without one, and the fraction of that weight
//! with the value below each threshold. Per region and 2-D field (one value per column, e.g. a
//! horizon depth or a surface value): the same with area weights, over columns with a value.
//!
//! Determinism as in [`crate::extent`]: each column's terms are summed in level order, the
//! column totals are added exactly, so results are bitwise the same for any split into slabs
//! and any merge order.

use super::{Layer, Membership, RegionError, RegionSet};
use crate::sum::{append_flat, merge_flat};
use crate::{check_length, ExactSum};
use serde::{Deserialize, Serialize};

/// A field to summarise and the thresholds to count the fraction below (e.g. Ω aragonite with
/// 1, 1.5, 3; pH with none).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FieldSpec {
    /// The field's name, as the caller reports it.
    pub name: String,
    /// The field's units, carried into the rows.
    pub units: String,
    /// Thresholds (same units); a value counts as below when `value < threshold`.
    pub thresholds: Vec<f64>,
}

/// What a statistic is weighted by.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum Weighting {
    /// Horizontal area \[m²\].
    Area,
    /// Cell volume \[m³\].
    Volume,
}

/// One column's values, wet cells from the surface down.
#[derive(Clone, Copy, Debug)]
pub struct RegionColumn<'a> {
    /// Horizontal area of the column \[m²\].
    pub area_m2: f64,
    /// Depth of each wet cell's centre \[m\], positive down.
    pub depth_m: &'a [f64],
    /// Volume of each wet cell \[m³\].
    pub volume_m3: &'a [f64],
    /// For each 3-D field (order of the accumulator's `cell_fields`), its value per wet cell;
    /// NaN where missing.
    pub cell_values: &'a [&'a [f64]],
    /// For each 2-D field (order of `column_fields`), the column's value; NaN where none.
    pub column_values: &'a [f64],
}

/// Exact sums behind one weighted statistic.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
struct WeightedSums {
    weight: ExactSum,
    weighted_value: ExactSum,
    missing_weight: ExactSum,
    below: Vec<ExactSum>,
}

impl WeightedSums {
    /// Every sum, in a fixed order.
    fn sums(&self) -> impl Iterator<Item = &ExactSum> {
        [&self.weight, &self.weighted_value, &self.missing_weight]
            .into_iter()
            .chain(&self.below)
    }

    /// Every sum, in the order of [`WeightedSums::sums`].
    fn sums_mut(&mut self) -> impl Iterator<Item = &mut ExactSum> {
        [
            &mut self.weight,
            &mut self.weighted_value,
            &mut self.missing_weight,
        ]
        .into_iter()
        .chain(&mut self.below)
    }

    fn new(thresholds: usize) -> Self {
        WeightedSums {
            weight: ExactSum::new(),
            weighted_value: ExactSum::new(),
            missing_weight: ExactSum::new(),
            below: vec![ExactSum::new(); thresholds],
        }
    }

    fn merge(&mut self, other: &WeightedSums) {
        self.weight.merge(&other.weight);
        self.weighted_value.merge(&other.weighted_value);
        self.missing_weight.merge(&other.missing_weight);
        for (a, b) in self.below.iter_mut().zip(&other.below) {
            a.merge(b);
        }
    }
}

/// One column's plain partial sums for one statistic, before exact accumulation.
#[derive(Clone, Debug, Default)]
struct Partial {
    weight: f64,
    weighted_value: f64,
    missing_weight: f64,
    below: Vec<f64>,
}

impl Partial {
    fn reset(&mut self, thresholds: usize) {
        self.weight = 0.0;
        self.weighted_value = 0.0;
        self.missing_weight = 0.0;
        self.below.clear();
        self.below.resize(thresholds, 0.0);
    }

    fn add(&mut self, weight: f64, value: f64, thresholds: &[f64]) {
        if value.is_nan() {
            self.missing_weight += weight;
            return;
        }
        self.weight += weight;
        self.weighted_value += weight * value;
        for (b, &t) in self.below.iter_mut().zip(thresholds) {
            if value < t {
                *b += weight;
            }
        }
    }

    fn add_to(&self, sums: &mut WeightedSums) {
        sums.weight.add(self.weight);
        sums.weighted_value.add(self.weighted_value);
        sums.missing_weight.add(self.missing_weight);
        for (s, &b) in sums.below.iter_mut().zip(&self.below) {
            s.add(b);
        }
    }
}

/// Accumulator of weighted statistics per region × layer × field (3-D fields) and per region ×
/// field (2-D fields) for one time step (or any set of columns).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct RegionStatistics {
    regions: Vec<String>,
    layers: Vec<Layer>,
    cell_fields: Vec<FieldSpec>,
    column_fields: Vec<FieldSpec>,
    /// Index: (region × layers + layer) × cell_fields + field.
    cell_sums: Vec<WeightedSums>,
    /// Index: region × column_fields + field.
    column_sums: Vec<WeightedSums>,
}

impl RegionStatistics {
    /// An empty accumulator for these regions, layers and fields.
    pub fn new(
        regions: &RegionSet,
        layers: &[Layer],
        cell_fields: Vec<FieldSpec>,
        column_fields: Vec<FieldSpec>,
    ) -> Self {
        let names = regions.names();
        let mut cell_sums = Vec::new();
        for _ in 0..names.len() * layers.len() {
            cell_sums.extend(
                cell_fields
                    .iter()
                    .map(|f| WeightedSums::new(f.thresholds.len())),
            );
        }
        let mut column_sums = Vec::new();
        for _ in 0..names.len() {
            column_sums.extend(
                column_fields
                    .iter()
                    .map(|f| WeightedSums::new(f.thresholds.len())),
            );
        }
        RegionStatistics {
            regions: names,
            layers: layers.to_vec(),
            cell_fields,
            column_fields,
            cell_sums,
            column_sums,
        }
    }

    /// Adds one column to every region listed in `membership.of(column)`.
    pub fn add_column(
        &mut self,
        membership: &Membership,
        column: usize,
        values: &RegionColumn,
    ) -> Result<(), RegionError> {
        self.check_column(membership, column, values)?;
        let members = membership.of(column);
        if members.is_empty() || values.volume_m3.is_empty() {
            return Ok(());
        }
        let mut partial = Partial::default();
        for (l, layer) in self.layers.iter().enumerate() {
            for (f, field) in self.cell_fields.iter().enumerate() {
                partial.reset(field.thresholds.len());
                let cells = values.cell_values[f];
                let cells = cells.iter().zip(values.depth_m).zip(values.volume_m3);
                for (k, ((&value, &depth), &volume)) in cells.enumerate() {
                    if layer.holds(k, depth) {
                        let weight = if layer.weighted_by_area() {
                            values.area_m2
                        } else {
                            volume
                        };
                        partial.add(weight, value, &field.thresholds);
                    }
                }
                for &r in members {
                    let index = (r as usize * self.layers.len() + l) * self.cell_fields.len() + f;
                    partial.add_to(&mut self.cell_sums[index]);
                }
            }
        }
        for (f, field) in self.column_fields.iter().enumerate() {
            partial.reset(field.thresholds.len());
            partial.add(values.area_m2, values.column_values[f], &field.thresholds);
            for &r in members {
                let index = r as usize * self.column_fields.len() + f;
                partial.add_to(&mut self.column_sums[index]);
            }
        }
        Ok(())
    }

    fn check_column(
        &self,
        membership: &Membership,
        column: usize,
        values: &RegionColumn,
    ) -> Result<(), RegionError> {
        check_length(
            "regions of the membership",
            self.regions.len(),
            membership.regions(),
        )?;
        if column >= membership.columns() {
            return Err(RegionError::Column {
                column,
                columns: membership.columns(),
            });
        }
        let cells = values.volume_m3.len();
        check_length("depths per wet cell", cells, values.depth_m.len())?;
        check_length(
            "3-D fields",
            self.cell_fields.len(),
            values.cell_values.len(),
        )?;
        for field in values.cell_values {
            check_length("values per wet cell", cells, field.len())?;
        }
        check_length(
            "2-D fields",
            self.column_fields.len(),
            values.column_values.len(),
        )?;
        Ok(())
    }

    /// Adds everything another accumulator (same regions, layers and fields) has seen.
    pub fn merge(&mut self, other: &RegionStatistics) -> Result<(), RegionError> {
        let same = self.regions == other.regions
            && self.layers == other.layers
            && self.cell_fields == other.cell_fields
            && self.column_fields == other.column_fields;
        if !same {
            return Err(RegionError::Mismatch);
        }
        for (a, b) in self.cell_sums.iter_mut().zip(&other.cell_sums) {
            a.merge(b);
        }
        for (a, b) in self.column_sums.iter_mut().zip(&other.column_sums) {
            a.merge(b);
        }
        Ok(())
    }

    /// Every sum as one flat list of numbers, e.g. to send to another process;
    /// [`RegionStatistics::merge_flat`] adds it back exactly.
    pub fn to_flat(&self) -> Vec<f64> {
        let mut flat = Vec::new();
        let all = self.cell_sums.iter().chain(&self.column_sums);
        append_flat(all.flat_map(WeightedSums::sums), &mut flat);
        flat
    }

    /// Adds the sums of [`RegionStatistics::to_flat`] from an accumulator with the same
    /// regions, layers and fields.
    pub fn merge_flat(&mut self, flat: &[f64]) -> Result<(), RegionError> {
        let all = self.cell_sums.iter_mut().chain(&mut self.column_sums);
        merge_flat(all.flat_map(WeightedSums::sums_mut), flat).ok_or(RegionError::Mismatch)
    }

    /// The statistics as rows: per region, each layer's 3-D fields, then the 2-D fields.
    pub fn rows(&self) -> Vec<RegionRow> {
        let mut out = Vec::new();
        for (r, region) in self.regions.iter().enumerate() {
            for (l, layer) in self.layers.iter().enumerate() {
                for (f, field) in self.cell_fields.iter().enumerate() {
                    let sums =
                        &self.cell_sums[(r * self.layers.len() + l) * self.cell_fields.len() + f];
                    let weighting = if layer.weighted_by_area() {
                        Weighting::Area
                    } else {
                        Weighting::Volume
                    };
                    out.push(RegionRow::from_sums(
                        region,
                        Some(&layer.name),
                        field,
                        weighting,
                        sums,
                    ));
                }
            }
            for (f, field) in self.column_fields.iter().enumerate() {
                let sums = &self.column_sums[r * self.column_fields.len() + f];
                out.push(RegionRow::from_sums(
                    region,
                    None,
                    field,
                    Weighting::Area,
                    sums,
                ));
            }
        }
        out
    }
}

/// One statistic of one field in one region (and layer).
#[derive(Clone, Debug, PartialEq)]
pub struct RegionRow {
    /// Region name.
    pub region: String,
    /// Layer name; `None` for 2-D fields.
    pub layer: Option<String>,
    /// Field name.
    pub field: String,
    /// Field units.
    pub units: String,
    /// What the statistics are weighted by.
    pub weighting: Weighting,
    /// Total weight of cells (or columns) with a value \[m² or m³\].
    pub weight: f64,
    /// Total weight of cells (or columns) without a value \[m² or m³\].
    pub missing_weight: f64,
    /// Weighted mean \[field units\]; `None` when no cell has a value.
    pub mean: Option<f64>,
    /// Per threshold: (threshold, fraction of the weight with a value that is below it \[1\]).
    pub fraction_below: Vec<(f64, Option<f64>)>,
}

impl RegionRow {
    fn from_sums(
        region: &str,
        layer: Option<&String>,
        field: &FieldSpec,
        weighting: Weighting,
        sums: &WeightedSums,
    ) -> RegionRow {
        let weight = sums.weight.value();
        let share = |x: f64| (weight > 0.0).then(|| x / weight);
        RegionRow {
            region: region.to_string(),
            layer: layer.cloned(),
            field: field.name.clone(),
            units: field.units.clone(),
            weighting,
            weight,
            missing_weight: sums.missing_weight.value(),
            mean: share(sums.weighted_value.value()),
            fraction_below: field
                .thresholds
                .iter()
                .zip(&sums.below)
                .map(|(&t, b)| (t, share(b.value())))
                .collect(),
        }
    }
}
