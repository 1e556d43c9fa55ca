//! The water columns of a solved slab: each column's saturation horizons, the thickness of its
//! cells, and the slab's share of the time step's corrosive-water extent. Runs after the
//! per-cell solve on its [`SlabResult`] (kept apart from the solve, so the per-cell kernel can
//! be replaced without touching this), on the rayon pool, one grid row per task.
//!
//! Every column is analysed on its own and the extent sums are exact
//! (`acidscape_analysis::ExactSum`), so no value depends on how a step is split into slabs.

use crate::cells::{KeepOmega, SlabResult, VALUE_FILL};
use crate::flags::FLAG_FILL;
use crate::geometry::ColumnGeometry;
use crate::horizon_choice::HorizonPlan;
use crate::indicators::OutputField;
use crate::PipelineError;
use acidscape_analysis::column::{ColumnCells, SlabShape};
use acidscape_analysis::extent::{CorrosiveExtent, ExtentColumn, Mineral, MineralColumn};
use acidscape_analysis::geometry::clipped_thickness;
use acidscape_analysis::horizons::{
    sea_floor_depth, Horizon, HorizonSensitivity, HorizonStatus, WetColumn,
};
use acidscape_gridio::SlabInputs;
use rayon::prelude::*;
use std::cell::RefCell;
use std::ops::Range;

/// The column analysis of a job: what to compute and the geometry of every column.
#[derive(Clone, Debug)]
pub struct ColumnWork {
    plan: HorizonPlan,
    horizons: Vec<(Mineral, f64)>,
    /// Per mineral (aragonite, calcite): its place among the gathered fields, if computed.
    fields: [Option<usize>; 2],
    /// Per mineral: the place of its Ω standard-uncertainty field among the solved fields.
    omega_uncertainty: [Option<usize>; 2],
    geometry: ColumnGeometry,
}

/// One horizon (mineral and threshold) over the columns of a slab.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct HorizonField {
    /// Depth of the horizon [m below the sea surface]; [`VALUE_FILL`] where it has none.
    pub depth_m: Vec<f32>,
    /// [`HorizonStatus`] flag value per column.
    pub status: Vec<i8>,
    /// Standard uncertainty of the depth [m] ([`VALUE_FILL`] where it has none); empty unless
    /// the job propagates uncertainties.
    pub uncertainty_m: Vec<f32>,
}

/// What the column analysis gives for one slab.
#[derive(Debug)]
pub struct ColumnResult {
    pub step: usize,
    pub rows: Range<usize>,
    /// One field per horizon, in [`HorizonPlan::horizons`] order; columns row-major.
    pub horizons: Vec<HorizonField>,
    /// Thickness of each wet cell [m] in (level, row, col) order ([`VALUE_FILL`] elsewhere),
    /// when this slab writes it (every step on parametric levels, the first step otherwise).
    pub thickness: Option<Vec<f32>>,
    /// Sea-floor depth per column [m below the datum], in the first step only.
    pub sea_floor: Option<Vec<f32>>,
    /// The slab's share of the step's corrosive-water extent.
    pub extent: CorrosiveExtent,
}

thread_local! {
    /// Each worker's buffers, kept from row to row and slab to slab.
    static SCRATCH: RefCell<Scratch> = RefCell::new(Scratch::default());
}

/// Reusable buffers of one worker.
#[derive(Default)]
struct Scratch {
    /// One grid row of the slab with levels innermost (column by column), so that a
    /// column's cells are contiguous: depth, wetness and each mineral's Ω.
    row_depth: Vec<f64>,
    row_wet: Vec<bool>,
    row_omega: Vec<Vec<f64>>,
    cells: ColumnCells,
    centres: Vec<f64>,
    bounds: Vec<[f64; 2]>,
    /// Thickness of each gathered (wet) cell [m], from the surface down.
    thickness: Vec<f64>,
    volumes: Vec<f64>,
    missing: Vec<f64>,
    horizon_m: [Vec<Option<f64>>; 2],
    /// Each horizon's sensitivity to the Ω it was found from, in the plan's order.
    sensitivities: Vec<Option<HorizonSensitivity>>,
}

impl Scratch {
    /// Copies grid row `r` of the slab level by level (reading each level's row in order)
    /// into the column-by-column buffers.
    fn load_row(&mut self, view: &SlabView, r: usize) {
        let SlabShape { levels, cols, .. } = view.shape;
        let n = levels * cols;
        self.row_depth.resize(n, 0.0);
        self.row_wet.resize(n, false);
        self.row_omega.resize_with(view.omega.len(), Vec::new);
        for buffer in &mut self.row_omega {
            buffer.resize(n, 0.0);
        }
        for k in 0..levels {
            let start = view.shape.index(k, r * cols);
            let level = start..start + cols;
            let depth = &view.inputs.depth_m[level.clone()];
            let flags = &view.solved.flags[level.clone()];
            let columns = (self.row_depth.chunks_exact_mut(levels))
                .zip(self.row_wet.chunks_exact_mut(levels));
            for ((column, wet), (&d, &flag)) in columns.zip(depth.iter().zip(flags)) {
                column[k] = d;
                wet[k] = flag != FLAG_FILL;
            }
            for (buffer, field) in self.row_omega.iter_mut().zip(&view.omega) {
                for (column, &w) in buffer.chunks_exact_mut(levels).zip(&field[level.clone()]) {
                    column[k] = w;
                }
            }
        }
    }

    /// Whether column `i` of the loaded row has a wet cell.
    fn has_water(&self, levels: usize, i: usize) -> bool {
        self.row_wet[i * levels..(i + 1) * levels].contains(&true)
    }

    /// Gathers column `i` of the loaded row from the surface down.
    fn gather(&mut self, levels: usize, i: usize) {
        let range = i * levels..(i + 1) * levels;
        let one_column = SlabShape {
            levels,
            rows: 1,
            cols: 1,
        };
        let wet = &self.row_wet[range.clone()];
        let omega: [&[f64]; 2] = [
            self.row_omega.first().map_or(&[], |b| &b[range.clone()]),
            self.row_omega.get(1).map_or(&[], |b| &b[range.clone()]),
        ];
        self.cells.gather(
            one_column,
            0,
            &self.row_depth[range],
            |k| wet[k],
            &omega[..self.row_omega.len()],
        );
    }
}

/// One grid row's results.
struct RowResult {
    depth: Vec<f32>,
    depth_uncertainty: Vec<f32>,
    status: Vec<i8>,
    thickness: Vec<f32>,
    sea_floor: Vec<f32>,
    extent: CorrosiveExtent,
}

/// A slab as the column analysis reads it.
struct SlabView<'a> {
    inputs: &'a SlabInputs,
    solved: &'a SlabResult,
    shape: SlabShape,
    omega: Vec<&'a [f64]>,
    write_thickness: bool,
    write_sea_floor: bool,
}

impl ColumnWork {
    /// The column analysis of `plan` on columns of `geometry`.
    pub fn new(plan: HorizonPlan, geometry: ColumnGeometry) -> ColumnWork {
        let field = |m: Mineral| plan.minerals.iter().position(|x| *x == m);
        ColumnWork {
            horizons: plan.horizons(),
            fields: [field(Mineral::Aragonite), field(Mineral::Calcite)],
            omega_uncertainty: [None, None],
            plan,
            geometry,
        }
    }

    /// Also propagates to the horizon depths the Ω uncertainties among `fields` (the job's
    /// output fields, in the order the solve fills them).
    pub fn with_depth_uncertainty(mut self, fields: &[OutputField]) -> ColumnWork {
        let place =
            |name: &str| (fields.iter()).position(|f| f.combined_uncertainty_of() == Some(name));
        self.omega_uncertainty = [place("omega_aragonite"), place("omega_calcite")];
        self
    }

    /// Whether the horizon depths get standard uncertainties.
    pub fn has_depth_uncertainty(&self) -> bool {
        self.omega_uncertainty.iter().any(Option::is_some)
    }

    pub fn plan(&self) -> &HorizonPlan {
        &self.plan
    }

    pub fn geometry(&self) -> &ColumnGeometry {
        &self.geometry
    }

    /// The saturation states the solve must keep for this analysis.
    pub fn keep(&self) -> KeepOmega {
        KeepOmega {
            aragonite: self.plan.minerals.contains(&Mineral::Aragonite),
            calcite: self.plan.minerals.contains(&Mineral::Calcite),
        }
    }

    /// Analyses every column of a solved slab.
    pub fn analyse(
        &self,
        inputs: &SlabInputs,
        solved: &SlabResult,
    ) -> Result<ColumnResult, PipelineError> {
        let [levels, rows, cols] = solved.shape;
        let first_step = solved.step == 0;
        let omega = self
            .plan
            .minerals
            .iter()
            .map(|m| match m {
                Mineral::Aragonite => solved.omega.aragonite.as_slice(),
                Mineral::Calcite => solved.omega.calcite.as_slice(),
            })
            .collect();
        let view = SlabView {
            inputs,
            solved,
            shape: SlabShape { levels, rows, cols },
            omega,
            write_thickness: first_step || self.geometry.vertical.varies_in_time(),
            write_sea_floor: first_step,
        };
        let row_results: Vec<RowResult> = (0..rows)
            .into_par_iter()
            .map(|r| SCRATCH.with(|scratch| self.analyse_row(&view, r, &mut scratch.borrow_mut())))
            .collect::<Result<_, _>>()?;
        self.assemble(&view, row_results)
    }

    /// Puts the rows' results together in slab order.
    fn assemble(
        &self,
        view: &SlabView,
        row_results: Vec<RowResult>,
    ) -> Result<ColumnResult, PipelineError> {
        let SlabShape { levels, rows, cols } = view.shape;
        let mut horizons = vec![HorizonField::default(); self.horizons.len()];
        let mut thickness = view
            .write_thickness
            .then(|| vec![VALUE_FILL; levels * rows * cols]);
        let mut sea_floor = view
            .write_sea_floor
            .then(|| Vec::with_capacity(rows * cols));
        let mut extent = CorrosiveExtent::new(self.plan.thresholds.clone());
        for (r, row) in row_results.iter().enumerate() {
            for (h, field) in horizons.iter_mut().enumerate() {
                field
                    .depth_m
                    .extend_from_slice(&row.depth[h * cols..(h + 1) * cols]);
                field
                    .status
                    .extend_from_slice(&row.status[h * cols..(h + 1) * cols]);
                if !row.depth_uncertainty.is_empty() {
                    (field.uncertainty_m)
                        .extend_from_slice(&row.depth_uncertainty[h * cols..(h + 1) * cols]);
                }
            }
            if let Some(all) = &mut thickness {
                for k in 0..levels {
                    let at = view.shape.index(k, r * cols);
                    all[at..at + cols].copy_from_slice(&row.thickness[k * cols..(k + 1) * cols]);
                }
            }
            if let Some(all) = &mut sea_floor {
                all.extend_from_slice(&row.sea_floor);
            }
            extent.merge(&row.extent).map_err(internal)?;
        }
        Ok(ColumnResult {
            step: view.solved.step,
            rows: view.solved.rows.clone(),
            horizons,
            thickness,
            sea_floor,
            extent,
        })
    }

    fn analyse_row(
        &self,
        view: &SlabView,
        r: usize,
        scratch: &mut Scratch,
    ) -> Result<RowResult, PipelineError> {
        let SlabShape { levels, cols, .. } = view.shape;
        let mut row = RowResult {
            depth: vec![VALUE_FILL; self.horizons.len() * cols],
            depth_uncertainty: if self.has_depth_uncertainty() {
                vec![VALUE_FILL; self.horizons.len() * cols]
            } else {
                Vec::new()
            },
            status: vec![HorizonStatus::Land.flag_value(); self.horizons.len() * cols],
            thickness: if view.write_thickness {
                vec![VALUE_FILL; levels * cols]
            } else {
                Vec::new()
            },
            sea_floor: Vec::with_capacity(if view.write_sea_floor { cols } else { 0 }),
            extent: CorrosiveExtent::new(self.plan.thresholds.clone()),
        };
        scratch.load_row(view, r);
        for i in 0..cols {
            let floor = self.analyse_column(view, r, i, scratch, &mut row)?;
            if view.write_sea_floor {
                row.sea_floor.push(floor.map_or(VALUE_FILL, |d| d as f32));
            }
        }
        Ok(row)
    }

    /// One column: its horizons, cell thicknesses and extent terms into `row`. Returns the
    /// sea-floor depth below the datum to report for it (none for land without one).
    fn analyse_column(
        &self,
        view: &SlabView,
        r: usize,
        i: usize,
        s: &mut Scratch,
        row: &mut RowResult,
    ) -> Result<Option<f64>, PipelineError> {
        let shape = view.shape;
        let column = r * shape.cols + i;
        let grid_column = (view.solved.rows.start + r) * shape.cols + i;
        let known_floor = Some(self.geometry.sea_floor_m[grid_column]).filter(|d| d.is_finite());
        if !s.has_water(shape.levels, i) {
            return Ok(known_floor);
        }
        s.gather(shape.levels, i);
        let eta = view.inputs.surface_height_m[column];
        let vertical = &self.geometry.vertical;
        s.centres.clear();
        if vertical.needs_centres() {
            let row_depth = &s.row_depth[i * shape.levels..(i + 1) * shape.levels];
            s.centres.extend(row_depth.iter().map(|d| d + eta));
        }
        let bounds = vertical.level_bounds(&s.centres, eta, known_floor, &mut s.bounds);
        let clip = known_floor.map_or(f64::INFINITY, |d| d + eta);
        let known = wet_thicknesses(&s.cells.levels, bounds, clip, &mut s.thickness);
        let deepest = s.cells.levels.last().map_or(f64::NAN, |&k| {
            let [a, b] = bounds[k];
            a.max(b)
        });
        for depth in &mut s.cells.depth_m {
            *depth += eta;
        }
        let floor = sea_floor_depth(known_floor.map(|d| d + eta), deepest);
        let found = self.horizons_of_column(s, floor, i, row)?;
        if !row.depth_uncertainty.is_empty() {
            self.depth_uncertainties(view, column, s, i, row);
        }
        if known && found {
            self.add_to_extent(view, grid_column, s, &mut row.extent)?;
            if view.write_thickness {
                for (&k, &h) in s.cells.levels.iter().zip(&s.thickness) {
                    row.thickness[k * shape.cols + i] = h as f32;
                }
            }
        }
        Ok(known_floor.or(Some(deepest - eta).filter(|d| d.is_finite())))
    }

    /// The column's horizons into `row` (column `i`) and `s.horizon_m`. Returns false when the
    /// column's depths are unknown (its Ω is missing too): every status is then
    /// `omega_missing` and the column adds nothing to the extent.
    fn horizons_of_column(
        &self,
        s: &mut Scratch,
        floor: f64,
        i: usize,
        row: &mut RowResult,
    ) -> Result<bool, PipelineError> {
        let cols = row.status.len() / self.horizons.len();
        let deepest_centre = s.cells.depth_m.last().copied().unwrap_or(0.0);
        let floor = if floor.is_finite() {
            floor
        } else {
            deepest_centre
        };
        let wet = WetColumn::new(&s.cells.depth_m, floor);
        for list in &mut s.horizon_m {
            list.clear();
        }
        s.sensitivities.clear();
        for (h, &(mineral, threshold)) in self.horizons.iter().enumerate() {
            let found = match &wet {
                Ok(wet) => {
                    let m = self.fields[mineral_index(mineral)].unwrap_or(0);
                    wet.horizon(&s.cells.fields[m], threshold)
                        .map_err(internal)?
                }
                Err(_) => Horizon {
                    status: HorizonStatus::OmegaMissing,
                    depth_m: None,
                    sensitivity: None,
                },
            };
            row.status[h * cols + i] = found.status.flag_value();
            row.depth[h * cols + i] = found.depth_m.map_or(VALUE_FILL, |d| d as f32);
            s.horizon_m[mineral_index(mineral)].push(found.depth_m);
            s.sensitivities.push(found.sensitivity);
        }
        Ok(wet.is_ok())
    }

    /// The standard uncertainty of each horizon depth of column `i` into `row`: from the Ω
    /// uncertainties of the two levels the depth was found between, through the depth's
    /// derivatives ([`acidscape_analysis::horizons::HorizonSensitivity`]), the two taken as
    /// fully correlated (neighbouring levels share the constants' errors and, mostly, the
    /// inputs'). None where the depth has no sensitivity (0 m at the surface, no depth).
    fn depth_uncertainties(
        &self,
        view: &SlabView,
        column: usize,
        s: &Scratch,
        i: usize,
        row: &mut RowResult,
    ) {
        let cols = row.status.len() / self.horizons.len();
        let found = self.horizons.iter().zip(&s.sensitivities).enumerate();
        for (h, (&(mineral, _), sensitivity)) in found {
            let (Some(u_field), Some(sensitivity)) =
                (self.omega_uncertainty[mineral_index(mineral)], sensitivity)
            else {
                continue;
            };
            let u = |gathered: usize| {
                let k = s.cells.levels[gathered];
                let value = view.solved.fields[u_field][view.shape.index(k, column)];
                (value != VALUE_FILL).then_some(f64::from(value))
            };
            if let (Some(upper), Some(lower)) =
                (u(sensitivity.upper_level), u(sensitivity.lower_level))
            {
                let depth = sensitivity.depth_uncertainty_m(upper, lower, 1.0);
                row.depth_uncertainty[h * cols + i] = depth as f32;
            }
        }
    }

    /// Adds one column (gathered in `s`, with its thicknesses and horizons) to the extent.
    fn add_to_extent(
        &self,
        view: &SlabView,
        grid_column: usize,
        s: &mut Scratch,
        extent: &mut CorrosiveExtent,
    ) -> Result<(), PipelineError> {
        let area = self.geometry.area_m2[grid_column];
        if !(area.is_finite() && area >= 0.0) {
            let cols = view.shape.cols;
            return Err(PipelineError::Option {
                option: "cell areas".into(),
                message: format!(
                    "no cell area for the water column at row {}, column {} ({}); name the run's cell-area variable with --variable cell_area=NAME, or pass --no-horizons",
                    grid_column / cols + 1,
                    grid_column % cols + 1,
                    self.geometry.area_source
                ),
            });
        }
        // Volume = area × thickness (as geometry::cell_volumes, without its allocation).
        s.volumes.clear();
        s.volumes.extend(s.thickness.iter().map(|h| area * h));
        if self.fields.contains(&None) {
            s.missing.clear();
            s.missing.resize(s.cells.len(), f64::NAN);
        }
        let omega_of = |m: Mineral| {
            self.fields[mineral_index(m)]
                .map_or(s.missing.as_slice(), |k| s.cells.fields[k].as_slice())
        };
        let mineral = |m: Mineral| MineralColumn {
            omega: omega_of(m),
            horizon_m: &s.horizon_m[mineral_index(m)],
        };
        extent
            .add_column(&ExtentColumn {
                area_m2: area,
                volume_m3: &s.volumes,
                aragonite: mineral(Mineral::Aragonite),
                calcite: mineral(Mineral::Calcite),
            })
            .map_err(internal)
    }
}

/// The thickness of each gathered cell (`levels`) into `out`: its `bounds` clipped at the sea
/// floor `clip` [m below the surface] (geometry::clipped_thickness). False when a bound is
/// unknown.
fn wet_thicknesses(levels: &[usize], bounds: &[[f64; 2]], clip: f64, out: &mut Vec<f64>) -> bool {
    out.clear();
    for &k in levels {
        let [upper, lower] = bounds[k];
        if !(upper.is_finite() && lower.is_finite()) {
            return false;
        }
        out.push(clipped_thickness(upper, lower, clip));
    }
    true
}

fn mineral_index(m: Mineral) -> usize {
    match m {
        Mineral::Aragonite => 0,
        Mineral::Calcite => 1,
    }
}

fn internal(e: impl std::fmt::Display) -> PipelineError {
    PipelineError::Internal(format!("column analysis: {e}"))
}
