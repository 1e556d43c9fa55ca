//! Named time windows given by years, and the selection of time steps by year.
//!
//! The caller gives the year of each time step, computed in the run's own CF calendar
//! (`noleap`, `360_day`, `proleptic_gregorian`, …) from the midpoint of the step's time bounds
//! (or its time value when there are no bounds): the midpoint keeps a monthly mean stamped at
//! the end of December, or an annual mean stamped on 1 January of the next year, in the year it
//! describes. Selection then depends on year numbers only, so a window selects the same years
//! on every calendar.

use super::WindowError;

/// A named window of whole years, `first_year` to `last_year` inclusive.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TimeWindow {
    /// The name users gave (letters, digits, `_` and `-`, starting with a letter).
    pub name: String,
    /// First year in the window.
    pub first_year: i64,
    /// Last year in the window (inclusive).
    pub last_year: i64,
}

fn parse_year(text: &str, whole: &str) -> Result<i64, WindowError> {
    let bad = || WindowError::Parse {
        text: whole.to_string(),
        message: format!("'{text}' is not a year (digits only, e.g. 2015)"),
    };
    if text.is_empty() || !text.bytes().all(|b| b.is_ascii_digit()) {
        return Err(bad());
    }
    text.parse().map_err(|_| bad())
}

impl TimeWindow {
    /// Parses `NAME=FIRST-LAST` (e.g. `reference=2015-2034`) or `NAME=YEAR` for a single year.
    ///
    /// ```
    /// use acidscape_analysis::windows::TimeWindow;
    /// let w = TimeWindow::parse("late=2081-2100")?;
    /// assert_eq!((w.first_year, w.last_year, w.years()), (2081, 2100, 20));
    /// assert!(TimeWindow::parse("late=2100-2081").is_err());
    /// # Ok::<(), acidscape_analysis::windows::WindowError>(())
    /// ```
    pub fn parse(text: &str) -> Result<TimeWindow, WindowError> {
        let bad = |message: &str| WindowError::Parse {
            text: text.to_string(),
            message: message.to_string(),
        };
        let (name, years) = text
            .split_once('=')
            .ok_or_else(|| bad("expected NAME=FIRST-LAST, e.g. reference=2015-2034"))?;
        let name = name.trim();
        let valid_name = name.chars().next().is_some_and(|c| c.is_ascii_alphabetic())
            && name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
        if !valid_name {
            return Err(bad(
                "the window name must start with a letter and hold only letters, digits, '_' and '-'",
            ));
        }
        let years = years.trim();
        let (first, last) = match years.split_once('-') {
            Some((a, b)) => (parse_year(a.trim(), text)?, parse_year(b.trim(), text)?),
            None => {
                let y = parse_year(years, text)?;
                (y, y)
            }
        };
        if first > last {
            return Err(bad("the first year comes after the last"));
        }
        Ok(TimeWindow {
            name: name.to_string(),
            first_year: first,
            last_year: last,
        })
    }

    /// Whether `year` lies in the window.
    pub fn contains(&self, year: i64) -> bool {
        (self.first_year..=self.last_year).contains(&year)
    }

    /// Number of years in the window.
    pub fn years(&self) -> usize {
        (self.last_year - self.first_year + 1) as usize
    }

    /// The steps whose year (`step_years[i]`, in the run's calendar) lies in the window, and
    /// the window's years that have no step.
    pub fn select(&self, step_years: &[i64]) -> WindowSelection {
        let steps: Vec<usize> = (0..step_years.len())
            .filter(|&i| self.contains(step_years[i]))
            .collect();
        let missing_years = (self.first_year..=self.last_year)
            .filter(|y| !step_years.contains(y))
            .collect();
        WindowSelection {
            window: self.name.clone(),
            steps,
            missing_years,
        }
    }
}

/// Parses several windows (`reference=2015-2034 late=2081-2100`, separated by blanks or commas,
/// in one or several strings) and checks that their names are distinct.
pub fn parse_windows<S: AsRef<str>>(items: &[S]) -> Result<Vec<TimeWindow>, WindowError> {
    let mut windows: Vec<TimeWindow> = Vec::new();
    for item in items {
        for text in item
            .as_ref()
            .split(|c: char| c.is_whitespace() || c == ',')
            .filter(|t| !t.is_empty())
        {
            let w = TimeWindow::parse(text)?;
            if windows.iter().any(|other| other.name == w.name) {
                return Err(WindowError::DuplicateName(w.name));
            }
            windows.push(w);
        }
    }
    Ok(windows)
}

/// The time steps a window selects.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WindowSelection {
    /// The window's name.
    pub window: String,
    /// Indices of the selected steps, in time order.
    pub steps: Vec<usize>,
    /// Years of the window with no step in the run.
    pub missing_years: Vec<i64>,
}

impl WindowSelection {
    /// The steps, or an error naming the years the run does not cover.
    pub fn require_complete(&self) -> Result<&[usize], WindowError> {
        if self.missing_years.is_empty() {
            Ok(&self.steps)
        } else {
            Err(WindowError::Incomplete {
                window: self.window.clone(),
                missing_years: self.missing_years.clone(),
            })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_names_and_years() {
        let w = TimeWindow::parse("reference=2015-2034").unwrap();
        assert_eq!(
            (w.name.as_str(), w.first_year, w.last_year),
            ("reference", 2015, 2034)
        );
        assert_eq!(w.years(), 20);
        let single = TimeWindow::parse("end=2100").unwrap();
        assert_eq!((single.first_year, single.last_year), (2100, 2100));
        let all = parse_windows(&["reference=2015-2034 late=2081-2100", "mid=2041-2060"]).unwrap();
        assert_eq!(all.len(), 3);
        assert_eq!(parse_windows(&["a=2000,b=2001"]).unwrap().len(), 2);
    }

    #[test]
    fn rejects_what_is_not_a_window() {
        for text in [
            "reference",
            "=2015-2034",
            "1st=2015-2034",
            "ref erence=2015-2034",
            "late=2100-2081",
            "late=2081-",
            "late=-5-10",
            "late=20x1-2100",
        ] {
            assert!(TimeWindow::parse(text).is_err(), "{text}");
        }
        assert_eq!(
            parse_windows(&["a=2000 a=2001"]),
            Err(WindowError::DuplicateName("a".into()))
        );
    }

    #[test]
    fn selects_sub_annual_steps_by_year() {
        // Monthly steps 2015-2100 (the year of each step as the caller computes it).
        let years: Vec<i64> = (0..86 * 12).map(|m| 2015 + m / 12).collect();
        let w = TimeWindow::parse("late=2081-2100").unwrap();
        let s = w.select(&years);
        assert_eq!(s.steps.len(), 240);
        assert_eq!(s.require_complete().unwrap()[0], (2081 - 2015) * 12);
        assert_eq!(*s.steps.last().unwrap(), years.len() - 1);
    }

    #[test]
    fn incomplete_windows_name_the_missing_years() {
        let w = TimeWindow::parse("late=2081-2100").unwrap();
        let years: Vec<i64> = (2015..=2095).collect();
        let s = w.select(&years);
        assert_eq!(s.steps.len(), 15);
        assert_eq!(s.missing_years, vec![2096, 2097, 2098, 2099, 2100]);
        let message = s.require_complete().unwrap_err().to_string();
        assert!(
            message.contains("late") && message.contains("2096"),
            "{message}"
        );
    }
}
