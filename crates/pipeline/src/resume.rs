//! The progress record kept beside a partial output, so `--resume` can continue it.
//!
//! Plain text, rewritten (write, fsync, rename) after every finished time step:
//! ```text
//! acidscape-progress 2
//! steps_done 3
//! flag_counts 40 1160 300 820 0 0 0 0 2 2 2 0
//! checkpoint 0 0 0 0 0 0 0 0 0 0 0 0 0
//! job acidscape 0.1.0
//! job grid 50 180 360 steps 12
//! input 123456 9f0c1d2e3a4b5c6d 0-6 /data/run/dissic_201501-201506.nc
//! input 34567 0a1b2c3d4e5f6a7b all /data/run/areacello.nc
//! end
//! ```
//! `flag_counts` and each `checkpoint` hold [`FlagCounts::as_vec`]; a checkpoint holds the
//! counts before its step, at each step where an input file's time steps begin, so a resume
//! can go back to the start of a file. `job` lines describe everything else that decides the
//! output's values; resuming requires them to be identical. `input` lines give each file's
//! size, content identity ([`ContentIdentity`]), the time steps that read it (half-open, or
//! `all`) and its path (for messages only: a run copied elsewhere keeps its identity).

use crate::flags::FlagCounts;
use crate::PipelineError;
use std::fs;
use std::io::{Read, Seek, SeekFrom, Write};
use std::ops::Range;
use std::path::{Path, PathBuf};

const FORMAT: &str = "acidscape-progress";
const VERSION: u32 = 2;

/// Bytes hashed at the start and at the end of a file (its headers and, in HDF5 files,
/// metadata often written last).
const EDGE_BYTES: u64 = 64 * 1024;
/// Blocks hashed at fixed fractions of the file between the edges, and their size.
const SAMPLED_BLOCKS: u64 = 16;
const BLOCK_BYTES: u64 = 16 * 1024;

/// 64-bit FNV-1a (Fowler, Noll & Vo; the offset basis and prime of the FNV specification).
#[derive(Clone, Copy, Debug)]
pub struct Fnv1a64(u64);

impl Default for Fnv1a64 {
    fn default() -> Self {
        Fnv1a64(0xcbf2_9ce4_8422_2325)
    }
}

impl Fnv1a64 {
    pub fn update(&mut self, bytes: &[u8]) {
        for &byte in bytes {
            self.0 = (self.0 ^ u64::from(byte)).wrapping_mul(0x0000_0100_0000_01b3);
        }
    }

    pub fn finish(self) -> u64 {
        self.0
    }
}

/// A cheap identity of a file's content: its size and a hash of its first and last 64 KiB
/// and of 16 blocks of 16 KiB at fixed fractions of its size (at most 384 KiB read). A copy
/// or a touched file keeps it; a file rewritten with other values changes it with near
/// certainty (its size or its compressed blocks change). A change confined to bytes
/// outside the sampled blocks goes unseen: the price of not reading whole files.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ContentIdentity {
    pub size: u64,
    pub hash: u64,
}

impl ContentIdentity {
    /// Reads the sampled bytes of `path`.
    pub fn of(path: &Path) -> std::io::Result<ContentIdentity> {
        let mut file = fs::File::open(path)?;
        let size = file.metadata()?.len();
        let mut hash = Fnv1a64::default();
        let mut buffer = Vec::new();
        for (offset, length) in sampled_extents(size) {
            buffer.resize(length as usize, 0);
            file.seek(SeekFrom::Start(offset))?;
            file.read_exact(&mut buffer)?;
            hash.update(&buffer);
        }
        Ok(ContentIdentity {
            size,
            hash: hash.finish(),
        })
    }
}

/// The (offset, length) of every sampled extent of a file of `size` bytes: the whole file
/// when it is small, else the edges and the blocks between them.
fn sampled_extents(size: u64) -> Vec<(u64, u64)> {
    let sampled = 2 * EDGE_BYTES + SAMPLED_BLOCKS * BLOCK_BYTES;
    if size <= sampled {
        return vec![(0, size)];
    }
    let middle = EDGE_BYTES..size - EDGE_BYTES;
    let mut extents = vec![(0, EDGE_BYTES)];
    for i in 0..SAMPLED_BLOCKS {
        // Block i starts i/(n-1) of the way between the edges (last one ends at the tail edge).
        let span = middle.end - middle.start - BLOCK_BYTES;
        extents.push((middle.start + span * i / (SAMPLED_BLOCKS - 1), BLOCK_BYTES));
    }
    extents.push((middle.end, EDGE_BYTES));
    extents
}

/// One input file as a job read it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct InputRecord {
    pub identity: ContentIdentity,
    /// Time steps whose slabs read it; `None`: read for every step (or not tied to steps).
    pub steps: Option<Range<usize>>,
    pub path: PathBuf,
}

impl InputRecord {
    /// Identifies `path`, read for `steps`; the error names the file.
    pub fn of(path: &Path, steps: Option<Range<usize>>) -> Result<InputRecord, PipelineError> {
        let identity = ContentIdentity::of(path).map_err(|e| PipelineError::Input {
            path: path.to_path_buf(),
            message: format!("cannot be read to record what the job consumed: {e}"),
        })?;
        Ok(InputRecord {
            identity,
            steps,
            path: path.to_path_buf(),
        })
    }

    fn line(&self) -> String {
        let steps = match &self.steps {
            Some(range) => format!("{}-{}", range.start, range.end),
            None => "all".to_string(),
        };
        format!(
            "input {} {:016x} {steps} {}",
            self.identity.size,
            self.identity.hash,
            self.path.display()
        )
    }

    fn parse(text: &str) -> Option<InputRecord> {
        let mut words = text.splitn(4, ' ');
        let size = words.next()?.parse().ok()?;
        let hash = u64::from_str_radix(words.next()?, 16).ok()?;
        let steps = match words.next()? {
            "all" => None,
            range => {
                let (start, end) = range.split_once('-')?;
                Some(start.parse().ok()?..end.parse().ok()?)
            }
        };
        Some(InputRecord {
            identity: ContentIdentity { size, hash },
            steps,
            path: PathBuf::from(words.next()?),
        })
    }
}

/// Where a resumed job starts, and with which counts.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ResumePoint {
    pub step: usize,
    pub counts: FlagCounts,
    /// Inputs that changed since the interrupted run but had not been (fully) read by it.
    pub replaced: Vec<PathBuf>,
}

/// What has been finished, and for which job.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ProgressRecord {
    pub steps_done: usize,
    pub counts: FlagCounts,
    /// Counts before each step where an input file begins (see the module notes).
    pub checkpoints: Vec<(usize, FlagCounts)>,
    pub job: Vec<String>,
    pub inputs: Vec<InputRecord>,
}

impl ProgressRecord {
    /// A record of a job that has finished nothing yet.
    pub fn new(job: Vec<String>, inputs: Vec<InputRecord>) -> ProgressRecord {
        ProgressRecord {
            steps_done: 0,
            counts: FlagCounts::default(),
            checkpoints: Vec::new(),
            job,
            inputs,
        }
    }

    /// Notes `steps_done` finished steps with these counts, keeping a checkpoint when an
    /// input file's steps begin here.
    pub fn finish_steps(&mut self, steps_done: usize) {
        self.steps_done = steps_done;
        let file_starts_here = self
            .inputs
            .iter()
            .any(|i| i.steps.as_ref().is_some_and(|s| s.start == steps_done));
        if file_starts_here && !self.checkpoints.iter().any(|(s, _)| *s == steps_done) {
            self.checkpoints.push((steps_done, self.counts));
        }
    }

    /// The record as [`ProgressRecord::save`] writes it (see the module notes).
    pub fn text(&self) -> String {
        let counts = |c: &FlagCounts| {
            c.as_vec()
                .iter()
                .map(u64::to_string)
                .collect::<Vec<_>>()
                .join(" ")
        };
        let mut text = format!(
            "{FORMAT} {VERSION}\nsteps_done {}\nflag_counts {}\n",
            self.steps_done,
            counts(&self.counts)
        );
        for (step, at) in &self.checkpoints {
            text.push_str(&format!("checkpoint {step} {}\n", counts(at)));
        }
        for line in &self.job {
            text.push_str(&format!("job {line}\n"));
        }
        for input in &self.inputs {
            text.push_str(&input.line());
            text.push('\n');
        }
        text.push_str("end\n");
        text
    }

    /// Writes the record durably: to a temporary file, fsync, then rename over `path`.
    pub fn save(&self, path: &Path) -> Result<(), PipelineError> {
        let io_error = |e: std::io::Error| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("cannot write the progress record: {e}"),
        };
        let temporary = temporary_path(path);
        let mut file = fs::File::create(&temporary).map_err(io_error)?;
        file.write_all(self.text().as_bytes()).map_err(io_error)?;
        file.sync_all().map_err(io_error)?;
        fs::rename(&temporary, path).map_err(io_error)?;
        sync_parent(path);
        Ok(())
    }

    /// Reads a record written by [`ProgressRecord::save`].
    pub fn load(path: &Path) -> Result<ProgressRecord, PipelineError> {
        let text = fs::read_to_string(path).map_err(|e| PipelineError::Resume {
            path: path.to_path_buf(),
            message: format!("cannot read the progress record: {e}"),
        })?;
        ProgressRecord::parse(&text, path)
    }

    /// Reads a record's [`ProgressRecord::text`]; errors name `path`, where it was kept.
    pub fn parse(text: &str, path: &Path) -> Result<ProgressRecord, PipelineError> {
        let bad = |message: String| PipelineError::Resume {
            path: path.to_path_buf(),
            message,
        };
        let damaged = || {
            bad(format!(
                "the progress record {} is damaged; start over with --overwrite",
                path.display()
            ))
        };
        let mut lines = text.lines();
        match lines.next().and_then(|l| l.strip_prefix(FORMAT)) {
            Some(version) if version.trim() == VERSION.to_string() => {}
            Some(version) => {
                return Err(bad(format!(
                    "the progress record {} was written by another version of acidscape (format{version}, this one reads {VERSION}); start over with --overwrite",
                    path.display()
                )))
            }
            None => {
                return Err(bad(format!(
                    "{} is not a progress record acidscape wrote; start over with --overwrite",
                    path.display()
                )))
            }
        }
        let numbers =
            |text: &str| -> Option<Vec<u64>> { text.split(' ').map(|n| n.parse().ok()).collect() };
        let mut record = ProgressRecord::new(Vec::new(), Vec::new());
        let mut steps_seen = false;
        let mut counts_seen = false;
        let mut ended = false;
        for line in lines {
            if ended {
                return Err(damaged());
            }
            if line == "end" {
                ended = true;
                continue;
            }
            let (key, rest) = line.split_once(' ').ok_or_else(damaged)?;
            match key {
                "steps_done" => {
                    record.steps_done = rest.parse().map_err(|_| damaged())?;
                    steps_seen = true;
                }
                "flag_counts" => {
                    record.counts = numbers(rest)
                        .and_then(|v| FlagCounts::from_slice(&v))
                        .ok_or_else(damaged)?;
                    counts_seen = true;
                }
                "checkpoint" => {
                    let values = numbers(rest).ok_or_else(damaged)?;
                    let (step, counts) = values.split_first().ok_or_else(damaged)?;
                    let counts = FlagCounts::from_slice(counts).ok_or_else(damaged)?;
                    record.checkpoints.push((*step as usize, counts));
                }
                "job" => record.job.push(rest.to_string()),
                "input" => record
                    .inputs
                    .push(InputRecord::parse(rest).ok_or_else(damaged)?),
                _ => return Err(damaged()),
            }
        }
        if !(steps_seen && counts_seen && ended) {
            return Err(damaged());
        }
        Ok(record)
    }

    /// Explains the first difference between the recorded job and `job`, if any.
    pub fn job_difference(&self, job: &[String]) -> Option<String> {
        for (recorded, now) in self.job.iter().zip(job) {
            if recorded != now {
                return Some(format!(
                    "the interrupted run had '{recorded}', this one has '{now}'"
                ));
            }
        }
        match self.job.len().cmp(&job.len()) {
            std::cmp::Ordering::Equal => None,
            _ => Some(format!(
                "the interrupted run was described by {} lines, this one by {}",
                self.job.len(),
                job.len()
            )),
        }
    }

    /// Where a job over `inputs` can continue this record: at `steps_done` when every input
    /// that the finished steps read is unchanged; at the first step of a changed file that
    /// those steps read only in part (a damaged file replaced by a good copy); refused, with
    /// the file named, when a changed file was read in full or at every step.
    pub fn resume_point(&self, inputs: &[InputRecord]) -> Result<ResumePoint, String> {
        if inputs.len() != self.inputs.len() {
            return Err(format!(
                "the interrupted run read {} input files, this one reads {}",
                self.inputs.len(),
                inputs.len()
            ));
        }
        let mut point = ResumePoint {
            step: self.steps_done,
            counts: self.counts,
            replaced: Vec::new(),
        };
        for input in inputs {
            let unchanged = self
                .inputs
                .iter()
                .any(|r| r.identity == input.identity && r.steps == input.steps);
            if unchanged {
                continue;
            }
            let restore =
                "put back the file the interrupted run read, or start over with --overwrite";
            let what = format!(
                "input {} is not the file the interrupted run read (size or sampled content differ)",
                input.path.display()
            );
            match &input.steps {
                None if self.steps_done > 0 => {
                    return Err(format!(
                        "{what}, and every finished time step used it: {restore}"
                    ))
                }
                Some(steps) if steps.end <= self.steps_done => {
                    return Err(format!(
                        "{what}, and its time steps {} to {} are already finished: {restore}",
                        steps.start + 1,
                        steps.end
                    ))
                }
                Some(steps) if steps.start < point.step => {
                    let counts = self
                        .checkpoints
                        .iter()
                        .find(|(s, _)| *s == steps.start)
                        .map(|(_, c)| *c)
                        .ok_or_else(|| format!("{what}: {restore}"))?;
                    point.step = steps.start;
                    point.counts = counts;
                }
                _ => {}
            }
            point.replaced.push(input.path.clone());
        }
        Ok(point)
    }
}

/// The temporary file a record is written to before its rename.
pub fn temporary_path(path: &Path) -> PathBuf {
    let mut name = path.as_os_str().to_owned();
    name.push(".tmp");
    PathBuf::from(name)
}

/// Makes a rename or create in `path`'s directory durable (best effort: some file
/// systems refuse to fsync directories).
pub fn sync_parent(path: &Path) {
    let parent: PathBuf = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if let Ok(dir) = fs::File::open(parent) {
        let _ = dir.sync_all();
    }
}

#[cfg(test)]
mod tests;
