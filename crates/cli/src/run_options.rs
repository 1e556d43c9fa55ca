//! Options shared by several subcommands: which run to read and which constants to use.

use acidscape_chem::{BoronTotal, CarbonicSet, ConstantChoice, FluorideSet};
use acidscape_gridio::{DensityChoice, InputChecks, RunSpec, VariableMapping};
use clap::Args;
use std::error::Error;
use std::path::PathBuf;

/// Which model run to read, and how to interpret it.
#[derive(Args, Debug, Clone)]
pub struct RunOptions {
    /// Run files: paths or glob patterns (quote globs), e.g. 'run/*_2015*.nc'
    #[arg(required = true, value_name = "RUN")]
    pub inputs: Vec<String>,

    /// TOML file naming the run's variables when acidscape cannot find them by CF standard
    /// name or CMIP/OMIP name (see README, "Variable mapping")
    #[arg(long, value_name = "FILE")]
    pub variables: Option<PathBuf>,

    /// Map one role to a variable name, e.g. --variable dic=DIC --variable alkalinity=ALK,
    /// or set its units or kind: --variable alkalinity.units='mmol m-3',
    /// --variable temperature.kind=potential (a kind or units alone apply to the variable
    /// found for that role); overrides the mapping file
    #[arg(long = "variable", value_name = "ROLE=NAME")]
    pub variable_overrides: Vec<String>,

    /// Use this constant density [kg m-3] to turn per-volume concentrations into per-mass,
    /// as a Boussinesq model does, instead of the in-situ TEOS-10 density
    #[arg(long, value_name = "KG_M3")]
    pub reference_density: Option<f64>,

    /// Process inputs whose sampled values look implausible for their role (entirely missing
    /// over the wet cells, or far outside the plausible range over a large part of the grid);
    /// without it such a run is refused before any work. Recorded in the output's metadata
    #[arg(long)]
    pub accept_implausible_inputs: bool,

    /// The run's time steps are irregular on purpose: accept missing steps, uneven steps and
    /// time bounds that do not meet instead of refusing them as gaps
    #[arg(long)]
    pub irregular_time: bool,
}

impl RunOptions {
    /// The validated run specification for the reading crate.
    pub fn spec(&self) -> Result<RunSpec, Box<dyn Error>> {
        let mut mapping = match &self.variables {
            Some(path) => VariableMapping::from_toml_file(path)?,
            None => VariableMapping::default(),
        };
        for pair in &self.variable_overrides {
            let (role, name) = pair.split_once('=').ok_or_else(|| {
                format!("--variable expects ROLE=NAME (e.g. dic=DIC), got '{pair}'")
            })?;
            mapping.set(role.trim(), name.trim())?;
        }
        let density = match self.reference_density {
            None => DensityChoice::InSitu,
            Some(rho) if rho.is_finite() && (900.0..=1100.0).contains(&rho) => {
                DensityChoice::Reference(rho)
            }
            Some(rho) => {
                return Err(format!(
                    "--reference-density {rho} is not a seawater density; expected 900 to 1100 kg m-3 (e.g. 1035)"
                )
                .into())
            }
        };
        Ok(RunSpec {
            inputs: self.inputs.clone(),
            mapping,
            density,
            checks: InputChecks {
                accept_implausible: self.accept_implausible_inputs,
                irregular_time: self.irregular_time,
            },
        })
    }
}

/// Which published constants to use (defaults follow Dickson, Sabine & Christian 2007).
#[derive(Args, Debug, Clone, Default)]
pub struct ConstantOptions {
    /// Carbonic-acid constants K1, K2: lueker2000 (default), millero2006, millero2010, waters2014
    #[arg(long, value_name = "KEY")]
    pub carbonic: Option<String>,

    /// Hydrogen-fluoride constant KF: perez-fraga1987 (default) or dickson-riley1979
    #[arg(long, value_name = "KEY")]
    pub fluoride: Option<String>,

    /// Total boron from salinity: uppstrom1974 (default) or lee2010
    #[arg(long, value_name = "KEY")]
    pub boron: Option<String>,
}

impl ConstantOptions {
    /// The constants choice, with a clear message for an unknown key.
    pub fn choice(&self) -> Result<ConstantChoice, Box<dyn Error>> {
        let mut choice = ConstantChoice::default();
        if let Some(key) = &self.carbonic {
            choice.carbonic = key
                .parse::<CarbonicSet>()
                .map_err(|e| format!("--carbonic: {e}"))?;
        }
        if let Some(key) = &self.fluoride {
            choice.fluoride = key
                .parse::<FluorideSet>()
                .map_err(|e| format!("--fluoride: {e}"))?;
        }
        if let Some(key) = &self.boron {
            choice.boron = key
                .parse::<BoronTotal>()
                .map_err(|e| format!("--boron: {e}"))?;
        }
        Ok(choice)
    }
}
