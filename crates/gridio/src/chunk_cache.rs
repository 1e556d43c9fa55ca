//! The HDF5 chunk cache of the files a run is read from. A slab that takes part of a
//! compressed chunk must find the chunk still inflated when the next slab (or step) takes
//! the rest, or every slab inflates it again: with chunks spanning whole time series or
//! whole steps that is many times the work. The `netcdf` crate does not wrap netCDF-C's
//! cache settings, and a variable's cache is fixed when its file is opened, so the
//! library-wide default is set around the one open call, under libnetcdf's own lock.

use crate::axes::Axis;
use std::path::Path;

/// netCDF-C's own default (4.9: 16 MiB, 4133 slots, preemption 0.75); never made smaller.
const LIBRARY_DEFAULT_BYTES: usize = 16 * 1024 * 1024;

/// Opens `path` for reading with each variable's chunk cache at least `bytes`.
pub(crate) fn open_with_chunk_cache(path: &Path, bytes: usize) -> netcdf::Result<netcdf::File> {
    if bytes <= LIBRARY_DEFAULT_BYTES {
        return netcdf::open(path);
    }
    let _lock = netcdf_sys::libnetcdf_lock.lock();
    let (mut size, mut slots, mut preemption) = (0usize, 0usize, 0f32);
    // SAFETY: plain C calls on values we own, under the library's lock.
    unsafe {
        netcdf_sys::nc_get_chunk_cache(&mut size, &mut slots, &mut preemption);
        netcdf_sys::nc_set_chunk_cache(bytes, slots, preemption);
    }
    let opened = netcdf::open(path);
    // SAFETY: as above; restores what the library had.
    unsafe {
        netcdf_sys::nc_set_chunk_cache(size, slots, preemption);
    }
    opened
}

/// How one file stores a variable, for sizing its chunk cache.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct Chunking {
    /// Chunk lengths in file dimension order; `None` when stored contiguously (or NetCDF-3).
    pub chunk: Option<Vec<usize>>,
    /// Bytes of one stored value.
    pub value_bytes: usize,
}

impl Chunking {
    pub fn of(var: &netcdf::Variable) -> Chunking {
        Chunking {
            chunk: var.chunking().ok().flatten(),
            value_bytes: var.vartype().size(),
        }
    }

    /// Chunk length along `axis` (`None` when contiguous or without that axis).
    pub fn along(&self, axes: &[Axis], axis: Axis) -> Option<usize> {
        let i = axes.iter().position(|a| *a == axis)?;
        self.chunk.as_ref().map(|c| c[i])
    }

    /// Cache bytes a reader of slabs of `rows` rows (one step, every level and column) needs
    /// so that each chunk is inflated once: nothing when every slab takes whole chunks;
    /// otherwise the chunks one slab touches, or those of a whole step when a chunk spans
    /// several steps (the next step reads the same chunks again).
    pub fn cache_bytes(&self, axes: &[Axis], lens: &[usize], rows: usize) -> u64 {
        let Some(chunk) = &self.chunk else {
            return 0;
        };
        let length = |axis: Axis| {
            axes.iter()
                .position(|a| *a == axis)
                .map(|i| (lens[i], chunk[i]))
        };
        let spans_steps = length(Axis::T).is_some_and(|(_, c)| c > 1);
        let (all_rows, chunk_rows) = length(Axis::Y).unwrap_or((1, 1));
        let whole_chunks = rows % chunk_rows == 0 || rows >= all_rows;
        if whole_chunks && !spans_steps {
            return 0;
        }
        let row_bands = all_rows.div_ceil(chunk_rows);
        let bands = if spans_steps {
            row_bands
        } else {
            (rows.div_ceil(chunk_rows) + 1).min(row_bands)
        };
        let across = |axis: Axis| length(axis).map_or(1, |(l, c)| l.div_ceil(c));
        let chunk_bytes = chunk.iter().product::<usize>() * self.value_bytes;
        (bands * across(Axis::Z) * across(Axis::X) * chunk_bytes) as u64
    }
}

/// The least common multiple of `a` and `b`.
pub fn lcm(a: usize, b: usize) -> usize {
    let gcd = |mut x: usize, mut y: usize| {
        while y != 0 {
            (x, y) = (y, x % y);
        }
        x
    };
    a / gcd(a, b).max(1) * b
}

#[cfg(test)]
mod tests {
    use super::*;

    fn step_chunks(chunk: Vec<usize>) -> Chunking {
        Chunking {
            chunk: Some(chunk),
            value_bytes: 4,
        }
    }

    const AXES: [Axis; 4] = [Axis::T, Axis::Z, Axis::Y, Axis::X];
    const LENS: [usize; 4] = [12, 50, 180, 360];

    #[test]
    fn slabs_of_whole_chunks_need_no_cache() {
        let c = step_chunks(vec![1, 50, 30, 360]);
        assert_eq!(c.cache_bytes(&AXES, &LENS, 60), 0);
        assert_eq!(c.cache_bytes(&AXES, &LENS, 180), 0);
        assert_eq!(Chunking::default().cache_bytes(&AXES, &LENS, 7), 0);
    }

    #[test]
    fn a_chunk_taller_than_a_slab_stays_cached_between_slabs() {
        // One chunk per step (1 x 50 x 180 x 360 floats, 12.96 MB): slabs of 45 rows.
        let c = step_chunks(vec![1, 50, 180, 360]);
        assert_eq!(c.cache_bytes(&AXES, &LENS, 45), 50 * 180 * 360 * 4);
        // Slabs straddling chunk rows keep two bands.
        let c = step_chunks(vec![1, 25, 40, 180]);
        assert_eq!(
            c.cache_bytes(&AXES, &LENS, 50),
            3 * 2 * 2 * 25 * 40 * 180 * 4
        );
    }

    #[test]
    fn a_chunk_spanning_steps_keeps_a_whole_step_cached() {
        let c = step_chunks(vec![12, 50, 180, 360]);
        assert_eq!(c.cache_bytes(&AXES, &LENS, 180), 12 * 50 * 180 * 360 * 4);
        let c = step_chunks(vec![6, 50, 90, 360]);
        assert_eq!(c.cache_bytes(&AXES, &LENS, 30), 2 * 6 * 50 * 90 * 360 * 4);
    }

    #[test]
    fn lcm_of_chunk_rows() {
        assert_eq!(lcm(30, 45), 90);
        assert_eq!(lcm(7, 7), 7);
        assert_eq!(lcm(1, 13), 13);
    }
}
