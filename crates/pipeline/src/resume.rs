//! The progress record kept beside a partial output, so `--resume` can continue it.
//!
//! Plain text, rewritten (write, fsync, rename) after every finished time step:
//! ```text
//! acidscape-progress 1
//! steps_done 3
//! flag_counts 120 4 0 1 30
//! job acidscape 0.1.0
//! job input /data/run/dissic_2015.nc 123456 1733100000.123
//! ...
//! ```
//! `job` lines describe everything that decides the output's values; resuming requires
//! them to be identical.

use crate::cells::FlagCounts;
use crate::PipelineError;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

const HEADER: &str = "acidscape-progress 1";

/// What has been finished, and for which job.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ProgressRecord {
    pub steps_done: usize,
    pub counts: FlagCounts,
    pub job: Vec<String>,
}

impl ProgressRecord {
    /// Writes the record durably: to a temporary file, fsync, then rename over `path`.
    pub fn save(&self, path: &Path) -> Result<(), PipelineError> {
        let io_error = |e: std::io::Error| PipelineError::Output {
            path: path.to_path_buf(),
            message: format!("cannot write the progress record: {e}"),
        };
        let mut text = format!("{HEADER}\nsteps_done {}\nflag_counts", self.steps_done);
        for count in self.counts.as_array() {
            text.push_str(&format!(" {count}"));
        }
        text.push('\n');
        for line in &self.job {
            text.push_str("job ");
            text.push_str(line);
            text.push('\n');
        }
        let temporary = path.with_extension("tmp");
        let mut file = fs::File::create(&temporary).map_err(io_error)?;
        file.write_all(text.as_bytes()).map_err(io_error)?;
        file.sync_all().map_err(io_error)?;
        fs::rename(&temporary, path).map_err(io_error)?;
        sync_parent(path);
        Ok(())
    }

    /// Reads a record written by [`ProgressRecord::save`].
    pub fn load(path: &Path) -> Result<ProgressRecord, PipelineError> {
        let bad = |message: String| PipelineError::Resume {
            path: path.to_path_buf(),
            message,
        };
        let text = fs::read_to_string(path)
            .map_err(|e| bad(format!("cannot read the progress record: {e}")))?;
        let mut lines = text.lines();
        if lines.next() != Some(HEADER) {
            return Err(bad("the progress record is not one acidscape wrote".into()));
        }
        let steps_done = lines
            .next()
            .and_then(|l| l.strip_prefix("steps_done "))
            .and_then(|v| v.parse().ok())
            .ok_or_else(|| bad("the progress record has no step count".into()))?;
        let counts: Vec<u64> = lines
            .next()
            .and_then(|l| l.strip_prefix("flag_counts "))
            .map(|v| v.split(' ').filter_map(|n| n.parse().ok()).collect())
            .unwrap_or_default();
        let counts: [u64; 5] = counts
            .try_into()
            .map_err(|_| bad("the progress record has no flag counts".into()))?;
        let job = lines
            .filter_map(|l| l.strip_prefix("job "))
            .map(str::to_string)
            .collect();
        Ok(ProgressRecord {
            steps_done,
            counts: FlagCounts::from_array(counts),
            job,
        })
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
}

/// Describes a file for the job record: path, size and modification time.
pub fn file_identity(path: &Path) -> String {
    match fs::metadata(path) {
        Ok(meta) => {
            let modified = meta
                .modified()
                .ok()
                .and_then(|t| t.duration_since(std::time::UNIX_EPOCH).ok())
                .map(|d| format!("{}.{:09}", d.as_secs(), d.subsec_nanos()))
                .unwrap_or_else(|| "unknown".into());
            format!("input {} {} {modified}", path.display(), meta.len())
        }
        Err(e) => format!("input {} unreadable ({e})", path.display()),
    }
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
mod tests {
    use super::*;

    #[test]
    fn saves_and_loads() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(".out.nc.partial.progress");
        let record = ProgressRecord {
            steps_done: 3,
            counts: FlagCounts::from_array([10, 2, 1, 0, 7]),
            job: vec!["acidscape 0.1.0".into(), "input /x.nc 10 5.0".into()],
        };
        record.save(&path).unwrap();
        assert_eq!(ProgressRecord::load(&path).unwrap(), record);
        assert_eq!(record.job_difference(&record.job), None);
        let other = vec![
            "acidscape 0.1.0".to_string(),
            "input /x.nc 11 5.0".to_string(),
        ];
        let why = record.job_difference(&other).unwrap();
        assert!(why.contains("input /x.nc 11"), "{why}");
    }

    #[test]
    fn rejects_foreign_files() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("p");
        fs::write(&path, "hello\n").unwrap();
        assert!(ProgressRecord::load(&path).is_err());
    }
}
