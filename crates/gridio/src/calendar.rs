//! CF time coordinates: "UNIT since REFERENCE" under the CF calendars
//! (CF conventions, section 4.4 "Time Coordinate" and 4.4.1 "Calendar").
//!
//! Day numbers are Julian Day Numbers for the real-world calendars (so the
//! mixed Julian/Gregorian `standard` calendar switches at JDN 2299161 =
//! 1582-10-15) and plain counts from year 0 for the idealised model calendars.
//! Months and years as time units are rejected: UDUNITS defines them as
//! fractions of a tropical year, not calendar months (CF section 4.4).

use std::fmt;

const SECONDS_PER_DAY: f64 = 86_400.0;
/// First day of the Gregorian calendar, 1582-10-15, as a Julian Day Number.
const GREGORIAN_START_JDN: i64 = 2_299_161;

/// A time axis that could not be understood, or values that do not join.
#[derive(Debug, Clone, PartialEq)]
pub enum CalendarError {
    /// The `units` attribute is not "UNIT since REFERENCE" in an accepted form.
    Units { seen: String, reason: String },
    /// The `calendar` attribute names no supported calendar.
    Calendar { seen: String },
    /// A date that does not exist in the calendar (e.g. 2001-02-29 in noleap).
    InvalidDate {
        date: String,
        calendar: &'static str,
    },
    /// Two time axes use different calendars and cannot be compared.
    CalendarMismatch {
        left: &'static str,
        right: &'static str,
    },
    /// A time value that is NaN or infinite.
    NotFinite { value: f64 },
    /// Time steps repeat or go backwards within or between parts.
    Overlap {
        part: String,
        previous_part: String,
        previous: f64,
        next: f64,
    },
}

impl fmt::Display for CalendarError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CalendarError::Units { seen, reason } => write!(
                f,
                "time units {seen:?} are not understood ({reason}); expected \"UNIT since REFERENCE\" \
                 with UNIT one of days/d, hours/hr/h, minutes/min, seconds/sec/s and REFERENCE like \
                 1850-01-01, 1850-1-1 00:00:00 or 1850-01-01T00:00:00Z (optional time zone UTC or +H:MM)"
            ),
            CalendarError::Calendar { seen } => write!(
                f,
                "calendar {seen:?} is not supported; expected one of standard, gregorian, \
                 proleptic_gregorian, noleap, 365_day, all_leap, 366_day, 360_day, julian"
            ),
            CalendarError::InvalidDate { date, calendar } => {
                write!(f, "date {date} does not exist in the {calendar} calendar")
            }
            CalendarError::CalendarMismatch { left, right } => write!(
                f,
                "time axes use different calendars ({left} and {right}); values cannot be compared"
            ),
            CalendarError::NotFinite { value } => {
                write!(f, "time value {value} is not a finite number")
            }
            CalendarError::Overlap {
                part,
                previous_part,
                previous,
                next,
            } => write!(
                f,
                "time values overlap or go backwards: {next} in {part} does not come after {previous} \
                 in {previous_part}"
            ),
        }
    }
}

impl std::error::Error for CalendarError {}

/// The CF calendars.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Calendar {
    /// Mixed Julian/Gregorian (CF `standard`, deprecated alias `gregorian`).
    Standard,
    ProlepticGregorian,
    /// Every year 365 days (`noleap`, `365_day`).
    NoLeap,
    /// Every year 366 days (`all_leap`, `366_day`).
    AllLeap,
    /// Twelve months of 30 days (`360_day`).
    Day360,
    Julian,
}

const NOLEAP_MONTH_DAYS: [u32; 12] = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

impl Calendar {
    /// Parses a CF `calendar` attribute; a missing attribute means `standard` (CF 4.4.1).
    pub fn parse(attribute: Option<&str>) -> Result<Calendar, CalendarError> {
        let Some(text) = attribute else {
            return Ok(Calendar::Standard);
        };
        match text.trim().to_lowercase().as_str() {
            "standard" | "gregorian" => Ok(Calendar::Standard),
            "proleptic_gregorian" => Ok(Calendar::ProlepticGregorian),
            "noleap" | "no_leap" | "365_day" => Ok(Calendar::NoLeap),
            "all_leap" | "366_day" => Ok(Calendar::AllLeap),
            "360_day" => Ok(Calendar::Day360),
            "julian" => Ok(Calendar::Julian),
            _ => Err(CalendarError::Calendar {
                seen: text.to_string(),
            }),
        }
    }

    /// The CF name written to output files.
    pub fn cf_name(self) -> &'static str {
        match self {
            Calendar::Standard => "standard",
            Calendar::ProlepticGregorian => "proleptic_gregorian",
            Calendar::NoLeap => "noleap",
            Calendar::AllLeap => "all_leap",
            Calendar::Day360 => "360_day",
            Calendar::Julian => "julian",
        }
    }

    /// Whether `year` has a leap day (astronomical year numbering: year 0 exists).
    pub fn is_leap_year(self, year: i64) -> bool {
        let julian_leap = year.rem_euclid(4) == 0;
        let gregorian_leap =
            julian_leap && (year.rem_euclid(100) != 0 || year.rem_euclid(400) == 0);
        match self {
            Calendar::NoLeap | Calendar::Day360 => false,
            Calendar::AllLeap => true,
            Calendar::Julian => julian_leap,
            Calendar::ProlepticGregorian => gregorian_leap,
            Calendar::Standard => {
                if year > 1582 {
                    gregorian_leap
                } else {
                    julian_leap
                }
            }
        }
    }

    /// Number of days in a month of a year.
    pub fn days_in_month(self, year: i64, month: u32) -> u32 {
        match (self, month) {
            (Calendar::Day360, _) => 30,
            (_, 2) if self.is_leap_year(year) => 29,
            _ => NOLEAP_MONTH_DAYS[(month.clamp(1, 12) - 1) as usize],
        }
    }

    /// Day number of a date (consecutive integers within one calendar).
    fn day_number(self, year: i64, month: u32, day: u32) -> Result<i64, CalendarError> {
        let invalid = || CalendarError::InvalidDate {
            date: format!("{year:04}-{month:02}-{day:02}"),
            calendar: self.cf_name(),
        };
        if !(1..=12).contains(&month) || day < 1 || day > self.days_in_month(year, month) {
            return Err(invalid());
        }
        let (m, d) = (month as i64, day as i64);
        Ok(match self {
            Calendar::Day360 => year * 360 + (m - 1) * 30 + (d - 1),
            Calendar::NoLeap | Calendar::AllLeap => {
                let before: u32 = (1..month).map(|k| self.days_in_month(year, k)).sum();
                let year_length = if self == Calendar::NoLeap { 365 } else { 366 };
                year * year_length + before as i64 + (d - 1)
            }
            Calendar::ProlepticGregorian => gregorian_jdn(year, m, d),
            Calendar::Julian => julian_jdn(year, m, d),
            Calendar::Standard => {
                let gregorian = gregorian_jdn(year, m, d);
                if gregorian >= GREGORIAN_START_JDN {
                    gregorian
                } else {
                    let julian = julian_jdn(year, m, d);
                    if julian >= GREGORIAN_START_JDN {
                        // 1582-10-05 .. 1582-10-14 were skipped.
                        return Err(invalid());
                    }
                    julian
                }
            }
        })
    }

    /// Date (year, month, day) of a day number.
    fn date_of(self, n: i64) -> (i64, u32, u32) {
        match self {
            Calendar::Day360 => {
                let year = n.div_euclid(360);
                let rest = n.rem_euclid(360);
                (year, (rest / 30 + 1) as u32, (rest % 30 + 1) as u32)
            }
            Calendar::NoLeap | Calendar::AllLeap => {
                let year_length = if self == Calendar::NoLeap { 365 } else { 366 };
                let year = n.div_euclid(year_length);
                let mut rest = n.rem_euclid(year_length) as u32;
                let mut month = 1;
                while rest >= self.days_in_month(year, month) {
                    rest -= self.days_in_month(year, month);
                    month += 1;
                }
                (year, month, rest + 1)
            }
            Calendar::ProlepticGregorian => date_from_jdn(n, true),
            Calendar::Julian => date_from_jdn(n, false),
            Calendar::Standard => date_from_jdn(n, n >= GREGORIAN_START_JDN),
        }
    }
}

/// Julian Day Number of a proleptic Gregorian date (Fliegel & Van Flandern 1968).
fn gregorian_jdn(year: i64, month: i64, day: i64) -> i64 {
    let a = (14 - month) / 12;
    let y = year + 4800 - a;
    let m = month + 12 * a - 3;
    day + (153 * m + 2) / 5 + 365 * y + y.div_euclid(4) - y.div_euclid(100) + y.div_euclid(400)
        - 32045
}

/// Julian Day Number of a proleptic Julian-calendar date (same scheme, 4-year leap rule).
fn julian_jdn(year: i64, month: i64, day: i64) -> i64 {
    let a = (14 - month) / 12;
    let y = year + 4800 - a;
    let m = month + 12 * a - 3;
    day + (153 * m + 2) / 5 + 365 * y + y.div_euclid(4) - 32083
}

/// Date of a Julian Day Number in the Gregorian or Julian calendar (Richards 2013,
/// Explanatory Supplement to the Astronomical Almanac, 3rd ed., section 15.11.3).
fn date_from_jdn(jdn: i64, gregorian: bool) -> (i64, u32, u32) {
    let mut f = jdn + 1401;
    if gregorian {
        f += ((4 * jdn + 274_277).div_euclid(146_097) * 3).div_euclid(4) - 38;
    }
    let e = 4 * f + 3;
    let g = e.rem_euclid(1461) / 4;
    let h = 5 * g + 2;
    let day = h.rem_euclid(153) / 5 + 1;
    let month = (h / 153 + 2).rem_euclid(12) + 1;
    let year = e.div_euclid(1461) - 4716 + (12 + 2 - month) / 12;
    (year, month as u32, day as u32)
}

/// A calendar date and time of day (UTC).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DateTime {
    pub year: i64,
    pub month: u32,
    pub day: u32,
    pub hour: u32,
    pub minute: u32,
    pub second: f64,
}

impl DateTime {
    /// Midnight at the start of a day.
    pub fn date(year: i64, month: u32, day: u32) -> DateTime {
        DateTime {
            year,
            month,
            day,
            hour: 0,
            minute: 0,
            second: 0.0,
        }
    }

    fn seconds_of_day(&self) -> f64 {
        self.hour as f64 * 3600.0 + self.minute as f64 * 60.0 + self.second
    }
}

impl fmt::Display for DateTime {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{:04}-{:02}-{:02} {:02}:{:02}:",
            self.year, self.month, self.day, self.hour, self.minute
        )?;
        if self.second.fract() == 0.0 {
            write!(f, "{:02}", self.second as u32)
        } else {
            write!(f, "{:09.6}", self.second)
        }
    }
}

/// The unit of a CF time coordinate.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeUnit {
    Days,
    Hours,
    Minutes,
    Seconds,
}

impl TimeUnit {
    /// Length of the unit in seconds.
    pub fn seconds(self) -> f64 {
        match self {
            TimeUnit::Days => SECONDS_PER_DAY,
            TimeUnit::Hours => 3600.0,
            TimeUnit::Minutes => 60.0,
            TimeUnit::Seconds => 1.0,
        }
    }

    /// The plural name written to output files.
    pub fn cf_name(self) -> &'static str {
        match self {
            TimeUnit::Days => "days",
            TimeUnit::Hours => "hours",
            TimeUnit::Minutes => "minutes",
            TimeUnit::Seconds => "seconds",
        }
    }

    fn parse(word: &str) -> Option<TimeUnit> {
        match word.to_lowercase().as_str() {
            "days" | "day" | "d" => Some(TimeUnit::Days),
            "hours" | "hour" | "hr" | "hrs" | "h" => Some(TimeUnit::Hours),
            "minutes" | "minute" | "min" | "mins" => Some(TimeUnit::Minutes),
            "seconds" | "second" | "sec" | "secs" | "s" => Some(TimeUnit::Seconds),
            _ => None,
        }
    }
}

/// A parsed CF time axis description: unit, reference instant and calendar.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeAxis {
    pub unit: TimeUnit,
    /// Reference instant, converted to UTC.
    pub reference: DateTime,
    pub calendar: Calendar,
    reference_day: i64,
    reference_second: f64,
}

impl TimeAxis {
    /// Parses a `units` attribute and the optional `calendar` attribute.
    pub fn parse(units: &str, calendar: Option<&str>) -> Result<TimeAxis, CalendarError> {
        let calendar = Calendar::parse(calendar)?;
        let fail = |reason: &str| CalendarError::Units {
            seen: units.to_string(),
            reason: reason.to_string(),
        };
        let mut words = units.split_whitespace();
        let unit_word = words.next().ok_or_else(|| fail("empty"))?;
        let unit = TimeUnit::parse(unit_word).ok_or_else(|| {
            if matches!(
                unit_word.to_lowercase().as_str(),
                "months" | "month" | "years" | "year" | "yr" | "a"
            ) {
                fail("months and years are not calendar units in UDUNITS/CF; use days")
            } else {
                fail("unknown time unit")
            }
        })?;
        match words.next() {
            Some(w) if w.eq_ignore_ascii_case("since") => {}
            _ => return Err(fail("missing \"since\"")),
        }
        let rest: Vec<&str> = words.collect();
        if rest.is_empty() {
            return Err(fail("missing reference date"));
        }
        let (local, offset_seconds) = parse_reference(&rest).map_err(|r| fail(&r))?;
        let day = calendar.day_number(local.year, local.month, local.day)?;
        // Shift the local reference to UTC by the zone offset (local = UTC + offset).
        let total = local.seconds_of_day() - offset_seconds;
        let day_shift = (total / SECONDS_PER_DAY).floor();
        let reference_day = day + day_shift as i64;
        let reference_second = total - day_shift * SECONDS_PER_DAY;
        let mut axis = TimeAxis {
            unit,
            reference: local,
            calendar,
            reference_day,
            reference_second,
        };
        axis.reference = axis.instant_at(0.0)?;
        Ok(axis)
    }

    /// The `units` attribute text for this axis, e.g. "days since 1850-01-01 00:00:00".
    pub fn units_attribute(&self) -> String {
        format!("{} since {}", self.unit.cf_name(), self.reference)
    }

    /// Calendar date and time of a coordinate value.
    pub fn to_datetime(&self, value: f64) -> Result<DateTime, CalendarError> {
        if !value.is_finite() {
            return Err(CalendarError::NotFinite { value });
        }
        self.instant_at(value * self.unit.seconds())
    }

    fn instant_at(&self, offset_seconds: f64) -> Result<DateTime, CalendarError> {
        let total = self.reference_second + offset_seconds;
        let mut day_shift = (total / SECONDS_PER_DAY).floor();
        // Round to microseconds so 23:59:59.9999999 becomes the next midnight.
        let mut second_of_day = ((total - day_shift * SECONDS_PER_DAY) * 1e6).round() / 1e6;
        if second_of_day >= SECONDS_PER_DAY {
            second_of_day -= SECONDS_PER_DAY;
            day_shift += 1.0;
        }
        if !day_shift.is_finite() || day_shift.abs() > 1e12 {
            return Err(CalendarError::NotFinite {
                value: offset_seconds,
            });
        }
        let (year, month, day) = self.calendar.date_of(self.reference_day + day_shift as i64);
        let hour = (second_of_day / 3600.0).floor();
        let minute = ((second_of_day - hour * 3600.0) / 60.0).floor();
        let second = second_of_day - hour * 3600.0 - minute * 60.0;
        Ok(DateTime {
            year,
            month,
            day,
            hour: hour as u32,
            minute: minute as u32,
            second,
        })
    }

    /// Coordinate value of a calendar date and time.
    pub fn from_datetime(&self, when: &DateTime) -> Result<f64, CalendarError> {
        let day = self.calendar.day_number(when.year, when.month, when.day)?;
        let seconds = (day - self.reference_day) as f64 * SECONDS_PER_DAY
            + (when.seconds_of_day() - self.reference_second);
        Ok(seconds / self.unit.seconds())
    }

    /// Converts a value of this axis into the units of `target` (same calendar required).
    pub fn convert_to(&self, value: f64, target: &TimeAxis) -> Result<f64, CalendarError> {
        Ok(value * self.unit.seconds() / target.unit.seconds() + self.offset_to(target)?)
    }

    /// Converts many values of this axis into the units of `target`.
    pub fn convert_all(
        &self,
        values: &[f64],
        target: &TimeAxis,
    ) -> Result<Vec<f64>, CalendarError> {
        let offset = self.offset_to(target)?;
        let ratio = self.unit.seconds() / target.unit.seconds();
        Ok(values.iter().map(|v| v * ratio + offset).collect())
    }

    /// This axis's reference instant expressed in `target`'s units.
    fn offset_to(&self, target: &TimeAxis) -> Result<f64, CalendarError> {
        if self.calendar != target.calendar {
            // standard and proleptic_gregorian agree after 1582-10-15, but CF treats
            // them as different calendars; the caller should decide explicitly.
            return Err(CalendarError::CalendarMismatch {
                left: self.calendar.cf_name(),
                right: target.calendar.cf_name(),
            });
        }
        let seconds = (self.reference_day - target.reference_day) as f64 * SECONDS_PER_DAY
            + (self.reference_second - target.reference_second);
        Ok(seconds / target.unit.seconds())
    }
}

/// Parses the reference part of a units string into a local date-time and a zone offset in seconds.
fn parse_reference(words: &[&str]) -> Result<(DateTime, f64), String> {
    let mut words: Vec<String> = words.iter().map(|w| w.to_string()).collect();
    // "1850-01-01T00:00:00Z" -> date, time; a trailing Z is UTC.
    if let Some(pos) = words[0].find(['T', 't']) {
        let time = words[0][pos + 1..].to_string();
        words[0].truncate(pos);
        words.insert(1, time);
    }
    let (year, month, day) = parse_date(&words[0])?;
    let mut when = DateTime::date(year, month, day);
    let mut offset = 0.0;
    let mut index = 1;
    if let Some(time) = words.get(1) {
        let trimmed = time.trim_end_matches(['Z', 'z']);
        if trimmed.contains(':') || trimmed.chars().all(|c| c.is_ascii_digit() || c == '.') {
            let (h, m, s) = parse_time_of_day(trimmed)?;
            when.hour = h;
            when.minute = m;
            when.second = s;
            index = 2;
        }
    }
    if let Some(zone) = words.get(index) {
        offset = parse_zone(zone)?;
        index += 1;
    }
    if index < words.len() {
        return Err(format!(
            "unexpected text {:?} after the reference",
            words[index]
        ));
    }
    Ok((when, offset))
}

fn parse_date(text: &str) -> Result<(i64, u32, u32), String> {
    let (negative, body) = match text.strip_prefix('-') {
        Some(rest) => (true, rest),
        None => (false, text),
    };
    let parts: Vec<&str> = body.split('-').collect();
    if parts.is_empty() || parts.len() > 3 || parts.iter().any(|p| p.is_empty()) {
        return Err(format!("reference date {text:?} is not YEAR-MONTH-DAY"));
    }
    let number = |p: &str| -> Result<i64, String> {
        p.parse::<i64>()
            .map_err(|_| format!("reference date {text:?} has a non-numeric part {p:?}"))
    };
    let mut year = number(parts[0])?;
    if negative {
        year = -year;
    }
    let month = parts.get(1).map(|p| number(p)).transpose()?.unwrap_or(1);
    let day = parts.get(2).map(|p| number(p)).transpose()?.unwrap_or(1);
    if !(1..=12).contains(&month) || !(1..=31).contains(&day) {
        return Err(format!(
            "reference date {text:?} has month or day out of range"
        ));
    }
    Ok((year, month as u32, day as u32))
}

fn parse_time_of_day(text: &str) -> Result<(u32, u32, f64), String> {
    let parts: Vec<&str> = text.split(':').collect();
    let bad = || format!("reference time {text:?} is not HH:MM:SS");
    if parts.len() > 3 {
        return Err(bad());
    }
    let hour: u32 = parts[0].parse().map_err(|_| bad())?;
    let minute: u32 = parts
        .get(1)
        .map_or(Ok(0), |p| p.parse())
        .map_err(|_| bad())?;
    let second: f64 = parts
        .get(2)
        .map_or(Ok(0.0), |p| p.parse())
        .map_err(|_| bad())?;
    if hour > 23 || minute > 59 || !(0.0..60.0).contains(&second) {
        return Err(bad());
    }
    Ok((hour, minute, second))
}

/// Zone offset in seconds east of UTC: "UTC", "Z", "+0:00", "-6:00", "-6", "+0530".
fn parse_zone(text: &str) -> Result<f64, String> {
    if matches!(text.to_uppercase().as_str(), "UTC" | "Z" | "GMT") {
        return Ok(0.0);
    }
    let bad = || format!("time zone {text:?} is not UTC or [+-]H[:MM]");
    let (sign, body) = match text.as_bytes().first() {
        Some(b'+') => (1.0, &text[1..]),
        Some(b'-') => (-1.0, &text[1..]),
        _ => return Err(bad()),
    };
    let (hours, minutes) = if let Some((h, m)) = body.split_once(':') {
        (h, m)
    } else if body.len() >= 3 {
        body.split_at(body.len() - 2)
    } else {
        (body, "0")
    };
    let h: u32 = hours.parse().map_err(|_| bad())?;
    let m: u32 = minutes.parse().map_err(|_| bad())?;
    if h > 14 || m > 59 {
        return Err(bad());
    }
    Ok(sign * (h as f64 * 3600.0 + m as f64 * 60.0))
}

/// One part (file) of a time series, its values already in a common axis.
#[derive(Debug, Clone, PartialEq)]
pub struct TimePart {
    /// Name used in messages, e.g. the file path.
    pub label: String,
    pub values: Vec<f64>,
}

/// The joined time series.
#[derive(Debug, Clone, PartialEq)]
pub struct JoinedTime {
    /// All values, increasing.
    pub values: Vec<f64>,
    /// Indices into the input parts, in time order.
    pub part_order: Vec<usize>,
}

/// Joins per-file time values: orders parts by their first value and requires values to
/// increase strictly within and across parts (else [`CalendarError::Overlap`]). Gaps are
/// found afterwards, in the run's calendar (`crate::sampling::check_sampling`).
pub fn join_time_parts(parts: &[TimePart]) -> Result<JoinedTime, CalendarError> {
    for part in parts {
        if let Some(&value) = part.values.iter().find(|v| !v.is_finite()) {
            return Err(CalendarError::NotFinite { value });
        }
    }
    let mut order: Vec<usize> = (0..parts.len())
        .filter(|&i| !parts[i].values.is_empty())
        .collect();
    order.sort_by(|&a, &b| parts[a].values[0].total_cmp(&parts[b].values[0]));
    let mut values = Vec::with_capacity(parts.iter().map(|p| p.values.len()).sum());
    let mut previous: Option<(f64, usize)> = None;
    for &index in &order {
        for &value in &parts[index].values {
            if let Some((last, last_part)) = previous {
                if value <= last {
                    return Err(CalendarError::Overlap {
                        part: parts[index].label.clone(),
                        previous_part: parts[last_part].label.clone(),
                        previous: last,
                        next: value,
                    });
                }
            }
            values.push(value);
            previous = Some((value, index));
        }
    }
    Ok(JoinedTime {
        values,
        part_order: order,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn jdn_of_known_dates() {
        // 2000-01-01 (Gregorian) is JDN 2451545 (Meeus 1998, Astronomical Algorithms, ch. 7).
        assert_eq!(gregorian_jdn(2000, 1, 1), 2_451_545);
        // Julian 1582-10-04 is the day before Gregorian 1582-10-15.
        assert_eq!(julian_jdn(1582, 10, 4) + 1, gregorian_jdn(1582, 10, 15));
        for n in [0_i64, 1_721_426, 2_299_160, 2_299_161, 2_451_545, 2_500_000] {
            let (y, m, d) = date_from_jdn(n, true);
            assert_eq!(gregorian_jdn(y, m as i64, d as i64), n);
            let (y, m, d) = date_from_jdn(n, false);
            assert_eq!(julian_jdn(y, m as i64, d as i64), n);
        }
    }

    #[test]
    fn zone_forms() {
        assert_eq!(parse_zone("-6:00").unwrap(), -21600.0);
        assert_eq!(parse_zone("+0530").unwrap(), 19800.0);
        assert_eq!(parse_zone("-6").unwrap(), -21600.0);
        assert!(parse_zone("EST").is_err());
    }
}
