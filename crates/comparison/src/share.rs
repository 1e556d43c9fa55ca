//! One comparison shared by several processes (e.g. the ranks of an MPI job): each takes a
//! band of rows, reads only those rows of every run, and all write the one output together;
//! the regional sums are exchanged and merged exactly. The processes are reached through
//! [`Team`], which the caller implements (the default build has only [`OneProcess`]), so this
//! crate needs no MPI.

use crate::error::{ComparisonError, Result};
use crate::stream::blocks;
use acidscape_analysis::regions::RegionStatistics;
pub use netcdf::FileMut;
use std::ops::Range;
use std::path::Path;

/// The processes that share one comparison. Every method but [`Team::rank`] and
/// [`Team::size`] is collective: every process calls it, in the same order.
pub trait Team {
    /// This process, 0 to `size() - 1`; process 0 writes the table and places the outputs.
    fn rank(&self) -> usize;
    /// Processes in the team.
    fn size(&self) -> usize;
    /// Creates (replacing) a netCDF-4 file that every process writes.
    fn create(&self, path: &Path) -> std::result::Result<FileMut, String>;
    /// Readies every variable of the file, once defined, for writes that every process makes
    /// together (each writes its part; a process with no part writes nothing, but takes part).
    fn write_together(&self, file: &FileMut, path: &Path) -> std::result::Result<(), String>;
    /// Every process's bytes, in process order, on every process.
    fn exchange(&self, bytes: &[u8]) -> Vec<Vec<u8>>;
}

/// A comparison in one process.
pub struct OneProcess;

impl Team for OneProcess {
    fn rank(&self) -> usize {
        0
    }

    fn size(&self) -> usize {
        1
    }

    fn create(&self, path: &Path) -> std::result::Result<FileMut, String> {
        netcdf::create(path).map_err(|e| e.to_string())
    }

    fn write_together(&self, _: &FileMut, _: &Path) -> std::result::Result<(), String> {
        Ok(())
    }

    fn exchange(&self, bytes: &[u8]) -> Vec<Vec<u8>> {
        vec![bytes.to_vec()]
    }
}

/// The rows of process `rank` of `size`: a band of whole units of `unit` rows (the output's
/// chunks, so that no two processes write one chunk), the units dealt as evenly as they go
/// (counts differ by at most one, the earlier processes taking the extra ones); every row
/// belongs to exactly one process.
pub fn rows_of(rows: usize, unit: usize, rank: usize, size: usize) -> Range<usize> {
    let units = rows.div_ceil(unit.max(1));
    let size = size.max(1);
    let (each, extra) = (units / size, units % size);
    let first = |r: usize| ((r * each + r.min(extra)) * unit).min(rows);
    first(rank)..first(rank + 1)
}

/// The blocks of rows process `rank` works through: its band in blocks of at most
/// `rows_per_block` rows, then empty blocks (at the band's end) up to the most blocks any
/// process has, so that every process makes the same writes in the same order.
pub fn turns(
    rows: usize,
    unit: usize,
    rows_per_block: usize,
    rank: usize,
    size: usize,
) -> Vec<Range<usize>> {
    let count = |r: usize| {
        rows_of(rows, unit, r, size)
            .len()
            .div_ceil(rows_per_block.max(1))
    };
    let most = (0..size.max(1)).map(count).max().unwrap_or(0);
    let band = rows_of(rows, unit, rank, size);
    let mut out: Vec<Range<usize>> = blocks(band.len(), rows_per_block)
        .map(|b| band.start + b.start..band.start + b.end)
        .collect();
    out.resize(most, band.end..band.end);
    out
}

/// The outcome of a step that each process took on its own, the same on every process: an
/// error of any process ends the comparison on all of them, with the first failing process's
/// message.
pub fn agree<T>(team: &dyn Team, outcome: Result<T>) -> Result<T> {
    let said = match &outcome {
        Ok(_) => Vec::new(),
        Err(e) => e.to_string().into_bytes(),
    };
    let heard = team.exchange(&said);
    match heard.iter().position(|m| !m.is_empty()) {
        None => outcome,
        Some(rank) => {
            let message = String::from_utf8_lossy(&heard[rank]).into_owned();
            let message = if team.size() > 1 {
                format!("{message} (on rank {rank} of {})", team.size())
            } else {
                message
            };
            Err(ComparisonError::Together { message })
        }
    }
}

/// Adds every other process's regional sums (per time step) to this process's, exactly, so
/// that every process holds the sums over the whole grid.
pub fn merge_regional(team: &dyn Team, steps: &mut [RegionStatistics]) -> Result<()> {
    if team.size() == 1 {
        return Ok(());
    }
    let bytes = regional_bytes(steps);
    let lost = || ComparisonError::Together {
        message: "regional sums from another process do not fit this one's".into(),
    };
    for (rank, theirs) in team.exchange(&bytes).iter().enumerate() {
        if rank == team.rank() {
            continue;
        }
        let values: Vec<f64> = theirs
            .chunks_exact(8)
            .map(|b| f64::from_le_bytes(b.try_into().unwrap_or_default()))
            .collect();
        let mut rest = values.as_slice();
        for stats in steps.iter_mut() {
            let (&len, tail) = rest.split_first().ok_or_else(lost)?;
            let len = len as usize;
            if len > tail.len() {
                return Err(lost());
            }
            stats.merge_flat(&tail[..len]).map_err(|_| lost())?;
            rest = &tail[len..];
        }
        if !rest.is_empty() {
            return Err(lost());
        }
    }
    Ok(())
}

/// Regional sums per time step as bytes to send: per step, the length of its flat list of
/// exact sums (see [`RegionStatistics::to_flat`]), then the list (little-endian `f64`).
fn regional_bytes(steps: &[RegionStatistics]) -> Vec<u8> {
    let mut flat = Vec::new();
    for stats in steps {
        let sums = stats.to_flat();
        flat.push(sums.len() as f64);
        flat.extend(sums);
    }
    flat.iter().flat_map(|v| v.to_le_bytes()).collect()
}

#[cfg(test)]
mod tests;
