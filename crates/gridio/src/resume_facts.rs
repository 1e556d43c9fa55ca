//! What a resumed job needs to know of a run: which time steps read each input file (to tell
//! the files it has already consumed from those it has not) and the joined time axis.

use crate::run::Run;
use crate::source::VarSource;
use crate::vertical::Vertical;
use std::ops::Range;

impl Run {
    /// For each input file, in [`Run::input_files`] order, the time steps whose slabs read
    /// it: `Some(steps)` for a file that holds only those steps of time-varying variables,
    /// `None` for a file read at every step or whose use is not tied to steps (static
    /// variables, coordinates copied to outputs, a file no slab reads).
    pub fn steps_of_files(&self) -> Vec<Option<Range<usize>>> {
        let mut sources: Vec<&VarSource> = self.inputs.iter().map(|i| &i.source).collect();
        sources.extend(&self.horizontal.latitude);
        if let Vertical::Parametric(p) = &self.vertical {
            sources.extend([&p.eta, &p.depth]);
        }
        let mut steps: Vec<Option<Range<usize>>> = vec![None; self.paths.len()];
        let mut read_at_every_step = vec![false; self.paths.len()];
        let mut read_by_steps = vec![false; self.paths.len()];
        for source in sources {
            for piece in &source.pieces {
                if !source.has_time() {
                    read_at_every_step[piece.file] = true;
                    continue;
                }
                let range = piece.first_step..piece.first_step + piece.steps;
                read_by_steps[piece.file] = true;
                steps[piece.file] = Some(match steps[piece.file].take() {
                    Some(known) => known.start.min(range.start)..known.end.max(range.end),
                    None => range,
                });
            }
        }
        // The reference file's coordinates are copied into the output when it is defined,
        // before the first step: it is read from step 0 on. (So is every file's time
        // coordinate; a job compares the joined time axis itself.)
        if let Some(range) = &mut steps[self.grid_file] {
            range.start = 0;
        }
        steps
            .into_iter()
            .enumerate()
            .map(|(file, range)| range.filter(|_| read_by_steps[file] && !read_at_every_step[file]))
            .collect()
    }

    /// The joined time coordinate, in the run's common units (empty for a run without time).
    pub fn time_values(&self) -> &[f64] {
        self.time.as_ref().map_or(&[], |t| t.values.as_slice())
    }
}
