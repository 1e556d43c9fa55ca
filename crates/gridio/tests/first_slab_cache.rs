//! The chunks the sampling at open inflated serve the first slab read after it: a job's first
//! read costs no second inflation of the first step (SYNTHETIC run of 2 monthly steps on a
//! 3 x 400 x 1000 grid, each step of each variable one deflated chunk; its own test binary,
//! as it counts the chunks this process inflates).

mod common;

use acidscape_gridio::chunk_filters::chunks_handled;
use common::*;

#[test]
fn the_first_slab_reads_the_sampled_chunks_from_memory() {
    let dir = tempfile::tempdir().unwrap();
    // Rows beyond the sampling's blocks (about a million cells), so the sampling sizes a cache.
    let grid = Grid {
        levels: 3,
        rows: 400,
        cols: 1000,
    };
    let times = noleap_months(2);
    for var in REQUIRED {
        let mut vars = coordinates(grid, &times, "days since 2015-01-01", "noleap");
        vars.push(cmip_var(var, "tzyx", 0..2, grid).chunked(&[1, 3, 400, 1000]));
        write_nc(&dir.path().join(format!("{var}.nc")), &dims(grid, 2), &vars);
    }
    let accept = acidscape_gridio::InputChecks {
        accept_implausible: true,
        ..Default::default()
    };
    let run = open_dir(dir.path(), accept).unwrap();
    assert_eq!(
        run.read_cache_bytes(grid.rows),
        0,
        "whole chunks need no cache"
    );
    let inflated = || chunks_handled()[1];
    let opened = inflated();
    assert!(
        opened >= 4,
        "the sampling inflated every input's first step"
    );

    // As a job of whole-step slabs does: the library's default cache, then step 0.
    run.read_in_slabs_of(None);
    let first = run.read_slab(0, 0..grid.rows).unwrap();
    assert_eq!(
        inflated(),
        opened,
        "the first slab came from the sampled chunks"
    );
    // Once read, those caches are gone: reading step 0 again inflates it again.
    let again = run.read_slab(0, 0..grid.rows).unwrap();
    assert_eq!(inflated(), opened + 4);
    for (a, b) in [
        (&first.temperature_c, &again.temperature_c),
        (&first.salinity, &again.salinity),
        (&first.dic, &again.dic),
        (&first.alkalinity, &again.alkalinity),
    ] {
        assert!(a.iter().zip(b).all(|(x, y)| x.to_bits() == y.to_bits()));
    }
    run.read_slab(1, 0..grid.rows).unwrap();
    assert_eq!(inflated(), opened + 8);
}
