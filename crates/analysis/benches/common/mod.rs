//! Synthetic 50-level water columns shared by the benchmark and the profiling harness.

/// Levels per column.
pub const LEVELS: usize = 50;

/// Columns with exponential-like Ω profiles varying from column to column (synthetic).
pub struct Synthetic {
    /// Level-centre depths \[m\].
    pub depth: Vec<f64>,
    /// Cell volumes \[m³\].
    pub volume: Vec<f64>,
    /// Ω aragonite per column and level.
    pub aragonite: Vec<Vec<f64>>,
    /// Ω calcite per column and level.
    pub calcite: Vec<Vec<f64>>,
}

impl Synthetic {
    /// `columns` synthetic columns.
    pub fn new(columns: usize) -> Synthetic {
        let depth: Vec<f64> = (0..LEVELS).map(|k| 5.0 + 110.0 * k as f64).collect();
        let volume: Vec<f64> = (0..LEVELS)
            .map(|k| 1e10 * (1.0 + k as f64 / 10.0))
            .collect();
        let profile = |c: usize, surface: f64| -> Vec<f64> {
            let scale = 900.0 + (c % 97) as f64 * 10.0;
            depth.iter().map(|z| surface * (-z / scale).exp()).collect()
        };
        Synthetic {
            aragonite: (0..columns).map(|c| profile(c, 3.5)).collect(),
            calcite: (0..columns).map(|c| profile(c, 5.3)).collect(),
            depth,
            volume,
        }
    }

    /// Sea-floor depth below the deepest centre \[m\].
    pub fn floor(&self) -> f64 {
        self.depth[LEVELS - 1] + 55.0
    }
}

use acidscape_analysis::extent::{CorrosiveExtent, ExtentColumn, ExtentThresholds, MineralColumn};
use acidscape_analysis::horizons::WetColumn;

impl Synthetic {
    /// Sum of the horizon depths of columns `0..columns` for Ω aragonite 1, 1.5, 3 and Ω
    /// calcite 1 \[m\].
    pub fn horizons(&self, columns: usize) -> f64 {
        let mut total = 0.0;
        for c in 0..columns {
            let column = WetColumn::new(&self.depth, self.floor()).unwrap();
            for t in [1.0, 1.5, 3.0] {
                let h = column.horizon(&self.aragonite[c], t).unwrap();
                total += h.depth_m.unwrap_or(0.0);
            }
            let h = column.horizon(&self.calcite[c], 1.0).unwrap();
            total += h.depth_m.unwrap_or(0.0);
        }
        total
    }

    /// Corrosive-water accumulation of columns `0..columns` (aragonite 1, 1.5, 3; calcite 1).
    pub fn extent(&self, columns: usize) -> CorrosiveExtent {
        let thresholds = ExtentThresholds::new(vec![1.0, 1.5, 3.0], vec![1.0]).unwrap();
        let mut e = CorrosiveExtent::new(thresholds);
        let (ah, ch) = ([Some(1000.0), Some(600.0), None], [Some(2500.0)]);
        for c in 0..columns {
            let column = ExtentColumn {
                area_m2: 1e10,
                volume_m3: &self.volume,
                aragonite: MineralColumn {
                    omega: &self.aragonite[c],
                    horizon_m: &ah,
                },
                calcite: MineralColumn {
                    omega: &self.calcite[c],
                    horizon_m: &ch,
                },
            };
            e.add_column(&column).unwrap();
        }
        e
    }
}
