//! Regions and depth layers, the membership of cell centres, and weighted statistics per
//! region and layer.
//!
//! A region is a longitude-latitude box, a polygon, the cells of one value of an integer mask
//! (values and names from the mask's `flag_values` and `flag_meanings`, CF Conventions 1.10
//! section 3.5, parsed by the caller), or the whole domain. Regions may overlap (a river plume
//! inside a shelf); a cell counts in every region that contains its centre. Membership works
//! the same for rectilinear and curvilinear grids: it needs only each column's centre.

mod file;
mod layers;
mod shapes;
mod stats;
#[cfg(test)]
mod tests;

pub use file::RegionFile;
pub use layers::{Layer, LayerKind};
pub use shapes::{LonLatBox, LonLatPolygon};
pub use stats::{FieldSpec, RegionColumn, RegionRow, RegionStatistics, Weighting};

use crate::check_length;
use thiserror::Error;

/// Region definitions that cannot be used.
#[derive(Clone, Debug, Error, PartialEq)]
pub enum RegionError {
    /// A shape's numbers do not describe a region.
    #[error("region '{region}': {message}")]
    Shape {
        /// The region's name.
        region: String,
        /// What is wrong.
        message: String,
    },
    /// A layer's depths do not describe a layer.
    #[error("layer '{layer}': {message}")]
    Layer {
        /// The layer's name.
        layer: String,
        /// What is wrong.
        message: String,
    },
    /// Two regions or layers share a name, or a name is empty.
    #[error("{what} names must be non-empty and distinct: '{name}'")]
    Name {
        /// `region` or `layer`.
        what: &'static str,
        /// The name.
        name: String,
    },
    /// A region file that is not valid.
    #[error("{source_name}: {message}")]
    File {
        /// The file (or other source) as the caller named it.
        source_name: String,
        /// What is wrong.
        message: String,
    },
    /// Arrays that describe the same cells have different lengths, or an index is out of range.
    #[error(transparent)]
    Length(#[from] crate::LengthError),
    /// A column index beyond the columns of a membership.
    #[error("column {column} is outside the {columns} columns the membership was computed for")]
    Column {
        /// The column index given.
        column: usize,
        /// The number of columns.
        columns: usize,
    },
    /// Accumulators built for different regions, layers or fields cannot be merged.
    #[error("cannot merge regional statistics with different regions, layers or fields")]
    Mismatch,
}

/// The shape of one region.
#[derive(Clone, Debug, PartialEq)]
pub enum RegionShape {
    /// Every column of the grid.
    WholeDomain,
    /// A longitude-latitude box.
    Box(LonLatBox),
    /// A longitude-latitude polygon.
    Polygon(LonLatPolygon),
    /// The columns where the integer mask has this value.
    MaskValue(i64),
}

/// A named region.
#[derive(Clone, Debug, PartialEq)]
pub struct Region {
    /// The name users see (from the region file or the mask's `flag_meanings`).
    pub name: String,
    /// Its shape.
    pub shape: RegionShape,
}

/// Checks that names are non-empty and distinct.
pub(crate) fn check_names<'a>(
    what: &'static str,
    names: impl Iterator<Item = &'a str>,
) -> Result<(), RegionError> {
    let mut seen: Vec<&str> = Vec::new();
    for name in names {
        if name.trim().is_empty() || seen.contains(&name) {
            return Err(RegionError::Name {
                what,
                name: name.to_string(),
            });
        }
        seen.push(name);
    }
    Ok(())
}

/// Regions with distinct names.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionSet {
    regions: Vec<Region>,
}

impl RegionSet {
    /// Checks that names are distinct and non-empty.
    pub fn new(regions: Vec<Region>) -> Result<Self, RegionError> {
        check_names("region", regions.iter().map(|r| r.name.as_str()))?;
        Ok(RegionSet { regions })
    }

    /// One region per mask value, named from the mask's `flag_meanings` (`values[i]` is named
    /// `names[i]`).
    pub fn from_mask(values: &[i64], names: &[String]) -> Result<Self, RegionError> {
        check_length(
            "mask region names (one per flag value)",
            values.len(),
            names.len(),
        )?;
        let regions = values
            .iter()
            .zip(names)
            .map(|(&v, name)| Region {
                name: name.clone(),
                shape: RegionShape::MaskValue(v),
            })
            .collect();
        RegionSet::new(regions)
    }

    /// The whole domain as a single region named `name`.
    pub fn whole_domain(name: &str) -> Result<Self, RegionError> {
        RegionSet::new(vec![Region {
            name: name.to_string(),
            shape: RegionShape::WholeDomain,
        }])
    }

    /// The regions, in order.
    pub fn regions(&self) -> &[Region] {
        &self.regions
    }

    /// The region names, in order.
    pub fn names(&self) -> Vec<String> {
        self.regions.iter().map(|r| r.name.clone()).collect()
    }

    /// Which regions contain each column's centre. `lon`, `lat` \[degrees\] per column (for a
    /// rectilinear grid expand them with [`expand_rectilinear`]); `mask` per column, needed
    /// only by mask regions (a fill value that matches no region value excludes a column).
    pub fn membership(
        &self,
        lon: &[f64],
        lat: &[f64],
        mask: Option<&[i64]>,
    ) -> Result<Membership, RegionError> {
        let columns = lon.len();
        check_length("latitudes per column", columns, lat.len())?;
        let needs_mask = self
            .regions
            .iter()
            .any(|r| matches!(r.shape, RegionShape::MaskValue(_)));
        if mask.is_some() || needs_mask {
            let given = mask.map_or(0, <[i64]>::len);
            check_length("mask values per column", columns, given)?;
        }
        let mut offsets = Vec::with_capacity(columns + 1);
        let mut members = Vec::new();
        offsets.push(0);
        for c in 0..columns {
            for (r, region) in self.regions.iter().enumerate() {
                let inside = match &region.shape {
                    RegionShape::WholeDomain => true,
                    RegionShape::Box(b) => b.contains(lon[c], lat[c]),
                    RegionShape::Polygon(p) => p.contains(lon[c], lat[c]),
                    RegionShape::MaskValue(v) => mask.is_some_and(|m| m[c] == *v),
                };
                if inside {
                    members.push(r as u32);
                }
            }
            offsets.push(members.len());
        }
        Ok(Membership {
            regions: self.regions.len(),
            offsets,
            members,
        })
    }
}

/// Longitudes and latitudes per column of a rectilinear grid (row-major: latitude outer), from
/// its 1-D axes.
pub fn expand_rectilinear(lon: &[f64], lat: &[f64]) -> (Vec<f64>, Vec<f64>) {
    let mut lons = Vec::with_capacity(lon.len() * lat.len());
    let mut lats = Vec::with_capacity(lon.len() * lat.len());
    for &y in lat {
        for &x in lon {
            lons.push(x);
            lats.push(y);
        }
    }
    (lons, lats)
}

/// The regions that contain each column (computed once per grid).
#[derive(Clone, Debug, PartialEq)]
pub struct Membership {
    regions: usize,
    offsets: Vec<usize>,
    members: Vec<u32>,
}

impl Membership {
    /// Number of columns.
    pub fn columns(&self) -> usize {
        self.offsets.len() - 1
    }

    /// Number of regions of the set it was computed for.
    pub fn regions(&self) -> usize {
        self.regions
    }

    /// Indices of the regions containing `column`, in region order.
    pub fn of(&self, column: usize) -> &[u32] {
        &self.members[self.offsets[column]..self.offsets[column + 1]]
    }

    /// Number of columns in each region.
    pub fn counts(&self) -> Vec<usize> {
        let mut counts = vec![0; self.regions];
        for &r in &self.members {
            counts[r as usize] += 1;
        }
        counts
    }
}
