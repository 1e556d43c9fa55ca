//! How `compute` shows its progress: an indicatif bar on terminals, plain lines in batch logs,
//! both with the rate written as a person would write it.

use acidscape_pipeline::Progress;
use indicatif::{ProgressBar, ProgressState, ProgressStyle};
use std::time::{Duration, Instant};

/// A rate of cells per second with an SI prefix and three significant digits, e.g.
/// "1.89 M cells/s", "512 k cells/s"; "-- cells/s" when there is no rate yet.
pub(crate) fn format_rate(cells_per_second: f64) -> String {
    if !cells_per_second.is_finite() || cells_per_second < 0.0 {
        return "-- cells/s".to_string();
    }
    // Each prefix takes over where the one below would round to 1000.
    let (value, prefix) = [(1e9, "G "), (1e6, "M "), (1e3, "k ")]
        .into_iter()
        .find(|(scale, _)| cells_per_second >= 999.5 * scale / 1e3)
        .map_or((cells_per_second, ""), |(scale, prefix)| {
            (cells_per_second / scale, prefix)
        });
    let decimals = if value >= 99.95 {
        0
    } else if value >= 9.995 {
        1
    } else {
        2
    };
    format!("{value:.decimals$} {prefix}cells/s")
}

const BAR_TEMPLATE: &str =
    "{elapsed_precise} [{bar:40}] {percent:>3}% {human_pos}/{human_len} cells, {rate}, ETA {eta}";

/// An indicatif bar for terminals.
#[derive(Default)]
pub(crate) struct BarProgress {
    bar: Option<ProgressBar>,
}

impl Progress for BarProgress {
    fn note(&mut self, text: &str) {
        match &self.bar {
            Some(bar) => bar.println(format!("acidscape: note: {text}")),
            None => eprintln!("acidscape: note: {text}"),
        }
    }
    fn begin(&mut self, total_cells: u64, done_cells: u64) {
        let bar = ProgressBar::new(total_cells);
        let style = ProgressStyle::with_template(BAR_TEMPLATE)
            .unwrap_or_else(|_| ProgressStyle::default_bar())
            .with_key(
                "rate",
                |state: &ProgressState, w: &mut dyn std::fmt::Write| {
                    let _ = w.write_str(&format_rate(state.per_sec()));
                },
            );
        bar.set_style(style.progress_chars("=> "));
        bar.set_position(done_cells);
        bar.reset_eta();
        self.bar = Some(bar);
    }
    fn advance(&mut self, cells: u64) {
        if let Some(bar) = &self.bar {
            bar.inc(cells);
        }
    }
    fn finish(&mut self) {
        if let Some(bar) = self.bar.take() {
            bar.finish_and_clear();
        }
    }
}

/// Plain log lines for batch jobs: every 10 s or every 5 % of the work, whichever comes
/// first, and once after the first time step is durable.
#[derive(Default)]
pub(crate) struct LogProgress {
    total: u64,
    done: u64,
    done_at_start: u64,
    started: Option<Instant>,
    last_line: Option<Instant>,
    last_percent_step: u64,
    steps: Option<(usize, usize)>,
    first_step_reported: bool,
}

const LOG_INTERVAL: Duration = Duration::from_secs(10);

impl LogProgress {
    fn line(&mut self, now: Instant) {
        self.last_line = Some(now);
        self.last_percent_step = self.done * 20 / self.total;
        let elapsed = self
            .started
            .map_or(0.0, |t| (now - t).as_secs_f64())
            .max(1e-9);
        let rate = (self.done - self.done_at_start) as f64 / elapsed;
        let remaining = (self.total - self.done.min(self.total)) as f64 / rate.max(1e-9);
        let steps = self
            .steps
            .map(|(done, total)| format!("; {done}/{total} time steps written"))
            .unwrap_or_default();
        eprintln!(
            "acidscape: {:5.1}% ({}/{} cells), {}, about {:.0} s left{steps}",
            100.0 * self.done as f64 / self.total as f64,
            self.done,
            self.total,
            format_rate(rate),
            remaining
        );
    }

    fn due(&self, now: Instant) -> bool {
        self.last_line.is_none_or(|t| now - t >= LOG_INTERVAL)
            || self.done * 20 / self.total > self.last_percent_step
    }
}

impl Progress for LogProgress {
    fn note(&mut self, text: &str) {
        eprintln!("acidscape: note: {text}");
    }
    fn begin(&mut self, total_cells: u64, done_cells: u64) {
        self.total = total_cells.max(1);
        self.done = done_cells;
        self.done_at_start = done_cells;
        self.started = Some(Instant::now());
        self.last_line = self.started;
        self.last_percent_step = done_cells * 20 / self.total;
        eprintln!("acidscape: computing {total_cells} cells ({done_cells} already done)");
    }
    fn advance(&mut self, cells: u64) {
        self.done += cells;
        let now = Instant::now();
        // Mid-step lines only on the clock; percentage lines wait for the step's end.
        if self.last_line.is_none_or(|t| now - t >= LOG_INTERVAL) {
            self.line(now);
        }
    }
    fn step_finished(&mut self, steps_done: usize, steps_total: usize) {
        self.steps = Some((steps_done, steps_total));
        let now = Instant::now();
        if !self.first_step_reported || self.due(now) {
            self.first_step_reported = true;
            self.line(now);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rates_read_as_a_person_writes_them() {
        // SI prefixes (k, M, G: BIPM, The International System of Units, 9th ed., table 7).
        assert_eq!(format_rate(1_886_797.772_8), "1.89 M cells/s");
        assert_eq!(format_rate(18_867_977.0), "18.9 M cells/s");
        assert_eq!(format_rate(188_679_770.0), "189 M cells/s");
        assert_eq!(format_rate(512_300.0), "512 k cells/s");
        assert_eq!(format_rate(2_560.0), "2.56 k cells/s");
        assert_eq!(format_rate(3.2e9), "3.20 G cells/s");
        assert_eq!(format_rate(42.0), "42.0 cells/s");
        assert_eq!(format_rate(0.0), "0.00 cells/s");
        // Rounding that would reach 1000 moves to the next prefix.
        assert_eq!(format_rate(999_600.0), "1.00 M cells/s");
        assert_eq!(format_rate(999_400.0), "999 k cells/s");
        assert_eq!(format_rate(999.7), "1.00 k cells/s");
        assert_eq!(format_rate(f64::NAN), "-- cells/s");
        assert_eq!(format_rate(f64::INFINITY), "-- cells/s");
    }

    #[test]
    fn the_bar_template_is_valid() {
        assert!(ProgressStyle::with_template(BAR_TEMPLATE).is_ok());
    }

    #[test]
    fn log_lines_come_every_five_percent_and_after_the_first_step() {
        let mut log = LogProgress::default();
        log.begin(100, 0);
        log.advance(3);
        log.step_finished(1, 100);
        assert!(log.first_step_reported);
        let after_first = log.last_percent_step;
        log.advance(1);
        log.step_finished(2, 100);
        assert_eq!(
            log.last_percent_step, after_first,
            "4 % is not yet a 5 % step"
        );
        log.advance(2);
        log.step_finished(3, 100);
        assert_eq!(log.last_percent_step, 1, "6 % crosses the first 5 % step");
    }
}
