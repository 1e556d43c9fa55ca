//! Depth layers of a water column.
//!
//! A cell belongs to a depth layer when its centre does: `top ≤ depth < bottom` (half-open, so
//! that a centre exactly on a boundary between adjacent layers counts once, in the deeper one).
//! Cells are not split between layers; with thick cells a layer's volume is that of the cells
//! whose centres it holds.

use super::RegionError;
use serde::{Deserialize, Serialize};

/// Which cells of a column a layer holds.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub enum LayerKind {
    /// The top wet cell of each column; statistics over it are weighted by area.
    SurfaceCell,
    /// Cells whose centre lies at `top_m ≤ depth < bottom_m` \[m, positive down\]; `bottom_m`
    /// `None` reaches the sea floor. Weighted by volume.
    Depths {
        /// Upper limit \[m\] (inside).
        top_m: f64,
        /// Lower limit \[m\] (outside); `None` for the sea floor.
        bottom_m: Option<f64>,
    },
    /// Every wet cell of the column. Weighted by volume.
    WholeColumn,
}

/// A named depth layer.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Layer {
    /// The name users see (e.g. "0-200 m").
    pub name: String,
    /// Which cells it holds.
    pub kind: LayerKind,
}

impl Layer {
    /// Checks a layer: depths finite, `0 ≤ top < bottom`.
    pub fn new(name: &str, kind: LayerKind) -> Result<Layer, RegionError> {
        if let LayerKind::Depths { top_m, bottom_m } = kind {
            let bottom = bottom_m.unwrap_or(f64::INFINITY);
            let valid = top_m.is_finite() && top_m >= 0.0 && bottom > top_m && !bottom.is_nan();
            if !valid {
                return Err(RegionError::Layer {
                    layer: name.to_string(),
                    message: format!(
                        "needs 0 <= top < bottom (metres, positive down), got top {top_m} bottom {}",
                        bottom_m.map_or("none".to_string(), |b| b.to_string())
                    ),
                });
            }
        }
        Ok(Layer {
            name: name.to_string(),
            kind,
        })
    }

    /// Whether the wet cell `index_from_top` (0 = top wet cell) with centre depth `depth_m`
    /// \[m\] belongs to this layer.
    pub fn holds(&self, index_from_top: usize, depth_m: f64) -> bool {
        match self.kind {
            LayerKind::SurfaceCell => index_from_top == 0,
            LayerKind::Depths { top_m, bottom_m } => {
                depth_m >= top_m && bottom_m.is_none_or(|b| depth_m < b)
            }
            LayerKind::WholeColumn => true,
        }
    }

    /// Whether statistics over this layer are weighted by area (the surface cell) rather than
    /// by volume.
    pub fn weighted_by_area(&self) -> bool {
        self.kind == LayerKind::SurfaceCell
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn adjacent_layers_share_no_centre() {
        let upper = Layer::new(
            "0-200 m",
            LayerKind::Depths {
                top_m: 0.0,
                bottom_m: Some(200.0),
            },
        )
        .unwrap();
        let lower = Layer::new(
            "below 200 m",
            LayerKind::Depths {
                top_m: 200.0,
                bottom_m: None,
            },
        )
        .unwrap();
        for depth in [0.0, 199.999, 200.0, 200.001, 5000.0] {
            assert_eq!(
                u8::from(upper.holds(3, depth)) + u8::from(lower.holds(3, depth)),
                1
            );
        }
        assert!(lower.holds(3, 200.0));
        let surface = Layer::new("surface", LayerKind::SurfaceCell).unwrap();
        assert!(surface.holds(0, 12.0) && !surface.holds(1, 3.0));
        assert!(surface.weighted_by_area() && !upper.weighted_by_area());
    }

    #[test]
    fn bad_layers_are_errors() {
        for (top, bottom) in [(-1.0, Some(10.0)), (10.0, Some(10.0)), (f64::NAN, None)] {
            let kind = LayerKind::Depths {
                top_m: top,
                bottom_m: bottom,
            };
            assert!(Layer::new("x", kind).is_err());
        }
    }
}
