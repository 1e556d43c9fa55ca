//! The words every figure carries.

use crate::ticks::pretty_units;

/// Title, caption and the quantity shown, with its units.
#[derive(Clone, Debug, PartialEq)]
pub struct Captions {
    /// Run, quantity and time or window, e.g. "pathway-steep · surface Ω aragonite · 2095".
    pub title: String,
    /// A small line under the figure (e.g. the constants used); may be empty.
    pub caption: String,
    /// The quantity on the colour bar or y axis, e.g. "Ω aragonite".
    pub quantity: String,
    /// CF units of the values ("1" for dimensionless).
    pub units: String,
}

impl Captions {
    /// Title, quantity and units, with no caption.
    pub fn new(
        title: impl Into<String>,
        quantity: impl Into<String>,
        units: impl Into<String>,
    ) -> Self {
        Self {
            title: title.into(),
            caption: String::new(),
            quantity: quantity.into(),
            units: units.into(),
        }
    }

    /// The same with a caption line.
    pub fn with_caption(self, caption: impl Into<String>) -> Self {
        Self {
            caption: caption.into(),
            ..self
        }
    }

    /// Axis or colour-bar text: "quantity (units)", or "quantity (detail), units" when the
    /// quantity already ends in parentheses.
    pub(crate) fn quantity_label(&self) -> String {
        let units = pretty_units(&self.units);
        if self.quantity.trim_end().ends_with(')') {
            format!("{}, {units}", self.quantity)
        } else {
            format!("{} ({units})", self.quantity)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Captions;

    #[test]
    fn units_follow_the_quantity() {
        assert_eq!(
            Captions::new("t", "DIC", "umol kg-1").quantity_label(),
            "DIC (µmol kg⁻¹)"
        );
        assert_eq!(
            Captions::new("t", "pH (total scale)", "1").quantity_label(),
            "pH (total scale), dimensionless"
        );
    }
}
