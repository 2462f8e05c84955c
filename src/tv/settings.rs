//! Settings of the convex estimators: one shared block (solver choice, certificate grid and margin,
//! time limit, post-processing) and one block per solver. Every default is chosen for
//! double-precision exact recovery and works for the noisy problems too.

use crate::error::{check, Result};
use crate::postprocess::PostProcess;

/// Which solver [`super::Tv`] and [`super::Ast`] use for their convex problem.
///
/// Both solve the same problem and report the same diagnostics; they agree on every case both run
/// (objective to 1e-6 relative, positions to 1e-6/fc: `tests/continuous.rs`). The interior point's
/// cost grows like `N⁵`–`N⁶` in the band length `N` (a dense Schur complement of order `~N²/2`), the
/// Sliding Frank–Wolfe solver's like `N log N` per iteration.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[non_exhaustive]
pub enum Backend {
    /// The interior point below [`AUTO_SWITCH_BAND_LEN`] band coefficients, Sliding Frank–Wolfe from
    /// there on. When Sliding Frank–Wolfe cannot certify its solution (a degenerate exact problem,
    /// e.g. nearly as many spikes as coefficients) and the band is at most
    /// [`FALLBACK_MAX_BAND_LEN`] long, the interior point is run instead.
    #[default]
    Auto,
    /// clarabel's interior point on the compact SDP ([`super::interior`]).
    InteriorPoint,
    /// The certified Sliding Frank–Wolfe solver ([`super::sliding`]).
    SlidingFrankWolfe,
}

/// Band length (`kmax − kmin + 1`) from which [`Backend::Auto`] uses Sliding Frank–Wolfe: `fc = 25`.
/// Measured on a 2-core machine (benches `recovery` and `continuous`): the interior point takes
/// ~0.26 s at `fc = 16` and 4–11 s at `fc = 32`, Sliding Frank–Wolfe 2–4 ms at `fc = 32`.
pub const AUTO_SWITCH_BAND_LEN: usize = 50;

/// Longest band on which [`Backend::Auto`] falls back to the interior point when Sliding Frank–Wolfe
/// does not certify its solution (`fc = 32`: seconds, not minutes).
pub const FALLBACK_MAX_BAND_LEN: usize = 65;

/// Settings of clarabel's interior point ([`super::interior`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct InteriorPointSettings {
    /// Iteration limit (default 100; typical runs take 10–20).
    pub max_iter: u32,
    /// Relative and absolute gap and feasibility tolerance (default 1e-8, clarabel's own default).
    pub tolerance: f64,
    /// A maximum of the dual polynomial `|q|` is a support point when `|q| ≥ 1 − support_tolerance`
    /// (default 1e-4).
    pub support_tolerance: f64,
    /// Solve a real-valued record's problem in the real-symmetric form (two PSD blocks of about half
    /// the size; same optimum, about a sixth of the memory and time at `N = 129`) instead of the
    /// complex compact form (default `true`; `false` is for comparisons).
    pub real_symmetric: bool,
}

impl Default for InteriorPointSettings {
    fn default() -> Self {
        InteriorPointSettings {
            max_iter: 100,
            tolerance: 1e-8,
            support_tolerance: 1e-4,
            real_symmetric: true,
        }
    }
}

impl InteriorPointSettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: u32) -> Result<Self> {
        check::iterations("max_iter", max_iter as usize)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the tolerance, in `(0, 1e-2]`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        self.tolerance = check::that(
            "tolerance",
            tolerance,
            tolerance > 0.0 && tolerance <= 1e-2,
            "must lie in (0, 1e-2]",
        )?;
        Ok(self)
    }

    /// Set the support tolerance, in `(0, 0.5)`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_support_tolerance(mut self, tol: f64) -> Result<Self> {
        self.support_tolerance = check::that(
            "support_tolerance",
            tol,
            tol > 0.0 && tol < 0.5,
            "must lie in (0, 0.5)",
        )?;
        Ok(self)
    }

    /// Choose the real-symmetric form for real-valued records (`true`, the default) or the complex
    /// compact form (`false`).
    pub fn with_real_symmetric(mut self, real_symmetric: bool) -> Self {
        self.real_symmetric = real_symmetric;
        self
    }

    /// Every setting checked (fields can be written directly).
    ///
    /// # Errors
    /// As the setters.
    pub fn validated(self) -> Result<Self> {
        Ok(Self::default()
            .with_max_iter(self.max_iter)?
            .with_tolerance(self.tolerance)?
            .with_support_tolerance(self.support_tolerance)?
            .with_real_symmetric(self.real_symmetric))
    }
}

/// Settings of the certified Sliding Frank–Wolfe solver ([`super::sliding`]). The defaults certify
/// double-precision solutions of the test and demo problems and need no tuning.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct SlidingSettings {
    /// Limit on Sliding Frank–Wolfe iterations over the whole solve, continuation and root search
    /// included (default 10 000; a BLASSO solve typically takes 2 to 5 iterations, since every peak
    /// of `|η|` above 1 and at least half the highest enters at once).
    pub max_iter: usize,
    /// Certificate tolerance `ε`: solved when `max |η| ≤ 1 + ε` and `|η(τ_j) − a_j/|a_j|| ≤ ε`
    /// (default 1e-8; raised automatically to the rounding level of `η` at very small weights).
    pub tolerance: f64,
}

impl Default for SlidingSettings {
    fn default() -> Self {
        SlidingSettings {
            max_iter: 10_000,
            tolerance: 1e-8,
        }
    }
}

impl SlidingSettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        check::iterations("max_iter", max_iter)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the certificate tolerance, in `[1e-14, 1e-3]`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        self.tolerance = check::that(
            "tolerance",
            tolerance,
            (1e-14..=1e-3).contains(&tolerance),
            "must lie in [1e-14, 1e-3]",
        )?;
        Ok(self)
    }

    /// Every setting checked (fields can be written directly).
    ///
    /// # Errors
    /// As the setters.
    pub fn validated(self) -> Result<Self> {
        Self::default()
            .with_max_iter(self.max_iter)?
            .with_tolerance(self.tolerance)
    }
}

/// Settings of [`super::Tv`], [`super::Ast`] and [`super::Sfw`]: the shared block and one block per
/// solver. Both solvers read the shared block; each reads only its own block, and which one ran is in
/// [`crate::Diagnostics::solver`].
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct TvSettings {
    /// The solver (default [`Backend::Auto`]; [`super::Sfw`] always uses Sliding Frank–Wolfe).
    pub backend: Backend,
    /// Grid points per band coefficient for the peak searches of the dual polynomial, rounded up to a
    /// power of two (default 16; in `8..=64`: the sliding solver's screening bound needs at least 8).
    pub grid_oversample: usize,
    /// Certificate caution: warn when `|q|` reaches `1 − weak_margin` off the support (default 1e-3).
    pub weak_margin: f64,
    /// Wall-clock limit of the solve in seconds (default: none).
    pub time_limit: f64,
    /// Merging, amplitude floor, significance test and least-squares polish of the support.
    pub postprocess: PostProcess,
    /// The interior point's own settings.
    pub interior: InteriorPointSettings,
    /// The sliding solver's own settings.
    pub sliding: SlidingSettings,
}

impl Default for TvSettings {
    fn default() -> Self {
        TvSettings {
            backend: Backend::Auto,
            grid_oversample: 16,
            weak_margin: 1e-3,
            time_limit: f64::INFINITY,
            postprocess: PostProcess::default(),
            interior: InteriorPointSettings::default(),
            sliding: SlidingSettings::default(),
        }
    }
}

impl TvSettings {
    /// Set the solver.
    pub fn with_backend(mut self, backend: Backend) -> Self {
        self.backend = backend;
        self
    }

    /// Set the grid oversampling, in `8..=64`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_grid_oversample(mut self, oversample: usize) -> Result<Self> {
        self.grid_oversample = check::that(
            "grid_oversample",
            oversample,
            (8..=64).contains(&oversample),
            "must lie in 8..=64",
        )?;
        Ok(self)
    }

    /// Set the certificate caution margin, in `(0, 0.5)`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_weak_margin(mut self, margin: f64) -> Result<Self> {
        self.weak_margin = check::that(
            "weak_margin",
            margin,
            margin > 0.0 && margin < 0.5,
            "must lie in (0, 0.5)",
        )?;
        Ok(self)
    }

    /// Set the time limit in seconds (positive; `f64::INFINITY` for none).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for zero, negative or NaN.
    pub fn with_time_limit(mut self, seconds: f64) -> Result<Self> {
        self.time_limit = check::seconds("time_limit", seconds)?;
        Ok(self)
    }

    /// Set the post-processing.
    pub fn with_postprocess(mut self, postprocess: PostProcess) -> Self {
        self.postprocess = postprocess;
        self
    }

    /// Set the interior point's own settings.
    pub fn with_interior(mut self, interior: InteriorPointSettings) -> Self {
        self.interior = interior;
        self
    }

    /// Set the sliding solver's own settings.
    pub fn with_sliding(mut self, sliding: SlidingSettings) -> Self {
        self.sliding = sliding;
        self
    }

    /// Every setting checked, the solver blocks and the post-processing included (fields can be
    /// written directly); the estimators call this before solving.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] naming the first setting out of range.
    pub fn validated(self) -> Result<Self> {
        Ok(Self::default()
            .with_backend(self.backend)
            .with_grid_oversample(self.grid_oversample)?
            .with_weak_margin(self.weak_margin)?
            .with_time_limit(self.time_limit)?
            .with_postprocess(self.postprocess.validated()?)
            .with_interior(self.interior.validated()?)
            .with_sliding(self.sliding.validated()?))
    }
}
