//! Streams a model run through the carbonate solver in memory-bounded slabs and writes
//! the indicators as CF NetCDF-4.
//!
//! A job reads one slab (one time step × all levels × a block of rows) on a reader thread,
//! solves every cell on the rayon pool, and writes on the calling thread, the three
//! overlapping through bounded channels; NetCDF calls are serialised by the `netcdf` crate,
//! so only reading and writing wait on each other. See [`plan`] for the memory model.

pub mod cells;
pub mod cells_uncertainty;
pub mod column_output;
pub mod columns;
pub mod deal;
mod error;
pub mod extent_table;
pub mod flags;
pub mod geometry;
pub mod horizon_choice;
pub mod indicators;
pub mod job;
mod leftovers;
pub mod memory;
pub mod output;
pub mod plan;
#[cfg(feature = "mpi")]
pub mod ranks;
mod repair;
pub mod resume;
#[cfg(feature = "mpi")]
mod shared_file;
mod start;
pub mod stop;
mod stream;

pub use cells::{cell_sample, VALUE_FILL};
pub use cells_uncertainty::{
    source_key, UncertaintyAmount, UncertaintyFieldSource, UncertaintyRequest, GRID_INPUTS,
};
pub use error::PipelineError;
pub use extent_table::{extent_table_path, ExtentOverview};
pub use flags::{Flag, FlagBit, FlagCounts, FLAG_BITS, FLAG_FILL};
pub use horizon_choice::{HorizonChoice, HorizonPlan};
pub use indicators::{
    parse_list, with_uncertainty_fields, ConcentrationUnit, Indicator, IndicatorChoice,
    OutputField, PhScale, UncertaintyPart, UNCERTAINTY_SUFFIX,
};
pub use job::{
    plan_job, plan_run_slabs, run_job, JobOptions, JobPlan, JobSummary, NoProgress, Progress,
};
pub use memory::{format_bytes, parse_memory_size};
pub use output::{partial_path, progress_path, FLAG_VARIABLE};
pub use plan::{plan_slabs, plan_slabs_reading, ColumnLoad, SlabPlan};
#[cfg(feature = "mpi")]
pub use ranks::{run_job_on_ranks, Ranks};
pub use stop::{signal_name, StopRequest};
