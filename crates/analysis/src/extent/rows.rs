//! The extent totals as tidy rows (one quantity per row, units in their own field), for CSV
//! tables and time-series variables.

use super::{ExtentSummary, Mineral, MineralExtent};

/// One quantity of an [`ExtentSummary`].
#[derive(Clone, Debug, PartialEq)]
pub struct ExtentRow {
    /// Plain quantity name (`wet_volume`, `volume_below_threshold`, …).
    pub quantity: &'static str,
    /// The mineral, for per-mineral quantities.
    pub mineral: Option<Mineral>,
    /// The Ω threshold \[1\], for per-threshold quantities.
    pub threshold: Option<f64>,
    /// The value, `None` where undefined (a mean over no columns).
    pub value: Option<f64>,
    /// UDUNITS-compatible units (`m3`, `m2`, `m`, `1`).
    pub units: &'static str,
    /// A plain description, usable as a `long_name`.
    pub long_name: String,
}

fn row(
    quantity: &'static str,
    mineral: Option<Mineral>,
    threshold: Option<f64>,
    value: Option<f64>,
    units: &'static str,
    long_name: String,
) -> ExtentRow {
    ExtentRow {
        quantity,
        mineral,
        threshold,
        value,
        units,
        long_name,
    }
}

fn mineral_rows(m: Mineral, e: &MineralExtent, out: &mut Vec<ExtentRow>) {
    let name = m.name();
    out.push(row(
        "volume_with_omega",
        Some(m),
        None,
        Some(e.volume_with_omega_m3),
        "m3",
        format!("volume of wet cells with a known omega {name}"),
    ));
    for t in &e.below {
        let th = Some(t.threshold);
        let x = t.threshold;
        let fraction = (e.volume_with_omega_m3 > 0.0).then(|| t.volume_m3 / e.volume_with_omega_m3);
        out.extend([
            row(
                "volume_below_threshold",
                Some(m),
                th,
                Some(t.volume_m3),
                "m3",
                format!("volume of water with omega {name} below {x}"),
            ),
            row(
                "volume_fraction_below_threshold",
                Some(m),
                th,
                fraction,
                "1",
                format!("fraction of the volume with known omega {name} that is below {x}"),
            ),
            row(
                "surface_area_below_threshold",
                Some(m),
                th,
                Some(t.surface_area_m2),
                "m2",
                format!("area of sea surface with surface omega {name} below {x}"),
            ),
            row(
                "area_with_horizon",
                Some(m),
                th,
                Some(t.horizon_area_m2),
                "m2",
                format!("area of water columns with an omega {name} = {x} horizon depth"),
            ),
            row(
                "mean_horizon_depth",
                Some(m),
                th,
                t.mean_horizon_depth_m,
                "m",
                format!("area-weighted mean depth of the omega {name} = {x} horizon"),
            ),
        ]);
    }
}

impl ExtentSummary {
    /// Every quantity as a tidy row: the wet volume and sea-surface area, then per mineral the
    /// volume with known Ω and, per threshold, the volume and volume fraction below it, the
    /// surface area below it, the area with a horizon and the mean horizon depth.
    pub fn rows(&self) -> Vec<ExtentRow> {
        let mut out = vec![
            row(
                "wet_volume",
                None,
                None,
                Some(self.wet_volume_m3),
                "m3",
                "volume of all wet cells".to_string(),
            ),
            row(
                "sea_surface_area",
                None,
                None,
                Some(self.sea_surface_area_m2),
                "m2",
                "area of all wet columns".to_string(),
            ),
        ];
        mineral_rows(Mineral::Aragonite, &self.aragonite, &mut out);
        mineral_rows(Mineral::Calcite, &self.calcite, &mut out);
        out
    }
}
