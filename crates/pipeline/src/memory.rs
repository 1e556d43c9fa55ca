//! Memory sizes as users type them ("2GiB", "512MiB", "1.5G") and as we print them.

use crate::PipelineError;

/// Parses a memory size: a number followed by B, KiB, MiB, GiB, TiB (powers of 1024),
/// or kB, MB, GB, TB (powers of 1000); K, M, G, T alone mean the binary units.
pub fn parse_memory_size(text: &str) -> Result<u64, PipelineError> {
    let bad = |why: &str| PipelineError::Option {
        option: "--memory-budget".into(),
        message: format!("'{text}' {why}; expected a size such as 512MiB, 2GiB or 1.5GB"),
    };
    let trimmed = text.trim();
    let split = trimmed
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(trimmed.len());
    let (number, unit) = trimmed.split_at(split);
    let value: f64 = number.parse().map_err(|_| bad("has no number"))?;
    let multiplier: f64 = match unit.trim().to_ascii_lowercase().as_str() {
        "" | "b" => 1.0,
        "k" | "kib" => 1024.0,
        "m" | "mib" => 1024.0_f64.powi(2),
        "g" | "gib" => 1024.0_f64.powi(3),
        "t" | "tib" => 1024.0_f64.powi(4),
        "kb" => 1e3,
        "mb" => 1e6,
        "gb" => 1e9,
        "tb" => 1e12,
        _ => return Err(bad("has an unknown unit")),
    };
    let bytes = value * multiplier;
    if !bytes.is_finite() || bytes < 1.0 || bytes > u64::MAX as f64 {
        return Err(bad("is not a usable size"));
    }
    Ok(bytes as u64)
}

/// Formats a byte count with a binary unit, e.g. "1.50 GiB".
pub fn format_bytes(bytes: u64) -> String {
    const UNITS: [&str; 5] = ["B", "KiB", "MiB", "GiB", "TiB"];
    let mut value = bytes as f64;
    let mut unit = 0;
    while value >= 1024.0 && unit + 1 < UNITS.len() {
        value /= 1024.0;
        unit += 1;
    }
    if unit == 0 {
        format!("{bytes} B")
    } else {
        format!("{value:.2} {}", UNITS[unit])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // IEC 80000-13 binary prefixes (KiB = 1024 B) and SI prefixes (kB = 1000 B).
    #[test]
    fn parses_binary_and_decimal_units() {
        assert_eq!(parse_memory_size("2GiB").unwrap(), 2 * 1024 * 1024 * 1024);
        assert_eq!(parse_memory_size("512MiB").unwrap(), 512 * 1024 * 1024);
        assert_eq!(parse_memory_size("1.5G").unwrap(), 3 * 512 * 1024 * 1024);
        assert_eq!(parse_memory_size("3GB").unwrap(), 3_000_000_000);
        assert_eq!(parse_memory_size("4096").unwrap(), 4096);
    }

    #[test]
    fn rejects_nonsense() {
        for text in ["", "lots", "2XB", "0", "-1GiB", "GiB"] {
            let err = parse_memory_size(text).unwrap_err().to_string();
            assert!(err.contains("--memory-budget"), "{text}: {err}");
        }
    }

    #[test]
    fn formats_sizes() {
        assert_eq!(format_bytes(512), "512 B");
        assert_eq!(format_bytes(3 * 1024 * 1024 * 1024 / 2), "1.50 GiB");
    }
}
