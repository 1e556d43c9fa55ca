//! `describe`: what acidscape understood of a run, and how it would split the work.

use crate::grid_uncertainty::GridUncertaintyOptions;
use crate::run_options::RunOptions;
use acidscape_gridio::Run;
use acidscape_pipeline::geometry::ColumnGeometry;
use acidscape_pipeline::{
    parse_memory_size, plan_run_slabs, with_uncertainty_fields, ColumnLoad, HorizonChoice,
    HorizonPlan, IndicatorChoice,
};
use clap::Args;
use std::error::Error;

#[derive(Args, Debug)]
pub struct DescribeArgs {
    #[command(flatten)]
    pub run: RunOptions,

    /// Memory the compute job may use, for the work-split estimate (e.g. 512MiB, 4GiB)
    #[arg(long, value_name = "SIZE", default_value = "2GiB")]
    pub memory_budget: String,

    /// compute's uncertainty options, for the estimate (its uncertainty fields and the inputs'
    /// uncertainty fields it reads); the fields are opened and checked against the run
    #[command(flatten)]
    pub uncertainty: GridUncertaintyOptions,
}

pub fn run(args: &DescribeArgs) -> Result<(), Box<dyn Error>> {
    let budget = parse_memory_size(&args.memory_budget)?;
    let uncertainty = args.uncertainty.request()?;
    // Implausible inputs are opened anyway, so the whole report shows what compute would
    // refuse; the verdict comes at the end.
    let mut spec = args.run.spec()?;
    let accepted = spec.checks.accept_implausible;
    spec.checks.accept_implausible = true;
    let run = Run::open(&spec)?;
    println!("{}", run.report());
    let indicators = IndicatorChoice::default();
    let fields = with_uncertainty_fields(indicators.fields()?, uncertainty.as_ref()).len();
    let input_fields = match &uncertainty {
        Some(request) => request.open_fields(&run)?,
        None => Vec::new(),
    };
    for (_, field) in &input_fields {
        println!("Standard uncertainty of {}", field.describe());
    }
    let horizons = HorizonChoice::default().plan(&indicators)?;
    let columns = horizons
        .as_ref()
        .map_or(ColumnLoad::default(), HorizonPlan::column_load);
    let plan = plan_run_slabs(&run, fields, input_fields.len(), columns, budget, None)?;
    let with = if uncertainty.is_some() {
        ", with the uncertainty options given"
    } else {
        " (no uncertainty fields: give compute's uncertainty options to count them)"
    };
    println!("Work split for `compute` with its default indicators and horizons{with}:");
    println!("{plan}");
    println!("Cells' geometry for the saturation horizons and volumes:");
    match ColumnGeometry::of(&run) {
        Ok(geometry) => {
            println!("  cell areas: {}", geometry.area_source);
            println!("  sea floor: {}", geometry.sea_floor_source);
            println!("  level bounds: {}", geometry.vertical.describe());
        }
        Err(why) => println!("  compute would stop here unless given --no-horizons: {why}"),
    }
    let implausible = run.implausible_inputs();
    if !implausible.is_empty() && !accepted {
        return Err(format!(
            "compute would refuse this run: {} input(s) have implausible values (see Checks above); fix the units or the variable mapping, or give --accept-implausible-inputs if the values are what you mean to process",
            implausible.len()
        )
        .into());
    }
    Ok(())
}
