//! Mending a partial output that a failed write cut short.
//!
//! When a write fails mid-run (disk full, quota, file-size limit), libhdf5 has often written
//! its metadata in place (among it the superblock's end-of-file address) but not the data
//! appended beyond the old end of the file, so the file is shorter than its superblock says
//! and will not open ("truncated file"). The finished steps lie before that point, flushed
//! before the failure; what is missing belongs to the step being written, which a resumed job
//! writes again in whole chunks. Padding the file with zeros up to the recorded end lets it
//! open; the resumed job then checks that the last finished step reads back.

use crate::PipelineError;
use std::fs;
use std::io::Read;
use std::path::Path;

/// The HDF5 format signature (HDF5 File Format Specification version 3.0, section II.A).
const SIGNATURE: [u8; 8] = [0x89, b'H', b'D', b'F', b'\r', b'\n', 0x1a, b'\n'];

/// The end of the file, in bytes, that an HDF5 superblock at the start of `bytes` records:
/// base address + end-of-file address (HDF5 File Format Specification version 3.0, section
/// II.A: superblock versions 0 and 1 keep the address after the group and storage constants,
/// versions 2 and 3 right after the base and extension addresses). `None` when `bytes` does not
/// start with a superblock this understands.
pub(crate) fn recorded_end(bytes: &[u8]) -> Option<u64> {
    if bytes.get(..8)? != SIGNATURE {
        return None;
    }
    let version = *bytes.get(8)?;
    let (offsets_size, base_at) = match version {
        0 => (*bytes.get(13)? as usize, 24),
        1 => (*bytes.get(13)? as usize, 28),
        2 | 3 => (*bytes.get(9)? as usize, 12),
        _ => return None,
    };
    if !(1..=8).contains(&offsets_size) {
        return None;
    }
    let address = |at: usize| -> Option<u64> {
        let field = bytes.get(at..at + offsets_size)?;
        Some(
            field
                .iter()
                .rev()
                .fold(0u64, |a, b| (a << 8) | u64::from(*b)),
        )
    };
    // Versions 0/1: base, free-space, end-of-file; versions 2/3: base, extension, end-of-file.
    let base = address(base_at)?;
    let end = address(base_at + 2 * offsets_size)?;
    base.checked_add(end)
}

/// Pads `path` with zeros up to the end its HDF5 superblock records, when it is shorter.
/// Returns whether it did. Files that are not HDF5, or are long enough, are left alone.
pub(crate) fn restore_cut_tail(path: &Path) -> Result<bool, PipelineError> {
    let failed = |e: std::io::Error| PipelineError::Resume {
        path: path.to_path_buf(),
        message: format!("cannot mend the partial output: {e}; start over with --overwrite"),
    };
    let mut head = Vec::with_capacity(64);
    fs::File::open(path)
        .and_then(|f| f.take(64).read_to_end(&mut head))
        .map_err(failed)?;
    let size = fs::metadata(path).map_err(failed)?.len();
    match recorded_end(&head) {
        Some(end) if end > size => {
            let file = fs::OpenOptions::new()
                .write(true)
                .open(path)
                .map_err(failed)?;
            file.set_len(end).map_err(failed)?;
            file.sync_all().map_err(failed)?;
            Ok(true)
        }
        _ => Ok(false),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Superblock bytes laid out as the specification gives them (version 2, 8-byte
    /// addresses; version 0, 8-byte addresses), with an end-of-file address of 0x266665.
    #[test]
    fn reads_the_recorded_end_of_superblocks_0_and_2() {
        let mut v2 = SIGNATURE.to_vec();
        v2.extend([2, 8, 8, 0]);
        v2.extend(0u64.to_le_bytes()); // base address
        v2.extend(u64::MAX.to_le_bytes()); // no superblock extension
        v2.extend(0x26_6665u64.to_le_bytes()); // end of file
        v2.extend(0x30u64.to_le_bytes()); // root group object header
        assert_eq!(recorded_end(&v2), Some(0x26_6665));

        let mut v0 = SIGNATURE.to_vec();
        v0.extend([0, 0, 0, 0, 0, 8, 8, 0]);
        v0.extend([4, 0, 16, 0]); // group leaf and internal node K
        v0.extend([0, 0, 0, 0]); // consistency flags
        v0.extend(0u64.to_le_bytes()); // base address
        v0.extend(u64::MAX.to_le_bytes()); // free-space info
        v0.extend(0x1234u64.to_le_bytes()); // end of file
        assert_eq!(recorded_end(&v0), Some(0x1234));

        assert_eq!(recorded_end(b"CDF\x01 classic netCDF"), None);
        assert_eq!(recorded_end(&v2[..20]), None);
    }

    #[test]
    fn pads_only_files_shorter_than_their_superblock_says() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("cut.nc");
        let mut bytes = SIGNATURE.to_vec();
        bytes.extend([2, 8, 8, 0]);
        bytes.extend(0u64.to_le_bytes());
        bytes.extend(u64::MAX.to_le_bytes());
        bytes.extend(100u64.to_le_bytes());
        fs::write(&path, &bytes).unwrap();
        assert!(restore_cut_tail(&path).unwrap());
        assert_eq!(fs::metadata(&path).unwrap().len(), 100);
        assert!(!restore_cut_tail(&path).unwrap());
        fs::write(&path, b"not hdf5").unwrap();
        assert!(!restore_cut_tail(&path).unwrap());
    }
}
