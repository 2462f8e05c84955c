//! # finespike
//!
//! Super-resolution of off-grid spikes — point sources, spectral lines — from band-limited Fourier
//! samples, finer than the Rayleigh limit `1/fc`, by convex optimisation.
//!
//! The data are `y_k = Σ_j a_j exp(−i2πkτ_j) + n_k` for `k` in a measured set `K ⊆ {−fc, …, fc}`
//! ([`Measurements`]); time samples of a sum of complex exponentials are the same problem
//! ([`Measurements::from_time_samples`]). Every method implements the [`Estimator`] trait and returns an
//! [`Estimate`]: spikes, a [`Status`] and [`Diagnostics`] (separation against the proven thresholds,
//! residual, dual certificate, plain-language warnings).
//!
//! The main method, [`Tv`] (`sdp`), minimises the total-variation norm through its dual, a
//! semidefinite program solved with clarabel; the support is where the dual polynomial reaches modulus
//! one (Candès & Fernandez-Granda 2014, CPAM 67(6)).
//!
//! ```
//! use finespike::{Estimator, Scenario, Tv};
//! // An invented scene: 3 spikes at fc = 8, closest pair 1.5/fc apart, exact data.
//! let sample = Scenario::new(8, 3).with_separation(1.5).with_seed(7).generate()?;
//! let estimate = Tv::exact().estimate(&sample.data)?;
//! assert!(estimate.status.is_usable());
//! assert_eq!(estimate.spikes.len(), 3);
//! for (found, truth) in estimate.spikes.iter().zip(sample.truth.iter()) {
//!     assert!(finespike::wrap_distance(found.position, truth.position) * 8.0 < 1e-5);
//! }
//! # Ok::<(), finespike::Error>(())
//! ```
//!
//! This crate is for engineering and research analysis. It is not validated for clinical or
//! safety-critical decisions, which stay with qualified practice and local rules.

#![warn(missing_docs)]

// Layers, each importing only from the ones above it:
//   error, model                 validated data, spikes, the forward operator, thresholds
//   estimator                    the Estimator trait, Estimate, Status, Warning, Diagnostics
//   kernels, dual, bounds,       shared numerics: band frame, peak scan, least squares, polish,
//   noise, postprocess           Hankel SVD; dual polynomial; CRB; σ; the shared post-processing
//   tv, greedy, grid, subspace   the estimators
//   registry, eval               methods by name; file formats, scenes, scoring and sweeps
pub mod batch;
mod bounds;
mod dual;
mod error;
mod estimator;
pub mod eval;
mod greedy;
pub mod grid;
pub mod interop;
mod kernels;
pub mod lines;
pub mod model;
mod noise;
mod postprocess;
pub mod registry;
pub mod subspace;
pub mod tv;

// The pure-Rust BLAS/LAPACK symbols clarabel's PSD cone links against.
#[cfg(feature = "pure-lapack")]
extern crate finespike_lapack;

/// The complex-number crate of the public API, so that a first program needs no other dependency.
pub use num_complex;
/// The complex type of every amplitude and sample.
pub use num_complex::Complex64;

pub use batch::{estimate_batch, estimate_batch_with_progress, estimate_snapshots_batch};
pub use bounds::{
    conditional_crb, crb, crb_for, single_tone_position_variance, stochastic_crb, Crb, SpikeBound,
};
pub use dual::{Certificate, DualPolynomial};
pub use error::{Error, Result};
pub use estimator::{
    ArrayAssembly, ArrayDiagnostics, ArrayEstimate, Diagnostics, DiagnosticsBuilder, Estimate,
    Estimator, Line, NoiseLevel, Source, Status, Warning, SNAPSHOT_METHODS,
};
pub use eval::metrics::{MatchSettings, Score};
pub use eval::scenario::{AmplitudeKind, Sample, Scenario};
pub use greedy::{Greedy, GreedyFit, GreedySettings, GreedyStop};
pub use grid::{GridL1, GridSettings};
pub use kernels::refine::RefineSettings;
pub use model::{
    wrap_distance, Domain, Measurements, Scale, Snapshots, Spike, Spikes, Trend, TrendFit,
    CLASSICAL_SEPARATION_FC, PROVEN_SEPARATION_FC,
};
pub use noise::{
    estimate_sigma, estimate_snapshot_sigma, residual_sigma, NoiseColour, SigmaEstimate,
    SigmaMethod, MAX_COVARIANCE_SENSORS,
};
pub use postprocess::PostProcess;
pub use registry::{estimator_by_name, METHODS};
pub use subspace::{
    Esprit, MatrixPencil, ModelOrder, Music, OrderMethod, OrderSelection, SubspaceSettings,
};
pub use tv::{Ast, Backend, InteriorPointSettings, Sfw, SlidingSettings, Tv, TvSettings};
