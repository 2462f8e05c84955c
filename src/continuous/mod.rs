//! A certified continuous solver over measures (method name `sfw`): the same convex problems as the
//! semidefinite path of [`crate::sdp`] — exact TV minimisation, TV minimisation in a noise ball, and
//! atomic-norm soft thresholding — at `O(N log N)` cost per iteration instead of an interior point's
//! dense factorisation of size `~N²/2`.
//!
//! # The problems
//!
//! ```text
//!   BLASSO / AST   min_μ ½‖y − Fμ‖₂² + λ‖μ‖_TV                      (Problem::Penalised)
//!   exact          min_μ ‖μ‖_TV  s.t.  Fμ = y                         (Problem::Exact)
//!   constrained    min_μ ‖μ‖_TV  s.t.  ‖y − Fμ‖₂ ≤ δ                  (Problem::Constrained)
//! ```
//!
//! over complex spike trains `μ = Σ_j a_j δ_{τ_j}` on the torus, with `F` the Fourier operator on the
//! measured set `K` of a contiguous band (gaps allowed). BLASSO on a subset `K` is exactly atomic-norm
//! soft thresholding with `τ = λ` (Bhaskar, Tang & Recht 2013, IEEE TSP 61(23)): the unmeasured band
//! coefficients of `x = F_band μ` are free, so `min_x ½‖y − x_K‖² + λ‖x‖_A = min_μ ½‖y − F_K μ‖² + λ‖μ‖_TV`.
//!
//! # The algorithm
//!
//! Sliding Frank–Wolfe (Denoyelle, Duval, Peyré & Soubies 2019, Inverse Problems 36(1), Alg. 2; the same
//! scheme as ADCG, Boyd, Schiebinger & Recht 2017, SIAM J. Optim. 27(2)): add the maximiser of
//! `|η(t)|`, `η = F*(y − Fμ)/λ`, found on an FFT grid and polished by Newton steps; solve the LASSO in
//! the amplitudes at fixed positions; slide positions and amplitudes jointly by a damped Newton method on
//! `½‖y − Φ(τ)a‖² + λΣ|a_j|`; drop zero amplitudes; stop when `max |η| ≤ 1 + ε` on the whole torus. The
//! exact problem is reached by continuation in `λ` and certified by the vanishing-derivative
//! pre-certificate; the constrained problem by a root search for the `λ` whose residual is `δ`
//! (details in the submodules).
//!
//! # The certificate
//!
//! BLASSO's optimality conditions are `|η(t)| ≤ 1` for all `t` and `η(τ_j) = a_j/|a_j|` on the support
//! (Duval & Peyré 2015, FoCM 15(5), Prop. 3). Every solve reports the dual polynomial `q = η` with
//! coefficients `c_k = (y_k − (Fμ)_k)/λ` on `K` (zero off `K`), checked on the FFT grid with Newton
//! polishing of every maximum that could exceed the best one (a Bernstein-inequality bound decides
//! which). For exact data the certificate is the minimal-norm interpolating polynomial with
//! `q(τ_j) = a_j/|a_j|`, `q'(τ_j) = 0` (Duval & Peyré 2015, §4; Fernandez-Granda 2016, Inf. Inference
//! 5(3)); when `|q| ≤ 1` everywhere, `Re⟨y, c⟩ = Σ_j |a_j| = ‖μ‖_TV` proves that `μ` is optimal by weak
//! duality. [`Status::Solved`] is reported only when the certificate holds to
//! [`SfwSettings::tolerance`]; every [`Solution`] also carries a lower bound on the optimal value from
//! weak duality.
//!
//! # Examples
//! ```
//! use finespike::continuous::Sfw;
//! use finespike::{Estimator, Scenario, Status};
//! // An invented scene: 4 spikes at fc = 40, 1.5/fc apart, exact data.
//! let sample = Scenario::new(40, 4).with_separation(1.5).with_seed(3).generate()?;
//! let est = Sfw::exact().estimate(&sample.data)?;
//! assert_eq!(est.status, Status::Solved);
//! assert_eq!(est.spikes.len(), 4);
//! for (found, truth) in est.spikes.iter().zip(sample.truth.iter()) {
//!     assert!(finespike::wrap_distance(found.position, truth.position) * 40.0 < 1e-9);
//! }
//! # Ok::<(), finespike::Error>(())
//! ```

pub(crate) mod certificate;
pub(crate) mod kernel;
pub(crate) mod lasso;
mod sfw;
pub(crate) mod slide;

use crate::dual::{Certificate, DualPolynomial};
use crate::error::{check, Error, Result};
use crate::estimator::{Diagnostics, Estimate, Estimator, NoiseLevel, Status, Warning};
use crate::model::{Measurements, Spikes};
use crate::postprocess::PostProcess;
use crate::sdp::{SdpSettings, Tv};
use kernel::Model;
use sfw::Budget;
use std::time::Instant;

/// Which convex problem to solve (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Problem {
    /// `min ‖μ‖_TV s.t. Fμ = y` (Candès & Fernandez-Granda 2014, CPAM 67(6)).
    Exact,
    /// `min ‖μ‖_TV s.t. ‖y − Fμ‖₂ ≤ δ`.
    Constrained {
        /// Radius `δ ≥ 0` of the data-fit ball, in the units of the data.
        delta: f64,
    },
    /// BLASSO / atomic-norm soft thresholding `min ½‖y − Fμ‖₂² + λ‖μ‖_TV` (Bhaskar, Tang & Recht 2013,
    /// IEEE TSP 61(23); Duval & Peyré 2015, FoCM 15(5)).
    Penalised {
        /// Weight `λ > 0`, in the units of the data.
        lambda: f64,
    },
}

impl Problem {
    fn validated(self) -> Result<Self> {
        match self {
            Problem::Constrained { delta } if !(delta.is_finite() && delta >= 0.0) => Err(
                Error::invalid("delta", delta, "the radius must be finite and non-negative"),
            ),
            Problem::Penalised { lambda } if !(lambda.is_finite() && lambda > 0.0) => Err(
                Error::invalid("lambda", lambda, "the weight must be positive and finite"),
            ),
            p => Ok(p),
        }
    }
}

/// Settings of the Sliding Frank–Wolfe solver. The defaults certify double-precision solutions of the
/// test and demo problems and need no tuning.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SfwSettings {
    /// Limit on Sliding Frank–Wolfe iterations over the whole solve, continuation and root search
    /// included (default 10 000; a BLASSO solve typically takes 2 to 5 iterations, since every peak
    /// of `|η|` above 1 and at least half the highest enters at once).
    pub max_iter: usize,
    /// Certificate tolerance `ε`: solved when `max |η| ≤ 1 + ε` and `|η(τ_j) − a_j/|a_j|| ≤ ε`
    /// (default 1e-8; raised automatically to the rounding level of `η` at very small `λ`).
    pub tolerance: f64,
    /// Wall-clock limit in seconds (default: none).
    pub time_limit: f64,
    /// FFT grid points per band coefficient for the peak searches, rounded up to a power of two
    /// (default 16, as the SDP path; at least 8 for the screening bound of the certificate).
    pub grid_oversample: usize,
    /// Certificate caution: warn when `|q|` reaches `1 − weak_margin` off the support (default 1e-3).
    pub weak_margin: f64,
    /// Merging, amplitude floor and least-squares polish applied to the convex solution's support by
    /// the estimators, exactly as on the SDP path.
    pub postprocess: PostProcess,
}

impl Default for SfwSettings {
    fn default() -> Self {
        SfwSettings {
            max_iter: 10_000,
            tolerance: 1e-8,
            time_limit: f64::INFINITY,
            grid_oversample: 16,
            weak_margin: 1e-3,
            postprocess: PostProcess::default(),
        }
    }
}

impl From<&SdpSettings> for SfwSettings {
    /// The settings that make `sfw` reproduce the SDP path's estimate: same grid, caution margin,
    /// time limit and post-processing (the interior point's iteration limit and tolerance have no
    /// counterpart here).
    fn from(s: &SdpSettings) -> Self {
        SfwSettings {
            time_limit: s.time_limit,
            grid_oversample: s.grid_oversample.max(8),
            weak_margin: s.weak_margin,
            postprocess: s.postprocess,
            ..SfwSettings::default()
        }
    }
}

impl SfwSettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        check::iterations("max_iter", max_iter)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the certificate tolerance, in `[1e-14, 1e-3]`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        self.tolerance = check::that(
            "tolerance",
            tolerance,
            (1e-14..=1e-3).contains(&tolerance),
            "must lie in [1e-14, 1e-3]",
        )?;
        Ok(self)
    }

    /// Set the time limit in seconds (positive; `f64::INFINITY` for none).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for zero, negative or NaN.
    pub fn with_time_limit(mut self, seconds: f64) -> Result<Self> {
        self.time_limit = check::seconds("time_limit", seconds)?;
        Ok(self)
    }

    /// Set the grid oversampling, in `8..=64`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
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
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_weak_margin(mut self, margin: f64) -> Result<Self> {
        self.weak_margin = check::that(
            "weak_margin",
            margin,
            margin > 0.0 && margin < 0.5,
            "must lie in (0, 0.5)",
        )?;
        Ok(self)
    }

    /// Set the post-processing.
    pub fn with_postprocess(mut self, postprocess: PostProcess) -> Self {
        self.postprocess = postprocess;
        self
    }
}

/// The solution of one convex problem, before any post-processing, with its certificate.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Solution {
    /// The minimiser `μ̂` (amplitudes not debiased).
    pub spikes: Spikes,
    /// Objective value at `μ̂`: `‖μ̂‖_TV` for [`Problem::Exact`] and [`Problem::Constrained`],
    /// `½‖y − Fμ̂‖² + λ‖μ̂‖_TV` for [`Problem::Penalised`].
    pub objective: f64,
    /// A lower bound on the optimal value from weak duality with the reported dual vector scaled to
    /// be feasible; `objective − lower_bound` bounds the suboptimality.
    pub lower_bound: f64,
    /// The BLASSO weight behind the solution, in data units (`None` for an exact fit).
    pub lambda: Option<f64>,
    /// [`Status::Solved`] only when the certificate holds to the tolerance.
    pub status: Status,
    /// The certificate of [`Solution::dual`] against [`Solution::spikes`].
    pub certificate: Certificate,
    /// The dual polynomial: `c = (y − Fμ̂)/λ` on `K`, or the pre-certificate for exact data.
    pub dual: DualPolynomial,
    /// Sliding Frank–Wolfe iterations.
    pub iterations: usize,
    /// True when, for exact data, the vanishing-derivative pre-certificate was built and exceeds 1
    /// somewhere: the support is not certified (the status then is not [`Status::Solved`]).
    pub precertificate_failed: bool,
    model: ModelHandle,
}

/// The solver's internal frame, kept so the estimators can re-check the certificate on a
/// post-processed support without rebuilding it.
#[derive(Debug, Clone)]
struct ModelHandle {
    model: Model,
    c: Vec<num_complex::Complex64>,
}

impl PartialEq for ModelHandle {
    fn eq(&self, other: &Self) -> bool {
        self.c == other.c
    }
}

/// Solve `problem` for `data` by Sliding Frank–Wolfe (module docs).
///
/// # Errors
/// [`Error::InvalidSetting`] for a negative or non-finite `δ`, or a `λ` that is not positive and
/// finite; [`Error::TooLarge`] for a band whose FFT grid would exceed 2^26 points. Solver trouble is
/// reported in [`Solution::status`].
pub fn solve(data: &Measurements, problem: Problem, settings: &SfwSettings) -> Result<Solution> {
    let problem = problem.validated()?;
    let model = Model::new(data, settings.grid_oversample)?;
    let mut budget = Budget::new(settings.max_iter, settings.time_limit);
    let tol = settings.tolerance;
    let scale = model.scale;
    let (out, objective_scale) = match problem {
        Problem::Exact => (sfw::solve_exact(&model, tol, &mut budget), scale),
        Problem::Constrained { delta } => (
            sfw::solve_constrained(&model, delta / scale, tol, &mut budget),
            scale,
        ),
        Problem::Penalised { lambda } => (
            sfw::solve_penalised(&model, lambda / scale, tol, &mut budget),
            scale * scale,
        ),
    };
    let mut tau = out.point.tau.clone();
    for t in &mut tau {
        *t = crate::model::wrap(*t);
    }
    let spikes = model.spikes(&tau, &out.point.amp)?;
    let lambda = match problem {
        Problem::Penalised { lambda } => Some(lambda),
        _ if out.lambda == 0.0 => None,
        _ => Some(out.lambda * scale),
    };
    Ok(Solution {
        spikes,
        objective: out.objective * objective_scale,
        lower_bound: out.lower_bound * objective_scale,
        lambda,
        status: out.status,
        certificate: out.scan.certificate(),
        dual: model.dual_polynomial(&out.c),
        iterations: budget.iterations,
        precertificate_failed: out.precertificate_failed,
        model: ModelHandle { model, c: out.c },
    })
}

/// `(primal − dual)/|primal|`, 0 for a zero primal value.
pub(crate) fn relative_gap(primal: f64, dual: f64) -> f64 {
    if primal == 0.0 {
        0.0
    } else {
        (primal - dual) / primal.abs()
    }
}

/// [`Diagnostics::solver`] of an estimate made by this module's solver.
pub const SLIDING_FRANK_WOLFE: &str = "sliding Frank-Wolfe (certified)";

/// Solve `problem` and turn the solution into an [`Estimate`] exactly as the SDP path does: support of
/// the convex solution → shared post-processing (merge, least-squares amplitudes, floor, polish) →
/// certificate of the dual polynomial against the final positions, warnings, diagnostics.
///
/// This is the entry point for [`crate::sdp::Tv`] and [`crate::sdp::Ast`] to switch to this solver
/// above a size threshold: `Tv` passes `Problem::Exact` or `Problem::Constrained { delta: Tv::delta(σ, |K|) }`,
/// `Ast` passes `Problem::Penalised { lambda: τ }`, with `SfwSettings::from(&sdp_settings)` and their
/// own method name.
///
/// # Errors
/// As [`solve`], and from the post-processing's least-squares fits.
pub(crate) fn solve_tv(
    data: &Measurements,
    problem: Problem,
    settings: &SfwSettings,
    method: &'static str,
    sigma: Option<f64>,
    sigma_estimated: bool,
) -> Result<Estimate> {
    let start = Instant::now();
    let sol = solve(data, problem, settings)?;
    let spikes = settings
        .postprocess
        .apply(data, &sol.spikes.positions(), sigma)?;
    let handle = &sol.model;
    // Off the support means away from both the final spikes and the convex solution's support (as on
    // the SDP path): points the post-processing merged, polished or dropped are not missed spikes.
    let mut support = spikes.positions();
    support.extend(sol.spikes.positions());
    let cert = certificate::scan(&handle.model, &handle.c, &support).certificate();
    let mut diagnostics = Diagnostics::describe(data, &spikes);
    // An exact fit whose interpolating certificates all exceed 1 is reported as a violated
    // certificate (its max |q| > 1 is in the certificate); every other status short of Solved as
    // not converged.
    let violated =
        cert.max_modulus > 1.0 + 1e-6 || (sol.precertificate_failed && cert.max_modulus > 1.0);
    if violated {
        diagnostics.warnings.push(Warning::CertificateViolated {
            max_modulus: cert.max_modulus,
        });
    }
    if cert.max_off_support > 1.0 - settings.weak_margin {
        diagnostics.warnings.push(Warning::WeakCertificate {
            max_off_support: cert.max_off_support,
        });
    }
    if !sol.status.is_usable() || (sol.status != Status::Solved && !violated) {
        diagnostics
            .warnings
            .push(Warning::NotConverged { status: sol.status });
    }
    diagnostics.certificate = Some(cert);
    diagnostics.iterations = sol.iterations;
    diagnostics.objective = Some(sol.objective);
    diagnostics.duality_gap = Some(relative_gap(sol.objective, sol.lower_bound));
    diagnostics.solver = Some(SLIDING_FRANK_WOLFE);
    diagnostics.assess_noise(data, &spikes, sigma, sigma_estimated);
    diagnostics.solve_seconds = start.elapsed().as_secs_f64();
    Ok(Estimate {
        method,
        spikes,
        status: sol.status,
        diagnostics,
        dual: Some(sol.dual),
    })
}

/// TV-norm minimisation by Sliding Frank–Wolfe (method name `sfw`): exact (`Fμ = y`) or constrained
/// (`‖y − Fμ‖₂ ≤ δ`, `δ = σ√(|K| + 2√|K|)` as [`Tv::delta`]) depending on the noise level — the
/// problems of [`Tv`], solved without a semidefinite program (module docs).
#[derive(Debug, Clone, Default)]
pub struct Sfw {
    /// Solver and post-processing settings.
    pub settings: SfwSettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
}

impl Sfw {
    /// Exact recovery: `min ‖μ‖_TV s.t. Fμ = y`.
    pub fn exact() -> Self {
        Sfw {
            settings: SfwSettings::default(),
            noise: NoiseLevel::Exact,
        }
    }

    /// Constrained recovery with noise of known standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Sfw {
            settings: SfwSettings::default(),
            noise: NoiseLevel::Known(sigma),
        }
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: SfwSettings) -> Self {
        self.settings = settings;
        self
    }
}

/// `(σ, estimated?)` for a noise level; `σ = None` means exact data (the rule shared by every
/// estimator, [`crate::noise`]).
pub(crate) use crate::noise::resolve_noise as resolve_sigma;

impl Estimator for Sfw {
    fn name(&self) -> &'static str {
        "sfw"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        let (sigma, estimated) = resolve_sigma(data, self.noise)?;
        let problem = match sigma {
            None => Problem::Exact,
            Some(s) => Problem::Constrained {
                delta: Tv::delta(s, data.len()),
            },
        };
        solve_tv(data, problem, &self.settings, self.name(), sigma, estimated)
    }
}
