//! `describe`: what acidscape understood of a run, and how it would split the work.

use crate::run_options::RunOptions;
use acidscape_gridio::Run;
use acidscape_pipeline::{parse_memory_size, plan_slabs, IndicatorChoice};
use clap::Args;
use std::error::Error;

#[derive(Args, Debug)]
pub struct DescribeArgs {
    #[command(flatten)]
    pub run: RunOptions,

    /// Memory the compute job may use, for the work-split estimate (e.g. 512MiB, 4GiB)
    #[arg(long, value_name = "SIZE", default_value = "2GiB")]
    pub memory_budget: String,
}

pub fn run(args: &DescribeArgs) -> Result<(), Box<dyn Error>> {
    let budget = parse_memory_size(&args.memory_budget)?;
    let run = Run::open(&args.run.spec()?)?;
    println!("{}", run.report());
    let shape = run.shape();
    let fields = IndicatorChoice::default().fields()?.len();
    let plan = plan_slabs(
        [shape.levels, shape.rows, shape.cols],
        run.time_steps(),
        fields,
        budget,
    )?;
    println!("Work split for `compute` with its default indicators:");
    println!("{plan}");
    Ok(())
}
