//! Synthetic ocean cells (invented inputs, not data) shared by the benches and the profiling
//! example.

use acidscape_chem::{
    Conditions, ConstantUncertainties, InputPair, InputUncertainties, Uncertainties,
};

/// Cell `i`: surface to 6000 dbar, about -1 to 31 °C, S 32-37, with (TA, DIC) growing with depth.
pub fn synthetic_cell(i: usize) -> (Conditions, InputPair) {
    let depth_fraction = (i % 37) as f64 / 36.0;
    let f = (i % 1000) as f64 / 1000.0;
    let conditions = Conditions {
        temperature_c: 30.0 - 31.0 * depth_fraction.sqrt() + f,
        salinity: 32.0 + 5.0 * ((i * 7919) % 101) as f64 / 100.0,
        pressure_dbar: 6000.0 * depth_fraction,
        phosphate: 0.2 + 2.5 * depth_fraction,
        silicate: 2.0 + 140.0 * depth_fraction,
    };
    let pair = InputPair::AlkalinityDic {
        alkalinity: 2280.0 + 100.0 * depth_fraction + 20.0 * f,
        dic: 1950.0 + 330.0 * depth_fraction + 10.0 * f,
    };
    (conditions, pair)
}

/// What a grid would propagate: alkalinity and DIC (2 µmol kg-1), temperature (0.1 °C),
/// salinity (0.01), nutrients (5 %) and the constants of Orr et al. 2018; pressure left out, as
/// a model's depth is not uncertain. Illustrative values, not recommendations.
#[allow(dead_code)] // the `solve` bench does not propagate
pub fn every_source(conditions: &Conditions) -> Uncertainties {
    Uncertainties {
        inputs: InputUncertainties {
            alkalinity: 2.0,
            dic: 2.0,
            temperature: 0.1,
            salinity: 0.01,
            phosphate: 0.05 * conditions.phosphate,
            silicate: 0.05 * conditions.silicate,
            ..Default::default()
        },
        constants: ConstantUncertainties::ORR_2018,
    }
}
