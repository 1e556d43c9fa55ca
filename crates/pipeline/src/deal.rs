//! Which time steps each rank of a job shared by several processes computes: round `r` gives
//! rank `k` step `first + r × ranks + k`. Collective writes need every rank in every round, so
//! a rank with no step in the last round is given that round's first step again.

use std::ops::Range;

/// One rank's share of the steps `first..steps`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Deal {
    first: usize,
    steps: usize,
    rank: usize,
    ranks: usize,
}

impl Deal {
    /// The share of `rank` (0-based, below `ranks`) of the steps `first..steps`.
    pub fn new(first: usize, steps: usize, rank: usize, ranks: usize) -> Deal {
        assert!(rank < ranks, "rank {rank} of {ranks} ranks");
        Deal {
            first,
            steps,
            rank,
            ranks,
        }
    }

    /// Rounds of the job: every rank writes one step in each.
    pub fn rounds(&self) -> usize {
        self.steps.saturating_sub(self.first).div_ceil(self.ranks)
    }

    /// The steps dealt to this rank alone.
    fn own(&self) -> std::iter::StepBy<Range<usize>> {
        (self.first + self.rank..self.steps.max(self.first + self.rank)).step_by(self.ranks)
    }

    /// The step this rank computes again in the last round, when it has none of its own there.
    pub fn repeat(&self) -> Option<usize> {
        let rounds = self.rounds();
        (self.own().len() < rounds).then(|| self.first + (rounds - 1) * self.ranks)
    }

    /// Whether `step` is this rank's repeat of another rank's step.
    pub fn is_repeat(&self, step: usize) -> bool {
        self.repeat() == Some(step)
    }

    /// The steps this rank computes, one per round, in order.
    pub fn steps(&self) -> impl Iterator<Item = usize> + Send {
        self.own().chain(self.repeat())
    }

    /// The steps written in round `round` (0-based), rank 0's first.
    pub fn round_steps(&self, round: usize) -> Range<usize> {
        let start = self.first + round * self.ranks;
        start.min(self.steps)..(start + self.ranks).min(self.steps)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_step_is_dealt_once_and_every_rank_writes_in_every_round() {
        for ranks in 1..6 {
            for first in 0..4 {
                for steps in first..first + 11 {
                    let deals: Vec<Deal> = (0..ranks)
                        .map(|k| Deal::new(first, steps, k, ranks))
                        .collect();
                    let rounds = deals[0].rounds();
                    let mut own: Vec<usize> = Vec::new();
                    for deal in &deals {
                        let dealt: Vec<usize> = deal.steps().collect();
                        assert_eq!(dealt.len(), rounds, "{deal:?}");
                        for (round, step) in dealt.iter().enumerate() {
                            // A step is written in its own round.
                            assert_eq!((step - first) / ranks, round, "{deal:?}");
                        }
                        own.extend(dealt.iter().filter(|s| !deal.is_repeat(**s)));
                    }
                    own.sort_unstable();
                    assert_eq!(own, (first..steps).collect::<Vec<_>>());
                    for deal in &deals {
                        for (round, step) in deal.steps().enumerate() {
                            assert!(deal.round_steps(round).contains(&step), "{deal:?}");
                        }
                    }
                    if rounds > 0 {
                        assert_eq!(deals[0].round_steps(rounds - 1).end, steps);
                    }
                }
            }
        }
    }

    #[test]
    fn the_last_round_is_filled_with_its_first_step() {
        // 5 steps on 3 ranks: rounds {0,1,2} and {3,4}; rank 2 computes step 3 again.
        let deal = Deal::new(0, 5, 2, 3);
        assert_eq!(deal.steps().collect::<Vec<_>>(), [2, 3]);
        assert!(deal.is_repeat(3) && !deal.is_repeat(2));
        assert_eq!(Deal::new(0, 5, 1, 3).steps().collect::<Vec<_>>(), [1, 4]);
        assert_eq!(deal.round_steps(0), 0..3);
        assert_eq!(deal.round_steps(1), 3..5);
        // Fewer steps than ranks: the ranks without one repeat the first.
        assert_eq!(Deal::new(0, 1, 1, 2).steps().collect::<Vec<_>>(), [0]);
    }
}
