//! One variable of the run, possibly spread over several files along time, and the
//! reading of its hyperslabs in canonical (level, row, col) order.

use crate::axes::{classify_dims, position, Axis};
use crate::catalog::{dim_lens, InputFile, MaskRule};
use crate::chunk_cache::{open_with_chunk_cache, Chunking};
use crate::error::{GridError, Result};
use crate::timeline::TimeSpan;
use netcdf::types::{FloatType, NcVariableType};
use netcdf::Extent;
use rayon::prelude::*;
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// One file's part of a variable, with that file's own layout and mask.
#[derive(Clone, Debug)]
pub(crate) struct Piece {
    pub file: usize,
    pub first_step: usize,
    pub steps: usize,
    pub mask: MaskRule,
    /// Axes in this file's dimension order.
    pub axes: Vec<Axis>,
    /// Bytes the file's header promises (re-checked before each read).
    pub expected_len: u64,
    /// How this file stores the variable (for its chunk cache).
    pub chunking: Chunking,
}

impl Piece {
    /// A piece of one step in one file (static variables, coordinates).
    pub fn whole(file: &InputFile, index: usize, var: &netcdf::Variable, axes: Vec<Axis>) -> Piece {
        Piece {
            file: index,
            first_step: 0,
            steps: 1,
            mask: MaskRule::of(var),
            expected_len: file.expected.length,
            chunking: Chunking::of(var),
            axes,
        }
    }
}

/// A variable located in the run's files.
#[derive(Clone, Debug)]
pub(crate) struct VarSource {
    pub name: String,
    /// Axes in file order.
    pub axes: Vec<Axis>,
    /// Dimension lengths in file order (time length of the first piece).
    pub lens: Vec<usize>,
    pub pieces: Vec<Piece>,
    /// Where the values are read from (see [`DataHandle`]).
    pub data: DataHandle,
}

/// The one file a variable's values are currently read from. Reading a step from another
/// file closes it first, which frees its HDF5 chunk cache (up to one decompressed chunk
/// per variable, 13 MB for a 360×180×50 float step): memory stays flat however many files
/// the run has. (HDF5 shares a dataset's cache among all handles of one file, so the run
/// keeps no other handle open while reading: see `Run::open`.)
/// Each file is opened with a chunk cache of [`DataHandle::cache_bytes`] (see
/// [`VarSource::read_in_slabs_of`]).
#[derive(Default)]
pub(crate) struct DataHandle(Mutex<OpenFile>);

#[derive(Default)]
struct OpenFile {
    file: Option<(usize, netcdf::File)>,
    cache_bytes: usize,
    /// Close the file after its next read (its cache sized for another reader).
    close_after_read: bool,
}

impl DataHandle {
    fn lock(&self) -> std::sync::MutexGuard<'_, OpenFile> {
        self.0
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner)
    }
}

impl Clone for DataHandle {
    /// A clone opens its own file when it first reads, with the same cache size.
    fn clone(&self) -> Self {
        let cache_bytes = self.lock().cache_bytes;
        DataHandle(Mutex::new(OpenFile {
            file: None,
            cache_bytes,
            close_after_read: false,
        }))
    }
}

impl std::fmt::Debug for DataHandle {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("DataHandle")
    }
}

impl VarSource {
    /// Locates `name` in the files of `spans` (time-dependent) or in `file` (static),
    /// checking every file gives it the same dimension names and non-time lengths; each
    /// file keeps its own dimension order and mask.
    pub fn new(name: &str, spans: &[TimeSpan], files: &[InputFile]) -> Result<VarSource> {
        let mut pieces = Vec::with_capacity(spans.len());
        let mut first: Option<(Vec<Axis>, Vec<usize>, usize)> = None;
        let mut first_dims: Option<Vec<String>> = None;
        for span in spans {
            let file = &files[span.file];
            let var = crate::catalog::require_var(file, name, "the run")?;
            let axes = classify_dims(file, &var)?;
            let lens = dim_lens(&var);
            let mut dims = crate::catalog::dim_names(&var);
            dims.sort();
            match &first_dims {
                None => first_dims = Some(dims),
                Some(want) if *want != dims => {
                    let file0 = first.as_ref().map_or(span.file, |f| f.2);
                    return Err(GridError::FilesDisagree {
                        variable: name.to_string(),
                        first: files[file0].path.clone(),
                        second: file.path.clone(),
                        message: format!(
                            "dimensions ({}) in the first, ({}) in the second; expected every file of a variable on the same dimensions",
                            want.join(", "),
                            dims.join(", ")
                        ),
                    });
                }
                Some(_) => {}
            }
            match &first {
                None => first = Some((axes.clone(), lens, span.file)),
                Some((axes0, lens0, file0)) => {
                    let strip = |a: &[Axis], l: &[usize]| -> Vec<(Axis, usize)> {
                        a.iter()
                            .zip(l)
                            .filter(|(a, _)| **a != Axis::T)
                            .map(|(a, l)| (*a, *l))
                            .collect()
                    };
                    let mut want = strip(axes0, lens0);
                    let mut have = strip(&axes, &lens);
                    want.sort_by_key(|(a, _)| *a as u8);
                    have.sort_by_key(|(a, _)| *a as u8);
                    if want != have {
                        return Err(GridError::Mismatch {
                            file: file.path.clone(),
                            variable: name.to_string(),
                            message: format!(
                                "grid shape {} differs from {} in {}",
                                describe_shape(&have),
                                describe_shape(&want),
                                files[*file0].path.display()
                            ),
                        });
                    }
                }
            }
            pieces.push(Piece {
                file: span.file,
                first_step: span.first_step,
                steps: span.steps,
                mask: MaskRule::of(&var),
                axes,
                expected_len: file.expected.length,
                chunking: Chunking::of(&var),
            });
        }
        let (axes, lens, _) = first.ok_or_else(|| GridError::OutOfRange {
            message: format!("variable {name} located in no file"),
        })?;
        Ok(VarSource {
            name: name.to_string(),
            axes,
            lens,
            pieces,
            data: DataHandle::default(),
        })
    }

    /// Length along an axis (None when the variable lacks that axis).
    pub fn len_of(&self, axis: Axis) -> Option<usize> {
        position(&self.axes, axis).map(|i| self.lens[i])
    }

    /// Chunk cache bytes for reads of `rows` rows at a time: the most any file needs.
    pub fn cache_bytes_for(&self, rows: usize) -> u64 {
        let lens = |piece: &Piece| -> Vec<usize> {
            // Each file in its own order: map the variable's lengths by axis.
            piece
                .axes
                .iter()
                .map(|a| match a {
                    Axis::T => piece.steps,
                    _ => self.len_of(*a).unwrap_or(1),
                })
                .collect()
        };
        self.pieces
            .iter()
            .map(|p| p.chunking.cache_bytes(&p.axes, &lens(p), rows))
            .max()
            .unwrap_or(0)
    }

    /// The rows of one chunk, where every file chunks the variable by the same rows.
    pub fn chunk_rows(&self) -> Option<usize> {
        let first = self
            .pieces
            .first()?
            .chunking
            .along(&self.pieces[0].axes, Axis::Y)?;
        self.pieces
            .iter()
            .all(|p| p.chunking.along(&p.axes, Axis::Y) == Some(first))
            .then_some(first)
    }

    /// Sizes this variable's chunk cache for reads of `rows` rows at a time (`None`: the
    /// library's default); an open file
    /// with another size is closed, to be opened again with the new one.
    pub fn read_in_slabs_of(&self, rows: Option<usize>) {
        let bytes = rows.map_or(0, |rows| self.cache_bytes_for(rows) as usize);
        // A margin over the chunks themselves: HDF5 evicts before a cache is quite full.
        let bytes = if bytes == 0 { 0 } else { bytes + bytes / 16 };
        let mut data = self.data.lock();
        if data.cache_bytes != bytes {
            data.file = None;
            data.close_after_read = false;
            data.cache_bytes = bytes;
        }
    }

    /// Bytes of the chunk cache of the open file (0 when none is open or it has the
    /// library's default).
    pub fn open_cache_bytes(&self) -> usize {
        let data = self.data.lock();
        data.file.as_ref().map_or(0, |_| data.cache_bytes)
    }

    /// Gives the library's default chunk cache back, but lets the open file keep its cache,
    /// and the chunks in it, for one more read (sizing the cache again before then closes
    /// it at once, as [`VarSource::read_in_slabs_of`] does).
    pub fn default_cache_after_next_read(&self) {
        let mut data = self.data.lock();
        data.close_after_read = data.file.is_some() && data.cache_bytes != 0;
        data.cache_bytes = 0;
    }

    pub fn has_time(&self) -> bool {
        self.axes.contains(&Axis::T)
    }

    /// Index of the piece holding `step` (the only piece of a static variable).
    pub fn piece_index(&self, step: usize) -> Option<usize> {
        if !self.has_time() {
            return Some(0);
        }
        let i = self
            .pieces
            .partition_point(|p| p.first_step <= step)
            .checked_sub(1)?;
        (step < self.pieces[i].first_step + self.pieces[i].steps).then_some(i)
    }

    /// Reads one time step (ignored for static variables), all levels, rows `rows`, all
    /// columns; result in canonical order over the axes the variable has (Z, Y, X),
    /// masked to NaN and unpacked.
    pub fn read(&self, paths: &[PathBuf], step: usize, rows: &Range<usize>) -> Result<Vec<f64>> {
        Ok(self.read_values(paths, step, rows)?.finish())
    }

    /// As [`VarSource::read`], leaving the widening, masking and reordering to
    /// [`ReadValues::finish`], so the reading thread only reads.
    pub(crate) fn read_values(
        &self,
        paths: &[PathBuf],
        step: usize,
        rows: &Range<usize>,
    ) -> Result<ReadValues> {
        let piece = match self.piece_index(step) {
            Some(i) => &self.pieces[i],
            None => {
                return Err(GridError::OutOfRange {
                    message: format!("time step {step} not in any file of variable {}", self.name),
                })
            }
        };
        let path = &paths[piece.file];
        // netCDF-C fills the missing bytes of a cut classic file with zeros: check first.
        crate::catalog::still_complete(path, piece.expected_len).map_err(|e| match e {
            GridError::Damaged { path, message } => GridError::Damaged {
                path,
                message: format!("reading variable '{}': {message}", self.name),
            },
            other => other,
        })?;
        let mut data = self.data.lock();
        let nc = match data.file.take() {
            Some((f, nc)) if f == piece.file => nc,
            previous => {
                // Close the previous file before opening the next: one cache at a time.
                drop(previous);
                data.close_after_read = false;
                open_with_chunk_cache(path, data.cache_bytes).map_err(|e| {
                    GridError::Unreadable {
                        path: path.clone(),
                        message: e.to_string(),
                    }
                })?
            }
        };
        let values = self.read_from(&nc, path, piece, step, rows);
        if std::mem::take(&mut data.close_after_read) {
            drop(nc);
        } else {
            data.file = Some((piece.file, nc));
        }
        values
    }

    /// Reads from `nc`, the opened file of `piece` (see [`VarSource::read`]).
    fn read_from(
        &self,
        nc: &netcdf::File,
        path: &Path,
        piece: &Piece,
        step: usize,
        rows: &Range<usize>,
    ) -> Result<ReadValues> {
        let var = nc.variable(&self.name).ok_or_else(|| GridError::Metadata {
            file: path.to_path_buf(),
            variable: self.name.clone(),
            message: "the run names this variable, but the file has no variable of that name"
                .to_string(),
        })?;
        let lens = dim_lens(&var);
        if lens.len() != piece.axes.len() {
            return Err(GridError::Metadata {
                file: path.to_path_buf(),
                variable: self.name.clone(),
                message: "the variable's dimensions changed after the run was opened".to_string(),
            });
        }
        let mut extents = Vec::with_capacity(piece.axes.len());
        let mut sizes = Vec::with_capacity(piece.axes.len());
        for (axis, len) in piece.axes.iter().zip(&lens) {
            let (extent, size) = match axis {
                Axis::T => (
                    Extent::SliceCount {
                        start: step - piece.first_step,
                        count: 1,
                        stride: 1,
                    },
                    1,
                ),
                Axis::Y => (
                    Extent::SliceCount {
                        start: rows.start,
                        count: rows.len(),
                        stride: 1,
                    },
                    rows.len(),
                ),
                Axis::Z | Axis::X => (
                    Extent::SliceCount {
                        start: 0,
                        count: *len,
                        stride: 1,
                    },
                    *len,
                ),
            };
            extents.push(extent);
            sizes.push(size);
        }
        Ok(ReadValues {
            stored: read_stored(&var, extents, &sizes, path)?,
            mask: piece.mask.clone(),
            axes: piece.axes.clone(),
            sizes,
        })
    }
}

/// One variable's hyperslab as read (float32 kept as stored), not yet widened, masked nor in
/// canonical order: [`ReadValues::finish`] does that, in parallel, off the reading thread.
#[derive(Clone, Debug)]
pub struct ReadValues {
    stored: Stored,
    mask: MaskRule,
    /// Axes in the file's order and the hyperslab's count along each.
    axes: Vec<Axis>,
    sizes: Vec<usize>,
}

impl ReadValues {
    /// The values as f64 in canonical (level, row, col) order, masked to NaN and unpacked; on
    /// the current rayon pool.
    pub(crate) fn finish(self) -> Vec<f64> {
        // Pieces large enough to amortise scheduling, small enough to share a slab.
        const PIECE: usize = 1 << 15;
        let mut values: Vec<f64> = match self.stored {
            // Widened straight into the new vector (rayon writes it once, no zeroing first).
            Stored::Single(stored) => (stored.par_iter().with_min_len(PIECE))
                .map(|&v| f64::from(v))
                .collect(),
            Stored::Double(values) => values,
        };
        let mask = &self.mask;
        values.par_chunks_mut(PIECE).for_each(|v| mask.apply(v));
        to_canonical(values, &self.axes, &self.sizes)
    }
}

/// Values as the file stores them: float32 stays float32 until widened (exact).
#[derive(Clone, Debug)]
enum Stored {
    Single(Vec<f32>),
    Double(Vec<f64>),
}

impl Stored {
    fn len(&self) -> usize {
        match self {
            Stored::Single(values) => values.len(),
            Stored::Double(values) => values.len(),
        }
    }

    fn widened(self) -> Vec<f64> {
        match self {
            Stored::Single(values) => values.into_iter().map(f64::from).collect(),
            Stored::Double(values) => values,
        }
    }
}

/// Reads a hyperslab as f64 and checks its length (`sizes`: the extents' counts).
pub(crate) fn read_hyperslab(
    var: &netcdf::Variable,
    extents: Vec<Extent>,
    sizes: &[usize],
    path: &Path,
) -> Result<Vec<f64>> {
    Ok(read_stored(var, extents, sizes, path)?.widened())
}

/// Reads a hyperslab as stored and checks its length. float32 data are read as float32 (half
/// the bytes copied under libnetcdf's lock, no libnetcdf type conversion) and widened later.
fn read_stored(
    var: &netcdf::Variable,
    extents: Vec<Extent>,
    sizes: &[usize],
    path: &Path,
) -> Result<Stored> {
    let read_error = |e: netcdf::Error| GridError::Read {
        file: path.to_path_buf(),
        variable: var.name(),
        message: e.to_string(),
    };
    let stored = if var.vartype() == NcVariableType::Float(FloatType::F32) {
        Stored::Single(var.get_values(extents).map_err(read_error)?)
    } else {
        Stored::Double(var.get_values(extents).map_err(read_error)?)
    };
    let wanted: usize = sizes.iter().product();
    if stored.len() != wanted {
        return Err(GridError::Read {
            file: path.to_path_buf(),
            variable: var.name(),
            message: format!("short read: {} of {wanted} values", stored.len()),
        });
    }
    Ok(stored)
}

fn describe_shape(dims: &[(Axis, usize)]) -> String {
    let parts: Vec<String> = dims.iter().map(|(a, l)| format!("{a:?}={l}")).collect();
    format!("({})", parts.join(", "))
}

/// Reorders a block read in file order into (Z, Y, X) order (absent axes skipped).
pub(crate) fn to_canonical(raw: Vec<f64>, axes: &[Axis], sizes: &[usize]) -> Vec<f64> {
    let order: Vec<Axis> = axes.iter().copied().filter(|a| *a != Axis::T).collect();
    let canonical: Vec<Axis> = [Axis::Z, Axis::Y, Axis::X]
        .into_iter()
        .filter(|a| order.contains(a))
        .collect();
    if order == canonical {
        return raw;
    }
    let mut strides = vec![0usize; axes.len()];
    let mut acc = 1;
    for i in (0..axes.len()).rev() {
        strides[i] = acc;
        acc *= sizes[i];
    }
    let along = |axis: Axis| -> (usize, usize) {
        position(axes, axis).map_or((1, 0), |i| (sizes[i], strides[i]))
    };
    let (nz, sz) = along(Axis::Z);
    let (ny, sy) = along(Axis::Y);
    let (nx, sx) = along(Axis::X);
    let mut out = Vec::with_capacity(nz * ny * nx);
    for k in 0..nz {
        for j in 0..ny {
            let base = k * sz + j * sy;
            out.extend((0..nx).map(|i| raw[base + i * sx]));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reorders_lon_lat_lev_to_lev_lat_lon() {
        // file order (X=2, Y=3, Z=2): value = 100*z + 10*y + x
        let axes = [Axis::T, Axis::X, Axis::Y, Axis::Z];
        let sizes = [1, 2, 3, 2];
        let mut raw = Vec::new();
        for x in 0..2 {
            for y in 0..3 {
                for z in 0..2 {
                    raw.push((100 * z + 10 * y + x) as f64);
                }
            }
        }
        let out = to_canonical(raw, &axes, &sizes);
        let mut want = Vec::new();
        for z in 0..2 {
            for y in 0..3 {
                for x in 0..2 {
                    want.push((100 * z + 10 * y + x) as f64);
                }
            }
        }
        assert_eq!(out, want);
    }
}
