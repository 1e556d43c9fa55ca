//! Checks of the pure conversion modules (units, calendar, seawater) against
//! sources outside the project; the source of each check value is beside it.

use acidscape_gridio::calendar::{
    join_time_parts, Calendar, CalendarError, DateTime, TimeAxis, TimePart,
};
use acidscape_gridio::sampling::{check_sampling, Sampling};
use acidscape_gridio::seawater::{
    absolute_from_practical, adiabatic_lapse_rate_ipts68, density_from_conservative,
    depth_from_sea_pressure, in_situ_density, in_situ_from_conservative, in_situ_from_potential,
    in_situ_state, in_situ_temperature, potential_from_conservative, potential_from_in_situ,
    potential_temperature_ipts68, practical_from_absolute, sea_pressure_from_depth,
    TemperatureKind,
};
use acidscape_gridio::specific_volume::density_lanes;
use acidscape_gridio::units::{
    parse_area, parse_concentration, parse_length, parse_pressure, parse_salinity,
    parse_temperature, practical_salinity_scale, ConcentrationBasis, SalinityUnits,
    TemperatureUnits,
};

fn close(actual: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: got {actual}, expected {expected} ± {tolerance}"
    );
}

// ---------------------------------------------------------------- units

#[test]
fn concentration_2_1_mol_per_m3_at_1025_is_2048_78_umol_per_kg() {
    // Hand computed: 2.1 mol m-3 / 1025 kg m-3 = 0.002048780 mol kg-1 = 2048.780 µmol kg-1.
    let expected = 2.1 / 1025.0 * 1e6;
    close(expected, 2048.7804878, 1e-6, "arithmetic");
    for (units, value) in [
        ("mol m-3", 2.1),
        ("mol/m3", 2.1),
        ("mol m^-3", 2.1),
        ("mol.m-3", 2.1),
        ("mmol m-3", 2100.0),
        ("mmol/m^3", 2100.0),
        ("umol/L", 2100.0),
        ("µmol l-1", 2100.0),
    ] {
        let c = parse_concentration(units).unwrap();
        assert_eq!(c.basis, ConcentrationBasis::PerVolume, "{units}");
        close(c.to_umol_per_kg(value, 1025.0), expected, 1e-9, units);
    }
}

#[test]
fn unit_strings_that_ocean_models_write() {
    // (as written, where it is written, mol m-3 or mol kg-1 per unit, per volume?)
    let rows: [(&str, &str, f64, bool); 12] = [
        (
            "mmol/m3",
            "NEMO PISCES field_def_nemo-pisces.xml",
            1e-3,
            true,
        ),
        ("millimole meter-3", "long unit words (UDUNITS)", 1e-3, true),
        (
            "millimole_carbon meter-3",
            "ROMS varinfo.yaml TIC",
            1e-3,
            true,
        ),
        ("millimole_PO4 meter-3", "ROMS varinfo.yaml PO4", 1e-3, true),
        (
            "millimole_silica meter-3",
            "ROMS varinfo.yaml SiOH4",
            1e-3,
            true,
        ),
        ("millimole_DIC meter-3", "ROMS varinfo.yaml DIC", 1e-3, true),
        (
            "milliequivalents meter-3",
            "ROMS varinfo.yaml alkalinity",
            1e-3,
            true,
        ),
        ("meq m-3", "equivalents for alkalinity", 1e-3, true),
        ("meq/m^3", "equivalents for alkalinity", 1e-3, true),
        ("mol/L", "per litre", 1e3, true),
        ("mol/kg", "GFDL COBALT generic_COBALT.F90", 1.0, false),
        ("mol m-3", "CMIP6/OMIP dissic, talk", 1.0, true),
    ];
    for (units, written_by, to_mol, per_volume) in rows {
        let c = parse_concentration(units).unwrap_or_else(|e| panic!("{written_by}: {e}"));
        let basis = if per_volume {
            ConcentrationBasis::PerVolume
        } else {
            ConcentrationBasis::PerMass
        };
        assert_eq!(c.basis, basis, "{units} ({written_by})");
        close(c.to_mol, to_mol, to_mol * 1e-12, units);
    }
    // An annotation does not make an amount of what is not one.
    for units in [
        "millimole_carbon",
        "carbon_millimole meter-3",
        "meter_carbon meter-3",
    ] {
        assert!(parse_concentration(units).is_err(), "{units}");
    }
    // ROMS writes salinity as "nondimensional", temperature as "Celsius"; NEMO 3 "PSU".
    for units in ["nondimensional", "PSU", "1e-3"] {
        assert_eq!(
            parse_salinity(units).unwrap(),
            SalinityUnits::Practical,
            "{units}"
        );
    }
    for units in ["Celsius", "degC", "degree_Celsius"] {
        assert_eq!(
            parse_temperature(units).unwrap(),
            TemperatureUnits::Celsius,
            "{units}"
        );
    }
    // MOM6 writes depth in "meters".
    close(parse_length("meters").unwrap().to_m, 1.0, 0.0, "meters");
}

#[test]
fn per_mass_concentrations_ignore_density() {
    for units in [
        "umol/kg",
        "umol kg-1",
        "µmol kg-1", // U+00B5 micro sign
        "μmol kg-1", // U+03BC Greek mu
        "micromol kg-1",
        "umol.kg-1",
        "ueq kg-1",
    ] {
        let c = parse_concentration(units).unwrap();
        assert_eq!(c.basis, ConcentrationBasis::PerMass, "{units}");
        close(c.to_umol_per_kg(2300.0, f64::NAN), 2300.0, 1e-9, units);
    }
    for (units, value) in [("mol kg-1", 0.0023), ("mol/kg", 0.0023), ("mmol/kg", 2.3)] {
        let c = parse_concentration(units).unwrap();
        close(c.to_umol_per_kg(value, 1000.0), 2300.0, 1e-9, units);
    }
    // µmol kg-1 pass through exactly (no rounding from a 1e-6 × 1e6 round trip).
    let micro = parse_concentration("umol kg-1").unwrap();
    assert_eq!(micro.to_umol_per_kg(2123.456789, f64::NAN), 2123.456789);
    let nano = parse_concentration("nmol kg-1").unwrap();
    close(nano.to_mol, 1e-9, 1e-24, "nmol");
}

#[test]
fn unknown_or_wrong_concentration_units_are_rejected_with_the_string_seen() {
    for units in [
        "",
        "mol",
        "mol m-2",
        "kg m-3",
        "ppm",
        "mol m-3 m",
        "molar",
        "mol / ",
    ] {
        let err = parse_concentration(units).unwrap_err();
        let text = err.to_string();
        assert!(text.contains(&format!("{units:?}")), "{text}");
        assert!(
            text.contains("mol m-3"),
            "message lists accepted forms: {text}"
        );
    }
}

#[test]
fn temperature_units() {
    for units in [
        "degC",
        "deg_C",
        "degree_C",
        "degrees_C",
        "degree_Celsius",
        "Celsius",
        "°C",
        "degrees C",
    ] {
        assert_eq!(
            parse_temperature(units).unwrap(),
            TemperatureUnits::Celsius,
            "{units}"
        );
    }
    for units in ["K", "kelvin", "Kelvin", "degK"] {
        let k = parse_temperature(units).unwrap();
        // 0 °C = 273.15 K (definition of the Celsius scale, BIPM SI brochure).
        close(k.to_celsius(273.15), 0.0, 1e-12, units);
    }
    for units in ["C", "degF", "", "deg"] {
        assert!(parse_temperature(units).is_err(), "{units}");
    }
}

#[test]
fn salinity_units_and_the_cmip_0_001_convention() {
    // CMIP6/OMIP `so` carries units "0.001" with values near 35 (practical salinity).
    for units in [
        "1",
        "1e-3",
        "0.001",
        "1.e-3",
        "psu",
        "PSU",
        "practical_salinity_unit",
        "",
        "pss-78",
    ] {
        assert_eq!(
            parse_salinity(units).unwrap(),
            SalinityUnits::Practical,
            "{units:?}"
        );
    }
    for units in ["g/kg", "g kg-1", "g.kg-1"] {
        assert_eq!(
            parse_salinity(units).unwrap(),
            SalinityUnits::Absolute { to_g_per_kg: 1.0 },
            "{units}"
        );
    }
    match parse_salinity("kg/kg").unwrap() {
        SalinityUnits::Absolute { to_g_per_kg } => close(to_g_per_kg, 1000.0, 1e-9, "kg/kg"),
        other => panic!("kg/kg read as {other:?}"),
    }
    for units in ["mol kg-1", "2", "m", "0.01"] {
        assert!(parse_salinity(units).is_err(), "{units}");
    }
    assert_eq!(practical_salinity_scale(35.0), 1.0);
    assert_eq!(practical_salinity_scale(0.035), 1000.0);
    assert_eq!(practical_salinity_scale(f64::NAN), 1.0);
}

#[test]
fn length_pressure_and_area_units() {
    let length = |u: &str| parse_length(u).map(|x| x.to_m);
    let pressure = |u: &str| parse_pressure(u).map(|x| x.to_dbar);
    let area = |u: &str| parse_area(u).map(|x| x.to_m2);
    type Parser<'a> = &'a dyn Fn(&str) -> Result<f64, acidscape_gridio::units::UnitsError>;
    // SI prefixes; 1 bar = 10 dbar = 1e5 Pa (SI definition of the bar).
    let accepted: [(Parser, &str, f64); 16] = [
        (&length, "m", 1.0),
        (&length, "meters", 1.0),
        (&length, "metre", 1.0),
        (&length, "metres", 1.0),
        (&length, "cm", 0.01),
        (&length, "km", 1000.0),
        (&pressure, "dbar", 1.0),
        (&pressure, "decibar", 1.0),
        (&pressure, "bar", 10.0),
        (&pressure, "Pa", 1e-4),
        (&pressure, "hPa", 1e-2),
        (&area, "m2", 1.0),
        (&area, "m^2", 1.0),
        (&area, "m**2", 1.0),
        (&area, "m²", 1.0),
        (&area, "km2", 1e6),
    ];
    for (parse, units, factor) in accepted {
        close(parse(units).unwrap(), factor, factor * 1e-12, units);
    }
    let rejected: [(Parser, &str); 6] = [
        (&length, "dbar"),
        (&length, "m2"),
        (&pressure, "psi"),
        (&pressure, "db"),
        (&area, "m-2"),
        (&area, "m"),
    ];
    for (parse, units) in rejected {
        assert!(parse(units).is_err(), "{units}");
    }
}

// ---------------------------------------------------------------- calendar

fn axis(units: &str, calendar: &str) -> TimeAxis {
    TimeAxis::parse(units, Some(calendar)).unwrap()
}

/// Year, month, day.
type Ymd = (i64, u32, u32);

fn ymd(axis: &TimeAxis, value: f64) -> Ymd {
    let d = axis.to_datetime(value).unwrap();
    (d.year, d.month, d.day)
}

#[test]
fn cf_4_4_reference_with_time_zone() {
    // CF conventions 4.4 (UDUNITS excerpt): "seconds since 1992-10-8 15:15:42.5 -6:00" is
    // 15:15:42.5 local time six hours west of UTC, i.e. 1992-10-08 21:15:42.5 UTC.
    let a = TimeAxis::parse("seconds since 1992-10-8 15:15:42.5 -6:00", None).unwrap();
    assert_eq!(
        a.calendar,
        Calendar::Standard,
        "CF 4.4.1: no calendar attribute means standard"
    );
    let d = a.to_datetime(0.0).unwrap();
    assert_eq!(
        (d.year, d.month, d.day, d.hour, d.minute),
        (1992, 10, 8, 21, 15)
    );
    close(d.second, 42.5, 1e-9, "seconds");
    // Written back for an output file, the reference is in UTC.
    assert_eq!(
        a.units_attribute(),
        "seconds since 1992-10-08 21:15:42.500000"
    );
    // CF 4.4: the zone may be written without a colon as hours (one or two digits) or
    // hours and minutes (three or four digits).
    for zone in ["-6", "-06", "-600", "-0600"] {
        let b =
            TimeAxis::parse(&format!("seconds since 1992-10-8 15:15:42.5 {zone}"), None).unwrap();
        close(b.convert_to(0.0, &a).unwrap(), 0.0, 1e-9, zone);
    }
}

#[test]
fn cf_example_4_4_time_axis_and_reference_spellings() {
    // CF conventions Example 4.4 "Time axis": units = "days since 1990-1-1 0:0:0".
    let a = TimeAxis::parse("days since 1990-1-1 0:0:0", None).unwrap();
    assert_eq!(ymd(&a, 0.0), (1990, 1, 1));
    // CF 4.4: with time and zone omitted the reference is 00:00:00 UTC.
    for units in [
        "days since 1990-01-01",
        "days since 1990-01-01 00:00:00",
        "days since 1990-01-01T00:00:00Z",
        "days since 1990-1-1 00:00:00 UTC",
        "days since 1990-01-01 00:00 +0:00",
        "d since 1990-01-01",
        "day since 1990-01-01",
    ] {
        let b = TimeAxis::parse(units, None).unwrap();
        close(b.convert_to(17.25, &a).unwrap(), 17.25, 1e-12, units);
    }
    // CF 4.4: abbreviations hr, h, min, sec, s and plurals.
    let hours = TimeAxis::parse("hr since 1990-01-01", None).unwrap();
    close(hours.convert_to(36.0, &a).unwrap(), 1.5, 1e-12, "hr");
    let minutes = TimeAxis::parse("min since 1990-01-01", None).unwrap();
    close(minutes.convert_to(1440.0, &a).unwrap(), 1.0, 1e-12, "min");
    let seconds = TimeAxis::parse("secs since 1990-01-01", None).unwrap();
    close(seconds.convert_to(86400.0, &a).unwrap(), 1.0, 1e-12, "secs");
}

#[test]
fn hand_computed_dates_in_each_calendar() {
    // (calendar, reference, days after it, expected date); each row hand computed.
    let rows: [(&str, &str, f64, Ymd); 15] = [
        // noleap (CF 4.4.1: every year 365 days): 31 + 28 = 59 days to 1 March.
        ("noleap", "2000-01-01", 59.0, (2000, 3, 1)),
        ("noleap", "2000-01-01", 365.0, (2001, 1, 1)),
        ("365_day", "2000-01-01", 365.0, (2001, 1, 1)),
        // 360_day (CF 4.4.1: twelve 30-day months): 59 days reach 30 February.
        ("360_day", "2000-01-01", 30.0, (2000, 2, 1)),
        ("360_day", "2000-01-01", 59.0, (2000, 2, 30)),
        ("360_day", "2000-01-01", 360.0, (2001, 1, 1)),
        // all_leap (every year 366 days): 1900 has 29 February.
        ("all_leap", "1900-01-01", 59.0, (1900, 2, 29)),
        ("366_day", "1900-01-01", 366.0, (1901, 1, 1)),
        // proleptic Gregorian: 1900 is not a leap year (divisible by 100), 2000 is (by 400).
        ("proleptic_gregorian", "1900-01-01", 59.0, (1900, 3, 1)),
        ("proleptic_gregorian", "2000-01-01", 59.0, (2000, 2, 29)),
        ("proleptic_gregorian", "2000-01-01", 366.0, (2001, 1, 1)),
        // julian: every fourth year is leap, 1900 included.
        ("julian", "1900-01-01", 59.0, (1900, 2, 29)),
        // standard: 1970-01-01 to 2000-01-01 is 30 × 365 + 7 leap days = 10957 days.
        ("standard", "1970-01-01", 10957.0, (2000, 1, 1)),
        ("gregorian", "1970-01-01", 10957.0, (2000, 1, 1)),
        // standard: the day after Julian 1582-10-04 is Gregorian 1582-10-15 (CF 4.4.1).
        ("standard", "1582-10-04", 1.0, (1582, 10, 15)),
    ];
    for (calendar, reference, days, expected) in rows {
        let a = axis(&format!("days since {reference}"), calendar);
        assert_eq!(
            ymd(&a, days),
            expected,
            "{days} days since {reference} ({calendar})"
        );
    }
    let switch = axis("days since 1582-10-04", "standard");
    assert_eq!(ymd(&switch, -1.0), (1582, 10, 3));
    // hours and fractions of a day.
    let h = axis("hours since 1850-01-01 00:00:00", "noleap");
    let d = h.to_datetime(36.5).unwrap();
    assert_eq!(
        (d.year, d.month, d.day, d.hour, d.minute),
        (1850, 1, 2, 12, 30)
    );
}

#[test]
fn date_to_value_round_trips() {
    for calendar in [
        "standard",
        "proleptic_gregorian",
        "noleap",
        "all_leap",
        "360_day",
        "julian",
    ] {
        let a = axis("days since 1850-01-01 00:00:00", calendar);
        for value in [0.0, 0.5, 15.5, 59.0, 365.25, 36524.75, 91_310.0, -400.125] {
            let when = a.to_datetime(value).unwrap();
            close(a.from_datetime(&when).unwrap(), value, 1e-9, calendar);
        }
    }
    let pg = axis("days since 2000-01-01", "proleptic_gregorian");
    close(
        pg.from_datetime(&DateTime::date(2000, 3, 1)).unwrap(),
        60.0,
        0.0,
        "2000-03-01",
    );
    assert!(axis("days since 2001-01-01", "noleap")
        .from_datetime(&DateTime::date(2004, 2, 29))
        .is_err());
}

#[test]
fn converting_between_two_files_time_units() {
    // One noleap year is 365 days = 8760 hours.
    let a = axis("days since 1850-01-01", "noleap");
    let b = axis("days since 1851-01-01", "noleap");
    let hours = axis("hours since 1850-01-01", "noleap");
    close(a.convert_to(365.0, &b).unwrap(), 0.0, 1e-12, "days");
    close(a.convert_to(365.0, &hours).unwrap(), 8760.0, 1e-9, "hours");
    let all = b.convert_all(&[0.0, 31.0], &a).unwrap();
    assert_eq!(all, vec![365.0, 396.0]);
    assert!(matches!(
        a.convert_to(0.0, &axis("days since 1850-01-01", "360_day")),
        Err(CalendarError::CalendarMismatch { .. })
    ));
}

#[test]
fn bad_time_units_are_rejected_clearly() {
    for (units, calendar) in [
        ("months since 1850-01-01", "noleap"),
        ("years since 1850-01-01", "360_day"),
        ("days after 1850-01-01", "standard"),
        ("days since", "standard"),
        ("days since 1850-13-01", "standard"),
        ("days since 2001-02-29", "noleap"),
        ("days since 1582-10-10", "standard"),
        ("days since 1850-01-01 25:00:00", "standard"),
        ("days since 1850-01-01 00:00:00 EST", "standard"),
        ("fortnights since 1850-01-01", "standard"),
    ] {
        let err = TimeAxis::parse(units, Some(calendar)).unwrap_err();
        assert!(!err.to_string().is_empty());
    }
    // 30 February exists only in the 360_day calendar.
    assert!(TimeAxis::parse("days since 2000-02-30", Some("360_day")).is_ok());
    let err = TimeAxis::parse("days since 1850-01-01", Some("lunar")).unwrap_err();
    assert!(err.to_string().contains("\"lunar\""), "{err}");
    let err = TimeAxis::parse("months since 1850-01-01", Some("noleap")).unwrap_err();
    assert!(err.to_string().contains("months since 1850-01-01"), "{err}");
}

fn monthly_middays(a: &TimeAxis, years: std::ops::Range<i64>) -> Vec<f64> {
    let mut out = Vec::new();
    for year in years {
        for month in 1..=12 {
            let mut when = DateTime::date(year, month, 15);
            when.hour = 12;
            out.push(a.from_datetime(&when).unwrap());
        }
    }
    out
}

#[test]
fn joining_monthly_noleap_files_finds_gaps_and_overlaps() {
    let a = axis("days since 1850-01-01", "noleap");
    let y1850 = monthly_middays(&a, 1850..1851);
    let y1851 = monthly_middays(&a, 1851..1852);
    let y1852 = monthly_middays(&a, 1852..1853);
    let parts = vec![
        TimePart {
            label: "1852.nc".into(),
            values: y1852.clone(),
        },
        TimePart {
            label: "1850.nc".into(),
            values: y1850.clone(),
        },
        TimePart {
            label: "1851.nc".into(),
            values: y1851.clone(),
        },
    ];
    let joined = join_time_parts(&parts).unwrap();
    assert_eq!(joined.part_order, vec![1, 2, 0]);
    assert_eq!(joined.values.len(), 36);
    let check = check_sampling(&a, &joined.values, None);
    assert_eq!(check.sampling, Sampling::Months(1));
    assert!(
        check.breaks.is_empty(),
        "28-31 day months are not gaps: {:?}",
        check.breaks
    );
    // First value: 14.5 days after 1850-01-01 (15 January, 12:00).
    close(joined.values[0], 14.5, 1e-12, "mid-January");

    // A missing month (June 1851) is reported once.
    let mut holey = y1851.clone();
    holey.remove(5);
    let joined = join_time_parts(&[
        TimePart {
            label: "1850.nc".into(),
            values: y1850.clone(),
        },
        TimePart {
            label: "1851.nc".into(),
            values: holey,
        },
    ])
    .unwrap();
    let check = check_sampling(&a, &joined.values, None);
    assert_eq!(check.breaks.len(), 1);
    let after = joined.values[check.breaks[0].index];
    assert_eq!(a.to_datetime(after).unwrap().month, 7);
    assert!(check.breaks[0].found.contains("2 calendar month"));

    // The same year twice is an overlap, named by file.
    let err = join_time_parts(&[
        TimePart {
            label: "a.nc".into(),
            values: y1850.clone(),
        },
        TimePart {
            label: "b.nc".into(),
            values: y1850.clone(),
        },
    ])
    .unwrap_err();
    let text = err.to_string();
    assert!(text.contains("a.nc") && text.contains("b.nc"), "{text}");
    // Backwards within one file.
    let mut backwards = y1850.clone();
    backwards.swap(3, 4);
    assert!(join_time_parts(&[TimePart {
        label: "c.nc".into(),
        values: backwards
    }])
    .is_err());
}

#[test]
fn joining_monthly_360_day_files() {
    let a = axis("days since 2000-01-01", "360_day");
    let first = monthly_middays(&a, 2000..2001);
    let second = monthly_middays(&a, 2001..2002);
    let joined = join_time_parts(&[
        TimePart {
            label: "2001.nc".into(),
            values: second.clone(),
        },
        TimePart {
            label: "2000.nc".into(),
            values: first.clone(),
        },
    ])
    .unwrap();
    assert!(check_sampling(&a, &joined.values, None).breaks.is_empty());
    // Every step is exactly 30 days in the 360_day calendar.
    assert!(joined
        .values
        .windows(2)
        .all(|w| (w[1] - w[0] - 30.0).abs() < 1e-12));
    let mut short = second.clone();
    short.remove(0);
    let joined = join_time_parts(&[
        TimePart {
            label: "2000.nc".into(),
            values: first,
        },
        TimePart {
            label: "2001.nc".into(),
            values: short,
        },
    ])
    .unwrap();
    let check = check_sampling(&a, &joined.values, None);
    assert_eq!(check.sampling, Sampling::Months(1));
    assert_eq!(check.breaks.len(), 1);
    let i = check.breaks[0].index;
    close(
        joined.values[i] - joined.values[i - 1],
        60.0,
        1e-12,
        "gap length",
    );
}

// ---------------------------------------------------------------- seawater

// The example cast of the TEOS-10 help pages (teos-10.org/pubs/gsw/html/; IOC, SCOR &
// IAPSO 2010, McDougall & Barker 2011): TEOS-10's own published check values.
const CAST_SA: [f64; 6] = [34.7118, 34.8915, 35.0256, 34.8472, 34.7366, 34.7324];
const CAST_CT: [f64; 6] = [28.8099, 28.4392, 22.7862, 10.2262, 6.8272, 4.3236];
const CAST_T: [f64; 6] = [28.7856, 28.4329, 22.8103, 10.2600, 6.8863, 4.4036];
const CAST_P: [f64; 6] = [10.0, 50.0, 125.0, 250.0, 600.0, 1000.0];

#[test]
fn fofonoff_millard_1983_check_values() {
    // Fofonoff & Millard 1983 (UNESCO Tech. Pap. Mar. Sci. 44), the check values printed
    // with the report's subprograms ATG (adiabatic lapse rate, section 7) and THETA
    // (potential temperature, section 8), at S = 40, T = 40 °C (IPTS-68), P = 10000 dbar
    // (from memory; check against the printed report):
    // ATG = 3.255976e-4 °C/dbar; THETA referred to PR = 0 dbar = 36.89073 °C.
    close(
        adiabatic_lapse_rate_ipts68(40.0, 40.0, 10000.0),
        3.255976e-4,
        5e-11,
        "ATG",
    );
    close(
        potential_temperature_ipts68(40.0, 40.0, 10000.0, 0.0),
        36.89073,
        5e-6,
        "THETA",
    );
    // THETA referred back to the original pressure returns the in-situ temperature, and
    // the ITS-90 wrapper agrees with it through t68 = 1.00024 t90 (Saunders 1990).
    let theta = potential_temperature_ipts68(40.0, 40.0, 10000.0, 0.0);
    close(
        potential_temperature_ipts68(40.0, theta, 0.0, 10000.0),
        40.0,
        1e-4,
        "THETA back to 10000 dbar",
    );
    close(
        potential_from_in_situ(40.0, 40.0 / 1.00024, 10000.0),
        36.89073 / 1.00024,
        5e-6,
        "ITS-90",
    );
}

#[test]
fn teos10_density_and_depth_near_the_fofonoff_millard_1983_check_values() {
    // The same report's check values for density and depth (from memory): SIGMA = 59.82037
    // kg m-3 (density 1059.82037 kg m-3, EOS-80) at S = 40, T = 40 °C, P = 10000 dbar, and
    // DEPTH = 9712.653 m at P = 10000 dbar, latitude 30°. acidscape uses TEOS-10 for both
    // (75-term density with SA = SR; p_from_z), not EOS-80: at this extreme corner the two
    // equations of state differ by a few hundredths of a kg m-3 and the two depth formulas
    // by about a metre in ten kilometres, so these are checks of size, not of digits.
    let rho = in_situ_density(40.0, 40.0 / 1.00024, 10000.0).unwrap();
    close(rho, 1059.82037, 0.05, "density at S 40, 40 °C, 10000 dbar");
    close(
        depth_from_sea_pressure(10000.0, 30.0),
        9712.653,
        2.0,
        "depth of 10000 dbar at 30°",
    );
}

#[test]
fn potential_and_in_situ_temperature_round_trip() {
    for s in [0.0, 20.0, 35.0, 40.0] {
        for t in [-2.0, 0.0, 4.0, 15.0, 30.0, 40.0] {
            for p in [0.0, 100.0, 1000.0, 5000.0, 10000.0] {
                let theta = potential_from_in_situ(s, t, p);
                let back = in_situ_from_potential(s, theta, p);
                close(back, t, 2.5e-4, &format!("S={s} t={t} p={p}"));
                if p > 0.0 && t > 4.0 {
                    assert!(theta < t, "compression warms warm water: S={s} t={t} p={p}");
                }
            }
        }
    }
    close(
        potential_from_in_situ(35.0, 10.0, 0.0),
        10.0,
        1e-12,
        "theta at the surface",
    );
    assert!(in_situ_from_potential(35.0, f64::NAN, 100.0).is_nan());
}

/// The adiabat through (S, t68 at p0) at p1, by Fofonoff & Millard 1983's lapse rate
/// integrated in 400 Runge–Kutta steps: a reference for their one-step THETA.
fn adiabat_in_many_steps(s: f64, t68: f64, p0: f64, p1: f64) -> f64 {
    let steps = 400;
    let h = (p1 - p0) / steps as f64;
    (0..steps).fold(t68, |t, k| {
        let p = p0 + h * k as f64;
        potential_temperature_ipts68(s, t, p, p + h)
    })
}

#[test]
fn in_situ_from_potential_over_the_oceanic_range() {
    // Fofonoff & Millard 1983 THETA in one Runge–Kutta step, integrated down (potential to
    // in-situ) as up (in-situ to potential), against their lapse rate integrated in 400 steps,
    // over S 0–42, t −2–40 °C, p to 11000 dbar. Measured here: down within 7.1e-5 °C of the
    // adiabat, up within 1.32e-4 °C (so an exact inverse of the up step, the method before,
    // was off by as much); the round trip closes to 1.2e-10 °C down to 1000 dbar.
    let (mut round_trip_shallow, mut round_trip_deep) = (0.0f64, 0.0f64);
    let (mut down_error, mut up_error) = (0.0f64, 0.0f64);
    for s in [0.0, 10.0, 30.0, 34.5, 35.0, 36.0, 42.0] {
        for t in [-2.0, -1.0, 0.5, 2.0, 4.0, 8.0, 12.0, 20.0, 28.0, 35.0, 40.0] {
            for p in [
                1.0, 50.0, 300.0, 1000.0, 2500.0, 4000.0, 6000.0, 8000.0, 11000.0,
            ] {
                let theta = potential_from_in_situ(s, t, p);
                let error = (in_situ_from_potential(s, theta, p) - t).abs();
                if p <= 1000.0 {
                    round_trip_shallow = round_trip_shallow.max(error);
                } else {
                    round_trip_deep = round_trip_deep.max(error);
                }
                let t68 = t * 1.00024;
                let adiabat_theta68 = adiabat_in_many_steps(s, t68, p, 0.0);
                up_error = up_error.max((theta * 1.00024 - adiabat_theta68).abs());
                let down = in_situ_from_potential(s, adiabat_theta68 / 1.00024, p) * 1.00024;
                down_error = down_error.max((down - t68).abs());
            }
        }
    }
    eprintln!(
        "in_situ_from_potential: {down_error:.2e} °C from the adiabat (THETA up: \
         {up_error:.2e} °C); round trip {round_trip_shallow:.1e} °C to 1000 dbar, \
         {round_trip_deep:.1e} °C deeper"
    );
    assert!(down_error < 7.5e-5, "{down_error:e}");
    assert!(down_error < up_error, "{down_error:e} {up_error:e}");
    assert!(round_trip_shallow < 1e-9, "{round_trip_shallow:e}");
    assert!(round_trip_deep < 2.5e-4, "{round_trip_deep:e}");
}

#[test]
fn teos10_pressure_from_depth() {
    // TEOS-10 help page gsw_p_from_z (75-term), z = -(10..1000) m, lat = 4°N (values from
    // memory: the page's excerpt read here stopped before them).
    let depths = [10.0, 50.0, 125.0, 250.0, 600.0, 1000.0];
    let expected = [
        10.055726724518,
        50.283543374874,
        125.731858435610,
        251.540299593468,
        604.210012340727,
        1007.990337692001,
    ];
    for (d, p) in depths.iter().zip(expected) {
        close(
            sea_pressure_from_depth(*d, 4.0).unwrap(),
            p,
            1e-9,
            "p_from_z",
        );
    }
    // TEOS-10 help page gsw_z_from_p (75-term), p = 10..1000 dbar, lat = 4°N (first value
    // read on the page, the others from memory).
    let heights = [
        -9.9445834469453,
        -49.7180897012550,
        -124.2726219409978,
        -248.4700576548589,
        -595.8253480356214,
        -992.0919060719987,
    ];
    for (p, z) in CAST_P.iter().zip(heights) {
        close(depth_from_sea_pressure(*p, 4.0), -z, 1e-9, "z_from_p");
    }
}

#[test]
fn teos10_potential_from_conservative_temperature() {
    // TEOS-10 help page gsw_pt_from_CT (v3.05).
    let expected = [
        28.783177048624573,
        28.420955597191984,
        22.784953468087107,
        10.230534394434429,
        6.829216587061605,
        4.324534835990236,
    ];
    for i in 0..6 {
        let pt = potential_from_conservative(CAST_SA[i], CAST_CT[i]).unwrap();
        close(pt, expected[i], 1e-9, "pt_from_CT");
    }
}

#[test]
fn teos10_in_situ_from_conservative_temperature_within_half_a_millidegree() {
    // TEOS-10 help page gsw_t_from_CT (v3.01): exact-Gibbs results
    // 28.785580227725703 ... 4.403624452383043. Ours mixes TEOS-10 pt with the EOS-80
    // lapse rate; the difference over this cast is the size of that approximation.
    let expected = [
        28.785580227725703,
        28.432872246163946,
        22.810323087627076,
        10.260010752788906,
        6.886286301029376,
        4.403624452383043,
    ];
    let mut worst: f64 = 0.0;
    for i in 0..6 {
        let t = in_situ_from_conservative(CAST_SA[i], CAST_CT[i], CAST_P[i]).unwrap();
        worst = worst.max((t - expected[i]).abs());
        close(t, expected[i], 5e-4, "t_from_CT");
        // The published in-situ temperatures of the cast, 4 decimals.
        close(t, CAST_T[i], 1e-3, "cast t");
    }
    eprintln!("largest |t - gsw_t_from_CT| over the TEOS-10 cast: {worst:.2e} °C");
    let via_kind = in_situ_temperature(
        TemperatureKind::Conservative,
        CAST_CT[3],
        practical_from_absolute(CAST_SA[3]),
        CAST_P[3],
    )
    .unwrap();
    close(via_kind, expected[3], 1e-3, "via kind");
    assert_eq!(
        in_situ_temperature(TemperatureKind::InSitu, 7.5, 35.0, 900.0).unwrap(),
        7.5
    );
}

#[test]
fn teos10_density_check_values() {
    // TEOS-10 help page gsw_rho (v3.05, 75-term equation, Roquet et al. 2015).
    let expected = [
        1021.839935738108,
        1022.262457966867,
        1024.427195413316,
        1027.790152759127,
        1029.837779000189,
        1032.002453224572,
    ];
    for i in 0..6 {
        let rho = density_from_conservative(CAST_SA[i], CAST_CT[i], CAST_P[i]).unwrap();
        close(rho, expected[i], 1e-9, "rho(SA, CT, p)");
    }
    // The same six cells side by side, as compute converts them.
    let lanes = density_lanes(&CAST_SA, &CAST_CT, &CAST_P);
    for i in 0..6 {
        close(
            lanes[i],
            expected[i],
            1e-9,
            "rho(SA, CT, p), cells side by side",
        );
    }
    // TEOS-10 help page gsw_rho(SA, t, p) of version 2.0 (exact Gibbs function, in-situ t):
    // from SP = SA*35/35.16504, in-situ t and p our chain (SR, FM83 theta, CT, 75-term rho)
    // must agree to within the 75-term fit error plus the theta approximation.
    let expected_from_t = [
        1021.840173185531,
        1022.262689926782,
        1024.427715941676,
        1027.790201811623,
        1029.837714725961,
        1032.002404116447,
    ];
    let mut worst: f64 = 0.0;
    for i in 0..6 {
        let sp = practical_from_absolute(CAST_SA[i]);
        close(
            absolute_from_practical(sp),
            CAST_SA[i],
            1e-12,
            "SR round trip",
        );
        let rho = in_situ_density(sp, CAST_T[i], CAST_P[i]).unwrap();
        worst = worst.max((rho - expected_from_t[i]).abs());
        close(rho, expected_from_t[i], 1e-3, "rho(SP, t, p)");
    }
    eprintln!("largest |rho - gsw_rho(SA,t,p) v2.0| over the TEOS-10 cast: {worst:.2e} kg m-3");
    assert!(in_situ_density(-1.0, 10.0, 0.0).is_err());
}

#[test]
fn reference_salinity_factor() {
    // Millero et al. 2008: SR = (35.16504/35) g/kg × SP; SP = 35 gives 35.16504 g/kg.
    close(absolute_from_practical(35.0), 35.16504, 1e-12, "SR(35)");
    close(practical_from_absolute(35.16504), 35.0, 1e-12, "SP(SR)");
}

#[test]
fn missing_values_stay_missing() {
    // Land cells arrive as NaN and must come out as NaN, not as errors or numbers.
    assert!(in_situ_density(f64::NAN, 10.0, 100.0).unwrap().is_nan());
    assert!(in_situ_density(35.0, f64::NAN, 100.0).unwrap().is_nan());
    assert!(potential_from_conservative(35.0, f64::NAN)
        .unwrap()
        .is_nan());
    assert!(in_situ_from_conservative(f64::NAN, 10.0, 100.0)
        .unwrap()
        .is_nan());
    let c = parse_concentration("mol m-3").unwrap();
    assert!(c.to_umol_per_kg(f64::NAN, 1025.0).is_nan());
}

#[test]
fn combined_state_matches_the_separate_functions() {
    // in_situ_state must agree with in_situ_temperature followed by in_situ_density; the only
    // difference allowed is the round trip of the one-step THETA (in_situ_density goes back
    // up to potential temperature), a few 1e-5 °C at 4000 dbar, times about 0.2 kg m-3 per °C.
    for kind in [
        TemperatureKind::InSitu,
        TemperatureKind::Potential,
        TemperatureKind::Conservative,
    ] {
        for (s, temp, p) in [(35.0, 2.0, 4000.0), (34.2, 27.0, 10.0), (36.5, 12.0, 800.0)] {
            let state = in_situ_state(kind, temp, s, p).unwrap();
            let t = in_situ_temperature(kind, temp, s, p).unwrap();
            close(state.temperature_c, t, 1e-9, "temperature");
            let rho = in_situ_density(s, t, p).unwrap();
            close(state.density_kg_m3, rho, 1e-6, "density");
        }
    }
    // TEOS-10 cast, Conservative Temperature input: density equals gsw_rho(SA, CT, p)
    // (TEOS-10 help page gsw_rho, v3.05) since SA is recovered exactly from SP.
    let sp = practical_from_absolute(CAST_SA[4]);
    let state = in_situ_state(TemperatureKind::Conservative, CAST_CT[4], sp, CAST_P[4]).unwrap();
    close(state.density_kg_m3, 1029.837779000189, 1e-9, "rho from CT");
    assert!(in_situ_state(TemperatureKind::InSitu, 10.0, -0.5, 0.0).is_err());
}
