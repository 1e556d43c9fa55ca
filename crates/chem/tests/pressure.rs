//! Pressure corrections (Millero 1995) against hand evaluations of the formula, and their physics.

use acidscape_chem::constants::pressure::{self, ln_pressure_factor};
use acidscape_chem::{equilibrium_constants, solve, Conditions, ConstantChoice, InputPair};

fn at(temperature_c: f64, pressure_dbar: f64) -> Conditions {
    Conditions {
        temperature_c,
        salinity: 35.0,
        pressure_dbar,
        phosphate: 0.0,
        silicate: 0.0,
    }
}

#[test]
fn calcite_solubility_correction_by_hand() {
    // Millero 1995 (coefficients from memory, check-values.md): calcite at 2 °C, 400 bar (4000 dbar).
    // ΔV = -48.76 + 0.5304·2 = -47.6992 cm³ mol-1; ΔK = (-11.76 + 0.3692·2)·1e-3 = -0.0110216;
    // RT = 83.14472·275.15 = 22877.2697;
    // ln(K_P/K_0) = (47.6992·400 + 0.5·(-0.0110216)·400²)/RT = (19079.68 - 881.728)/22877.2697 = 0.795460
    assert!((ln_pressure_factor(&pressure::CALCITE, 2.0, 400.0) - 0.795460).abs() < 1e-6);
    // Ksp has no pH scale, so the assembled constant carries exactly this factor.
    let surface = equilibrium_constants(&at(2.0, 0.0), &ConstantChoice::default()).unwrap();
    let deep = equilibrium_constants(&at(2.0, 4000.0), &ConstantChoice::default()).unwrap();
    assert!(((deep.ksp_calcite / surface.ksp_calcite).ln() - 0.795460).abs() < 1e-6);
}

#[test]
fn bisulfate_correction_on_the_free_scale_by_hand() {
    // KS at 2 °C, 400 bar: ΔV = -18.03 + 0.0466·2 + 0.316e-3·4 = -17.935536; ΔK = (-4.53 + 0.09·2)·1e-3 = -0.00435;
    // ln = (17.935536·400 - 0.5·0.00435·160000)/22877.2697 = (7174.2144 - 348)/22877.2697 = 0.298384
    let surface = equilibrium_constants(&at(2.0, 0.0), &ConstantChoice::default()).unwrap();
    let deep = equilibrium_constants(&at(2.0, 4000.0), &ConstantChoice::default()).unwrap();
    assert!(((deep.ks_free / surface.ks_free).ln() - 0.298384).abs() < 1e-6);
}

#[test]
fn boric_acid_correction_uses_the_millero_1979_a2_sign() {
    // ΔV = -29.48 + 0.1622·2 - 2.608e-3·4 = -29.166032; ΔK = -2.84e-3;
    // ln = (29.166032·400 - 0.5·2.84e-3·160000)/22877.2697 = (11666.4128 - 227.2)/22877.2697 = 0.500025
    assert!((ln_pressure_factor(&pressure::KB, 2.0, 400.0) - 0.500025).abs() < 1e-6);
}

#[test]
fn acid_constants_carry_the_correction_plus_a_small_scale_shift() {
    // Corrected on the seawater scale, then converted to the total scale with in-situ KS and KF: the
    // shift between the scales moves ln K by only a few thousandths.
    let surface = equilibrium_constants(&at(2.0, 0.0), &ConstantChoice::default()).unwrap();
    let deep = equilibrium_constants(&at(2.0, 4000.0), &ConstantChoice::default()).unwrap();
    for (name, ratio, coefficients) in [
        ("K1", deep.k1 / surface.k1, pressure::K1),
        ("K2", deep.k2 / surface.k2, pressure::K2),
        ("KB", deep.kb / surface.kb, pressure::KB),
        ("KW", deep.kw / surface.kw, pressure::KW),
    ] {
        let shift = ratio.ln() - ln_pressure_factor(&coefficients, 2.0, 400.0);
        assert!(
            shift.abs() < 0.01 && shift != 0.0,
            "{name}: scale shift {shift}"
        );
    }
    // Pressure favours dissociation (ΔV < 0): every constant grows with depth (Millero 1995).
    assert!(deep.k1 > surface.k1 && deep.k2 > surface.k2 && deep.kb > surface.kb);
    assert!(deep.ksp_aragonite > surface.ksp_aragonite);
}

#[test]
fn omega_falls_with_pressure_at_fixed_chemistry() {
    // Physics (Millero 1995): CaCO3 solubility rises with pressure faster than [CO3--] does.
    let pair = InputPair::AlkalinityDic {
        alkalinity: 2350.0,
        dic: 2200.0,
    };
    let mut previous = f64::INFINITY;
    for step in 0..=12 {
        let s = solve(
            pair,
            &at(2.0, 500.0 * step as f64),
            &ConstantChoice::default(),
        )
        .unwrap();
        assert!(s.omega_aragonite < previous, "Ω at {} dbar", 500 * step);
        assert!(s.omega_calcite > s.omega_aragonite);
        previous = s.omega_aragonite;
    }
}
