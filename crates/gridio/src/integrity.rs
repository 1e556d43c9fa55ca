//! Is a file as long as its own header says? A cheap check made on every input file when it
//! is opened, and again before each read (a file may be cut short while a long job runs).
//!
//! - NetCDF classic (CDF-1), 64-bit offset (CDF-2) and 64-bit data (CDF-5): the header is
//!   parsed as laid out in the NetCDF classic format specification (Unidata, "NetCDF File
//!   Format Specification", netCDF-C documentation); every variable's data end is computed
//!   from its `begin`, its shape and type, and for record variables `numrecs × recsize`.
//!   netCDF-C opens a truncated classic file and returns zeros for the missing bytes, so this
//!   check is what stops a cut file from turning into a run of zeros.
//! - NetCDF-4 (HDF5): the superblock's end-of-file address (HDF5 File Format Specification,
//!   version 3.0, section II.A, superblock versions 0-3) must not lie beyond the file's end.

use std::fs::File;
use std::io::{BufReader, Read, Seek, SeekFrom};
use std::path::Path;

/// Storage format of an input file, as its first bytes say.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Format {
    /// CDF-1, CDF-2 or CDF-5 (the version byte).
    Classic(u8),
    /// HDF5 (NetCDF-4).
    Hdf5,
    /// Anything else: left to libnetcdf.
    Other,
}

impl Format {
    pub fn label(self) -> &'static str {
        match self {
            Format::Classic(1) => "NetCDF classic (CDF-1)",
            Format::Classic(2) => "NetCDF 64-bit offset (CDF-2)",
            Format::Classic(_) => "NetCDF 64-bit data (CDF-5)",
            Format::Hdf5 => "NetCDF-4 (HDF5)",
            Format::Other => "unknown format",
        }
    }
}

/// What the header promises about a file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Expected {
    pub format: Format,
    /// Bytes the file must hold at least (0 when the header does not say).
    pub length: u64,
}

/// Reads a file's header and checks its length; the error text says what is wrong.
pub(crate) fn expected_length(path: &Path) -> Result<Expected, String> {
    let file = File::open(path).map_err(|e| format!("cannot be read ({e})"))?;
    let actual = file
        .metadata()
        .map_err(|e| format!("cannot be read ({e})"))?
        .len();
    let mut reader = BufReader::with_capacity(64 * 1024, file);
    let mut magic = [0u8; 8];
    let got = read_up_to(&mut reader, &mut magic)?;
    let expected = if got >= 4 && &magic[..3] == b"CDF" {
        let version = magic[3];
        if !matches!(version, 1 | 2 | 5) {
            return Err(format!(
                "starts like a NetCDF classic file but has format version byte {version}; expected 1, 2 or 5"
            ));
        }
        reader.seek(SeekFrom::Start(4)).map_err(io_text)?;
        let length = classic_data_end(&mut reader, version, actual)?;
        Expected {
            format: Format::Classic(version),
            length,
        }
    } else if let Some(length) = hdf5_end(&mut reader, actual)? {
        Expected {
            format: Format::Hdf5,
            length,
        }
    } else {
        Expected {
            format: Format::Other,
            length: 0,
        }
    };
    if actual < expected.length {
        return Err(format!(
            "it holds {actual} of the {} bytes its {} header describes: it was cut short (an interrupted copy or write?) or its header is damaged",
            expected.length,
            expected.format.label()
        ));
    }
    Ok(expected)
}

fn io_text(e: std::io::Error) -> String {
    format!("cannot be read ({e})")
}

fn read_up_to(reader: &mut impl Read, buf: &mut [u8]) -> Result<usize, String> {
    let mut filled = 0;
    while filled < buf.len() {
        match reader.read(&mut buf[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(io_text(e)),
        }
    }
    Ok(filled)
}

/// Big-endian header reader of the classic formats.
struct Header<'r, R: Read> {
    reader: &'r mut R,
    /// Bytes consumed so far (offset in the file).
    at: u64,
    /// 8-byte counts and lengths (CDF-5) instead of 4-byte ones.
    wide_counts: bool,
    /// The file's length, to refuse counts that cannot fit.
    file_len: u64,
}

const NC_DIMENSION: u32 = 0x0A;
const NC_VARIABLE: u32 = 0x0B;
const NC_ATTRIBUTE: u32 = 0x0C;
/// numrecs of a file still being written in streaming mode.
const STREAMING: u64 = 0xFFFF_FFFF;

impl<R: Read> Header<'_, R> {
    fn bytes(&mut self, n: u64) -> Result<Vec<u8>, String> {
        if n > self.file_len.saturating_sub(self.at) {
            return Err(format!(
                "the header is damaged or cut short: it needs {n} more bytes at offset {}, beyond the file's {} bytes",
                self.at, self.file_len
            ));
        }
        let mut buf = vec![0u8; n as usize];
        self.reader
            .read_exact(&mut buf)
            .map_err(|e| format!("the header cannot be read at offset {} ({e})", self.at))?;
        self.at += n;
        Ok(buf)
    }

    fn u32(&mut self) -> Result<u32, String> {
        let b = self.bytes(4)?;
        Ok(u32::from_be_bytes([b[0], b[1], b[2], b[3]]))
    }

    fn u64(&mut self) -> Result<u64, String> {
        let b = self.bytes(8)?;
        Ok(u64::from_be_bytes([
            b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7],
        ]))
    }

    /// NON_NEG: a count or length, 4 bytes (CDF-1/2) or 8 bytes (CDF-5).
    fn count(&mut self) -> Result<u64, String> {
        if self.wide_counts {
            self.u64()
        } else {
            self.u32().map(u64::from)
        }
    }

    fn skip_padded(&mut self, n: u64) -> Result<(), String> {
        self.bytes(pad4(n)).map(|_| ())
    }

    fn name(&mut self) -> Result<String, String> {
        let len = self.count()?;
        if len > 4096 {
            return Err(format!(
                "the header is damaged: a name of {len} bytes at offset {}",
                self.at
            ));
        }
        let bytes = self.bytes(pad4(len))?;
        Ok(String::from_utf8_lossy(&bytes[..len as usize]).into_owned())
    }

    /// A list's tag and element count; None for an absent list (ZERO ZERO).
    fn list(&mut self, tag: u32, what: &str) -> Result<Option<u64>, String> {
        let at = self.at;
        let found = self.u32()?;
        let n = self.count()?;
        match (found, n) {
            (0, 0) => Ok(None),
            (t, n) if t == tag => Ok(Some(n)),
            _ => Err(format!(
                "the header is damaged: expected the {what} list at offset {at}, found tag {found:#x}"
            )),
        }
    }

    fn attributes(&mut self) -> Result<(), String> {
        let Some(n) = self.list(NC_ATTRIBUTE, "attribute")? else {
            return Ok(());
        };
        for _ in 0..n {
            self.name()?;
            let size = type_size(self.u32()?, self.wide_counts)?;
            let values = self.count()?;
            self.skip_padded(
                values
                    .checked_mul(size)
                    .ok_or("the header is damaged: an attribute too large to exist")?,
            )?;
        }
        Ok(())
    }
}

fn pad4(n: u64) -> u64 {
    n.div_ceil(4) * 4
}

/// Bytes per value of an nc_type; the CDF-5 types only in CDF-5.
fn type_size(nc_type: u32, cdf5: bool) -> Result<u64, String> {
    Ok(match nc_type {
        1 | 2 => 1,           // byte, char
        3 => 2,               // short
        4 | 5 => 4,           // int, float
        6 => 8,               // double
        7 if cdf5 => 1,       // ubyte
        8 if cdf5 => 2,       // ushort
        9 if cdf5 => 4,       // uint
        10 | 11 if cdf5 => 8, // int64, uint64
        other => {
            return Err(format!(
                "the header is damaged: unknown data type code {other}"
            ))
        }
    })
}

/// One variable of a classic header: where its data start and how large one record (or the
/// whole variable) is.
struct ClassicVar {
    begin: u64,
    bytes: u64,
    record: bool,
}

/// Offset of the end of the last variable's data, from a classic header (after the magic).
fn classic_data_end(reader: &mut impl Read, version: u8, file_len: u64) -> Result<u64, String> {
    let mut h = Header {
        reader,
        at: 4,
        wide_counts: version == 5,
        file_len,
    };
    let numrecs = if version == 5 {
        h.u64()?
    } else {
        h.u32()?.into()
    };
    let streaming = numrecs == STREAMING || numrecs == u64::MAX;
    let mut dims = Vec::new();
    if let Some(n) = h.list(NC_DIMENSION, "dimension")? {
        for _ in 0..n {
            h.name()?;
            dims.push(h.count()?);
        }
    }
    h.attributes()?;
    let mut vars = Vec::new();
    if let Some(n) = h.list(NC_VARIABLE, "variable")? {
        for _ in 0..n {
            vars.push(classic_variable(&mut h, &dims, version)?);
        }
    }
    let header_end = h.at;
    let record_vars: Vec<&ClassicVar> = vars.iter().filter(|v| v.record).collect();
    // One record variable alone is not padded (classic format specification, "recsize").
    let recsize = match record_vars.as_slice() {
        [one] => one.bytes,
        many => many.iter().map(|v| pad4(v.bytes)).sum(),
    };
    let mut end = header_end;
    for var in &vars {
        if var.begin < header_end {
            return Err(format!(
                "the header is damaged: a variable's data begin at offset {} inside the header (which ends at {header_end})",
                var.begin
            ));
        }
        let var_end = if !var.record {
            var.begin.checked_add(var.bytes)
        } else if streaming || numrecs == 0 {
            Some(var.begin)
        } else {
            (numrecs - 1)
                .checked_mul(recsize)
                .and_then(|r| r.checked_add(var.begin))
                .and_then(|r| r.checked_add(var.bytes))
        };
        end = end.max(var_end.ok_or("the header is damaged: data end beyond any possible file")?);
    }
    Ok(end)
}

/// One variable entry of a classic header: name, dimension ids, attributes, type, vsize
/// and begin (NetCDF classic format specification, `var`).
fn classic_variable<R: Read>(
    h: &mut Header<'_, R>,
    dims: &[u64],
    version: u8,
) -> Result<ClassicVar, String> {
    let name = h.name()?;
    let ndims = h.count()?;
    if ndims > 1024 {
        return Err(format!(
            "the header is damaged: variable '{name}' has {ndims} dimensions"
        ));
    }
    let mut shape = Vec::with_capacity(ndims as usize);
    for _ in 0..ndims {
        let id = h.count()?;
        let len = *dims.get(id as usize).ok_or_else(|| {
            format!(
                "the header is damaged: variable '{name}' names dimension {id} of {}",
                dims.len()
            )
        })?;
        shape.push(len);
    }
    h.attributes()?;
    let size = type_size(h.u32()?, version == 5)?;
    let vsize = h.count()?;
    let begin = if version == 1 {
        h.u32()?.into()
    } else {
        h.u64()?
    };
    let record = shape.first() == Some(&0);
    let values = shape
        .iter()
        .skip(usize::from(record))
        .try_fold(1u64, |acc, len| acc.checked_mul(*len));
    let bytes = values
        .and_then(|v| v.checked_mul(size))
        .ok_or_else(|| format!("the header is damaged: variable '{name}' is too large to exist"))?;
    // vsize is the padded size; it saturates at 2^32 - 1 in CDF-1/2 for huge variables.
    if vsize != pad4(bytes) && !(version != 5 && vsize == 0xFFFF_FFFF) && bytes > 0 {
        return Err(format!(
            "the header is damaged: variable '{name}' declares {vsize} bytes but its shape needs {}",
            pad4(bytes)
        ));
    }
    Ok(ClassicVar {
        begin,
        bytes,
        record,
    })
}

/// The HDF5 superblock's end of file, when the file is HDF5 (signature at 0, 512, 1024, ...).
fn hdf5_end(reader: &mut (impl Read + Seek), file_len: u64) -> Result<Option<u64>, String> {
    const SIGNATURE: [u8; 8] = [0x89, b'H', b'D', b'F', b'\r', b'\n', 0x1a, b'\n'];
    let mut offset = 0u64;
    while offset + 8 <= file_len {
        reader.seek(SeekFrom::Start(offset)).map_err(io_text)?;
        let mut block = [0u8; 96];
        let got = read_up_to(reader, &mut block)?;
        if got >= 8 && block[..8] == SIGNATURE {
            return superblock_end(&block[..got], offset).map(Some);
        }
        offset = if offset == 0 { 512 } else { offset * 2 };
    }
    Ok(None)
}

/// End-of-file address of a superblock (versions 0-3) starting at `at`, as an absolute offset.
fn superblock_end(block: &[u8], at: u64) -> Result<u64, String> {
    let damaged = |what: &str| format!("the HDF5 superblock is damaged ({what})");
    let version = *block.get(8).ok_or_else(|| damaged("cut short"))?;
    // (size-of-offsets position, position of the base address)
    let (offsets_at, base_at) = match version {
        0 => (13, 24),
        1 => (13, 28),
        2 | 3 => (9, 12),
        other => return Err(damaged(&format!("version {other}; expected 0 to 3"))),
    };
    let size = usize::from(*block.get(offsets_at).ok_or_else(|| damaged("cut short"))?);
    if !matches!(size, 2 | 4 | 8) {
        return Err(damaged(&format!("size of offsets {size}")));
    }
    let address = |index: usize| -> Result<u64, String> {
        let start = base_at + index * size;
        let bytes = block
            .get(start..start + size)
            .ok_or_else(|| damaged("cut short"))?;
        Ok(bytes
            .iter()
            .rev()
            .fold(0u64, |acc, b| (acc << 8) | u64::from(*b)))
    };
    let undefined = if size == 8 {
        u64::MAX
    } else {
        (1u64 << (8 * size)) - 1
    };
    // Versions 0/1: base, free-space, end-of-file; versions 2/3: base, extension, end-of-file.
    let base = address(0)?;
    let eof = address(2)?;
    if eof == undefined {
        return Ok(0);
    }
    let start = if base == 0 { at } else { base };
    start
        .checked_add(eof)
        .ok_or_else(|| damaged("end-of-file address"))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classic_header_of_one_fixed_and_two_record_variables() {
        // Hand-built CDF-1 header: dims time (record), x = 3; variables a(x) int, b(time, x)
        // float, c(time) short; 2 records.
        let mut h: Vec<u8> = b"CDF\x01".to_vec();
        let u = |h: &mut Vec<u8>, v: u32| h.extend_from_slice(&v.to_be_bytes());
        let name = |h: &mut Vec<u8>, s: &str| {
            h.extend_from_slice(&(s.len() as u32).to_be_bytes());
            h.extend_from_slice(s.as_bytes());
            h.resize(pad4(h.len() as u64) as usize, 0);
        };
        u(&mut h, 2); // numrecs
        for v in [NC_DIMENSION, 2] {
            u(&mut h, v);
        }
        name(&mut h, "time");
        u(&mut h, 0);
        name(&mut h, "x");
        u(&mut h, 3);
        for v in [0, 0, NC_VARIABLE, 3] {
            u(&mut h, v); // no global attributes, then 3 variables
        }
        // (name, dimension ids, type, vsize); `begin` patched below.
        let mut begins = Vec::new();
        for (var, ids, nc_type, vsize) in [
            ("a", vec![1u32], 4u32, 12u32),
            ("b", vec![0, 1], 5, 12),
            ("c", vec![0], 3, 4),
        ] {
            name(&mut h, var);
            u(&mut h, ids.len() as u32);
            for id in ids {
                u(&mut h, id);
            }
            for v in [0, 0, nc_type, vsize] {
                u(&mut h, v);
            }
            begins.push(h.len());
            u(&mut h, 0);
        }
        let header_len = h.len() as u32;
        for (at, offset) in begins.iter().zip([0u32, 12, 24]) {
            h[*at..*at + 4].copy_from_slice(&(header_len + offset).to_be_bytes());
        }
        // recsize = 12 + 4 = 16; c ends at its begin + 1 × 16 + 2.
        let want = u64::from(header_len) + 24 + 16 + 2;
        let end = classic_data_end(&mut &h[4..], 1, 1 << 20).unwrap();
        assert_eq!(end, want);
        // A record count one larger moves the end by one record.
        h[4..8].copy_from_slice(&3u32.to_be_bytes());
        assert_eq!(
            classic_data_end(&mut &h[4..], 1, 1 << 20).unwrap(),
            want + 16
        );
        // A wrong type code is damage.
        let type_at = begins[0] - 8;
        h[type_at..type_at + 4].copy_from_slice(&77u32.to_be_bytes());
        assert!(classic_data_end(&mut &h[4..], 1, 1 << 20).is_err());
    }

    #[test]
    fn superblock_version_0_end_of_file() {
        let mut b = vec![0u8; 96];
        b[..8].copy_from_slice(&[0x89, b'H', b'D', b'F', b'\r', b'\n', 0x1a, b'\n']);
        b[13] = 8;
        b[14] = 8;
        b[24 + 16..24 + 24].copy_from_slice(&1234u64.to_le_bytes());
        assert_eq!(superblock_end(&b, 0).unwrap(), 1234);
        b[8] = 9;
        assert!(superblock_end(&b, 0).is_err());
    }
}
