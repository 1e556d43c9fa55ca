//! How often a run is sampled, and where its time steps break that rhythm.
//!
//! With CF time bounds (CF conventions, section 7.1 "Cell boundaries") each step's lower
//! bound must equal the previous step's upper bound. Without bounds the sampling is
//! inferred from the shortest step, which a missing step cannot lengthen, and read in the
//! run's own calendar: monthly and yearly steps are counted in calendar months and years
//! (whose lengths differ), fixed steps (daily, 5-daily, 6-hourly ...) in days.

use crate::calendar::{DateTime, TimeAxis};
use std::fmt;

/// The rhythm of a run's time steps.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Sampling {
    /// One step: nothing to compare.
    Single,
    /// Every `n` calendar months.
    Months(u32),
    /// Every `n` calendar years.
    Years(u32),
    /// A fixed step [days].
    Days(f64),
}

impl fmt::Display for Sampling {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Sampling::Single => write!(f, "a single time step"),
            Sampling::Months(1) => write!(f, "monthly"),
            Sampling::Months(n) => write!(f, "every {n} months"),
            Sampling::Years(1) => write!(f, "yearly"),
            Sampling::Years(n) => write!(f, "every {n} years"),
            Sampling::Days(d) if (d - 1.0).abs() < 1e-9 => write!(f, "daily"),
            Sampling::Days(d) if *d >= 1.0 => write!(f, "every {} days", trim(*d)),
            Sampling::Days(d) => write!(f, "every {} hours", trim(d * 24.0)),
        }
    }
}

fn trim(x: f64) -> String {
    let s = format!("{x:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Where the rhythm breaks: between step `index - 1` and step `index`.
#[derive(Clone, Debug, PartialEq)]
pub struct TimeBreak {
    pub index: usize,
    /// What was found, in words (e.g. "2 months", "the bounds leave 31 days uncovered").
    pub found: String,
}

/// The inferred sampling and every break of it.
#[derive(Clone, Debug, PartialEq)]
pub struct SamplingCheck {
    pub sampling: Sampling,
    /// Whether the check used the run's time bounds.
    pub from_bounds: bool,
    pub breaks: Vec<TimeBreak>,
}

/// Month count since year 0 (for comparing calendar months).
fn month_index(d: &DateTime) -> i64 {
    d.year * 12 + i64::from(d.month) - 1
}

fn at_month_start(d: &DateTime) -> bool {
    d.day == 1 && d.hour == 0 && d.minute == 0 && d.second.abs() < 1e-3
}

/// Calendar months (or years) spanned by an interval whose ends are month starts.
fn calendar_span(axis: &TimeAxis, lower: f64, upper: f64) -> Option<Sampling> {
    let (a, b) = (axis.to_datetime(lower).ok()?, axis.to_datetime(upper).ok()?);
    if !(at_month_start(&a) && at_month_start(&b)) {
        return None;
    }
    let months = month_index(&b) - month_index(&a);
    if months <= 0 {
        return None;
    }
    Some(if months % 12 == 0 && a.month == 1 {
        Sampling::Years((months / 12) as u32)
    } else {
        Sampling::Months(months as u32)
    })
}

/// Sampling from the shortest step [days]: calendar months or years when it has their
/// length (27-32 days per month, 359-367 days per year), else a fixed step.
fn from_shortest_step(days: f64) -> Sampling {
    for n in [1u32, 2, 3, 4, 6] {
        let n_f = f64::from(n);
        if (27.0 * n_f..=32.0 * n_f).contains(&days) {
            return Sampling::Months(n);
        }
    }
    let years = (days / 365.0).round().max(1.0);
    if (359.0 * years..=367.0 * years).contains(&days) {
        return Sampling::Years(years as u32);
    }
    Sampling::Days(days)
}

fn describe_days(days: f64) -> String {
    if days >= 1.0 {
        format!("{} days", trim(days))
    } else {
        format!("{} hours", trim(days * 24.0))
    }
}

/// Infers the sampling of `values` (in `axis` units, increasing) and finds every break,
/// using `bounds` (2 per step) when given.
pub fn check_sampling(axis: &TimeAxis, values: &[f64], bounds: Option<&[f64]>) -> SamplingCheck {
    let day = 86_400.0 / axis.unit.seconds();
    // One second, the tolerance for comparing instants (values are floating point).
    let tolerance = day / 86_400.0;
    if let Some(b) = bounds.filter(|b| b.len() == 2 * values.len() && !values.is_empty()) {
        let sampling = if values.len() == 1 {
            Sampling::Single
        } else {
            calendar_span(axis, b[0], b[1]).unwrap_or(Sampling::Days((b[1] - b[0]) / day))
        };
        let breaks = (1..values.len())
            .filter_map(|i| {
                let (previous_upper, lower) = (b[2 * i - 1], b[2 * i]);
                let gap = lower - previous_upper;
                (gap.abs() > tolerance).then(|| TimeBreak {
                    index: i,
                    found: if gap > 0.0 {
                        format!(
                            "the time bounds leave {} uncovered",
                            describe_days(gap / day)
                        )
                    } else {
                        format!("the time bounds overlap by {}", describe_days(-gap / day))
                    },
                })
            })
            .collect();
        return SamplingCheck {
            sampling,
            from_bounds: true,
            breaks,
        };
    }
    let steps: Vec<f64> = values.windows(2).map(|w| (w[1] - w[0]) / day).collect();
    let Some(shortest) = steps.iter().copied().filter(|s| *s > 0.0).reduce(f64::min) else {
        return SamplingCheck {
            sampling: Sampling::Single,
            from_bounds: false,
            breaks: Vec::new(),
        };
    };
    let sampling = from_shortest_step(shortest);
    let dates: Vec<Option<DateTime>> = match sampling {
        Sampling::Months(_) | Sampling::Years(_) => {
            values.iter().map(|v| axis.to_datetime(*v).ok()).collect()
        }
        _ => Vec::new(),
    };
    let mut breaks = Vec::new();
    for (i, step) in steps.iter().enumerate() {
        let found = match sampling {
            Sampling::Months(n) | Sampling::Years(n) => {
                let (Some(a), Some(b)) = (&dates[i], &dates[i + 1]) else {
                    continue;
                };
                let (span, want, unit) = match sampling {
                    Sampling::Months(_) => {
                        (month_index(b) - month_index(a), i64::from(n), "month(s)")
                    }
                    _ => (b.year - a.year, i64::from(n), "year(s)"),
                };
                (span != want).then(|| format!("the steps are {span} calendar {unit} apart"))
            }
            Sampling::Days(d) => ((step - d).abs() > 1e-3 * d + tolerance / day)
                .then(|| format!("the steps are {} apart", describe_days(*step))),
            Sampling::Single => None,
        };
        if let Some(found) = found {
            breaks.push(TimeBreak {
                index: i + 1,
                found,
            });
        }
    }
    SamplingCheck {
        sampling,
        from_bounds: false,
        breaks,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn axis(calendar: &str) -> TimeAxis {
        TimeAxis::parse("days since 2000-01-01", Some(calendar)).unwrap()
    }

    #[test]
    fn shortest_step_classes() {
        assert_eq!(from_shortest_step(28.0), Sampling::Months(1));
        assert_eq!(from_shortest_step(30.0), Sampling::Months(1));
        assert_eq!(from_shortest_step(90.0), Sampling::Months(3));
        assert_eq!(from_shortest_step(360.0), Sampling::Years(1));
        assert_eq!(from_shortest_step(366.0), Sampling::Years(1));
        assert_eq!(from_shortest_step(1.0), Sampling::Days(1.0));
        assert_eq!(from_shortest_step(0.25).to_string(), "every 6 hours");
        assert_eq!(from_shortest_step(5.0).to_string(), "every 5 days");
    }

    #[test]
    fn a_missing_step_among_few_is_found() {
        // Three mid-month values of a noleap year with February missing: the median step
        // (44.5 days) would hide it, the calendar does not.
        let a = axis("noleap");
        let v = [15.5, 74.5, 105.0];
        let check = check_sampling(&a, &v, None);
        assert_eq!(check.sampling, Sampling::Months(1));
        assert_eq!(check.breaks.len(), 1);
        assert_eq!(check.breaks[0].index, 1);
    }
}
