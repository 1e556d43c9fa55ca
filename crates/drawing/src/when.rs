//! Which time step to draw: by index, calendar year, date, or (outputs of compare) window,
//! and the words the title gives it.

use crate::error::{DrawError, Result};
use crate::naming::Meaning;
use crate::options::WhenRequest;
use crate::source::Source;
use acidscape_gridio::calendar::DateTime;
use acidscape_gridio::{FieldInfo, TimeSteps};

/// The chosen step and how the title names it ("2095", "2095-04", "late window
/// (2081–2100 mean)"; empty for a field without time).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Moment {
    pub step: usize,
    pub words: String,
}

/// Resolves the time options for the variable `info`.
pub(crate) fn choose_step(
    source: &Source,
    info: &FieldInfo,
    meaning: &Meaning,
    when: &WhenRequest,
) -> Result<Moment> {
    let given = [
        when.step.is_some(),
        when.year.is_some(),
        when.date.is_some(),
        when.window.is_some(),
    ]
    .into_iter()
    .filter(|&g| g)
    .count();
    if given > 1 {
        return Err(DrawError::option(
            "--step/--year/--date/--window",
            "give at most one of them",
        ));
    }
    let time = match source.file.time() {
        Some(time) if info.has_time => time,
        _ if given == 0 => {
            return Ok(Moment {
                step: 0,
                words: String::new(),
            })
        }
        _ => {
            return Err(DrawError::variable(
                source.path(),
                &info.name,
                "has no time axis; leave out --step, --year, --date and --window",
            ))
        }
    };
    let step = if let Some(name) = &when.window {
        source.window(name)?.0
    } else if source.compared.is_some() && (when.year.is_some() || when.date.is_some()) {
        return Err(DrawError::option(
            "--year/--date",
            format!(
                "{} is an output of compare, with one step per window: choose one with --window",
                source.path().display()
            ),
        ));
    } else if let Some(step) = when.step {
        check_step(source, time, step)?
    } else if let Some(year) = when.year {
        step_of_year(source, time, year)?
    } else if let Some(date) = &when.date {
        step_of_date(source, time, date)?
    } else if time.steps() == 1 {
        0
    } else {
        return Err(DrawError::variable(
            source.path(),
            &info.name,
            format!("has {}; choose one", choices(source, time)),
        ));
    };
    Ok(Moment {
        step,
        words: step_words(source, time, meaning, step)?,
    })
}

/// What a user can choose from, e.g. "86 time steps (years 2015 to 2100): --step N, --year
/// YYYY or --date YYYY-MM-DD".
fn choices(source: &Source, time: &TimeSteps) -> String {
    match &source.compared {
        Some(c) => format!(
            "{} time windows: --window NAME with NAME one of {}",
            time.steps(),
            crate::source::window_list(&c.windows)
        ),
        None => format!(
            "{} time steps (years {} to {}): --step N (0 to {}), --year YYYY or --date YYYY-MM-DD",
            time.steps(),
            time.years.first().copied().unwrap_or_default(),
            time.years.last().copied().unwrap_or_default(),
            time.steps() - 1
        ),
    }
}

fn check_step(source: &Source, time: &TimeSteps, step: usize) -> Result<usize> {
    if step < time.steps() {
        Ok(step)
    } else {
        Err(DrawError::option(
            "--step",
            format!(
                "{}: step {step} is outside the file's {}",
                source.path().display(),
                choices(source, time)
            ),
        ))
    }
}

fn step_of_year(source: &Source, time: &TimeSteps, year: i64) -> Result<usize> {
    let steps: Vec<usize> = (0..time.steps())
        .filter(|&k| time.years[k] == year)
        .collect();
    match steps.as_slice() {
        [one] => Ok(*one),
        [] => Err(DrawError::option(
            "--year",
            format!(
                "{} has no step in {year}: it has {}",
                source.path().display(),
                choices(source, time)
            ),
        )),
        [first, .., last] => Err(DrawError::option(
            "--year",
            format!(
                "{} has {} steps in {year} (steps {first} to {last}); choose one with --date YYYY-MM-DD or --step N",
                source.path().display(),
                steps.len()
            ),
        )),
    }
}

fn step_of_date(source: &Source, time: &TimeSteps, text: &str) -> Result<usize> {
    let fail = |why: String| DrawError::option("--date", format!("'{text}': {why}"));
    let parts: Vec<&str> = text.trim().split('-').collect();
    let [year, month, day] = parts.as_slice() else {
        return Err(fail("expected YYYY-MM-DD".into()));
    };
    let (Ok(year), Ok(month), Ok(day)) = (year.parse(), month.parse(), day.parse()) else {
        return Err(fail("expected YYYY-MM-DD".into()));
    };
    let value = time
        .axis
        .from_datetime(&DateTime::date(year, month, day))
        .map_err(|e| fail(format!("not a date of the file's calendar: {e}")))?;
    (0..time.steps())
        .find(|&k| {
            let [a, b] = time.bounds[k];
            a.min(b) <= value && value < a.max(b)
        })
        .ok_or_else(|| {
            fail(format!(
                "no step of {} holds it; it has {}",
                source.path().display(),
                choices(source, time)
            ))
        })
}

/// "2095" for an annual step, "2095-04" for a monthly one, the middle date otherwise; for a
/// window "late window (2081–2100 mean)".
fn step_words(source: &Source, time: &TimeSteps, meaning: &Meaning, step: usize) -> Result<String> {
    if let Some(compared) = &source.compared {
        let w = &compared.windows[step];
        let statistic = match meaning.statistic_words() {
            "mean" => " mean".to_string(),
            other => format!(", {other}"),
        };
        return Ok(format!(
            "{} window ({}–{}{statistic})",
            w.name, w.first_year, w.last_year
        ));
    }
    let middle = time.midpoint(step)?;
    let days = time.lengths_days[step];
    Ok(if days >= 359.0 {
        format!("{}", middle.year)
    } else if (27.0..=32.0).contains(&days) {
        format!("{:04}-{:02}", middle.year, middle.month)
    } else {
        format!("{:04}-{:02}-{:02}", middle.year, middle.month, middle.day)
    })
}
