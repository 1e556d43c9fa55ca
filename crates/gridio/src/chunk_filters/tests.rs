use super::*;
use std::io::Read;

/// The zlib stream of `data` deflated at `level` in pieces, on `pool` when given.
fn deflate_chunk(data: &[u8], level: i32, pool: Option<&rayon::ThreadPool>) -> Vec<u8> {
    let deflated = Deflated::new(data, level, pool);
    let mut stream = vec![0; deflated.stream_len()];
    deflated.write_into(&mut stream);
    stream
}

/// Bytes like a shuffled f32 field: smooth values, byte planes one after another.
fn field_bytes(len: usize) -> Vec<u8> {
    let values: Vec<f32> = (0..len.div_ceil(4))
        .map(|i| 2000.0 + 150.0 * ((i as f32) * 0.001).sin() + (i % 7) as f32 * 0.01)
        .collect();
    let mut planes = vec![0u8; values.len() * 4];
    for (i, v) in values.iter().enumerate() {
        for (b, byte) in v.to_le_bytes().iter().enumerate() {
            planes[b * values.len() + i] = *byte;
        }
    }
    planes.truncate(len);
    planes
}

/// Bytes no compressor can shrink (a xorshift sequence).
fn noise_bytes(len: usize) -> Vec<u8> {
    let mut state = 0x9E37_79B9_7F4A_7C15u64;
    (0..len)
        .map(|_| {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state as u8
        })
        .collect()
}

/// Decodes with an independent implementation (flate2's miniz_oxide backend), which checks
/// the zlib header and the Adler-32 of RFC 1950.
fn inflate_elsewhere(stream: &[u8]) -> Vec<u8> {
    let mut out = Vec::new();
    flate2::read::ZlibDecoder::new(stream)
        .read_to_end(&mut out)
        .expect("a valid zlib stream");
    out
}

const LENGTHS: [usize; 8] = [
    0,
    1,
    1000,
    PIECE_BYTES - 1,
    PIECE_BYTES,
    PIECE_BYTES + 1,
    3 * PIECE_BYTES + 17,
    16 * PIECE_BYTES,
];

#[test]
fn streams_of_pieces_are_standard_zlib_streams() {
    for len in LENGTHS {
        for data in [field_bytes(len), noise_bytes(len)] {
            for level in [0, 1, 2, 6, 9] {
                let stream = deflate_chunk(&data, level, None);
                assert_eq!(
                    u16::from_be_bytes([stream[0], stream[1]]) % 31,
                    0,
                    "RFC 1950 header check, {len} bytes at level {level}"
                );
                assert_eq!(
                    inflate_elsewhere(&stream),
                    data,
                    "{len} bytes at level {level}"
                );
            }
        }
    }
}

#[test]
fn headers_are_those_zlib_writes() {
    // RFC 1950 section 2.2: CMF 0x78 (deflate, 32 KiB window), FLEVEL by level.
    assert_eq!(zlib_header(1), [0x78, 0x01]);
    assert_eq!(zlib_header(6), [0x78, 0x9C]);
    assert_eq!(zlib_header(9), [0x78, 0xDA]);
}

#[test]
fn bytes_do_not_depend_on_the_number_of_threads() {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(3)
        .build()
        .unwrap();
    let data = field_bytes(5 * PIECE_BYTES + 123);
    for level in [1, 4] {
        assert_eq!(
            deflate_chunk(&data, level, Some(&pool)),
            deflate_chunk(&data, level, None)
        );
    }
}

#[test]
fn pieces_cost_little_in_size() {
    // One stream over the whole chunk (an independent encoder) against pieces.
    let data = field_bytes(16 * PIECE_BYTES);
    let pieces = deflate_chunk(&data, 6, None).len();
    let mut whole = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::new(6));
    std::io::Write::write_all(&mut whole, &data).unwrap();
    let whole = whole.finish().unwrap().len();
    assert!(
        (pieces as f64) < 1.05 * whole as f64,
        "pieces {pieces} bytes, one stream {whole} bytes"
    );
}

#[test]
fn inflates_streams_of_other_encoders_and_refuses_damaged_ones() {
    assert!(install(), "the filter must install in a test process");
    let memory = MEMORY.get().unwrap();
    for len in LENGTHS {
        let data = field_bytes(len);
        let mut encoder = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::new(3));
        std::io::Write::write_all(&mut encoder, &data).unwrap();
        let stream = encoder.finish().unwrap();
        // SAFETY: HDF5's allocator, freed below.
        let Filtered::Into {
            out,
            capacity,
            valid,
        } = inflate_into(memory, &stream)
        else {
            panic!("{len} bytes not inflated");
        };
        assert!(capacity >= valid);
        // SAFETY: `valid` bytes were written at `out`.
        let got = unsafe { std::slice::from_raw_parts(out as *const u8, valid) };
        assert_eq!(got, &data[..], "{len} bytes");
        unsafe { (memory.free)(out) };

        let mut damaged = stream.clone();
        let last = damaged.len() - 1;
        damaged[last] ^= 0x40; // the Adler-32
        assert!(
            matches!(inflate_into(memory, &damaged), Filtered::Failed),
            "{len} bytes"
        );
        let truncated = &stream[..stream.len() / 2];
        assert!(
            matches!(inflate_into(memory, truncated), Filtered::Failed),
            "{len} bytes"
        );
    }
}

#[test]
fn netcdf_files_are_written_and_read_through_this_filter() {
    crate::prepare_hdf5();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("deflated.nc");
    let values: Vec<f32> = (0..40 * 90 * 180)
        .map(|i| 1.0 + (i as f32 * 1e-3).cos())
        .collect();
    let before = chunks_handled();
    {
        let mut file = netcdf::create(&path).unwrap();
        file.add_dimension("z", 40).unwrap();
        file.add_dimension("y", 90).unwrap();
        file.add_dimension("x", 180).unwrap();
        let mut var = file.add_variable::<f32>("v", &["z", "y", "x"]).unwrap();
        var.set_chunking(&[10, 90, 180]).unwrap();
        var.set_compression(1, true).unwrap();
        var.put_values(&values, ..).unwrap();
    }
    let file = netcdf::open(&path).unwrap();
    let back: Vec<f32> = file.variable("v").unwrap().get_values(..).unwrap();
    assert_eq!(back, values);
    let after = chunks_handled();
    for (kind, (b, a)) in ["deflated", "inflated", "shuffled"]
        .iter()
        .zip(before.iter().zip(after))
    {
        assert!(a >= b + 4, "chunks {kind}: {before:?} -> {after:?}");
    }
    let stored = std::fs::metadata(&path).unwrap().len();
    assert!(stored < (values.len() * 4) as u64, "{stored} bytes stored");
}

/// HDF5's shuffle as H5Zshuffle.c writes it, one byte at a time.
fn shuffle_by_definition(input: &[u8], size: usize) -> Vec<u8> {
    let values = input.len() / size;
    if size <= 1 || values <= 1 {
        return input.to_vec();
    }
    let mut out = vec![0u8; input.len()];
    for k in 0..size {
        for i in 0..values {
            out[k * values + i] = input[i * size + k];
        }
    }
    out[values * size..].copy_from_slice(&input[values * size..]);
    out
}

#[test]
fn shuffles_as_hdf5_defines_it_and_back() {
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(3)
        .build()
        .unwrap();
    for size in [1, 2, 3, 4, 8, 16] {
        for len in [
            0,
            1,
            size,
            size + 1,
            1000,
            3 * 64 * 1024 * size + 5,
            200_003,
        ] {
            let input = noise_bytes(len);
            let expected = shuffle_by_definition(&input, size);
            for pool in [None, Some(&pool)] {
                let mut shuffled = vec![0u8; len];
                shuffle::shuffle(&input, &mut shuffled, size, pool);
                assert_eq!(shuffled, expected, "size {size}, {len} bytes");
                let mut back = vec![0u8; len];
                shuffle::unshuffle(&shuffled, &mut back, size, pool);
                assert_eq!(back, input, "size {size}, {len} bytes");
            }
        }
    }
}
