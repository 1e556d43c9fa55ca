//! Palettes, colour ranges and the mapping from values to colours.

use crate::FigureError;

/// The neutral grey of land and missing cells: the grey level farthest from all four
/// palettes (at least 35 RGB units from any of their colours; tested).
pub const MISSING_GREY: [u8; 3] = [160, 160, 160];

/// Palettes from the colorous crate (d3-scale-chromatic's schemes).
///
/// The sequential ones rise monotonically in lightness, so their order survives every kind of
/// colour-vision deficiency and greyscale printing; the diverging ones run between two hues
/// that red–green colour-blind readers still tell apart, through a light neutral centre.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Palette {
    /// Sequential, perceptually uniform (default for single fields).
    Viridis,
    /// Sequential, perceptually uniform, built for red–green colour-blind readers (its blue to
    /// yellow ramp looks nearly the same to them).
    Cividis,
    /// Diverging purple – white – orange (default for differences).
    PurpleOrange,
    /// Diverging red – white – blue.
    RedBlue,
}

impl Palette {
    /// True for palettes centred on zero.
    pub fn is_diverging(self) -> bool {
        matches!(self, Palette::PurpleOrange | Palette::RedBlue)
    }

    fn gradient(self) -> colorous::Gradient {
        match self {
            Palette::Viridis => colorous::VIRIDIS,
            Palette::Cividis => colorous::CIVIDIS,
            Palette::PurpleOrange => colorous::PURPLE_ORANGE,
            Palette::RedBlue => colorous::RED_BLUE,
        }
    }

    /// The colour at `t` in 0…1 along the palette.
    pub fn at(self, t: f64) -> [u8; 3] {
        self.gradient()
            .eval_continuous(t.clamp(0.0, 1.0))
            .into_array()
    }
}

/// How the ends of the colour scale are chosen.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ColourRange {
    /// The given percentiles (0–100) of the valid values; values beyond take the end colours.
    Percentiles { low: f64, high: f64 },
    /// Exactly these values.
    Fixed { low: f64, high: f64 },
}

impl Default for ColourRange {
    /// The 2nd and 98th percentiles: robust to a few outlying cells (common practice).
    fn default() -> Self {
        ColourRange::Percentiles {
            low: 2.0,
            high: 98.0,
        }
    }
}

/// How a figure turns values into colours.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Colouring {
    pub palette: Palette,
    pub range: ColourRange,
}

impl Default for Colouring {
    /// Viridis over the 2nd–98th percentiles: for single fields.
    fn default() -> Self {
        Self {
            palette: Palette::Viridis,
            range: ColourRange::default(),
        }
    }
}

impl Colouring {
    /// Purple–orange centred on zero over the 2nd–98th percentiles: for differences.
    pub fn difference() -> Self {
        Self {
            palette: Palette::PurpleOrange,
            range: ColourRange::default(),
        }
    }

    pub(crate) fn scale_for(&self, values: &[f64]) -> Result<ColourScale, FigureError> {
        ColourScale::for_values(self.palette, values, self.range)
    }
}

/// A value-to-colour mapping over [low, high]; symmetric about zero for diverging palettes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ColourScale {
    palette: Palette,
    low: f64,
    high: f64,
    values_below: bool,
    values_above: bool,
    whole_numbers: bool,
}

impl ColourScale {
    /// Chooses the range for `values` (NaN = missing). A diverging palette gets the symmetric
    /// range ±max(|low|, |high|), so zero falls on its centre colour.
    pub fn for_values(
        palette: Palette,
        values: &[f64],
        range: ColourRange,
    ) -> Result<Self, FigureError> {
        let mut valid: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
        if valid.is_empty() {
            return Err(FigureError::input(
                "the field has no valid values to colour",
            ));
        }
        valid.sort_by(f64::total_cmp);
        let (mut low, mut high) = match range {
            ColourRange::Percentiles { low, high } => {
                if !(0.0..=100.0).contains(&low) || !(0.0..=100.0).contains(&high) || low >= high {
                    return Err(FigureError::input(format!(
                        "colour range percentiles {low}–{high}: expected 0 ≤ low < high ≤ 100"
                    )));
                }
                (percentile(&valid, low), percentile(&valid, high))
            }
            ColourRange::Fixed { low, high } => {
                if !(low.is_finite() && high.is_finite() && low < high) {
                    return Err(FigureError::input(format!(
                        "colour range {low} to {high}: expected finite low < high"
                    )));
                }
                (low, high)
            }
        };
        if palette.is_diverging() {
            let half = low.abs().max(high.abs());
            (low, high) = (-half, half);
        }
        if high <= low {
            let pad = if low == 0.0 { 1.0 } else { 0.05 * low.abs() };
            (low, high) = (low - pad, high + pad);
        }
        Ok(Self {
            palette,
            low,
            high,
            values_below: valid[0] < low,
            values_above: valid[valid.len() - 1] > high,
            whole_numbers: valid.iter().all(|v| v.fract() == 0.0),
        })
    }

    pub fn palette(&self) -> Palette {
        self.palette
    }
    pub fn low(&self) -> f64 {
        self.low
    }
    pub fn high(&self) -> f64 {
        self.high
    }
    /// Some values lie below the range (the colour bar shows a pointed end).
    pub fn values_below(&self) -> bool {
        self.values_below
    }
    /// Some values lie above the range.
    pub fn values_above(&self) -> bool {
        self.values_above
    }

    /// Every valid value is a whole number (years, counts): ticks step by whole numbers.
    pub fn whole_numbers(&self) -> bool {
        self.whole_numbers
    }

    /// Position of `value` along the palette, clamped to 0…1.
    pub fn fraction(&self, value: f64) -> f64 {
        ((value - self.low) / (self.high - self.low)).clamp(0.0, 1.0)
    }

    /// The colour of `value`; missing (NaN) values are grey.
    pub fn colour(&self, value: f64) -> [u8; 3] {
        if value.is_finite() {
            self.palette.at(self.fraction(value))
        } else {
            MISSING_GREY
        }
    }
}

/// Percentile `p` (0–100) of sorted values, linear between order statistics (Hyndman & Fan
/// 1996, definition 7; from memory).
fn percentile(sorted: &[f64], p: f64) -> f64 {
    let position = p / 100.0 * (sorted.len() - 1) as f64;
    let below = position.floor() as usize;
    let above = (below + 1).min(sorted.len() - 1);
    let weight = position - below as f64;
    sorted[below] + weight * (sorted[above] - sorted[below])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn percentiles_interpolate_between_order_statistics() {
        // Hyndman & Fan 1996, definition 7: position p/100 · (n − 1).
        let sorted: Vec<f64> = (1..=5).map(f64::from).collect();
        assert_eq!(percentile(&sorted, 50.0), 3.0);
        assert_eq!(percentile(&sorted, 25.0), 2.0);
        assert!((percentile(&sorted, 10.0) - 1.4).abs() < 1e-12);
        assert_eq!(percentile(&sorted, 100.0), 5.0);
    }

    #[test]
    fn robust_range_ignores_outliers_and_missing() {
        let mut values: Vec<f64> = (0..100).map(f64::from).collect();
        values.push(1e6);
        values.push(f64::NAN);
        let scale =
            ColourScale::for_values(Palette::Viridis, &values, ColourRange::default()).unwrap();
        assert!(scale.low() > 1.0 && scale.low() < 3.0);
        assert!(scale.high() > 97.0 && scale.high() < 100.0);
        assert!(scale.values_above() && scale.values_below());
    }

    #[test]
    fn diverging_scales_are_symmetric() {
        let values = [-0.1, 0.05, 0.3];
        let range = ColourRange::Fixed {
            low: -0.1,
            high: 0.3,
        };
        let scale = ColourScale::for_values(Palette::PurpleOrange, &values, range).unwrap();
        assert_eq!((scale.low(), scale.high()), (-0.3, 0.3));
        assert_eq!(scale.colour(0.0), Palette::PurpleOrange.at(0.5));
    }

    #[test]
    fn whole_number_fields_are_known() {
        let years = [2036.0, 2041.0, f64::NAN];
        let scale = ColourScale::for_values(Palette::Viridis, &years, ColourRange::default());
        assert!(scale.unwrap().whole_numbers());
        let scale = ColourScale::for_values(Palette::Viridis, &[1.5, 2.0], ColourRange::default());
        assert!(!scale.unwrap().whole_numbers());
    }

    #[test]
    fn constant_fields_and_bad_ranges() {
        let scale =
            ColourScale::for_values(Palette::Viridis, &[2.0; 4], ColourRange::default()).unwrap();
        assert!(scale.low() < 2.0 && scale.high() > 2.0);
        let empty = ColourScale::for_values(Palette::Viridis, &[f64::NAN], ColourRange::default());
        assert!(empty.is_err());
        let reversed = ColourRange::Fixed {
            low: 2.0,
            high: 1.0,
        };
        assert!(ColourScale::for_values(Palette::Viridis, &[1.0], reversed).is_err());
    }

    #[test]
    fn missing_grey_is_far_from_every_palette_colour() {
        for palette in [
            Palette::Viridis,
            Palette::Cividis,
            Palette::PurpleOrange,
            Palette::RedBlue,
        ] {
            let nearest = (0..=1000)
                .map(|i| palette.at(i as f64 / 1000.0))
                .map(|c| {
                    c.iter()
                        .zip(MISSING_GREY)
                        .map(|(&a, b)| (a as f64 - b as f64).powi(2))
                        .sum::<f64>()
                        .sqrt()
                })
                .fold(f64::INFINITY, f64::min);
            assert!(nearest > 30.0, "{palette:?}: grey within {nearest}");
        }
    }
}
