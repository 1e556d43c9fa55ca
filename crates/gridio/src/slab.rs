//! Reading slabs of a run: the file reads ([`Run::read_raw_slab`], serialised by libnetcdf)
//! and the conversions ([`Run::convert_slab`], parallel), each file's values converted by
//! that file's own meaning.

use crate::axes::Axis;
use crate::conservative_temperature::conservative_from_potential_lanes;
use crate::conversion::Conversion;
use crate::error::{GridError, Result};
use crate::mapping::{SalinityKind, TemperatureKind};
use crate::roles::Role;
use crate::run::Run;
use crate::seawater;
use crate::source::ReadValues;
use crate::specific_volume::density_lanes;
use crate::units::{Concentration, SalinityUnits, TemperatureUnits};
use crate::vertical::Vertical;
use crate::{DensityChoice, SlabInputs};
use rayon::prelude::*;
use std::ops::Range;

/// Cells converted side by side (see [`seawater::in_situ_from_potential_lanes`]).
const LANES: usize = 16;

impl Run {
    /// Reads and converts one slab: time step `step`, all levels, rows `rows`, all columns.
    pub fn read_slab(&self, step: usize, rows: Range<usize>) -> Result<SlabInputs> {
        let raw = self.read_raw_slab(step, rows)?;
        Ok(self.convert_slab(raw))
    }

    /// The rows of the inputs' chunks, where they are chunked by rows: slabs of a multiple of
    /// this read whole chunks (the least common multiple over the inputs a slab reads).
    pub fn input_chunk_rows(&self) -> Option<usize> {
        self.slab_inputs()
            .filter_map(|i| i.source.chunk_rows())
            .reduce(crate::chunk_cache::lcm)
            .filter(|rows| *rows <= self.shape.rows)
    }

    /// Chunk cache bytes, over the inputs a slab reads, so that slabs of `rows` rows inflate
    /// each stored chunk once (0 when every slab takes whole chunks).
    pub fn read_cache_bytes(&self, rows: usize) -> u64 {
        self.slab_inputs()
            .map(|i| i.source.cache_bytes_for(rows))
            .sum()
    }

    /// Sizes each input's chunk cache for slabs of `rows` rows ([`Run::read_cache_bytes`] in
    /// all); `None` gives the library's default back.
    pub fn read_in_slabs_of(&self, rows: Option<usize>) {
        for input in self.slab_inputs() {
            input.source.read_in_slabs_of(rows);
        }
    }

    /// Gives every input the library's default chunk cache back, letting open files keep
    /// theirs for one more read when they hold `limit_bytes` or less in all (the sampling at
    /// open leaves the first step's chunks there: the first slab then reads from memory).
    pub(crate) fn default_caches_after_next_read(&self, limit_bytes: u64) {
        let held: u64 = (self.slab_inputs())
            .map(|i| i.source.open_cache_bytes() as u64)
            .sum();
        for input in self.slab_inputs() {
            if held <= limit_bytes {
                input.source.default_cache_after_next_read();
            } else {
                input.source.read_in_slabs_of(None);
            }
        }
    }

    /// The inputs read for every slab (one value per cell).
    fn slab_inputs(&self) -> impl Iterator<Item = &crate::run::Input> {
        self.inputs.iter().filter(|i| i.role.per_cell())
    }

    /// The file-reading half of [`Run::read_slab`]: every value the slab needs, as stored
    /// (widened, masked, unpacked and converted by [`Run::convert_slab`]). Reading is serialised by libnetcdf; converting
    /// ([`Run::convert_slab`]) is pure computation, so a pipeline can convert one slab on
    /// its worker threads while its reader thread reads the next.
    pub fn read_raw_slab(&self, step: usize, rows: Range<usize>) -> Result<RawSlab> {
        crate::catalog::prepare_hdf5();
        if step >= self.time_steps() || rows.start >= rows.end || rows.end > self.shape.rows {
            return Err(GridError::OutOfRange {
                message: format!(
                    "asked for step {step}, rows {}..{}; the run has {} steps and {} rows",
                    rows.start,
                    rows.end,
                    self.time_steps(),
                    self.shape.rows
                ),
            });
        }
        let read = |role: Role| (self.required(role).source).read_values(&self.paths, step, &rows);
        let temperature_raw = read(Role::Temperature)?;
        let salinity_raw = read(Role::Salinity)?;
        let dic_raw = read(Role::Dic)?;
        let alkalinity_raw = read(Role::Alkalinity)?;
        let optional = |role: Role| -> Result<Option<ReadValues>> {
            self.input(role)
                .map(|i| i.source.read_values(&self.paths, step, &rows))
                .transpose()
        };
        let phosphate_raw = optional(Role::Phosphate)?;
        let silicate_raw = optional(Role::Silicate)?;
        let pressure_raw = optional(Role::Pressure)?;
        let latitude = self.latitude_per_column(&rows)?;
        // Heights change per cell and step only without fixed levels (free surface,
        // terrain-following levels); fixed levels need none.
        let heights = match self.vertical {
            Vertical::Surface | Vertical::Parametric(_) => {
                Some(
                    self.vertical
                        .heights(&self.paths, step, &rows, self.shape.cols)?,
                )
            }
            Vertical::Depths { .. } | Vertical::Pressures { .. } => None,
        };
        Ok(RawSlab {
            step,
            rows,
            temperature_raw,
            salinity_raw,
            dic_raw,
            alkalinity_raw,
            phosphate_raw,
            silicate_raw,
            pressure_raw,
            latitude,
            heights,
        })
    }

    /// The converting half of [`Run::read_slab`]: widening and masking the stored values,
    /// then units, TEOS-10 and EOS-80 conversions,
    /// in parallel on the current rayon pool. Never fails: what cannot be converted is NaN.
    /// `raw` must come from this run's [`Run::read_raw_slab`].
    pub fn convert_slab(&self, raw: RawSlab) -> SlabInputs {
        let cols = self.shape.cols;
        let cells = self.shape.levels * raw.rows.len() * cols;

        // Depth and sea pressure per cell; the free surface per column.
        let surface_height_m = match &raw.heights {
            Some((_, eta)) => eta.clone(),
            None => vec![0.0; raw.rows.len() * cols],
        };
        let (depth_m, mut pressure_dbar) =
            self.depth_and_pressure(&raw.rows, &raw.latitude, raw.heights);
        let step = raw.step;
        if let (Some(given), Some(input)) = (raw.pressure_raw, self.input(Role::Pressure)) {
            if let Conversion::Pressure(to_dbar, atmosphere) = input.meaning_at(step).conversion {
                for (p, r) in pressure_dbar.iter_mut().zip(given.finish()) {
                    *p = r * to_dbar - atmosphere;
                }
            }
        }

        // Temperature, salinity, density, concentrations: converted in place, each by the
        // meaning of the file the step was read from.
        let conversions = self.cell_conversions(step);
        let mut temperature_c = raw.temperature_raw.finish();
        let mut salinity = raw.salinity_raw.finish();
        let mut dic = raw.dic_raw.finish();
        let mut alkalinity = raw.alkalinity_raw.finish();
        // Absent nutrients are 0 µmol kg-1 and stay so (their units are None).
        let finish_or_zero = |raw: Option<ReadValues>| {
            raw.map_or_else(|| filled_on_pool(0.0, cells), ReadValues::finish)
        };
        let mut phosphate = finish_or_zero(raw.phosphate_raw);
        let mut silicate = finish_or_zero(raw.silicate_raw);
        let mut density_kg_m3 = filled_on_pool(0.0, cells);
        (
            (
                temperature_c.par_chunks_mut(LANES),
                salinity.par_chunks_mut(LANES),
                density_kg_m3.par_chunks_mut(LANES),
                pressure_dbar.par_chunks(LANES),
            ),
            (
                dic.par_chunks_mut(LANES),
                alkalinity.par_chunks_mut(LANES),
                phosphate.par_chunks_mut(LANES),
                silicate.par_chunks_mut(LANES),
            ),
        )
            .into_par_iter()
            .with_min_len(32)
            .for_each(|((t, s, rho, p), (dic, alk, po4, si))| {
                conversions.convert_group(
                    LaneGroup { t, s, rho, p },
                    Concentrations { dic, alk, po4, si },
                );
            });
        SlabInputs {
            step: raw.step,
            shape: [self.shape.levels, raw.rows.len(), cols],
            rows: raw.rows,
            salinity,
            temperature_c,
            density_kg_m3,
            dic,
            alkalinity,
            phosphate,
            silicate,
            pressure_dbar,
            depth_m,
            surface_height_m,
        }
    }

    /// Depth [m, positive down] and sea pressure [dbar] of every cell of a slab. On fixed
    /// levels (depth or pressure) both depend on level and latitude only: they are computed
    /// once per level and run of equal latitudes (once per row on a rectilinear grid).
    fn depth_and_pressure(
        &self,
        rows: &Range<usize>,
        latitude: &Option<Vec<f64>>,
        heights: Option<(Vec<f64>, Vec<f64>)>,
    ) -> (Vec<f64>, Vec<f64>) {
        let columns = rows.len() * self.shape.cols;
        let cells = self.shape.levels * columns;
        let lat_of = |column: usize| latitude.as_ref().map_or(0.0, |l| l[column]);
        let per_level = |at: &(dyn Fn(usize, f64) -> (f64, f64) + Sync)| {
            let mut depth = filled_on_pool(0.0, cells);
            let mut pressure = filled_on_pool(0.0, cells);
            depth
                .par_chunks_mut(columns.max(1))
                .zip(pressure.par_chunks_mut(columns.max(1)))
                .enumerate()
                .for_each(|(level, (depth, pressure))| {
                    let mut column = 0;
                    while column < columns {
                        let lat = lat_of(column);
                        let run = latitude.as_ref().map_or(columns - column, |l| {
                            l[column..columns].iter().take_while(|&&x| x == lat).count()
                        });
                        let end = column + run.max(1);
                        let (d, p) = at(level, lat);
                        depth[column..end].fill(d);
                        pressure[column..end].fill(p);
                        column = end;
                    }
                });
            (depth, pressure)
        };
        let from_depth = |depth: f64, lat: f64| {
            let p = if depth.is_finite() {
                seawater::sea_pressure_from_depth(depth.max(0.0), lat).unwrap_or(f64::NAN)
            } else {
                f64::NAN
            };
            (depth, p)
        };
        match (&self.vertical, heights) {
            (Vertical::Pressures { dbar, .. }, _) => per_level(&|level, lat| {
                let p = dbar[level];
                (seawater::depth_from_sea_pressure(p, lat), p)
            }),
            (Vertical::Depths { depth_m, .. }, _) => {
                per_level(&|level, lat| from_depth(depth_m[level], lat))
            }
            (_, Some((z, eta))) => (0..cells)
                .into_par_iter()
                .map(|c| {
                    let column = c % columns;
                    let (_, p) = from_depth(eta[column] - z[c], lat_of(column));
                    (-z[c], p)
                })
                .unzip(),
            // read_raw_slab reads heights for every other vertical coordinate.
            (_, None) => (vec![f64::NAN; cells], vec![f64::NAN; cells]),
        }
    }

    /// Latitude [°N] per column of the rows, when the run has latitude.
    fn latitude_per_column(&self, rows: &Range<usize>) -> Result<Option<Vec<f64>>> {
        let Some(source) = &self.horizontal.latitude else {
            return Ok(None);
        };
        let values = source.read(&self.paths, 0, rows)?;
        if source.len_of(Axis::X).is_some() {
            return Ok(Some(values));
        }
        let cols = self.shape.cols;
        Ok(Some(
            values
                .iter()
                .flat_map(|v| std::iter::repeat_n(*v, cols))
                .collect(),
        ))
    }
}

/// `len` copies of `value`, written on the current rayon pool: a slab's buffers are tens of
/// MiB, which one thread would otherwise fill (and fault in) alone.
pub fn filled_on_pool<T: Copy + Send + Sync>(value: T, len: usize) -> Vec<T> {
    const PIECE: usize = 1 << 15;
    rayon::iter::repeat_n(value, len)
        .with_min_len(PIECE)
        .collect()
}

/// One slab's values as read from the files (as stored: widening, masking, unpacking and the
/// canonical order wait for the conversion): the output of [`Run::read_raw_slab`], the input
/// of [`Run::convert_slab`].
#[derive(Clone, Debug)]
pub struct RawSlab {
    pub(crate) step: usize,
    pub(crate) rows: Range<usize>,
    temperature_raw: ReadValues,
    salinity_raw: ReadValues,
    dic_raw: ReadValues,
    alkalinity_raw: ReadValues,
    phosphate_raw: Option<ReadValues>,
    silicate_raw: Option<ReadValues>,
    pressure_raw: Option<ReadValues>,
    /// Latitude per column of the slab, when the run has one.
    latitude: Option<Vec<f64>>,
    /// Height per cell and free-surface height per column, when levels are not fixed.
    heights: Option<(Vec<f64>, Vec<f64>)>,
}

impl RawSlab {
    /// Time step of the slab.
    pub fn step(&self) -> usize {
        self.step
    }

    /// Rows of the slab.
    pub fn rows(&self) -> Range<usize> {
        self.rows.clone()
    }
}

/// How every cell of one step converts: each role by the meaning of the file it was read from.
struct CellConversions {
    temperature: (TemperatureUnits, TemperatureKind),
    salinity: (SalinityKind, SalinityUnits),
    salinity_scale: f64,
    density: DensityChoice,
    dic: Option<Concentration>,
    alkalinity: Option<Concentration>,
    phosphate: Option<Concentration>,
    silicate: Option<Concentration>,
}

/// Up to [`LANES`] consecutive cells: temperature, salinity and density (converted in place)
/// and sea pressure.
struct LaneGroup<'a> {
    t: &'a mut [f64],
    s: &'a mut [f64],
    rho: &'a mut [f64],
    p: &'a [f64],
}

/// The same cells' concentrations, converted in place to µmol kg-1.
struct Concentrations<'a> {
    dic: &'a mut [f64],
    alk: &'a mut [f64],
    po4: &'a mut [f64],
    si: &'a mut [f64],
}

impl Run {
    /// The conversions of step `step`.
    fn cell_conversions(&self, step: usize) -> CellConversions {
        let temperature = match self.required(Role::Temperature).meaning_at(step).conversion {
            Conversion::Temperature(scale, kind) => (scale, kind),
            _ => (TemperatureUnits::Celsius, TemperatureKind::InSitu),
        };
        let salinity_meaning = self.required(Role::Salinity).meaning_at(step);
        let salinity = match &salinity_meaning.conversion {
            Conversion::Salinity(kind, units) => (*kind, *units),
            _ => (SalinityKind::Practical, SalinityUnits::Practical),
        };
        let concentration =
            |role: Role| match self.input(role).map(|i| &i.meaning_at(step).conversion) {
                Some(Conversion::Concentration(c)) => Some(*c),
                _ => None,
            };
        CellConversions {
            temperature,
            salinity,
            salinity_scale: salinity_meaning.salinity_scale,
            density: self.density,
            dic: concentration(Role::Dic),
            alkalinity: concentration(Role::Alkalinity),
            phosphate: concentration(Role::Phosphate),
            silicate: concentration(Role::Silicate),
        }
    }
}

impl CellConversions {
    /// Practical salinity of a value as read.
    fn practical(&self, value: f64) -> f64 {
        match self.salinity {
            (SalinityKind::Practical, _) => value * self.salinity_scale,
            (SalinityKind::Absolute, SalinityUnits::Absolute { to_g_per_kg }) => {
                seawater::practical_from_absolute(value * to_g_per_kg)
            }
            (SalinityKind::Absolute, SalinityUnits::Practical) => {
                seawater::practical_from_absolute(value)
            }
        }
    }

    /// Converts one group of cells. The costly steps (potential to in-situ temperature, the
    /// density polynomial) run on the cells side by side; land (all missing) skips them.
    fn convert_group(&self, cells: LaneGroup<'_>, amounts: Concentrations<'_>) {
        let count = cells.t.len();
        let (t_scale, t_kind) = self.temperature;
        let (mut sp, mut t_file, mut pressure) = ([0.0; LANES], [0.0; LANES], [0.0; LANES]);
        for i in 0..count {
            sp[i] = self.practical(cells.s[i]);
            t_file[i] = t_scale.to_celsius(cells.t[i]);
            pressure[i] = cells.p[i];
        }
        let any_sea = t_file[..count].iter().any(|t| t.is_finite());
        let known = match t_kind {
            TemperatureKind::Potential if any_sea => {
                seawater::in_situ_from_potential_lanes(&sp, &t_file, &pressure).map(Some)
            }
            _ => [None; LANES],
        };
        let in_situ_density = self.density == DensityChoice::InSitu;
        // A potential temperature's Conservative Temperature, side by side (a negative
        // salinity's NaN is never used: the scalar path below refuses that cell first).
        let conservative = match t_kind {
            TemperatureKind::Potential if any_sea && in_situ_density => {
                let absolute = sp.map(seawater::absolute_from_practical);
                conservative_from_potential_lanes(&absolute, &t_file).map(Some)
            }
            _ => [None; LANES],
        };
        let (mut t_situ, mut sa, mut ct) =
            ([f64::NAN; LANES], [f64::NAN; LANES], [f64::NAN; LANES]);
        for i in 0..count {
            let (sp, t_file, p) = (sp[i], t_file[i], pressure[i]);
            if !(t_file.is_finite() && sp.is_finite() && p.is_finite()) {
                continue;
            }
            let in_situ_only = || match known[i] {
                Some(t) => Ok(t),
                None => seawater::in_situ_temperature(t_kind, t_file, sp, p),
            };
            if !in_situ_density {
                t_situ[i] = in_situ_only().unwrap_or(f64::NAN);
                continue;
            }
            // One pass gives both (saves a potential-temperature evaluation per cell).
            match seawater::in_situ_and_conservative(
                t_kind,
                t_file,
                sp,
                p,
                known[i],
                conservative[i],
            ) {
                Ok((t, conservative)) => {
                    (t_situ[i], ct[i]) = (t, conservative);
                    sa[i] = seawater::absolute_from_practical(sp);
                }
                Err(_) => t_situ[i] = in_situ_only().unwrap_or(f64::NAN),
            }
        }
        let density = match self.density {
            DensityChoice::InSitu if any_sea => density_lanes(&sa, &ct, &pressure),
            DensityChoice::InSitu => [f64::NAN; LANES],
            DensityChoice::Reference(rho) => [rho; LANES],
        };
        let convert = |units: Option<Concentration>, v: f64, density: f64| {
            units.map_or(f64::NAN, |u| u.to_umol_per_kg(v, density))
        };
        for i in 0..count {
            cells.s[i] = sp[i];
            cells.t[i] = t_situ[i];
            cells.rho[i] = density[i];
            amounts.dic[i] = convert(self.dic, amounts.dic[i], density[i]);
            amounts.alk[i] = convert(self.alkalinity, amounts.alk[i], density[i]);
            if self.phosphate.is_some() {
                amounts.po4[i] = convert(self.phosphate, amounts.po4[i], density[i]);
            }
            if self.silicate.is_some() {
                amounts.si[i] = convert(self.silicate, amounts.si[i], density[i]);
            }
        }
    }
}
