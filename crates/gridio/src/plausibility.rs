//! Do the inputs' values look like what their roles hold? Checked on a bounded sample of
//! time steps (the first step of every file, up to [`MAX_SAMPLED_STEPS`]) when the run is
//! opened, so a mislabelled or empty input stops the job before any long work. A few bad
//! cells are left to the per-cell quality flag; an input that is entirely missing over the
//! wet cells, or far outside its plausible range over a large part of the grid, is refused
//! unless the user accepts it (`InputChecks::accept_implausible`).

use crate::conversion::Conversion;
use crate::error::{GridError, Result};
use crate::mapping::SalinityKind;
use crate::roles::Role;
use crate::run::{Input, Run};
use crate::units::practical_salinity_scale;
use crate::DensityChoice;
use std::fmt::Write;

/// The range a role's values lie in after conversion, with the reason for its limits.
pub(crate) struct Plausible {
    pub role: Role,
    pub low: f64,
    pub high: f64,
    pub unit: &'static str,
    pub basis: &'static str,
}

/// Plausible ranges, in the units the chemistry works in. All common practice: they are
/// wide on purpose, to catch units off by a factor of 1000, kelvin labelled as Celsius, or
/// an empty field, not to judge a model.
pub(crate) const PLAUSIBLE: [Plausible; 7] = [
    Plausible {
        role: Role::Dic,
        low: 100.0,
        high: 10_000.0,
        unit: "µmol kg-1",
        basis: "seawater holds about 1800 to 2500, estuaries and brines a few thousand (common practice)",
    },
    Plausible {
        role: Role::Alkalinity,
        low: 100.0,
        high: 10_000.0,
        unit: "µmol kg-1",
        basis: "seawater holds about 2000 to 2500, estuaries and brines a few thousand (common practice)",
    },
    Plausible {
        role: Role::Temperature,
        low: -3.0,
        high: 45.0,
        unit: "°C",
        basis: "seawater freezes near -2 °C and the warmest seas stay below about 35 °C (common practice)",
    },
    Plausible {
        role: Role::Salinity,
        low: 1.0,
        high: 50.0,
        unit: "(practical salinity)",
        basis: "the open ocean lies between about 32 and 38, enclosed seas reach about 45 (common practice)",
    },
    Plausible {
        role: Role::Phosphate,
        low: -1.0,
        high: 10.0,
        unit: "µmol kg-1",
        basis: "the ocean holds 0 to about 3.5; models leave small negative values (common practice)",
    },
    Plausible {
        role: Role::Silicate,
        low: -1.0,
        high: 300.0,
        unit: "µmol kg-1",
        basis: "the ocean holds 0 to about 180; models leave small negative values (common practice)",
    },
    Plausible {
        role: Role::Pressure,
        low: -10.0,
        high: 12_000.0,
        unit: "dbar",
        basis: "the deepest trench lies near 11,000 dbar (common practice)",
    },
];

/// Share of a sampled step's wet cells outside the plausible range above which an input
/// is refused: a few bad cells are flagged per cell, a tenth of the grid is a wrong input.
pub(crate) const REFUSE_SHARE: f64 = 0.10;

/// The most chunk cache the sampling at open may hold (freed before any slab is read, up to
/// [`FIRST_SLAB_CACHE_LIMIT_BYTES`]; half the default memory budget): inputs whose chunks
/// need more are sampled with the library's default cache, which inflates a chunk spanning
/// many rows or steps once per block read.
const SAMPLING_CACHE_LIMIT_BYTES: u64 = 1024 * 1024 * 1024;

/// The most chunk cache the sampling may leave to the first slab read after it (freed by
/// that read): a few chunks per input, small beside any slab of a large grid.
const FIRST_SLAB_CACHE_LIMIT_BYTES: u64 = 128 * 1024 * 1024;

/// Most time steps whose values are checked when a run is opened (each read in full).
pub(crate) const MAX_SAMPLED_STEPS: usize = 24;

/// Density used only to judge per-volume values [kg m-3] (typical seawater, common practice).
const TYPICAL_DENSITY: f64 = 1025.0;

/// Raw values kept per input and step to estimate a median for messages.
const MEDIAN_SAMPLE: usize = 4096;

/// What the sampled values of one input looked like.
#[derive(Clone, Debug)]
pub(crate) struct ValueCheck {
    pub role: Role,
    pub name: String,
    pub low: f64,
    pub high: f64,
    pub unit: &'static str,
    pub steps: usize,
    /// Values checked (present where the other required inputs are present).
    pub values: u64,
    pub outside: u64,
    /// Cells where the other required inputs are present, and where this one is missing.
    pub others_present: u64,
    pub missing: u64,
    /// Converted extremes over the sample.
    pub min: f64,
    pub max: f64,
    /// Why this input is implausible, if it is (from the earliest sampled step that is).
    pub refusal: Option<String>,
    /// The step `refusal` comes from.
    refusal_step: usize,
}

impl ValueCheck {
    fn new(input: &Input) -> ValueCheck {
        let range = plausible(input.role).expect("only inputs with a range are checked");
        ValueCheck {
            role: input.role,
            name: input.name.clone(),
            low: range.low,
            high: range.high,
            unit: range.unit,
            steps: 0,
            values: 0,
            outside: 0,
            others_present: 0,
            missing: 0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            refusal: None,
            refusal_step: usize::MAX,
        }
    }

    /// Adds the tally of sampled step `step` (`rough` converts a raw value), keeping the
    /// earliest step's refusal.
    fn add(
        &mut self,
        step: usize,
        tally: &Tally,
        scale: f64,
        refusal: Option<String>,
        rough: impl Fn(f64) -> f64,
    ) {
        self.steps += 1;
        self.values += tally.present;
        self.outside += tally.outside[usize::from(scale != 1.0)];
        self.others_present += tally.others_present;
        self.missing += tally.missing;
        if tally.present > 0 {
            self.min = self.min.min(rough(tally.min));
            self.max = self.max.max(rough(tally.max));
        }
        if refusal.is_some() && step < self.refusal_step {
            (self.refusal, self.refusal_step) = (refusal, step);
        }
    }
}

/// One step's tally of one input (raw values).
#[derive(Clone)]
struct Tally {
    finite: u64,
    present: u64,
    outside: [u64; 2],
    others_present: u64,
    missing: u64,
    min: f64,
    max: f64,
    sum: f64,
    sample: Vec<f64>,
}

impl Default for Tally {
    fn default() -> Self {
        Tally {
            finite: 0,
            present: 0,
            outside: [0; 2],
            others_present: 0,
            missing: 0,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            sum: 0.0,
            sample: Vec::new(),
        }
    }
}

const REQUIRED: [Role; 4] = [
    Role::Temperature,
    Role::Salinity,
    Role::Dic,
    Role::Alkalinity,
];

fn plausible(role: Role) -> Option<&'static Plausible> {
    PLAUSIBLE.iter().find(|p| p.role == role)
}

fn median(values: &mut [f64]) -> f64 {
    if values.is_empty() {
        return f64::NAN;
    }
    values.sort_by(f64::total_cmp);
    values[values.len() / 2]
}

/// A likely cause of implausible values, from their median (converted).
fn hint(role: Role, units: &str, median: f64, range: &Plausible) -> String {
    let inside = |v: f64| (range.low..=range.high).contains(&v);
    match role {
        Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate if median > 0.0 && inside(median * 1000.0) => format!(
            "The values are about 1000 times too small: are the units really \"{units}\" (mol m-3 written as mmol m-3, or mol kg-1 as µmol kg-1)? Give the right units with --variable {}.units=... ",
            role.key()
        ),
        Role::Dic | Role::Alkalinity | Role::Phosphate | Role::Silicate if inside(median / 1000.0) => format!(
            "The values are about 1000 times too large: are the units really \"{units}\" (mmol m-3 written as mol m-3)? Give the right units with --variable {}.units=... ",
            role.key()
        ),
        Role::Temperature if (250.0..330.0).contains(&median) => format!(
            "The values look like kelvin labelled \"{units}\": give --variable temperature.units=K. "
        ),
        Role::Salinity if median.abs() < 0.5 => {
            "Salinity is zero or near zero over most of the grid: is this the salinity variable, or was it written empty? ".to_string()
        }
        _ => String::new(),
    }
}

impl Run {
    /// Time steps whose values are checked: the first step of every file of every input,
    /// thinned evenly to [`MAX_SAMPLED_STEPS`] but always keeping the first and last file
    /// and every file whose metadata differ from its variable's first file.
    fn steps_to_sample(&self) -> Vec<usize> {
        let mut must = vec![0];
        let mut rest = Vec::new();
        for input in self
            .inputs
            .iter()
            .filter(|i| i.role.per_cell() && i.source.has_time())
        {
            let first = &input.meanings[0];
            for (piece, meaning) in input.source.pieces.iter().zip(&input.meanings) {
                let differs = meaning.units != first.units
                    || meaning.standard_name != first.standard_name
                    || meaning.conversion != first.conversion;
                if differs {
                    must.push(piece.first_step);
                } else {
                    rest.push(piece.first_step);
                }
            }
            if let Some(last) = input.source.pieces.last() {
                must.push(last.first_step);
            }
        }
        must.sort_unstable();
        must.dedup();
        rest.sort_unstable();
        rest.dedup();
        rest.retain(|s| !must.contains(s));
        let room = MAX_SAMPLED_STEPS.saturating_sub(must.len());
        if rest.len() > room {
            let chosen: Vec<usize> = (0..room)
                .map(|k| rest[k * rest.len() / room.max(1)])
                .collect();
            rest = chosen;
        }
        must.extend(rest);
        must.sort_unstable();
        must.dedup();
        must
    }

    /// Reads the sampled steps: counts wet cells (first step), decides each salinity file's
    /// scale, and judges every per-cell input against its plausible range.
    pub(crate) fn inspect_values(&mut self) -> Result<()> {
        let steps = self.steps_to_sample();
        let checked: Vec<usize> = (0..self.inputs.len())
            .filter(|&i| self.inputs[i].role.per_cell() && plausible(self.inputs[i].role).is_some())
            .collect();
        let mut checks: Vec<ValueCheck> = checked
            .iter()
            .map(|&i| ValueCheck::new(&self.inputs[i]))
            .collect();
        let mut sampled_salinity = vec![false; self.required(Role::Salinity).meanings.len()];
        let block = self.sampling_rows();
        if self.read_cache_bytes(block) <= SAMPLING_CACHE_LIMIT_BYTES {
            self.read_in_slabs_of(Some(block));
        }
        // (On an error the run is not opened, so the caches go with it.) The first step is
        // sampled last, so its chunks are still cached when a job reads its first slab.
        let first_last =
            (steps.iter().filter(|&&s| s != 0)).chain(steps.iter().filter(|&&s| s == 0));
        for &step in first_last {
            let (tallies, wet) = self.tally_step(step, &checked)?;
            if step == 0 {
                self.wet_cells = wet;
            }
            for ((check, &i), mut tally) in checks.iter_mut().zip(&checked).zip(tallies) {
                let piece = self.inputs[i].source.piece_index(step).unwrap_or(0);
                let scale = self.salinity_scale_of(i, piece, &tally);
                if self.inputs[i].role == Role::Salinity {
                    self.inputs[i].meanings[piece].salinity_scale = scale;
                    sampled_salinity[piece] = true;
                }
                let refusal = judge(self, &self.inputs[i], step, &mut tally, scale);
                let conversion = &self.inputs[i].meaning_at(step).conversion;
                check.add(step, &tally, scale, refusal, |v| {
                    conversion.rough_value(v, self.rough_density(), scale)
                });
            }
        }
        self.default_caches_after_next_read(FIRST_SLAB_CACHE_LIMIT_BYTES);
        // Salinity files not sampled share their variable's first file's scale.
        let salinity = self.inputs.iter().position(|i| i.role == Role::Salinity);
        if let Some(s) = salinity {
            let first = self.inputs[s].meanings[0].salinity_scale;
            for (meaning, sampled) in self.inputs[s].meanings.iter_mut().zip(&sampled_salinity) {
                if !sampled {
                    meaning.salinity_scale = first;
                }
            }
        }
        self.sampled_steps = steps;
        self.value_checks = checks;
        let refusals = self.implausible_inputs();
        if refusals.is_empty() || self.checks.accept_implausible {
            return Ok(());
        }
        let mut message =
            String::from("implausible input values (checked before any long work):\n");
        for r in &refusals {
            let _ = writeln!(message, "  {r}");
        }
        let _ = write!(
            message,
            "A few bad cells would only be flagged; these inputs are wrong over a large part of the grid. Fix the units or the variable mapping; if the values are what you mean to process, run again with --accept-implausible-inputs (recorded in the output's metadata)."
        );
        Err(GridError::Implausible { message })
    }

    fn rough_density(&self) -> f64 {
        match self.density {
            DensityChoice::Reference(rho) => rho,
            DensityChoice::InSitu => TYPICAL_DENSITY,
        }
    }

    /// The salinity scale of piece `piece` of input `i` from a step's tally (1 for
    /// everything but practical salinity).
    fn salinity_scale_of(&self, i: usize, piece: usize, tally: &Tally) -> f64 {
        let input = &self.inputs[i];
        match input.meanings[piece].conversion {
            Conversion::Salinity(SalinityKind::Practical, _) if tally.present > 0 => {
                practical_salinity_scale(tally.sum / tally.present as f64)
            }
            _ => input.meanings[piece].salinity_scale,
        }
    }

    /// Rows read at a time while sampling: about a million cells.
    fn sampling_rows(&self) -> usize {
        (1_000_000 / (self.shape.levels * self.shape.cols).max(1)).max(1)
    }

    /// One pass over a step, in blocks of rows: a tally per checked input and the number
    /// of cells where all four required inputs are present.
    fn tally_step(&self, step: usize, checked: &[usize]) -> Result<(Vec<Tally>, u64)> {
        let block = self.sampling_rows();
        let mut tallies = vec![Tally::default(); checked.len()];
        let mut wet = 0u64;
        let required: Vec<usize> = REQUIRED
            .iter()
            .filter_map(|r| self.inputs.iter().position(|i| i.role == *r))
            .collect();
        let mut row = 0;
        while row < self.shape.rows {
            let rows = row..(row + block).min(self.shape.rows);
            let mut values: Vec<Option<Vec<f64>>> = vec![None; self.inputs.len()];
            for &i in required.iter().chain(checked) {
                if values[i].is_none() {
                    values[i] = Some(self.inputs[i].source.read(&self.paths, step, &rows)?);
                }
            }
            let cells = values[required[0]].as_ref().map_or(0, Vec::len);
            // Raw-value limits of each checked input for salinity scales 1 and 1000 (every
            // conversion is increasing and affine, so the range maps onto raw values).
            let density = self.rough_density();
            let limits: Vec<[(f64, f64); 2]> = checked
                .iter()
                .map(|&i| {
                    let range = plausible(self.inputs[i].role).expect("checked roles have ranges");
                    let conversion = &self.inputs[i].meaning_at(step).conversion;
                    [1.0, 1000.0].map(|scale| raw_limits(conversion, density, scale, range))
                })
                .collect();
            // Bit k set when required input k is present; an input's own bit counts as set
            // when judging whether the others are present.
            let full = (1u8 << required.len()) - 1;
            let own_bit: Vec<u8> = checked
                .iter()
                .map(|i| required.iter().position(|r| r == i).map_or(0, |k| 1 << k))
                .collect();
            let columns: Vec<&Vec<f64>> = required
                .iter()
                .filter_map(|&r| values[r].as_ref())
                .collect();
            let checked_values: Vec<&Vec<f64>> =
                checked.iter().filter_map(|&i| values[i].as_ref()).collect();
            for c in 0..cells {
                let bits = columns
                    .iter()
                    .enumerate()
                    .fold(0u8, |b, (k, v)| b | (u8::from(v[c].is_finite()) << k));
                wet += u64::from(bits == full);
                for (((tally, v), own), limits) in tallies
                    .iter_mut()
                    .zip(&checked_values)
                    .zip(&own_bit)
                    .zip(&limits)
                {
                    tally.count(v[c], bits | own == full, limits);
                }
            }
            row = rows.end;
        }
        Ok((tallies, wet))
    }
}

impl Tally {
    /// Counts one raw value `v`, judged against raw limits for salinity scales 1 and 1000.
    fn count(&mut self, v: f64, others: bool, limits: &[(f64, f64); 2]) {
        if v.is_finite() {
            self.finite += 1;
        }
        if !others {
            return;
        }
        self.others_present += 1;
        if !v.is_finite() {
            self.missing += 1;
            return;
        }
        self.present += 1;
        self.sum += v;
        self.min = self.min.min(v);
        self.max = self.max.max(v);
        for (outside, (low, high)) in self.outside.iter_mut().zip(limits) {
            *outside += u64::from(!(*low..=*high).contains(&v));
        }
        if self.sample.len() < MEDIAN_SAMPLE {
            self.sample.push(v);
        }
    }
}

/// The raw values that convert into `range` (conversions are increasing affine maps).
fn raw_limits(conversion: &Conversion, density: f64, scale: f64, range: &Plausible) -> (f64, f64) {
    let at0 = conversion.rough_value(0.0, density, scale);
    let slope = conversion.rough_value(1.0, density, scale) - at0;
    if !(slope.is_finite() && slope > 0.0) {
        return (f64::NEG_INFINITY, f64::INFINITY);
    }
    ((range.low - at0) / slope, (range.high - at0) / slope)
}

/// Why one sampled step of `input` is implausible, if it is.
fn judge(run: &Run, input: &Input, step: usize, tally: &mut Tally, scale: f64) -> Option<String> {
    let range = plausible(input.role)?;
    let piece = input.source.piece_index(step).unwrap_or(0);
    let meaning = &input.meanings[piece];
    let file = run.paths[input.source.pieces[piece].file].display();
    let when = run
        .time
        .as_ref()
        .and_then(|t| t.axis.to_datetime(t.values[step]).ok())
        .map(|d| format!(", time step {} ({d})", step + 1))
        .unwrap_or_default();
    let place = format!(
        "{} (variable '{}', file {file}{when})",
        input.role.key(),
        input.name
    );
    let empty = tally.finite == 0 || (tally.others_present > 0 && tally.present == 0);
    if empty {
        return Some(format!(
            "{place}: no value at any of the {} cells where the other inputs have values (every value is _FillValue, missing_value or outside valid_min/valid_max); expected {} values there. Is it the right variable, or was the file written incompletely?",
            tally.others_present, input.role.key()
        ));
    }
    let outside = tally.outside[usize::from(scale != 1.0)];
    let share = outside as f64 / tally.present.max(1) as f64;
    if share <= REFUSE_SHARE {
        return None;
    }
    let rough = |v: f64| {
        meaning
            .conversion
            .rough_value(v, run.rough_density(), scale)
    };
    let mut converted: Vec<f64> = tally.sample.iter().map(|v| rough(*v)).collect();
    let mid = median(&mut converted);
    Some(format!(
        "{place}: {:.1} % of the {} sampled cells lie outside {} to {} {} after conversion (values {:.4} to {:.4}, median {:.4}; units \"{}\"; {}). {}",
        100.0 * share,
        tally.present,
        range.low,
        range.high,
        range.unit,
        rough(tally.min),
        rough(tally.max),
        mid,
        meaning.units,
        range.basis,
        hint(input.role, &meaning.units, mid, range)
    ))
}
