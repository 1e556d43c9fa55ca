//! HDF5's deflate and shuffle filters, replaced in this process by ones that work on
//! several threads (and inflate with a faster zlib).
//!
//! libnetcdf serves one call at a time, and HDF5 runs a variable's filters inside that
//! call, so with the library's own filters every output chunk is shuffled and deflated (and
//! every input chunk inflated and unshuffled) on one core while the others wait. The bytes
//! stored are those the formats define, so every reader decodes them:
//! - deflate: the zlib format of RFC 1950/1951, as the built-in filter writes. A chunk is
//!   deflated in pieces: raw deflate data ended by a sync flush (an empty stored block, so
//!   the next piece starts on a byte boundary), the last one by the final block, and the
//!   Adler-32 of the whole chunk (the pieces' checksums combined) closes it. Pieces are cut
//!   at fixed offsets, so the bytes written do not depend on the number of threads.
//! - shuffle: HDF5's byte shuffle (byte k of every value together, then byte k + 1; bytes
//!   of an incomplete last value kept at the end), the same bytes as the built-in filter.
//!
//! Only the filter functions are replaced: the library's own checks and the per-dataset
//! parameters (the shuffle's value size) stay. Set `ACIDSCAPE_HDF5_OWN_FILTERS=1` to keep
//! HDF5's own filters (same values, one core).

use std::cell::{Cell, RefCell};
use std::ffi::{c_char, c_int, c_uint, c_void};
use std::mem::MaybeUninit;
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{Once, OnceLock};
use zlib_rs::{Deflate, DeflateFlush, Inflate, InflateFlush, Status};

/// Uncompressed bytes per piece: small enough that a 4 MiB output chunk keeps 16 threads
/// busy, large enough that restarting the 32 KiB window costs well under 1 % in size.
pub const PIECE_BYTES: usize = 256 * 1024;

/// Shuffled chunks at least this large are shuffled on several threads.
const PARALLEL_SHUFFLE_BYTES: usize = 1024 * 1024;

/// The environment setting that keeps HDF5's own filters.
pub const OWN_FILTER_SETTING: &str = "ACIDSCAPE_HDF5_OWN_FILTERS";

/// HDF5's identifiers of the deflate and shuffle filters (H5Zpublic.h).
const DEFLATE_ID: c_int = 1;
const SHUFFLE_ID: c_int = 2;
/// `H5Z_FLAG_REVERSE` (H5Zpublic.h): the filter is asked to decode.
const REVERSE: c_uint = 0x0100;

static CHUNKS_DEFLATED: AtomicU64 = AtomicU64::new(0);
static CHUNKS_INFLATED: AtomicU64 = AtomicU64::new(0);
static CHUNKS_SHUFFLED: AtomicU64 = AtomicU64::new(0);

/// Chunks this process has deflated, inflated, and shuffled or unshuffled with these
/// filters (for tests).
pub fn chunks_handled() -> [u64; 3] {
    [&CHUNKS_DEFLATED, &CHUNKS_INFLATED, &CHUNKS_SHUFFLED].map(|c| c.load(Ordering::Relaxed))
}

/// `H5Z_class2_t` (H5Zpublic.h, HDF5 1.8 to 1.14).
#[repr(C)]
struct FilterClass {
    version: c_int,
    id: c_int,
    encoder_present: c_uint,
    decoder_present: c_uint,
    name: *const c_char,
    can_apply: *const c_void,
    set_local: *const c_void,
    filter: Option<FilterFn>,
}

type FilterFn = unsafe extern "C" fn(
    flags: c_uint,
    cd_nelmts: usize,
    cd_values: *const c_uint,
    nbytes: usize,
    buf_size: *mut usize,
    buf: *mut *mut c_void,
) -> usize;

/// HDF5's allocator, which the filter pipeline frees and resizes buffers with.
struct Memory {
    allocate: Allocate,
    resize: Resize,
    free: Free,
}

type Allocate = unsafe extern "C" fn(usize, bool) -> *mut c_void;
type Resize = unsafe extern "C" fn(*mut c_void, usize) -> *mut c_void;
type Free = unsafe extern "C" fn(*mut c_void) -> c_int;

static MEMORY: OnceLock<Memory> = OnceLock::new();

fn symbol(name: &std::ffi::CStr) -> Option<*mut c_void> {
    // SAFETY: dlsym with RTLD_DEFAULT and a NUL-terminated name only looks a symbol up.
    let found = unsafe { libc::dlsym(libc::RTLD_DEFAULT, name.as_ptr()) };
    (!found.is_null()).then_some(found)
}

/// Replaces the functions of HDF5's deflate and shuffle filters with this module's, once
/// per process, unless [`OWN_FILTER_SETTING`] is set, or the HDF5 library is not a 1.8 to
/// 1.14 release, or it lacks a symbol needed (then HDF5's own filters stay). Returns whether
/// this module's filters are in use.
pub fn install() -> bool {
    static ONCE: Once = Once::new();
    static INSTALLED: AtomicBool = AtomicBool::new(false);
    ONCE.call_once(|| {
        if std::env::var_os(OWN_FILTER_SETTING).is_some_and(|v| !v.is_empty() && v != "0") {
            return;
        }
        // SAFETY: the signatures in H5public.h and H5Zprivate.h (hbool_t is C99 bool since
        // HDF5 1.10); under libnetcdf's lock, so no other thread is inside HDF5.
        INSTALLED.store(unsafe { register() }, Ordering::Relaxed);
    });
    INSTALLED.load(Ordering::Relaxed)
}

unsafe fn register() -> bool {
    let _lock = netcdf_sys::libnetcdf_lock.lock();
    let (Some(open), Some(version), Some(find), Some(register)) = (
        symbol(c"H5open"),
        symbol(c"H5get_libversion"),
        // The public H5Zregister refuses identifiers below 256; the library's own lookup
        // and registration (which replaces the entry with the same identifier) do not.
        symbol(c"H5Z_find"),
        symbol(c"H5Z_register"),
    ) else {
        return false;
    };
    let (Some(allocate), Some(resize), Some(free)) = (
        symbol(c"H5allocate_memory"),
        symbol(c"H5resize_memory"),
        symbol(c"H5free_memory"),
    ) else {
        return false;
    };
    unsafe {
        let open: unsafe extern "C" fn() -> c_int = std::mem::transmute::<*mut c_void, _>(open);
        let version: unsafe extern "C" fn(*mut c_uint, *mut c_uint, *mut c_uint) -> c_int =
            std::mem::transmute::<*mut c_void, _>(version);
        let (mut major, mut minor, mut release) = (0, 0, 0);
        if open() < 0 || version(&mut major, &mut minor, &mut release) < 0 {
            return false;
        }
        if major != 1 || !(8..=14).contains(&minor) {
            return false;
        }
        let _ = MEMORY.set(Memory {
            allocate: std::mem::transmute::<*mut c_void, Allocate>(allocate),
            resize: std::mem::transmute::<*mut c_void, Resize>(resize),
            free: std::mem::transmute::<*mut c_void, Free>(free),
        });
        let find: unsafe extern "C" fn(c_int) -> *const FilterClass =
            std::mem::transmute::<*mut c_void, _>(find);
        let register: unsafe extern "C" fn(*const FilterClass) -> c_int =
            std::mem::transmute::<*mut c_void, _>(register);
        let mut replaced = true;
        for (id, filter) in [
            (DEFLATE_ID, filter_entry::<false> as FilterFn),
            (SHUFFLE_ID, filter_entry::<true> as FilterFn),
        ] {
            let library = find(id);
            if library.is_null() || (*library).id != id {
                replaced = false;
                continue;
            }
            // HDF5 copies the class into its table; the name is a static string.
            let class = FilterClass {
                filter: Some(filter),
                ..std::ptr::read(library)
            };
            replaced &= register(&class) >= 0;
        }
        replaced
    }
}

/// The threads that deflate pieces and shuffle: as many as the process's rayon pool has, in
/// a pool of their own (the calling thread holds libnetcdf's lock, which the threads of the
/// process's pool may be waiting for).
fn piece_pool() -> Option<&'static rayon::ThreadPool> {
    static POOL: OnceLock<Option<rayon::ThreadPool>> = OnceLock::new();
    POOL.get_or_init(|| {
        let threads = rayon::current_num_threads();
        (threads > 1)
            .then(|| {
                rayon::ThreadPoolBuilder::new()
                    .num_threads(threads)
                    .thread_name(|i| format!("chunk-filter-{i}"))
                    .build()
                    .ok()
            })
            .flatten()
    })
    .as_ref()
}

/// The filter HDF5 calls (the shuffle when `SHUFFLE`, else deflate): `nbytes` valid bytes
/// in `*buf` (allocated `*buf_size`); returns the valid bytes of the new `*buf`, or 0 on
/// failure (HDF5 then reports the error; a panic is such a failure, not an unwind into C).
unsafe extern "C" fn filter_entry<const SHUFFLE: bool>(
    flags: c_uint,
    cd_nelmts: usize,
    cd_values: *const c_uint,
    nbytes: usize,
    buf_size: *mut usize,
    buf: *mut *mut c_void,
) -> usize {
    let run = || {
        let Some(memory) = MEMORY.get() else {
            return 0;
        };
        // SAFETY: HDF5 passes `cd_nelmts` parameters and `nbytes` valid bytes at `*buf`.
        let (parameters, input) = unsafe {
            (
                match cd_nelmts {
                    0 => &[][..],
                    n => std::slice::from_raw_parts(cd_values, n),
                },
                std::slice::from_raw_parts(*buf as *const u8, nbytes),
            )
        };
        let reverse = flags & REVERSE != 0;
        let filtered = if SHUFFLE {
            shuffle_chunk(memory, reverse, parameters, input)
        } else {
            deflate_or_inflate(memory, reverse, parameters, input)
        };
        match filtered {
            Filtered::Unchanged => nbytes,
            Filtered::Failed => 0,
            Filtered::Into {
                out,
                capacity,
                valid,
            } => {
                // SAFETY: the old buffer came from HDF5's allocator; ownership passes back.
                unsafe {
                    (memory.free)(*buf);
                    *buf = out;
                    *buf_size = capacity;
                }
                valid
            }
        }
    };
    std::panic::catch_unwind(run).unwrap_or(0)
}

/// What a filter made of a chunk.
enum Filtered {
    /// The chunk stays as it is.
    Unchanged,
    /// A new buffer from HDF5's allocator: `capacity` bytes, `valid` of them the chunk.
    Into {
        out: *mut c_void,
        capacity: usize,
        valid: usize,
    },
    Failed,
}

/// A new buffer of `len` bytes from HDF5's allocator, filled by `fill`.
fn filled(memory: &Memory, len: usize, fill: impl FnOnce(&mut [u8])) -> Filtered {
    // SAFETY: a plain allocation of at least one byte.
    let out = unsafe { (memory.allocate)(len.max(1), false) };
    if out.is_null() {
        return Filtered::Failed;
    }
    // SAFETY: `out` holds at least `len` bytes; `fill` writes all of them.
    fill(unsafe { std::slice::from_raw_parts_mut(out as *mut u8, len) });
    Filtered::Into {
        out,
        capacity: len.max(1),
        valid: len,
    }
}

/// Deflate (`parameters`: the level) or, in `reverse`, inflate.
fn deflate_or_inflate(
    memory: &Memory,
    reverse: bool,
    parameters: &[c_uint],
    input: &[u8],
) -> Filtered {
    if reverse {
        CHUNKS_INFLATED.fetch_add(1, Ordering::Relaxed);
        return inflate_into(memory, input);
    }
    let &[level] = parameters else {
        return Filtered::Failed;
    };
    CHUNKS_DEFLATED.fetch_add(1, Ordering::Relaxed);
    let deflated = Deflated::new(input, level.min(9) as i32, piece_pool());
    filled(memory, deflated.stream_len(), |out| {
        deflated.write_into(out)
    })
}

/// HDF5's shuffle (`parameters[0]`: the size of one value, set by the library's own
/// `set_local` when the dataset was created) or, in `reverse`, its inverse.
fn shuffle_chunk(memory: &Memory, reverse: bool, parameters: &[c_uint], input: &[u8]) -> Filtered {
    let Some(&value_bytes) = parameters.first() else {
        return Filtered::Failed;
    };
    let value_bytes = value_bytes as usize;
    if value_bytes <= 1 || input.len() / value_bytes <= 1 {
        return Filtered::Unchanged;
    }
    CHUNKS_SHUFFLED.fetch_add(1, Ordering::Relaxed);
    let pool = piece_pool().filter(|_| input.len() >= PARALLEL_SHUFFLE_BYTES);
    filled(memory, input.len(), |out| {
        if reverse {
            shuffle::unshuffle(input, out, value_bytes, pool);
        } else {
            shuffle::shuffle(input, out, value_bytes, pool);
        }
    })
}

/// A chunk deflated in pieces, ready to be laid out as one zlib stream (RFC 1950).
struct Deflated {
    level: i32,
    pieces: Vec<Vec<u8>>,
    adler: u32,
}

impl Deflated {
    /// Deflates `data` at `level` in pieces of [`PIECE_BYTES`], on `pool` when given.
    fn new(data: &[u8], level: i32, pool: Option<&rayon::ThreadPool>) -> Deflated {
        use rayon::prelude::*;
        let pieces: Vec<&[u8]> = if data.is_empty() {
            vec![data]
        } else {
            data.chunks(PIECE_BYTES).collect()
        };
        let last = pieces.len() - 1;
        let work = |(i, piece): (usize, &&[u8])| {
            (
                deflate_piece(piece, level, i == last),
                zlib_rs::adler32::adler32(1, piece),
            )
        };
        let done: Vec<(Vec<u8>, u32)> = match pool {
            Some(pool) if pieces.len() > 1 => {
                pool.install(|| pieces.par_iter().enumerate().map(work).collect())
            }
            _ => pieces.iter().enumerate().map(work).collect(),
        };
        let mut adler = 1u32;
        for ((_, piece_adler), piece) in done.iter().zip(&pieces) {
            adler = zlib_rs::adler32::adler32_combine(adler, *piece_adler, piece.len() as u64);
        }
        Deflated {
            level,
            pieces: done.into_iter().map(|(deflated, _)| deflated).collect(),
            adler,
        }
    }

    /// Bytes of the whole stream: header, pieces, checksum.
    fn stream_len(&self) -> usize {
        2 + self.pieces.iter().map(Vec::len).sum::<usize>() + 4
    }

    /// Lays the stream out into `out`, which holds exactly [`Deflated::stream_len`] bytes.
    fn write_into(&self, out: &mut [u8]) {
        let (header, mut rest) = out.split_at_mut(2);
        header.copy_from_slice(&zlib_header(self.level));
        for piece in &self.pieces {
            let (here, after) = rest.split_at_mut(piece.len());
            here.copy_from_slice(piece);
            rest = after;
        }
        rest.copy_from_slice(&self.adler.to_be_bytes());
    }
}

/// The two header bytes zlib itself writes for a 32 KiB window at `level` (RFC 1950 2.2).
fn zlib_header(level: i32) -> [u8; 2] {
    let level_flag: u16 = match level {
        0 | 1 => 0,
        2..=5 => 1,
        6 => 2,
        _ => 3,
    };
    let header: u16 = (0x78 << 8) | (level_flag << 6);
    (header + 31 - header % 31).to_be_bytes()
}

/// Raw deflate data of one piece: ended by a sync flush, or by the final block when `last`.
/// Each thread keeps its compressor (some 300 KiB of state) from piece to piece.
fn deflate_piece(piece: &[u8], level: i32, last: bool) -> Vec<u8> {
    thread_local! {
        static KEPT: RefCell<Option<(i32, Deflate)>> = const { RefCell::new(None) };
    }
    KEPT.with_borrow_mut(|kept| {
        if !matches!(kept, Some((l, _)) if *l == level) {
            *kept = Some((level, Deflate::new(level, false, 15)));
        }
        let (_, deflate) = kept.as_mut().expect("set just above");
        deflate.reset();
        deflate_piece_with(deflate, piece, last)
    })
}

fn deflate_piece_with(deflate: &mut Deflate, piece: &[u8], last: bool) -> Vec<u8> {
    let flush = if last {
        DeflateFlush::Finish
    } else {
        DeflateFlush::SyncFlush
    };
    let mut out: Vec<u8> = Vec::with_capacity(zlib_rs::compress_bound(piece.len()) + 16);
    loop {
        let consumed = deflate.total_in() as usize;
        let status = deflate
            .compress_uninit(&piece[consumed..], out.spare_capacity_mut(), flush)
            .expect("deflating from memory into memory cannot fail");
        // SAFETY: compress_uninit initialised the bytes it counts in `total_out`.
        unsafe { out.set_len(deflate.total_out() as usize) };
        let input_done = deflate.total_in() as usize == piece.len();
        let room_left = out.len() < out.capacity();
        match status {
            Status::StreamEnd => return out,
            _ if !last && input_done && room_left => return out,
            _ => out.reserve(out.capacity().max(64)),
        }
    }
}

/// Inflates one zlib stream into a buffer from HDF5's allocator; fails when the stream is
/// damaged or truncated (checked by its Adler-32). Each thread keeps its decompressor.
fn inflate_into(memory: &Memory, input: &[u8]) -> Filtered {
    thread_local! {
        static LAST_SIZE: Cell<usize> = const { Cell::new(0) };
        static KEPT: RefCell<Option<Inflate>> = const { RefCell::new(None) };
    }
    KEPT.with_borrow_mut(|kept| {
        let inflate = kept.get_or_insert_with(|| Inflate::new(true, 15));
        inflate.reset(true);
        let filtered = inflate_with(inflate, memory, input, LAST_SIZE.get());
        if let Filtered::Into { valid, .. } = filtered {
            LAST_SIZE.set(valid);
        }
        filtered
    })
}

/// [`inflate_into`] with a decompressor ready for a new stream and a first guess of the size.
fn inflate_with(inflate: &mut Inflate, memory: &Memory, input: &[u8], guess: usize) -> Filtered {
    let mut capacity = guess.max(input.len().saturating_mul(4)).max(4096);
    // SAFETY: a plain allocation, grown and freed below with HDF5's own functions.
    let mut out = unsafe { (memory.allocate)(capacity, false) };
    if out.is_null() {
        return Filtered::Failed;
    }
    loop {
        let (consumed, written) = (inflate.total_in() as usize, inflate.total_out() as usize);
        // SAFETY: `out` holds `capacity` bytes, of which `written` are filled.
        let space = unsafe {
            std::slice::from_raw_parts_mut(
                (out as *mut MaybeUninit<u8>).add(written),
                capacity - written,
            )
        };
        let status = inflate.decompress_uninit(&input[consumed..], space, InflateFlush::NoFlush);
        let progressed =
            inflate.total_in() as usize > consumed || inflate.total_out() as usize > written;
        match status {
            Ok(Status::StreamEnd) => {
                return Filtered::Into {
                    out,
                    capacity,
                    valid: inflate.total_out() as usize,
                };
            }
            Ok(_) if inflate.total_out() as usize == capacity => {
                capacity *= 2;
                // SAFETY: resizing HDF5's own allocation; on failure the old one is freed.
                let grown = unsafe { (memory.resize)(out, capacity) };
                if grown.is_null() {
                    unsafe { (memory.free)(out) };
                    return Filtered::Failed;
                }
                out = grown;
            }
            Ok(_) if progressed => {}
            _ => {
                // SAFETY: our own allocation, not handed to HDF5.
                unsafe { (memory.free)(out) };
                return Filtered::Failed;
            }
        }
    }
}

pub mod shuffle;
#[cfg(test)]
mod tests;
