//! Settings of the grid ℓ1 estimator.

use crate::error::{check, Result};
use crate::postprocess::PostProcess;

/// Settings of the grid ℓ1 estimator; the defaults work for the demo and test problems.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridSettings {
    /// Grid points per band coefficient, i.e. per `1/N` (default 8): `M = oversample · N`.
    pub oversample: usize,
    /// FISTA iteration limit (default 20 000).
    pub max_iter: usize,
    /// Relative duality gap `(P − D)/P` at which the solve is complete (default 1e-6).
    pub tolerance: f64,
    /// Multiplier `η` of the noise-based weight `λ = ησ√(|K| ln M)` (default 1.5; module docs).
    pub eta: f64,
    /// Grid-mismatch part of the weight, `λ ≥ ρ‖A*y‖_∞` (default `None`: `ρ = 1.5 (π/oversample)²/8`;
    /// module docs).
    pub mismatch_fraction: Option<f64>,
    /// Empty grid points bridged inside one cluster (default 2; at most `oversample / 2` is used).
    pub cluster_gap: usize,
    /// LASSO rounds: the first on the data, each further one on the residual of the spikes found so
    /// far, with the weight recomputed from it (default 3; module docs).
    pub rounds: usize,
    /// Merging, amplitude floor and least-squares polish of the cluster positions.
    pub postprocess: PostProcess,
}

impl Default for GridSettings {
    fn default() -> Self {
        GridSettings {
            oversample: 8,
            max_iter: 20_000,
            tolerance: 1e-6,
            eta: 1.5,
            mismatch_fraction: None,
            cluster_gap: 2,
            rounds: 3,
            postprocess: PostProcess::default(),
        }
    }
}

impl GridSettings {
    /// Set the grid oversampling (points per `1/N`), in `2..=64`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_oversample(mut self, oversample: usize) -> Result<Self> {
        self.oversample = check::that(
            "oversample",
            oversample,
            (2..=64).contains(&oversample),
            "must lie in 2..=64",
        )?;
        Ok(self)
    }

    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        check::iterations("max_iter", max_iter)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the relative duality-gap tolerance, in `[1e-14, 0.1]`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        check::that(
            "tolerance",
            tolerance,
            (1e-14..=0.1).contains(&tolerance),
            "must lie in [1e-14, 0.1]",
        )?;
        self.tolerance = tolerance;
        Ok(self)
    }

    /// Set the weight multiplier `η` (positive, finite).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] otherwise.
    pub fn with_eta(mut self, eta: f64) -> Result<Self> {
        check::that(
            "eta",
            eta,
            eta.is_finite() && eta > 0.0,
            "must be positive and finite",
        )?;
        self.eta = eta;
        Ok(self)
    }

    /// Set the grid-mismatch fraction `ρ` of the weight, in `(0, 1)`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_mismatch_fraction(mut self, fraction: f64) -> Result<Self> {
        check::that(
            "mismatch_fraction",
            fraction,
            fraction > 0.0 && fraction < 1.0,
            "must lie in (0, 1)",
        )?;
        self.mismatch_fraction = Some(fraction);
        Ok(self)
    }

    /// The fraction `ρ` in use: the one set, or `1.5 (π/oversample)²/8` (module docs).
    pub fn effective_mismatch_fraction(&self) -> f64 {
        self.mismatch_fraction.unwrap_or_else(|| {
            let r = std::f64::consts::PI / self.oversample as f64;
            1.5 * r * r / 8.0
        })
    }

    /// Set the number of empty grid points bridged inside a cluster, at most `oversample / 2` (a
    /// cluster must stay narrower than the main lobe `1/N` of one spike).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] above that.
    pub fn with_cluster_gap(mut self, gap: usize) -> Result<Self> {
        self.cluster_gap = check::that(
            "cluster_gap",
            gap,
            gap <= self.oversample / 2,
            "must be at most oversample / 2 grid points",
        )?;
        Ok(self)
    }

    /// Set the number of LASSO rounds, in `1..=10`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_rounds(mut self, rounds: usize) -> Result<Self> {
        self.rounds = check::that(
            "rounds",
            rounds,
            (1..=10).contains(&rounds),
            "must lie in 1..=10",
        )?;
        Ok(self)
    }

    /// Check settings written directly into the public fields against the rules of the setters
    /// (`cluster_gap` is used up to `oversample / 2`, so any value passes).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for the first field that breaks its rule.
    pub fn validated(&self) -> Result<Self> {
        let s = GridSettings::default()
            .with_oversample(self.oversample)?
            .with_max_iter(self.max_iter)?
            .with_tolerance(self.tolerance)?
            .with_eta(self.eta)?
            .with_rounds(self.rounds)?;
        if let Some(f) = self.mismatch_fraction {
            s.with_mismatch_fraction(f)?;
        }
        Ok(*self)
    }

    /// Set the post-processing.
    pub fn with_postprocess(mut self, postprocess: PostProcess) -> Self {
        self.postprocess = postprocess;
        self
    }
}
