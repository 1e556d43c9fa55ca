//! `describe`: what acidscape understood of a run, and how it would split the work.

use crate::run_options::RunOptions;
use acidscape_gridio::Run;
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
    let run = Run::open(&args.run.spec()?)?;
    println!("{}", run.report());
    Ok(())
}
