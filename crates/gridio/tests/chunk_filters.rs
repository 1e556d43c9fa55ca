//! Chunks deflated and shuffled by this process's filters are decoded by the HDF5 and zlib
//! libraries themselves (through `nccopy`, netcdf-bin), and chunks they encode are decoded
//! here: the stored bytes follow the formats (RFC 1950/1951, HDF5's shuffle).

use acidscape_gridio::chunk_filters::chunks_handled;
use std::path::Path;
use std::process::Command;

fn values_f32() -> Vec<f32> {
    (0..20 * 45 * 90)
        .map(|i| {
            if i % 97 == 0 {
                1e20 // a fill value among smooth ones, as over land
            } else {
                2000.0 + 300.0 * (i as f32 * 7e-4).sin()
            }
        })
        .collect()
}

fn values_i16() -> Vec<i16> {
    (0..20 * 45 * 90)
        .map(|i| ((i * 37) % 300) as i16 - 1)
        .collect()
}

fn write(path: &Path, compressed: bool) {
    let mut file = netcdf::create(path).unwrap();
    for (name, len) in [("z", 20), ("y", 45), ("x", 90)] {
        file.add_dimension(name, len).unwrap();
    }
    let mut v = file.add_variable::<f32>("v", &["z", "y", "x"]).unwrap();
    v.set_chunking(&[7, 45, 90]).unwrap();
    if compressed {
        v.set_compression(1, true).unwrap();
    }
    v.put_values(&values_f32(), ..).unwrap();
    let mut flag = file.add_variable::<i16>("flag", &["z", "y", "x"]).unwrap();
    flag.set_chunking(&[7, 45, 90]).unwrap();
    if compressed {
        flag.set_compression(4, true).unwrap();
    }
    flag.put_values(&values_i16(), ..).unwrap();
}

fn read(path: &Path) -> (Vec<f32>, Vec<i16>) {
    let file = netcdf::open(path).unwrap();
    (
        file.variable("v").unwrap().get_values(..).unwrap(),
        file.variable("flag").unwrap().get_values(..).unwrap(),
    )
}

/// `nccopy ARGS from to`; false when netcdf-bin is not installed (CI installs it).
fn nccopy(args: &[&str], from: &Path, to: &Path) -> bool {
    match Command::new("nccopy").args(args).arg(from).arg(to).status() {
        Ok(status) => {
            assert!(status.success(), "nccopy {args:?} failed");
            true
        }
        Err(_) => {
            eprintln!("nccopy (netcdf-bin) not found: the library side of this check was skipped");
            false
        }
    }
}

#[test]
fn the_libraries_decode_our_chunks_and_we_decode_theirs() {
    acidscape_gridio::prepare_hdf5();
    let dir = tempfile::tempdir().unwrap();
    let ours = dir.path().join("ours.nc");
    let before = chunks_handled();
    write(&ours, true);
    let after = chunks_handled();
    assert!(
        after[0] >= before[0] + 6,
        "deflated here: {before:?} -> {after:?}"
    );
    assert!(
        after[2] >= before[2] + 6,
        "shuffled here: {before:?} -> {after:?}"
    );
    assert_eq!(read(&ours), (values_f32(), values_i16()));

    // Decoded by HDF5's own filters and zlib (nccopy is another process).
    let plain = dir.path().join("plain.nc");
    if !nccopy(&["-d", "0"], &ours, &plain) {
        return;
    }
    assert_eq!(read(&plain), (values_f32(), values_i16()));

    // Encoded by HDF5's own filters and zlib, decoded here.
    let source = dir.path().join("source.nc");
    write(&source, false);
    let theirs = dir.path().join("theirs.nc");
    assert!(nccopy(&["-d", "6", "-s"], &source, &theirs));
    let before = chunks_handled();
    assert_eq!(read(&theirs), (values_f32(), values_i16()));
    let after = chunks_handled();
    assert!(
        after[1] >= before[1] + 6,
        "inflated here: {before:?} -> {after:?}"
    );
}
