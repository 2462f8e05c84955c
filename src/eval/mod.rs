//! Evaluation helpers around the estimators: the file formats ([`io`]; snapshot files, array results
//! and array truths in [`io_snapshots`]), invented scenes ([`scenario`]; multi-snapshot array scenes
//! in [`array_scene`]), matching estimates to a known truth ([`metrics`]), running several methods
//! over many scenes ([`sweep`]) and benchmark campaigns over a grid of conditions ([`campaign`]). The
//! command line is built on these; they are also usable from Rust for Monte Carlo studies.

pub mod array_scene;
mod array_truth;
pub mod campaign;
pub mod io;
pub mod io_snapshots;
pub mod metrics;
pub mod scenario;
pub mod sweep;
