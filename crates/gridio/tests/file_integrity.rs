//! Damaged and truncated files in every NetCDF format are errors naming the file, never
//! runs of zeros or fill. (netCDF-C 4.9.0 opens a cut classic file and returns zeros for
//! the missing bytes, as `ncdump` shows; the check against the header is what stops it.)
//! All data synthetic (tests/common).

mod common;

use acidscape_gridio::Run;
use common::*;
use std::path::{Path, PathBuf};
use tempfile::tempdir;

/// One file holding the four required inputs over 2 monthly steps, in `format`.
fn one_file_run(dir: &Path, format: Format) -> PathBuf {
    let times = noleap_months(2);
    let mut vars = coordinates(GRID, &times, "days since 2015-01-01", "noleap");
    vars.extend(required_vars("tzyx", 0..2, GRID));
    let path = dir.join(format!("run_{format:?}.nc"));
    write_nc_as(&path, format, &dims(GRID, 2), &vars);
    path
}

fn open(path: &Path) -> Result<Run, String> {
    Run::open(&spec(vec![path.display().to_string()])).map_err(|e| e.to_string())
}

fn assert_refused(path: &Path, what: &str) {
    match open(path) {
        Ok(_) => panic!("{what}: {} opened", path.display()),
        Err(e) => {
            let named = e.contains(&path.display().to_string());
            let says = ["truncated", "damaged", "cannot be opened"]
                .iter()
                .any(|w| e.contains(w));
            assert!(named && says, "{what}: {e}");
        }
    }
}

#[test]
fn complete_files_of_every_format_read_the_same() {
    let dir = tempdir().unwrap();
    let mut slabs = Vec::new();
    for format in ALL_FORMATS {
        let path = one_file_run(dir.path(), format);
        let run = open(&path).unwrap_or_else(|e| panic!("{format:?}: {e}"));
        assert!(
            run.report().contains("files: 1 of 1 complete"),
            "{}",
            run.report()
        );
        slabs.push((format, run.read_slab(1, 0..4).unwrap()));
    }
    for (format, slab) in &slabs[1..] {
        assert_eq!(slab.dic, slabs[0].1.dic, "{format:?}");
        assert_eq!(slab.temperature_c, slabs[0].1.temperature_c, "{format:?}");
    }
}

#[test]
fn files_cut_short_by_any_amount_are_refused_in_every_format() {
    let dir = tempdir().unwrap();
    for format in ALL_FORMATS {
        let path = one_file_run(dir.path(), format);
        let bytes = std::fs::read(&path).unwrap();
        let n = bytes.len();
        for cut in [1, 4, 7, 100, n / 3, n / 2, n - 64] {
            std::fs::write(&path, &bytes[..n - cut]).unwrap();
            assert_refused(&path, &format!("{format:?} cut by {cut} of {n} bytes"));
        }
    }
}

/// A named way of damaging a file's bytes.
type Damage = (&'static str, Box<dyn Fn(&mut Vec<u8>)>);

/// Offset just after the first occurrence of `pattern` in `bytes`.
fn after(bytes: &[u8], pattern: &[u8]) -> usize {
    bytes
        .windows(pattern.len())
        .position(|w| w == pattern)
        .map(|p| p + pattern.len())
        .expect("pattern in header")
}

#[test]
fn damaged_classic_headers_are_refused() {
    let dir = tempdir().unwrap();
    for format in [Format::Classic, Format::Offset64, Format::Data64] {
        let path = one_file_run(dir.path(), format);
        let good = std::fs::read(&path).unwrap();
        let wide = format == Format::Data64;
        // The `lat` dimension entry: name length, "lat" padded to 4 bytes, then its length.
        let name_len: Vec<u8> = if wide {
            3u64.to_be_bytes().to_vec()
        } else {
            3u32.to_be_bytes().to_vec()
        };
        let lat_len_at = after(&good, &[name_len.as_slice(), b"lat\0"].concat());
        let damages: [Damage; 5] = [
            ("version byte", Box::new(|b| b[3] = 9)),
            (
                "more records than the file holds",
                Box::new(move |b| {
                    let at = if wide { 11 } else { 7 };
                    b[at] += 5;
                }),
            ),
            (
                "a dimension longer than written",
                Box::new(move |b| {
                    let at = lat_len_at + if wide { 7 } else { 3 };
                    b[at] = 40;
                }),
            ),
            (
                "the variable list's tag",
                Box::new(|b| {
                    let at = after(b, &[0, 0, 0, 0x0B]) - 1;
                    b[at] = 0x0D;
                }),
            ),
            ("the magic number", Box::new(|b| b[0] = b'X')),
        ];
        for (what, damage) in damages {
            let mut bytes = good.clone();
            damage(&mut bytes);
            std::fs::write(&path, &bytes).unwrap();
            assert_refused(&path, &format!("{format:?}, {what}"));
        }
    }
}

#[test]
fn damaged_hdf5_superblocks_are_refused() {
    let dir = tempdir().unwrap();
    let path = one_file_run(dir.path(), Format::Netcdf4);
    let good = std::fs::read(&path).unwrap();
    // HDF5 File Format Specification, superblock: signature (8 bytes), version at byte 8.
    let version = good[8];
    let eof_at = match version {
        0 => 24 + 2 * 8,
        1 => 28 + 2 * 8,
        _ => 12 + 2 * 8,
    };
    let damages: [Damage; 3] = [
        ("signature", Box::new(|b| b[1] = b'X')),
        ("superblock version", Box::new(|b| b[8] = 7)),
        (
            "end-of-file address beyond the file",
            Box::new(move |b| {
                let eof = u64::from_le_bytes(b[eof_at..eof_at + 8].try_into().unwrap());
                b[eof_at..eof_at + 8].copy_from_slice(&(eof + 4096).to_le_bytes());
            }),
        ),
    ];
    for (what, damage) in damages {
        let mut bytes = good.clone();
        damage(&mut bytes);
        std::fs::write(&path, &bytes).unwrap();
        assert_refused(
            &path,
            &format!("HDF5 {what} (superblock version {version})"),
        );
    }
}

#[test]
fn a_file_cut_short_after_opening_fails_the_next_read() {
    let dir = tempdir().unwrap();
    for format in ALL_FORMATS {
        let path = one_file_run(dir.path(), format);
        let run = open(&path).unwrap();
        run.read_slab(0, 0..4).unwrap();
        let bytes = std::fs::read(&path).unwrap();
        std::fs::write(&path, &bytes[..bytes.len() - 200]).unwrap();
        let e = run.read_slab(1, 0..4).unwrap_err().to_string();
        assert!(
            e.contains(&path.display().to_string())
                && e.contains("cut short after the run was opened"),
            "{format:?}: {e}"
        );
    }
}

#[test]
fn a_file_replaced_mid_run_fails_naming_file_and_variable() {
    let dir = tempdir().unwrap();
    let times = noleap_months(2);
    let write = |tag: &str, step: usize, levels: usize| {
        let g = Grid { levels, ..GRID };
        let mut vars = coordinates(g, &times[step..step + 1], "days since 2015-01-01", "noleap");
        vars.extend(required_vars("tzyx", step..step + 1, g));
        let path = dir.path().join(format!("run_{tag}.nc"));
        write_nc(&path, &dims(g, 1), &vars);
        path
    };
    write("a", 0, 3);
    let second = write("b", 1, 3);
    let run = Run::open(&spec(vec![format!("{}/*.nc", dir.path().display())])).unwrap();
    run.read_slab(0, 0..4).unwrap();
    // The second file written again on another grid while the job runs.
    std::fs::remove_file(&second).unwrap();
    write("b", 1, 2);
    let e = run.read_slab(1, 0..4).unwrap_err().to_string();
    assert!(
        e.contains(&second.display().to_string()) && e.contains("variable '"),
        "{e}"
    );
}
