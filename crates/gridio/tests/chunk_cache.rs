//! Chunk caches sized for the slabs: the values read are the same whatever the cache, and
//! the cache asked for covers the chunks that slabs share (SYNTHETIC runs of 6 monthly steps
//! on a 3 x 4 x 5 grid, every data variable stored in the chunks given).

mod common;

use acidscape_gridio::Run;
use common::*;
use std::path::Path;

const STEPS: usize = 6;

/// One file per required variable, its data stored in `chunks` (time, lev, lat, lon).
fn chunked_run(dir: &Path, chunks: &[usize]) -> Run {
    let times = noleap_months(STEPS);
    for var in REQUIRED {
        let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
        vars.push(cmip_var(var, "tzyx", 0..STEPS, GRID).chunked(chunks));
        write_nc(&dir.join(format!("{var}.nc")), &dims(GRID, STEPS), &vars);
    }
    Run::open(&spec(vec![format!("{}/*.nc", dir.display())])).unwrap()
}

/// Every converted input of every slab of `rows` rows, as bits.
fn all_slabs(run: &Run, rows: usize) -> Vec<u64> {
    let mut bits = Vec::new();
    for step in 0..STEPS {
        for start in (0..GRID.rows).step_by(rows) {
            let slab = run
                .read_slab(step, start..(start + rows).min(GRID.rows))
                .unwrap();
            for values in [
                &slab.temperature_c,
                &slab.salinity,
                &slab.dic,
                &slab.alkalinity,
            ] {
                bits.extend(values.iter().map(|v| v.to_bits()));
            }
        }
    }
    bits
}

#[test]
fn sized_caches_read_the_same_values_as_the_default() {
    for chunks in [[STEPS, 3, 4, 5], [1, 3, 4, 5], [2, 2, 3, 3], [1, 1, 1, 5]] {
        let dir = tempfile::tempdir().unwrap();
        let run = chunked_run(dir.path(), &chunks);
        for rows in [1, 3, 4] {
            run.read_in_slabs_of(None);
            let default = all_slabs(&run, rows);
            run.read_in_slabs_of(Some(rows));
            assert_eq!(
                default,
                all_slabs(&run, rows),
                "chunks {chunks:?}, rows {rows}"
            );
        }
    }
}

#[test]
fn the_cache_covers_the_chunks_slabs_share() {
    let float = 4;
    let dir = tempfile::tempdir().unwrap();
    // Chunks spanning every step: a whole step's chunks stay cached, whatever the slab.
    let run = chunked_run(dir.path(), &[STEPS, 3, 4, 5]);
    for rows in [1, 2, 4] {
        assert_eq!(
            run.read_cache_bytes(rows),
            4 * (STEPS * 3 * 4 * 5 * float) as u64
        );
    }
    assert_eq!(run.input_chunk_rows(), Some(4));

    // One step per chunk, rows in chunks of 2: slabs of 2 or 4 rows take whole chunks.
    let dir = tempfile::tempdir().unwrap();
    let run = chunked_run(dir.path(), &[1, 3, 2, 5]);
    assert_eq!(run.read_cache_bytes(2), 0);
    assert_eq!(run.read_cache_bytes(4), 0);
    // Slabs of 1 row share each chunk with the next slab; slabs of 3 straddle two.
    assert_eq!(run.read_cache_bytes(1), 4 * 2 * (3 * 2 * 5 * float) as u64);
    assert_eq!(run.read_cache_bytes(3), 4 * 2 * (3 * 2 * 5 * float) as u64);
    assert_eq!(run.input_chunk_rows(), Some(2));
}

/// The library-wide default cache is set only around each open (netCDF-C's default in
/// 4.9: 16 MiB, 4133 slots, preemption 0.75).
#[test]
fn the_library_default_is_left_as_it_was() {
    let default = || {
        let (mut size, mut slots, mut preemption) = (0usize, 0usize, 0f32);
        let _lock = netcdf_sys::libnetcdf_lock.lock();
        // SAFETY: a plain query into values we own, under the library's lock.
        unsafe { netcdf_sys::nc_get_chunk_cache(&mut size, &mut slots, &mut preemption) };
        (size, slots, preemption)
    };
    let before = default();
    let dir = tempfile::tempdir().unwrap();
    // A chunk of 24 MiB: bigger than the default, so the sampling at open sets a larger one.
    let big = Grid {
        levels: 3,
        rows: 1024,
        cols: 2048,
    };
    let times = noleap_months(1);
    for var in REQUIRED {
        let mut vars = coordinates(big, &times, "days since 2015-01-01", "noleap");
        vars.push(cmip_var(var, "tzyx", 0..1, big).chunked(&[1, 3, 1024, 2048]));
        write_nc(&dir.path().join(format!("{var}.nc")), &dims(big, 1), &vars);
    }
    // (The synthetic fields grow with the indices, past the plausible on so large a grid.)
    let accept = acidscape_gridio::InputChecks {
        accept_implausible: true,
        ..Default::default()
    };
    let run = open_dir(dir.path(), accept).unwrap();
    assert!(run.read_cache_bytes(100) > 16 << 20);
    assert_eq!(before, default());
    run.read_in_slabs_of(Some(100));
    run.read_slab(0, 0..100).unwrap();
    assert_eq!(before, default());
}
