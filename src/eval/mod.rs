//! Evaluation helpers around the estimators: the file formats ([`io`]), invented scenes
//! ([`scenario`]), matching estimates to a known truth ([`metrics`]) and running several methods
//! over many scenes ([`sweep`]); benchmark campaigns over a grid of conditions ([`campaign`]). The command line is built on these; they are also usable from Rust
//! for Monte Carlo studies.

pub mod campaign;
pub mod io;
pub mod metrics;
pub mod scenario;
pub mod sweep;
