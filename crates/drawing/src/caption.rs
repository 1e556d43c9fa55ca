//! The small caption line under a figure: synthetic data said first, the constants the values
//! were computed with (from the file's global attributes), what the figure shows beyond the
//! title, and the user's note.

use acidscape_chem::{BoronTotal, CarbonicSet, FluorideSet, FIXED_SOURCES};
use acidscape_gridio::IndicatorFile;
use std::str::FromStr;

/// "Constants: K1, K2 Lueker et al. 2000 (total scale); KF Perez & Fraga 1987; total boron
/// Uppström 1974; Ksp Mucci 1983; pressure corrections Millero 1995." from the attributes
/// `compute` writes (`compare` copies them), or a sentence saying they are not recorded.
pub(crate) fn constants(file: &IndicatorFile) -> String {
    let chosen = |key: &str, name: fn(&str) -> Option<&'static str>| {
        file.global_attribute(key)
            .map(|value| name(&value).map_or(value.clone(), str::to_string))
    };
    let carbonic = chosen("carbonic_acid_constants", |k| {
        CarbonicSet::from_str(k).ok().map(CarbonicSet::short_name)
    });
    let fluoride = chosen("hydrogen_fluoride_constant", |k| {
        FluorideSet::from_str(k).ok().map(FluorideSet::short_name)
    });
    let boron = chosen("total_boron", |k| {
        BoronTotal::from_str(k).ok().map(BoronTotal::short_name)
    });
    let (Some(carbonic), Some(fluoride), Some(boron)) = (carbonic, fluoride, boron) else {
        return format!(
            "Constants: not recorded in {}.",
            file.path().file_name().map_or_else(
                || file.path().display().to_string(),
                |n| n.to_string_lossy().into_owned()
            )
        );
    };
    let fixed: Vec<String> = FIXED_SOURCES
        .split("; ")
        .filter(|entry| entry.starts_with("Ksp") || entry.starts_with("pressure"))
        .map(|entry| match entry.split_once(": ") {
            Some((what, source)) => {
                let what = what.trim_end_matches(" calcite and aragonite");
                format!("{what} {source}")
            }
            None => entry.to_string(),
        })
        .collect();
    format!(
        "Constants: K1, K2 {carbonic}; KF {fluoride}; total boron {boron}; {}.",
        fixed.join("; ")
    )
}

/// "SYNTHETIC data." when the file's global `comment` says its data are synthetic.
pub(crate) fn synthetic(file: &IndicatorFile) -> Option<String> {
    file.global_attribute("comment")
        .filter(|c| c.contains("SYNTHETIC"))
        .map(|_| "SYNTHETIC data (the file's comment says so), not model output.".to_string())
}

/// Joins the non-empty parts into one caption.
pub(crate) fn join(parts: &[Option<String>]) -> String {
    parts
        .iter()
        .flatten()
        .map(|p| p.trim())
        .filter(|p| !p.is_empty())
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    #[test]
    fn parts_join_with_spaces() {
        let parts = [
            Some("A.".to_string()),
            None,
            Some(" ".into()),
            Some("B.".into()),
        ];
        assert_eq!(super::join(&parts), "A. B.");
    }
}
