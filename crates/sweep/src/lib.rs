//! # nivalis-sweep
//!
//! Parameter sweeps over disk files (`nivalis sweep`, the Python module's
//! `nivalis.sweep`; schema in docs/sweep.md). A sweep file names a base disk
//! and axes of dotted field paths (explicit values, or linear or logarithmic
//! ranges) combined as a grid product or a zip; optionally planets to place
//! and observations to fit in every model. Every grid point is the base disk
//! with the axis values set ([`nivalis_disk_files::set_path`]) and read by the
//! same validating reader as a file, so a point whose values are invalid is
//! listed with the reader's problems and the rest run.
//!
//! Points are split into contiguous shards ([`ShardSpec`]) for cluster job
//! arrays; each shard writes Apache Parquet ([`parquet_io`]) and a small JSON
//! record with its checksum, and [`output::merge`] verifies them and joins
//! them into one dataset.

pub mod definition;
#[cfg(feature = "parquet")]
pub mod output;
#[cfg(feature = "parquet")]
pub mod parquet_io;
pub mod run;
pub mod shard;

pub use definition::{Axis, Combine, Sweep, SWEEP_SCHEMA};
#[cfg(feature = "parquet")]
pub use output::{merge, run_shard, MergeReport, ShardReport};
pub use run::{Column, ColumnData, ColumnInfo, FailedPoint, Part};
pub use shard::ShardSpec;

/// A sweep-level error: every problem, each naming the sweep-file path
/// (`axes[0].path`), the value and what is allowed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SweepError(pub Vec<nivalis_disk_files::Problem>);

impl SweepError {
    /// One problem with a path and a message.
    pub fn one(path: impl Into<String>, message: impl Into<String>) -> SweepError {
        SweepError(vec![nivalis_disk_files::Problem::new(path, message)])
    }
}

impl std::fmt::Display for SweepError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        // One line per problem, as a disk file's problems.
        nivalis_disk_files::Problems(self.0.clone()).fmt(f)
    }
}

impl std::error::Error for SweepError {}

/// A problem as JSON `{path, value, allowed, message}` (the manifest's form).
pub fn problem_json(p: &nivalis_disk_files::Problem) -> serde_json::Value {
    serde_json::json!({
        "path": p.path,
        "value": p.value,
        "allowed": p.allowed,
        "message": p.message,
    })
}
