//! The convex estimators: `sdp` ([`Tv`]), `ast` ([`Ast`]) and `sfw` ([`Sfw`]), each a problem
//! statement for a noise level handed to [`super::run`].

use super::settings::{Backend, TvSettings};
use super::{run, Problem};
use crate::error::{check, Error, Result};
use crate::estimator::{ArrayEstimate, Estimate, Estimator, NoiseLevel};
use crate::model::{Measurements, Snapshots};

/// TV-norm minimisation (method name `sdp`): exact (`Fμ = y`) or constrained (`‖y − Fμ‖₂ ≤ δ(σ)`)
/// depending on the noise level ([`Problem::for_noise`]); the solver is chosen by
/// [`TvSettings::backend`].
///
/// # Examples
/// ```
/// use finespike::{Complex64, Domain, Estimator, Measurements, Spikes, Tv};
/// let truth = Spikes::from_parts(&[0.2, 0.45], &[Complex64::new(1.0, 0.0), Complex64::new(0.0, -2.0)])?;
/// let idx: Vec<i64> = (-6..=6).collect();
/// let data = Measurements::synthesize(&truth, -6, 6, &idx, Domain::Fourier)?;
/// let est = Tv::exact().estimate(&data)?;
/// assert_eq!(est.spikes.len(), 2);
/// assert!((est.spikes.positions()[1] - 0.45).abs() < 1e-9);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct Tv {
    /// Solver, certificate and post-processing settings.
    pub settings: TvSettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
}

impl Tv {
    /// Exact recovery: `min ‖μ‖_TV s.t. Fμ = y`.
    pub fn exact() -> Self {
        Tv {
            settings: TvSettings::default(),
            noise: NoiseLevel::Exact,
        }
    }

    /// Constrained recovery with noise of known standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Tv {
            settings: TvSettings::default(),
            noise: NoiseLevel::Known(sigma),
        }
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: TvSettings) -> Self {
        self.settings = settings;
        self
    }

    /// Replace the noise level.
    pub fn with_noise(mut self, noise: NoiseLevel) -> Self {
        self.noise = noise;
        self
    }

    /// Radius `δ = σ √(|K| + 2√|K|)` of the data-fit ball for `|K| = m` complex measurements (a
    /// real-valued record uses `σ √(m + 2√(2m))`, see [`Problem::for_noise`]).
    pub fn delta(sigma: f64, m: usize) -> f64 {
        crate::kernels::noise_ball_radius(sigma, m)
    }
}

impl Estimator for Tv {
    fn name(&self) -> &'static str {
        "sdp"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        run(self.name(), data, self.noise, &self.settings, |sigma| {
            Ok(Problem::for_noise(sigma, data))
        })
    }

    /// The joint (group atomic-norm) problem of all snapshots, exact or constrained
    /// ([`super::joint`]).
    fn estimate_snapshots(&self, data: &Snapshots) -> Result<ArrayEstimate> {
        super::joint::run(self.name(), data, self.noise, &self.settings, |sigma| {
            Ok(super::joint::problem_for_noise(sigma, data))
        })
    }
}

/// Atomic-norm soft thresholding (method name `ast`): `min ½‖y − x‖₂² + τ‖x‖_A` with
/// `τ = η σ √(|K| ln |K|)` (Bhaskar, Tang & Recht 2013, IEEE TSP 61(23)).
#[derive(Debug, Clone)]
pub struct Ast {
    /// Solver, certificate and post-processing settings.
    pub settings: TvSettings,
    /// Noise level (default: estimated from the data). AST needs a positive level.
    pub noise: NoiseLevel,
    /// Multiplier `η` of the regularisation weight (default 1.5; see the module docs of
    /// [`crate::tv`]).
    pub eta: f64,
}

impl Default for Ast {
    fn default() -> Self {
        Ast {
            settings: TvSettings::default(),
            noise: NoiseLevel::Estimate,
            eta: 1.5,
        }
    }
}

impl Ast {
    /// AST with noise of known standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Ast {
            noise: NoiseLevel::Known(sigma),
            ..Ast::default()
        }
    }

    /// Set `η` (positive, finite).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] otherwise.
    pub fn with_eta(mut self, eta: f64) -> Result<Self> {
        self.eta = check::that(
            "eta",
            eta,
            eta.is_finite() && eta > 0.0,
            "must be positive and finite",
        )?;
        Ok(self)
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: TvSettings) -> Self {
        self.settings = settings;
        self
    }

    /// Replace the noise level.
    pub fn with_noise(mut self, noise: NoiseLevel) -> Self {
        self.noise = noise;
        self
    }

    /// The regularisation weight `τ = η σ √(m ln m)` for `m` measurements.
    pub fn tau(&self, sigma: f64, m: usize) -> f64 {
        let m = m.max(2) as f64;
        self.eta * sigma * (m * m.ln()).sqrt()
    }
}

impl Estimator for Ast {
    fn name(&self) -> &'static str {
        "ast"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        check::that(
            "eta",
            self.eta,
            self.eta.is_finite() && self.eta > 0.0,
            "must be positive and finite",
        )?;
        run(self.name(), data, self.noise, &self.settings, |sigma| {
            let Some(s) = sigma else {
                return Err(Error::NeedsNoiseLevel {
                    method: "ast",
                    advice: "soft thresholding has no exact-data form; give sigma, or use 'sdp' \
                             for exact data",
                });
            };
            Ok(Problem::Penalised {
                tau: self.tau(s, data.len()),
            })
        })
    }

    /// The joint penalised problem of all snapshots with `τ = (η/1.5)·σ·q₀.₉₅`, the Monte Carlo
    /// quantile of the noise's dual norm ([`super::joint::tau`]).
    fn estimate_snapshots(&self, data: &Snapshots) -> Result<ArrayEstimate> {
        check::that(
            "eta",
            self.eta,
            self.eta.is_finite() && self.eta > 0.0,
            "must be positive and finite",
        )?;
        super::joint::run(self.name(), data, self.noise, &self.settings, |sigma| {
            let Some(s) = sigma else {
                return Err(Error::NeedsNoiseLevel {
                    method: "ast",
                    advice: "soft thresholding has no exact-data form; give sigma, or use 'sdp' \
                             for exact data",
                });
            };
            let q = super::joint::tau::noise_sup_quantile(
                data.indices(),
                data.band_len(),
                data.snapshot_count(),
            );
            Ok(Problem::Penalised {
                tau: self.eta / 1.5 * s * q,
            })
        })
    }
}

/// TV-norm minimisation by Sliding Frank–Wolfe only (method name `sfw`): the problems of [`Tv`]
/// (exact or constrained, [`Problem::for_noise`]) with the backend fixed to
/// [`Backend::SlidingFrankWolfe`] — no semidefinite program, no fallback.
///
/// # Examples
/// ```
/// use finespike::{Estimator, Scenario, Sfw, Status};
/// // An invented scene: 4 spikes at fc = 40, 1.5/fc apart, exact data.
/// let sample = Scenario::new(40, 4).with_separation(1.5).with_seed(3).generate()?;
/// let est = Sfw::exact().estimate(&sample.data)?;
/// assert_eq!(est.status, Status::Solved);
/// assert_eq!(est.spikes.len(), 4);
/// for (found, truth) in est.spikes.iter().zip(sample.truth.iter()) {
///     assert!(finespike::wrap_distance(found.position, truth.position) * 40.0 < 1e-9);
/// }
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone)]
pub struct Sfw {
    /// Certificate, post-processing and sliding-solver settings (the backend is fixed: a value other
    /// than [`Backend::SlidingFrankWolfe`] or [`Backend::Auto`] is refused).
    pub settings: TvSettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
}

impl Default for Sfw {
    fn default() -> Self {
        Sfw {
            settings: TvSettings::default().with_backend(Backend::SlidingFrankWolfe),
            noise: NoiseLevel::Estimate,
        }
    }
}

impl Sfw {
    /// Exact recovery: `min ‖μ‖_TV s.t. Fμ = y`.
    pub fn exact() -> Self {
        Sfw {
            noise: NoiseLevel::Exact,
            ..Sfw::default()
        }
    }

    /// Constrained recovery with noise of known standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Sfw {
            noise: NoiseLevel::Known(sigma),
            ..Sfw::default()
        }
    }

    /// Replace the settings (the backend is set to Sliding Frank–Wolfe).
    pub fn with_settings(mut self, settings: TvSettings) -> Self {
        self.settings = settings.with_backend(Backend::SlidingFrankWolfe);
        self
    }

    /// Replace the noise level.
    pub fn with_noise(mut self, noise: NoiseLevel) -> Self {
        self.noise = noise;
        self
    }
}

impl Estimator for Sfw {
    fn name(&self) -> &'static str {
        "sfw"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        if self.settings.backend == Backend::InteriorPoint {
            return Err(Error::invalid(
                "backend",
                "interior point",
                "sfw always runs the sliding solver; use 'sdp' for the interior point",
            ));
        }
        let settings = self.settings.with_backend(Backend::SlidingFrankWolfe);
        run(self.name(), data, self.noise, &settings, |sigma| {
            Ok(Problem::for_noise(sigma, data))
        })
    }

    /// The joint problem of [`Tv::estimate_snapshots`] by the group Sliding Frank–Wolfe solver only.
    fn estimate_snapshots(&self, data: &Snapshots) -> Result<ArrayEstimate> {
        if self.settings.backend == Backend::InteriorPoint {
            return Err(Error::invalid(
                "backend",
                "interior point",
                "sfw always runs the sliding solver; use 'sdp' for the interior point",
            ));
        }
        let settings = self.settings.with_backend(Backend::SlidingFrankWolfe);
        super::joint::run(self.name(), data, self.noise, &settings, |sigma| {
            Ok(super::joint::problem_for_noise(sigma, data))
        })
    }
}
