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

pub mod amplitudes;
pub mod batch;
pub mod bounds;
pub mod continuous;
pub mod dual;
pub mod error;
pub mod estimator;
pub mod greedy;
pub mod grid;
pub mod interop;
pub mod io;
mod kernels;
pub mod metrics;
pub mod model;
pub mod noise;
pub mod postprocess;
pub mod refine;
pub mod scenario;
pub mod sdp;
pub mod subspace;
pub mod sweep;

// The pure-Rust BLAS/LAPACK symbols clarabel's PSD cone links against.
#[cfg(feature = "pure-lapack")]
extern crate finespike_lapack;

/// The complex-number crate of the public API, so that a first program needs no other dependency.
pub use num_complex;
/// The complex type of every amplitude and sample.
pub use num_complex::Complex64;

pub use batch::{estimate_batch, estimate_batch_with_progress};
pub use bounds::{crb, crb_for, single_tone_position_variance, Crb, SpikeBound};
pub use continuous::{Sfw, SfwSettings};
pub use dual::{Certificate, DualPolynomial};
pub use error::{Error, Result};
pub use estimator::{
    Diagnostics, Estimate, Estimator, NoiseLevel, Status, Warning, CLASSICAL_SEPARATION_FC,
    PROVEN_SEPARATION_FC,
};
pub use greedy::{Greedy, GreedySettings};
pub use grid::{GridL1, GridSettings};
pub use metrics::{MatchSettings, Score};
pub use model::{wrap_distance, Domain, Measurements, Spike, Spikes};
pub use noise::{estimate_sigma, residual_sigma, SigmaEstimate, SigmaMethod};
pub use postprocess::PostProcess;
pub use refine::RefineSettings;
pub use scenario::{AmplitudeKind, Sample, Scenario};
pub use sdp::{Ast, Backend, SdpSettings, Tv};
pub use subspace::{
    Esprit, MatrixPencil, ModelOrder, Music, OrderMethod, OrderSelection, SubspaceSettings,
};

/// Names of the estimators available through [`estimator_by_name`].
pub const METHODS: &[&str] = &[
    "sdp", "ast", "sfw", "greedy", "grid", "music", "esprit", "pencil",
];

/// An estimator with default settings, by its method name.
///
/// # Errors
/// [`Error::UnknownMethod`] for a name not in [`METHODS`].
pub fn estimator_by_name(name: &str) -> Result<Box<dyn Estimator>> {
    match name {
        "sdp" => Ok(Box::new(Tv::default())),
        "ast" => Ok(Box::new(Ast::default())),
        "sfw" => Ok(Box::new(Sfw::default())),
        "greedy" => Ok(Box::new(greedy::Greedy::default())),
        "grid" => Ok(Box::new(GridL1::default())),
        "music" => Ok(Box::new(Music::default())),
        "esprit" => Ok(Box::new(Esprit::default())),
        "pencil" => Ok(Box::new(MatrixPencil::default())),
        _ => Err(Error::UnknownMethod {
            name: name.to_string(),
            known: METHODS.join(", "),
        }),
    }
}
