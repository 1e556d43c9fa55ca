//! Tick values and their labels.

/// A step of 1, 2, 5 or 10 × 10^n close to `span / target` ("nice numbers", Heckbert 1990,
/// Graphics Gems; from memory).
pub(crate) fn nice_step(span: f64, target: usize) -> f64 {
    let raw = span.abs() / target.max(1) as f64;
    if raw <= 0.0 || !raw.is_finite() {
        return 1.0;
    }
    let magnitude = 10f64.powf(raw.log10().floor());
    let fraction = raw / magnitude;
    let nice = if fraction < 1.5 {
        1.0
    } else if fraction < 3.0 {
        2.0
    } else if fraction < 7.0 {
        5.0
    } else {
        10.0
    };
    nice * magnitude
}

/// A step in degrees that divides the circle evenly (common practice for map graticules).
pub(crate) fn degree_step(span: f64, target: usize) -> f64 {
    const STEPS: [f64; 15] = [
        0.1, 0.2, 0.25, 0.5, 1.0, 2.0, 2.5, 5.0, 10.0, 15.0, 20.0, 30.0, 45.0, 60.0, 90.0,
    ];
    let raw = span.abs() / target.max(1) as f64;
    STEPS
        .iter()
        .copied()
        .find(|&s| s >= raw * 0.999)
        .unwrap_or(90.0)
}

/// Multiples of `step` inside [lo, hi] (either order), ascending.
pub(crate) fn ticks_with_step(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let tolerance = step * 1e-9;
    let first = ((lo - tolerance) / step).ceil() as i64;
    let last = ((hi + tolerance) / step).floor() as i64;
    // Rounded to the step's decimals, so 78 × 0.1 is 7.8 and not 7.800000000000001.
    let scale = 10f64.powi(decimals_for(step) as i32);
    (first..=last)
        .map(|k| (k as f64 * step * scale).round() / scale + 0.0)
        .collect()
}

/// Nice ticks inside [lo, hi], about `target` of them.
pub(crate) fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    ticks_with_step(lo, hi, nice_step(hi - lo, target))
}

/// Decimals needed to tell ticks `step` apart.
pub(crate) fn decimals_for(step: f64) -> usize {
    if step <= 0.0 || !step.is_finite() {
        return 0;
    }
    let mut decimals = 0;
    while decimals < 8
        && ((step * 10f64.powi(decimals as i32)).round() - step * 10f64.powi(decimals as i32)).abs()
            > 1e-6
    {
        decimals += 1;
    }
    decimals
}

/// A number with `decimals` decimals and a typographic minus sign.
pub(crate) fn format_number(value: f64, decimals: usize) -> String {
    let text = format!("{value:.decimals$}");
    let negative_zero = text.starts_with('-') && text[1..].chars().all(|c| c == '0' || c == '.');
    if negative_zero {
        text[1..].to_string()
    } else {
        text.replacen('-', "\u{2212}", 1)
    }
}

/// Labels for evenly spaced ticks, all with the same number of decimals.
pub(crate) fn number_labels(ticks: &[f64]) -> Vec<String> {
    let step = ticks
        .windows(2)
        .map(|w| w[1] - w[0])
        .fold(f64::INFINITY, f64::min);
    let decimals = if step.is_finite() {
        decimals_for(step)
    } else {
        2
    };
    ticks.iter().map(|&v| format_number(v, decimals)).collect()
}

/// A longitude label in −180…180 with E/W (e.g. 200 → "160°W").
pub(crate) fn longitude_label(lon: f64, decimals: usize) -> String {
    let wrapped = (lon + 180.0).rem_euclid(360.0) - 180.0;
    let rounded = format_number(wrapped.abs(), decimals);
    let is_zero = rounded.chars().all(|c| c == '0' || c == '.');
    if is_zero || rounded == format_number(180.0, decimals) {
        format!("{rounded}°")
    } else if wrapped > 0.0 {
        format!("{rounded}°E")
    } else {
        format!("{rounded}°W")
    }
}

/// A latitude label with N/S (e.g. −12.5 → "12.5°S").
pub(crate) fn latitude_label(lat: f64, decimals: usize) -> String {
    let rounded = format_number(lat.abs(), decimals);
    if rounded.chars().all(|c| c == '0' || c == '.') {
        format!("{rounded}°")
    } else if lat > 0.0 {
        format!("{rounded}°N")
    } else {
        format!("{rounded}°S")
    }
}

/// Units as printed: "kg-1" → "kg⁻¹", "degC" → "°C"; "1" or "" means dimensionless.
pub fn pretty_units(units: &str) -> String {
    let trimmed = units.trim();
    if trimmed.is_empty() || trimmed == "1" {
        return "dimensionless".to_string();
    }
    trimmed
        .split_whitespace()
        .map(pretty_unit_token)
        .collect::<Vec<_>>()
        .join(" ")
}

fn pretty_unit_token(token: &str) -> String {
    match token {
        "degC" | "degree_Celsius" | "degrees_Celsius" | "Celsius" => return "°C".to_string(),
        "uatm" => return "µatm".to_string(),
        _ => {}
    }
    let split = token
        .find(|c: char| c == '-' || c.is_ascii_digit())
        .filter(|&at| {
            at > 0
                && token[at..]
                    .trim_start_matches('-')
                    .chars()
                    .all(|c| c.is_ascii_digit())
        });
    let (base, exponent) = match split {
        Some(at) => (&token[..at], &token[at..]),
        None => (token, ""),
    };
    let base = match base {
        "umol" => "µmol",
        other => other,
    };
    let superscript: String = exponent
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        })
        .collect();
    format!("{base}{superscript}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_steps_follow_one_two_five() {
        // Heckbert 1990: steps are 1, 2, 5 or 10 times a power of ten.
        assert_eq!(nice_step(10.0, 5), 2.0);
        assert_eq!(nice_step(0.37, 5), 0.1);
        assert_eq!(nice_step(3700.0, 6), 500.0);
        assert_eq!(nice_ticks(7.66, 8.14, 5), vec![7.7, 7.8, 7.9, 8.0, 8.1]);
    }

    #[test]
    fn degree_steps_divide_the_circle() {
        assert_eq!(degree_step(360.0, 6), 60.0);
        assert_eq!(degree_step(12.0, 5), 2.5);
        for step in [0.25f64, 0.5, 1.0, 2.5, 5.0, 15.0, 30.0, 45.0] {
            assert_eq!((360.0 / step).fract(), 0.0);
        }
    }

    #[test]
    fn labels_share_decimals_and_use_a_true_minus() {
        assert_eq!(number_labels(&[-0.2, 0.0, 0.2]), vec!["−0.2", "0.0", "0.2"]);
        assert_eq!(number_labels(&[1000.0, 2000.0]), vec!["1000", "2000"]);
        assert_eq!(format_number(-0.0001, 2), "0.00");
    }

    #[test]
    fn geographic_labels() {
        assert_eq!(longitude_label(200.0, 0), "160°W");
        assert_eq!(longitude_label(-170.0, 0), "170°W");
        assert_eq!(longitude_label(170.0, 0), "170°E");
        assert_eq!(longitude_label(180.0, 0), "180°");
        assert_eq!(longitude_label(360.0, 0), "0°");
        assert_eq!(longitude_label(202.5, 1), "157.5°W");
        assert_eq!(latitude_label(-12.5, 1), "12.5°S");
        assert_eq!(latitude_label(0.0, 0), "0°");
    }

    #[test]
    fn units_are_typeset() {
        assert_eq!(pretty_units("umol kg-1"), "µmol kg⁻¹");
        assert_eq!(pretty_units("mol m-3"), "mol m⁻³");
        assert_eq!(pretty_units("1"), "dimensionless");
        assert_eq!(pretty_units("m"), "m");
        assert_eq!(pretty_units("degC"), "°C");
        assert_eq!(pretty_units("m2"), "m²");
    }
}
