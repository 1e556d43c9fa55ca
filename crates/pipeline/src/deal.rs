//! Which rows of which time steps each rank of a job shared by several processes computes.
//! While at least as many steps are left as there are ranks, steps are dealt whole in rounds:
//! round `r` gives rank `k` step `first + r × ranks + k`. Each step left after those (fewer
//! than the ranks) is split into blocks of whole output chunks, at most a slab each, dealt out
//! in turn so that every rank has work; unless the blocks would take rank 0 longer than one
//! more round of whole steps (too few chunks per step), when the steps left are dealt whole in
//! one last round. Collective writes need every rank in every write, so a rank with nothing
//! left in a round (or a step's turn) computes the round's first step (the turn's first
//! block) again.

use crate::plan::SlabPlan;
use std::ops::Range;

/// How the plan cuts the rows of a time step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct StepRows {
    /// Rows of the grid.
    pub rows: usize,
    /// Rows of one output chunk.
    pub chunk: usize,
    /// Rows of one slab (a multiple of `chunk` when below `rows`).
    pub per_slab: usize,
}

impl StepRows {
    /// The rows of `plan`'s time steps.
    pub fn of(plan: &SlabPlan) -> StepRows {
        StepRows {
            rows: plan.shape[1],
            chunk: plan.chunk[1],
            per_slab: plan.rows_per_slab,
        }
    }
}

/// One slab of a rank's work: rows of one time step.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Unit {
    pub step: usize,
    pub rows: Range<usize>,
    /// Another rank's block computed again (and written with the same values) only to take
    /// part in the collective write: its counts and extent are left out.
    pub repeat: bool,
    /// The last slab of a round: after it every rank flushes the round's steps.
    pub closes_round: bool,
}

/// One rank's share of the steps `first..steps`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Deal {
    first: usize,
    steps: usize,
    rank: usize,
    ranks: usize,
    rows: StepRows,
}

impl Deal {
    /// The share of `rank` (0-based, below `ranks`) of the steps `first..steps`.
    pub fn new(first: usize, steps: usize, rank: usize, ranks: usize, rows: StepRows) -> Deal {
        assert!(rank < ranks, "rank {rank} of {ranks} ranks");
        Deal {
            first,
            steps: steps.max(first),
            rank,
            ranks,
            rows,
        }
    }

    /// Rounds of whole steps, one step per rank each (the last one not full when the steps
    /// left are not split).
    fn whole_rounds(&self) -> usize {
        let left = self.steps - self.first;
        let split_left = left % self.ranks;
        // Rank 0 holds the largest blocks: split only when its rows over the split steps
        // are fewer than one step's.
        let own: usize = self
            .blocks()
            .iter()
            .step_by(self.ranks)
            .map(|b| b.len())
            .sum();
        if split_left * own < self.rows.rows {
            left / self.ranks
        } else {
            left.div_ceil(self.ranks)
        }
    }

    /// The first step split into blocks of rows.
    fn first_split(&self) -> usize {
        (self.first + self.whole_rounds() * self.ranks).min(self.steps)
    }

    /// Rounds of the job (whole steps, then one per split step); all ranks flush together
    /// at the end of each.
    pub fn rounds(&self) -> usize {
        self.whole_rounds() + (self.steps - self.first_split())
    }

    /// Whether round `round` (0-based) is one step split among the ranks.
    pub fn is_split(&self, round: usize) -> bool {
        round >= self.whole_rounds()
    }

    /// The steps finished in round `round` (0-based), rank 0's first.
    pub fn round_steps(&self, round: usize) -> Range<usize> {
        let start = if self.is_split(round) {
            self.first_split() + (round - self.whole_rounds())
        } else {
            self.first + round * self.ranks
        };
        let end = if self.is_split(round) {
            start + 1
        } else {
            start + self.ranks
        };
        start.min(self.steps)..end.min(self.steps)
    }

    /// The blocks a split step is cut into: whole output chunks, at most a slab each, shared
    /// as evenly as they go among a multiple of the ranks (or one chunk each, when fewer).
    fn blocks(&self) -> Vec<Range<usize>> {
        let StepRows {
            rows,
            chunk,
            per_slab,
        } = self.rows;
        let chunk = chunk.max(1);
        let chunks = rows.div_ceil(chunk);
        if chunks == 0 {
            return Vec::new();
        }
        let per_block = if per_slab >= rows {
            chunks
        } else {
            (per_slab / chunk).max(1)
        };
        let turns = chunks.div_ceil(per_block).div_ceil(self.ranks);
        let count = (turns * self.ranks).min(chunks);
        let (size, longer) = (chunks / count, chunks % count);
        let edge = |block: usize| (block * size + block.min(longer)) * chunk;
        (0..count)
            .map(|block| edge(block)..edge(block + 1).min(rows))
            .collect()
    }

    /// This rank's slabs, in the order computed and written.
    pub fn units(&self) -> Vec<Unit> {
        let mut units = Vec::new();
        let StepRows { rows, per_slab, .. } = self.rows;
        let per_slab = per_slab.max(1);
        for round in 0..self.whole_rounds() {
            let own = self.first + round * self.ranks + self.rank;
            let repeat = own >= self.steps;
            let step = if repeat {
                self.first + round * self.ranks
            } else {
                own
            };
            units.extend((0..rows).step_by(per_slab).map(|start| Unit {
                step,
                rows: start..(start + per_slab).min(rows),
                repeat,
                closes_round: start + per_slab >= rows,
            }));
        }
        let blocks = self.blocks();
        let turns = blocks.len().div_ceil(self.ranks);
        for step in self.first_split()..self.steps {
            for turn in 0..turns {
                let own = turn * self.ranks + self.rank;
                let repeat = own >= blocks.len();
                let block = if repeat { turn * self.ranks } else { own };
                units.push(Unit {
                    step,
                    rows: blocks[block].clone(),
                    repeat,
                    closes_round: turn + 1 == turns,
                });
            }
        }
        units
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rows, chunk rows and slab rows as plans make them: slabs of whole chunks below a step.
    fn step_rows() -> Vec<StepRows> {
        let mut all = Vec::new();
        for rows in 1..14 {
            for chunk in 1..=rows {
                for per_slab in (chunk..rows).step_by(chunk).chain([rows]) {
                    all.push(StepRows {
                        rows,
                        chunk,
                        per_slab,
                    });
                }
            }
        }
        all
    }

    #[test]
    fn every_row_of_every_step_is_dealt_once_in_whole_chunks_within_a_slab() {
        for rows in step_rows() {
            for ranks in 1..6 {
                for first in 0..3 {
                    for steps in first..first + 8 {
                        check(first, steps, ranks, rows);
                    }
                }
            }
        }
    }

    fn check(first: usize, steps: usize, ranks: usize, rows: StepRows) {
        let deals: Vec<Deal> = (0..ranks)
            .map(|k| Deal::new(first, steps, k, ranks, rows))
            .collect();
        let shares: Vec<Vec<Unit>> = deals.iter().map(Deal::units).collect();
        let what = format!("{first}..{steps} on {ranks} ranks, {rows:?}");
        let mut cells: Vec<(usize, usize)> = Vec::new();
        for units in &shares {
            for unit in units {
                assert!(
                    !unit.rows.is_empty() && unit.rows.len() <= rows.per_slab,
                    "{what}"
                );
                for edge in [unit.rows.start, unit.rows.end] {
                    assert!(edge % rows.chunk == 0 || edge == rows.rows, "{what}");
                }
                if !unit.repeat {
                    cells.extend(unit.rows.clone().map(|row| (unit.step, row)));
                }
            }
        }
        cells.sort_unstable();
        let all: Vec<(usize, usize)> = (first..steps)
            .flat_map(|step| (0..rows.rows).map(move |row| (step, row)))
            .collect();
        assert_eq!(cells, all, "{what}");
        // Every rank writes as many slabs as the others between the same flushes.
        let closes = |units: &Vec<Unit>| -> Vec<usize> {
            let ends = units.iter().enumerate().filter(|(_, u)| u.closes_round);
            ends.map(|(i, _)| i).collect()
        };
        let rounds = deals[0].rounds();
        for (deal, units) in deals.iter().zip(&shares) {
            assert_eq!(closes(units), closes(&shares[0]), "{what}");
            assert_eq!(closes(units).len(), rounds, "{what}");
            assert!(units.last().is_none_or(|u| u.closes_round), "{what}");
            // Each round's slabs are of the steps it finishes.
            let mut round = 0;
            for unit in units {
                assert!(deal.round_steps(round).contains(&unit.step), "{what}");
                round += usize::from(unit.closes_round);
            }
        }
        if rounds > 0 {
            assert_eq!(deals[0].round_steps(rounds - 1).end, steps, "{what}");
        }
        // Split steps: every rank has work, and the ranks' rows differ by at most a block;
        // rank 0 computes fewer rows than one more round of whole steps would take.
        let split: Vec<usize> = (0..rounds).filter(|&r| deals[0].is_split(r)).collect();
        let in_split = |u: &&Unit| u.step >= deals[0].first_split();
        let rank_0: usize = shares[0]
            .iter()
            .filter(in_split)
            .map(|u| u.rows.len())
            .sum();
        if !split.is_empty() {
            assert!(rank_0 < rows.rows, "{what}");
        }
        for round in split {
            let step = deals[0].round_steps(round).start;
            let own_rows = |units: &Vec<Unit>| -> usize {
                let own = units.iter().filter(|u| u.step == step && !u.repeat);
                own.map(|u| u.rows.len()).sum()
            };
            let loads: Vec<usize> = shares.iter().map(own_rows).collect();
            let block = deals[0].blocks().iter().map(|b| b.len()).max().unwrap();
            let (least, most) = (loads.iter().min(), loads.iter().max());
            assert!(most.unwrap() - least.unwrap() <= block, "{what}: {loads:?}");
            if rows.rows.div_ceil(rows.chunk) >= ranks {
                assert!(*least.unwrap() > 0, "{what}: {loads:?}");
            }
        }
    }

    #[test]
    fn steps_are_whole_while_every_rank_has_one_then_split_in_blocks() {
        // 5 steps of 12 rows (chunks of 2, slabs of 6) on 3 ranks: steps 0..3 whole, then
        // steps 3 and 4 in blocks of 4 rows.
        let rows = StepRows {
            rows: 12,
            chunk: 2,
            per_slab: 6,
        };
        let rank_1 = Deal::new(0, 5, 1, 3, rows);
        let units: Vec<(usize, Range<usize>)> = rank_1
            .units()
            .into_iter()
            .map(|u| (u.step, u.rows))
            .collect();
        assert_eq!(units, [(1, 0..6), (1, 6..12), (3, 4..8), (4, 4..8)]);
        assert_eq!(rank_1.rounds(), 3);
        assert_eq!(rank_1.round_steps(0), 0..3);
        assert_eq!(rank_1.round_steps(1), 3..4);
        assert_eq!(rank_1.round_steps(2), 4..5);
        // One step of 3 chunks on 2 ranks: 2 blocks of 2 chunks; of 1 chunk on 2 ranks, rank 1
        // computes rank 0's block again.
        let rows = StepRows {
            rows: 5,
            chunk: 2,
            per_slab: 5,
        };
        let rank_1 = Deal::new(0, 1, 1, 2, rows).units();
        assert_eq!((rank_1[0].rows.clone(), rank_1[0].repeat), (4..5, false));
        let one_chunk = StepRows { chunk: 5, ..rows };
        let rank_1 = Deal::new(0, 1, 1, 2, one_chunk).units();
        assert_eq!((rank_1[0].rows.clone(), rank_1[0].repeat), (0..5, true));
        // One chunk per step: blocks would gain nothing, the steps left go whole in one round
        // (5 steps on 3 ranks: 2 rounds, rank 2 computes step 3 again).
        let whole = StepRows {
            rows: 12,
            chunk: 12,
            per_slab: 12,
        };
        let rank_2 = Deal::new(0, 5, 2, 3, whole);
        assert_eq!(rank_2.rounds(), 2);
        let units: Vec<(usize, bool)> = rank_2.units().iter().map(|u| (u.step, u.repeat)).collect();
        assert_eq!(units, [(2, false), (3, true)]);
        assert_eq!(rank_2.round_steps(1), 3..5);
        assert!(!rank_2.is_split(1));
    }
}
