//! HDF5's byte shuffle (H5Zshuffle.c's layout): of `n` values of `size` bytes, byte 0 of
//! every value, then byte 1 of every value, and so on; the `len % size` bytes of an
//! incomplete last value are kept as they are at the end.

use rayon::prelude::*;

/// Values per block handed to one thread.
const BLOCK_VALUES: usize = 64 * 1024;

/// Shuffles `input` into `output` (same length), on `pool` when given.
pub fn shuffle(input: &[u8], output: &mut [u8], size: usize, pool: Option<&rayon::ThreadPool>) {
    let Some((values, whole)) = copy_unshuffled_part(input, output, size) else {
        return;
    };
    let mut blocks = plane_blocks(&mut output[..whole], values);
    run(pool, &mut blocks, |(b, planes)| {
        gather(&input[b * BLOCK_VALUES * size..whole], planes, size)
    });
}

/// Undoes [`shuffle`].
pub fn unshuffle(input: &[u8], output: &mut [u8], size: usize, pool: Option<&rayon::ThreadPool>) {
    let Some((values, whole)) = copy_unshuffled_part(input, output, size) else {
        return;
    };
    let planes: Vec<&[u8]> = input[..whole].chunks(values).collect();
    let mut blocks: Vec<&mut [u8]> = output[..whole].chunks_mut(BLOCK_VALUES * size).collect();
    run(pool, &mut blocks, |(b, block)| {
        scatter(&planes, b * BLOCK_VALUES, block, size)
    });
}

/// Copies the bytes the shuffle leaves in place (all of them when values are single bytes
/// or fewer than two); returns the number of values and their bytes when there is more to do.
fn copy_unshuffled_part(input: &[u8], output: &mut [u8], size: usize) -> Option<(usize, usize)> {
    assert_eq!(input.len(), output.len(), "shuffle buffers of one length");
    let values = input.len() / size.max(1);
    if size <= 1 || values <= 1 {
        output.copy_from_slice(input);
        return None;
    }
    let whole = values * size;
    output[whole..].copy_from_slice(&input[whole..]);
    Some((values, whole))
}

fn run<T: Send, F: Fn((usize, &mut T)) + Sync + Send>(
    pool: Option<&rayon::ThreadPool>,
    blocks: &mut [T],
    work: F,
) {
    match pool {
        Some(pool) if blocks.len() > 1 => {
            pool.install(|| blocks.par_iter_mut().enumerate().for_each(&work))
        }
        _ => blocks.iter_mut().enumerate().for_each(work),
    }
}

/// The planes of `out` (`values` bytes each) cut into blocks of [`BLOCK_VALUES`]: block b
/// holds every plane's bytes for values `b * BLOCK_VALUES ..`.
fn plane_blocks(out: &mut [u8], values: usize) -> Vec<Vec<&mut [u8]>> {
    let mut blocks: Vec<Vec<&mut [u8]>> = (0..values.div_ceil(BLOCK_VALUES))
        .map(|_| Vec::new())
        .collect();
    for plane in out.chunks_mut(values) {
        for (b, piece) in plane.chunks_mut(BLOCK_VALUES).enumerate() {
            blocks[b].push(piece);
        }
    }
    blocks
}

/// Byte k of each value in `from` into `planes[k]`, for as many values as a plane piece holds.
fn gather(from: &[u8], planes: &mut [&mut [u8]], size: usize) {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") {
        /// [`gather_each`] compiled for AVX2 (byte shuffles the baseline lacks).
        ///
        /// # Safety
        /// The CPU must support AVX2.
        #[target_feature(enable = "avx2")]
        unsafe fn avx2(from: &[u8], planes: &mut [&mut [u8]], size: usize) {
            gather_each(from, planes, size)
        }
        // SAFETY: the CPU has AVX2, checked just above.
        return unsafe { avx2(from, planes, size) };
    }
    gather_each(from, planes, size)
}

#[inline(always)]
fn gather_each(from: &[u8], planes: &mut [&mut [u8]], size: usize) {
    match planes {
        [a, b] => {
            for ((v, a), b) in from.chunks_exact(2).zip(a.iter_mut()).zip(b.iter_mut()) {
                (*a, *b) = (v[0], v[1]);
            }
        }
        [a, b, c, d] => {
            // Sixteen values at a time as whole words, which the compiler vectorises.
            let whole = a.len() / 16 * 16;
            for start in (0..whole).step_by(16) {
                let src = &from[start * 4..start * 4 + 64];
                let words: [u32; 16] = std::array::from_fn(|j| {
                    u32::from_le_bytes([src[4 * j], src[4 * j + 1], src[4 * j + 2], src[4 * j + 3]])
                });
                for (k, plane) in [&mut **a, &mut **b, &mut **c, &mut **d]
                    .into_iter()
                    .enumerate()
                {
                    let dst = &mut plane[start..start + 16];
                    for (byte, word) in dst.iter_mut().zip(words) {
                        *byte = (word >> (8 * k)) as u8;
                    }
                }
            }
            let planes = a[whole..]
                .iter_mut()
                .zip(&mut b[whole..])
                .zip(&mut c[whole..]);
            let planes = planes.zip(&mut d[whole..]);
            for (v, (((a, b), c), d)) in from[whole * 4..].chunks_exact(4).zip(planes) {
                (*a, *b, *c, *d) = (v[0], v[1], v[2], v[3]);
            }
        }
        _ => {
            for (k, plane) in planes.iter_mut().enumerate() {
                for (byte, v) in plane.iter_mut().zip(from.chunks_exact(size)) {
                    *byte = v[k];
                }
            }
        }
    }
}

/// Values `start ..` of the planes, laid out value after value into `block`.
fn scatter(planes: &[&[u8]], start: usize, block: &mut [u8], size: usize) {
    #[cfg(target_arch = "x86_64")]
    if std::arch::is_x86_feature_detected!("avx2") {
        /// [`scatter_each`] compiled for AVX2.
        ///
        /// # Safety
        /// The CPU must support AVX2.
        #[target_feature(enable = "avx2")]
        unsafe fn avx2(planes: &[&[u8]], start: usize, block: &mut [u8], size: usize) {
            scatter_each(planes, start, block, size)
        }
        // SAFETY: the CPU has AVX2, checked just above.
        return unsafe { avx2(planes, start, block, size) };
    }
    scatter_each(planes, start, block, size)
}

#[inline(always)]
fn scatter_each(planes: &[&[u8]], start: usize, block: &mut [u8], size: usize) {
    let count = block.len() / size;
    let plane = |k: usize| &planes[k][start..start + count];
    match size {
        2 => {
            for ((v, a), b) in block.chunks_exact_mut(2).zip(plane(0)).zip(plane(1)) {
                (v[0], v[1]) = (*a, *b);
            }
        }
        4 => {
            // Sixteen values at a time as whole words, which the compiler vectorises.
            let [a, b, c, d] = [plane(0), plane(1), plane(2), plane(3)];
            let whole = count / 16 * 16;
            for start in (0..whole).step_by(16) {
                let bytes = [a, b, c, d].map(|plane| &plane[start..start + 16]);
                let dst = &mut block[start * 4..start * 4 + 64];
                for (j, value) in dst.chunks_exact_mut(4).enumerate() {
                    let word = u32::from(bytes[0][j])
                        | u32::from(bytes[1][j]) << 8
                        | u32::from(bytes[2][j]) << 16
                        | u32::from(bytes[3][j]) << 24;
                    value.copy_from_slice(&word.to_le_bytes());
                }
            }
            let planes = a[whole..]
                .iter()
                .zip(&b[whole..])
                .zip(&c[whole..])
                .zip(&d[whole..]);
            for (v, (((a, b), c), d)) in block[whole * 4..].chunks_exact_mut(4).zip(planes) {
                (v[0], v[1], v[2], v[3]) = (*a, *b, *c, *d);
            }
        }
        _ => {
            for k in 0..size {
                for (v, byte) in block.chunks_exact_mut(size).zip(plane(k)) {
                    v[k] = *byte;
                }
            }
        }
    }
}
