//! The region file: a small TOML schema of our own for named regions and depth layers.
//!
//! ```toml
//! # Each region has a name and exactly one of: box, polygon, whole_domain.
//! [[region]]
//! name = "northern shelf"
//! box = { west = 200.0, east = 212.0, south = 38.0, north = 39.0 }
//!
//! [[region]]
//! name = "river plume"
//! polygon = [[200.2, 34.0], [201.6, 34.3], [201.4, 35.2], [200.2, 35.0]]  # [lon, lat] pairs
//!
//! [[region]]
//! name = "whole gulf"
//! whole_domain = true
//!
//! # Optional depth layers: surface_cell = true, or top (and optionally bottom) in metres.
//! [[layer]]
//! name = "surface"
//! surface_cell = true
//!
//! [[layer]]
//! name = "0-200 m"
//! top = 0
//! bottom = 200
//!
//! [[layer]]
//! name = "below 1000 m"
//! top = 1000
//! ```
//! Longitudes in degrees east (any convention; a box or polygon may cross 0° or 180°),
//! latitudes in degrees north, depths in metres, positive down. Unknown keys are errors, so a
//! misspelt key is reported rather than ignored. With no `[[layer]]`, the caller chooses.

use super::{check_names, Layer, LayerKind, LonLatBox, LonLatPolygon, Region, RegionError};
use super::{RegionSet, RegionShape};
use serde::Deserialize;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    #[serde(default)]
    region: Vec<RawRegion>,
    #[serde(default)]
    layer: Vec<RawLayer>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawRegion {
    name: String,
    #[serde(rename = "box")]
    lon_lat_box: Option<LonLatBox>,
    polygon: Option<Vec<[f64; 2]>>,
    #[serde(default)]
    whole_domain: bool,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLayer {
    name: String,
    #[serde(default)]
    surface_cell: bool,
    top: Option<f64>,
    bottom: Option<f64>,
}

/// The regions and layers of a region file.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionFile {
    /// The regions, in file order.
    pub regions: RegionSet,
    /// The depth layers, in file order (empty when the file has none).
    pub layers: Vec<Layer>,
}

impl RegionFile {
    /// Parses region-file text; `source_name` (e.g. the file's path) names it in error messages.
    ///
    /// ```
    /// use acidscape_analysis::regions::RegionFile;
    /// let text = r#"
    /// [[region]]
    /// name = "across the dateline"
    /// box = { west = 170, east = -170, south = -5, north = 5 }
    /// "#;
    /// let file = RegionFile::from_toml_str(text, "pacific.toml")?;
    /// assert_eq!(file.regions.names(), ["across the dateline"]);
    /// assert!(RegionFile::from_toml_str("[[region]]\nname = \"x\"", "bad.toml").is_err());
    /// # Ok::<(), acidscape_analysis::regions::RegionError>(())
    /// ```
    pub fn from_toml_str(text: &str, source_name: &str) -> Result<RegionFile, RegionError> {
        let raw: RawFile = toml::from_str(text).map_err(|e| RegionError::File {
            source_name: source_name.to_string(),
            message: format!(
                "{} (expected [[region]] tables with name and one of box, polygon, whole_domain, and optional [[layer]] tables)",
                e.message().trim_end()
            ),
        })?;
        let in_file = |e: RegionError| RegionError::File {
            source_name: source_name.to_string(),
            message: e.to_string(),
        };
        if raw.region.is_empty() {
            return Err(in_file(RegionError::Shape {
                region: String::new(),
                message: "the file defines no [[region]]".into(),
            }));
        }
        let regions = raw
            .region
            .into_iter()
            .map(region_from_raw)
            .collect::<Result<Vec<_>, _>>()
            .and_then(RegionSet::new)
            .map_err(in_file)?;
        let layers = raw
            .layer
            .into_iter()
            .map(layer_from_raw)
            .collect::<Result<Vec<_>, _>>()
            .map_err(in_file)?;
        check_names("layer", layers.iter().map(|l| l.name.as_str())).map_err(in_file)?;
        Ok(RegionFile { regions, layers })
    }
}

fn region_from_raw(raw: RawRegion) -> Result<Region, RegionError> {
    let name = raw.name;
    let shape = match (raw.lon_lat_box, raw.polygon, raw.whole_domain) {
        (Some(b), None, false) => {
            b.check(&name)?;
            RegionShape::Box(b)
        }
        (None, Some(points), false) => RegionShape::Polygon(LonLatPolygon::new(&name, &points)?),
        (None, None, true) => RegionShape::WholeDomain,
        _ => {
            return Err(RegionError::Shape {
                region: name,
                message: "give exactly one of box, polygon, whole_domain = true".into(),
            })
        }
    };
    Ok(Region { name, shape })
}

fn layer_from_raw(raw: RawLayer) -> Result<Layer, RegionError> {
    let kind = match (raw.surface_cell, raw.top, raw.bottom) {
        (true, None, None) => LayerKind::SurfaceCell,
        (false, Some(top_m), bottom_m) => LayerKind::Depths { top_m, bottom_m },
        _ => {
            return Err(RegionError::Layer {
                layer: raw.name,
                message:
                    "give either surface_cell = true, or top (and optionally bottom) in metres"
                        .into(),
            })
        }
    };
    Layer::new(&raw.name, kind)
}
