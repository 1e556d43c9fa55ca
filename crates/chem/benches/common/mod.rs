//! Synthetic ocean cells (invented inputs, not data) shared by the benches, the profiling example
//! and the tests, as single cells and as blocks of slices for `solve_cells`.
#![allow(dead_code)]

use acidscape_chem::{
    CellInputs, CellOutputs, CellStatus, Conditions, ConstantUncertainties, InputPair,
    InputUncertainties, Solution, Uncertainties, Validity,
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

/// A cell from its inputs in the order temperature, salinity, pressure, DIC, alkalinity,
/// phosphate, silicate.
pub fn cell_from(
    [temperature_c, salinity, pressure_dbar, dic, alkalinity, phosphate, silicate]: [f64; 7],
) -> (Conditions, InputPair) {
    let conditions = Conditions {
        temperature_c,
        salinity,
        pressure_dbar,
        phosphate,
        silicate,
    };
    (conditions, InputPair::AlkalinityDic { alkalinity, dic })
}

/// Cells as a structure of arrays.
pub struct CellBlock {
    pub columns: [Vec<f64>; 7],
}

impl CellBlock {
    pub fn new(cells: &[(Conditions, InputPair)]) -> Self {
        let mut columns: [Vec<f64>; 7] = Default::default();
        for (c, pair) in cells {
            let InputPair::AlkalinityDic { alkalinity, dic } = *pair else {
                panic!("cells for a block are (TA, DIC)")
            };
            let values = [
                c.temperature_c,
                c.salinity,
                c.pressure_dbar,
                dic,
                alkalinity,
                c.phosphate,
                c.silicate,
            ];
            for (column, value) in columns.iter_mut().zip(values) {
                column.push(value);
            }
        }
        Self { columns }
    }

    pub fn inputs(&self) -> CellInputs<'_> {
        let [t, s, p, dic, ta, po4, si] = &self.columns;
        CellInputs {
            temperature_c: t,
            salinity: s,
            pressure_dbar: p,
            dic,
            alkalinity: ta,
            phosphate: po4,
            silicate: si,
        }
    }
}

/// Names of the quantities of `solve_cells`, in the order of [`quantities_of`].
pub const QUANTITY_NAMES: [&str; 11] = [
    "pH total",
    "pH seawater",
    "pH free",
    "CO2*",
    "HCO3-",
    "CO3--",
    "pCO2",
    "fCO2",
    "omega aragonite",
    "omega calcite",
    "Revelle factor",
];

/// The quantities `solve_cells` can write, taken from a scalar solution.
pub fn quantities_of(s: &Solution) -> [f64; 11] {
    [
        s.ph_total,
        s.ph_seawater,
        s.ph_free,
        s.co2,
        s.bicarbonate,
        s.carbonate,
        s.pco2_uatm,
        s.fco2_uatm,
        s.omega_aragonite,
        s.omega_calcite,
        s.revelle_factor,
    ]
}

/// Room for every quantity of `solve_cells`, in the order of [`quantities_of`].
pub struct Results {
    pub status: Vec<CellStatus>,
    pub validity: Vec<Validity>,
    pub quantities: [Vec<f64>; 11],
}

impl Results {
    /// Filled with values no solver gives (so that a cell left unwritten shows).
    pub fn new(cells: usize) -> Self {
        Self {
            status: vec![CellStatus::default(); cells],
            validity: vec![Validity(u32::MAX); cells],
            quantities: std::array::from_fn(|_| vec![-1.0; cells]),
        }
    }

    /// Outputs with every quantity requested.
    pub fn every_quantity(&mut self) -> CellOutputs<'_> {
        let mut outputs = CellOutputs::new(&mut self.status, &mut self.validity);
        let [ph, ph_sws, ph_free, co2, hco3, co3, pco2, fco2, omega_a, omega_c, revelle] =
            &mut self.quantities;
        outputs.ph_total = Some(ph);
        outputs.ph_seawater = Some(ph_sws);
        outputs.ph_free = Some(ph_free);
        outputs.co2 = Some(co2);
        outputs.bicarbonate = Some(hco3);
        outputs.carbonate = Some(co3);
        outputs.pco2_uatm = Some(pco2);
        outputs.fco2_uatm = Some(fco2);
        outputs.omega_aragonite = Some(omega_a);
        outputs.omega_calcite = Some(omega_c);
        outputs.revelle_factor = Some(revelle);
        outputs
    }

    /// Status, validity and every quantity of cell `i`.
    pub fn cell(&self, i: usize) -> (CellStatus, Validity, [f64; 11]) {
        (
            self.status[i],
            self.validity[i],
            std::array::from_fn(|k| self.quantities[k][i]),
        )
    }

    pub fn omega_aragonite(&self) -> &[f64] {
        &self.quantities[8]
    }
}
