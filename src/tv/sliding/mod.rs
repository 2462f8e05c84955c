//! The certified Sliding Frank–Wolfe backend of [`crate::tv`] (and the whole of the `sfw` method): the
//! same convex problems as the interior point — exact TV minimisation, TV minimisation in a noise ball,
//! and atomic-norm soft thresholding — at `O(N log N)` cost per iteration instead of an interior
//! point's dense factorisation of size `~N²/2`.
//!
//! The problems ([`Problem`]) are stated in [`crate::tv`]; here the penalised weight `τ` is written
//! `λ`, as in the BLASSO literature.
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
//! [`crate::SlidingSettings::tolerance`]; every [`Solution`] also carries a lower bound on the optimal value from
//! weak duality.
//!
//! # Examples
//! ```
//! use finespike::{Estimator, Scenario, Sfw, Status};
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
pub(crate) mod lasso;
mod sfw;

use super::settings::TvSettings;
use super::{relative_gap, Certifier, ConvexSolution, Problem};
use crate::dual::{Certificate, DualPolynomial};
use crate::error::Result;
use crate::estimator::Status;
use crate::kernels::band::Model;
use crate::model::{Measurements, Spikes};
use num_complex::Complex64;
use sfw::Budget;

/// The solution of one convex problem, before any post-processing, with its certificate.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct Solution {
    /// The minimiser `μ̂` (amplitudes not debiased).
    pub spikes: Spikes,
    /// Objective value at `μ̂`: `‖μ̂‖_TV` for [`Problem::Exact`] and [`Problem::Constrained`],
    /// `½‖y − Fμ̂‖² + τ‖μ̂‖_TV` for [`Problem::Penalised`].
    pub objective: f64,
    /// A lower bound on the optimal value from weak duality with the reported dual vector scaled to
    /// be feasible; `objective − lower_bound` bounds the suboptimality.
    pub lower_bound: f64,
    /// The BLASSO weight `τ` behind the solution, in data units (`None` for an exact fit).
    pub tau: Option<f64>,
    /// [`Status::Solved`] only when the certificate holds to the tolerance.
    pub status: Status,
    /// The certificate of [`Solution::dual`] against [`Solution::spikes`].
    pub certificate: Certificate,
    /// The dual polynomial: `c = (y − Fμ̂)/τ` on `K`, or the pre-certificate for exact data.
    pub dual: DualPolynomial,
    /// Sliding Frank–Wolfe iterations.
    pub iterations: usize,
    /// True when, for exact data, the vanishing-derivative pre-certificate was built and exceeds 1
    /// somewhere: the support is not certified (the status then is not [`Status::Solved`]).
    pub precertificate_failed: bool,
    /// Why the solve stopped; [`Solution::status`] follows from it.
    pub stop: SolverStop,
    frame: Frame,
}

/// Why a Sliding Frank–Wolfe solve stopped, and what to do when it stopped short of a certified
/// solution.
///
/// | stop | status |
/// |---|---|
/// | [`SolverStop::Certified`] | [`Status::Solved`] (or [`Status::ReducedAccuracy`] at the rounding floor) |
/// | [`SolverStop::Budget`] | [`Status::IterationLimit`] or [`Status::TimeLimit`] |
/// | [`SolverStop::SupportCap`] | [`Status::IterationLimit`]: the record or the noise level is the problem |
/// | [`SolverStop::ResidualSearch`] | [`Status::IterationLimit`] |
/// | [`SolverStop::Uncertified`] | [`Status::ReducedAccuracy`] or [`Status::NumericalFailure`] |
/// | [`SolverStop::Cycling`], [`SolverStop::Stalled`] | [`Status::NumericalFailure`] |
///
/// ```
/// use finespike::tv::{sliding, Problem};
/// use finespike::{Scenario, TvSettings};
/// // An invented scene: 3 spikes at fc = 30, 2/fc apart, exact data.
/// let sample = Scenario::new(30, 3).with_separation(2.0).with_seed(5).generate()?;
/// let sol = sliding::solve(&sample.data, Problem::Exact, &TvSettings::default())?;
/// assert_eq!(sol.stop, sliding::SolverStop::Certified);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum SolverStop {
    /// The optimality certificate holds (or zero is the optimum).
    Certified,
    /// The iteration or time budget was spent.
    Budget,
    /// The support would grow past `⌊2|K|/3⌋` spikes, more than the data can determine: the solve
    /// is fitting the noise or a component that is not a sum of lines (see the module docs of the
    /// solver).
    SupportCap {
        /// Spikes held when the solve stopped.
        spikes: usize,
        /// The cap `⌊2|K|/3⌋`.
        cap: usize,
    },
    /// The constrained problem's search for the weight whose residual is `δ` ended without
    /// matching it.
    ResidualSearch,
    /// Exact data: no interpolating certificate bounded by 1 was found down to the smallest weight.
    Uncertified,
    /// The same point was added and removed three times: the slide cannot settle it.
    Cycling {
        /// The point, in `[0, 1)`.
        position: f64,
    },
    /// A violation of the certificate next to the support that repeated slides did not remove.
    Stalled,
}

impl std::fmt::Display for SolverStop {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SolverStop::Certified => f.write_str("certified optimal"),
            SolverStop::Budget => f.write_str(
                "the iteration or time budget was spent before the solution was certified: raise it",
            ),
            SolverStop::SupportCap { spikes, cap } => write!(
                f,
                "stopped at {spikes} spikes (the data can determine at most {cap}): the solve is \
                 fitting noise or a component that is not a sum of lines — the noise level is far \
                 too low for the record (give it), or the record has an offset, trend or slow \
                 wander (fit it with a trend)"
            ),
            SolverStop::ResidualSearch => f.write_str(
                "the search for the weight whose residual matches the noise ball did not converge",
            ),
            SolverStop::Uncertified => f.write_str(
                "no certificate of optimality was found for the exact fit (numerical trouble, or \
                 spikes too close for exact recovery)",
            ),
            SolverStop::Cycling { position } => write!(
                f,
                "numerical failure: the point {position} kept being added and removed"
            ),
            SolverStop::Stalled => f.write_str(
                "numerical failure: a violation of the certificate next to the support persisted",
            ),
        }
    }
}

/// The solver's internal frame and dual vector, kept so that the certificate can be re-checked on a
/// post-processed support without rebuilding it.
#[derive(Debug, Clone)]
pub(crate) struct Frame {
    model: Model,
    c: Vec<Complex64>,
}

impl PartialEq for Frame {
    fn eq(&self, other: &Self) -> bool {
        self.c == other.c
    }
}

impl Frame {
    /// The certificate of the dual vector against `support` (screened scan of the whole torus).
    pub(crate) fn certificate(&self, support: &[f64]) -> Certificate {
        crate::kernels::peaks::scan(&self.model, &self.c, support).certificate()
    }
}

/// Solve `problem` for `data` by Sliding Frank–Wolfe (module docs), with the grid, time limit and
/// solver block of `settings`.
///
/// # Errors
/// [`crate::Error::InvalidSetting`] for a negative or non-finite `δ`, a `τ` that is not positive and
/// finite, or a setting out of range; [`crate::Error::TooLarge`] for a band whose FFT grid would exceed
/// 2^26 points. Solver trouble is reported in [`Solution::status`].
pub fn solve(data: &Measurements, problem: Problem, settings: &TvSettings) -> Result<Solution> {
    let problem = problem.validated()?;
    let settings = settings.validated()?;
    let model = Model::new(data, settings.grid_oversample)?;
    let mut budget = Budget::new(settings.sliding.max_iter, settings.time_limit);
    let tol = settings.sliding.tolerance;
    let scale = model.scale;
    let (out, objective_scale) = match problem {
        Problem::Exact => (sfw::solve_exact(&model, tol, &mut budget), scale),
        Problem::Constrained { delta } => (
            sfw::solve_constrained(&model, delta / scale, tol, &mut budget),
            scale,
        ),
        Problem::Penalised { tau } => (
            sfw::solve_penalised(&model, tau / scale, tol, &mut budget),
            scale * scale,
        ),
    };
    let mut tau = out.point.tau.clone();
    for t in &mut tau {
        *t = crate::model::wrap(*t);
    }
    let spikes = model.spikes(&tau, &out.point.amp)?;
    let weight = match problem {
        Problem::Penalised { tau } => Some(tau),
        _ if out.lambda == 0.0 => None,
        _ => Some(out.lambda * scale),
    };
    Ok(Solution {
        spikes,
        objective: out.objective * objective_scale,
        lower_bound: out.lower_bound * objective_scale,
        tau: weight,
        status: out.status,
        certificate: out.scan.certificate(),
        dual: model.dual_polynomial(&out.c),
        iterations: budget.iterations,
        precertificate_failed: out.precertificate_failed,
        stop: out.stop,
        frame: Frame { model, c: out.c },
    })
}

/// [`Diagnostics::solver`](crate::Diagnostics::solver) of an estimate made by this solver.
pub const SLIDING_FRANK_WOLFE: &str = "sliding Frank-Wolfe (certified)";

/// [`solve`], as a backend of [`crate::tv`].
pub(crate) fn solve_convex(
    data: &Measurements,
    problem: Problem,
    settings: &TvSettings,
) -> Result<ConvexSolution> {
    let sol = solve(data, problem, settings)?;
    Ok(ConvexSolution {
        support: sol.spikes.positions(),
        dual: sol.dual,
        status: sol.status,
        iterations: sol.iterations,
        objective: sol.objective,
        gap: relative_gap(sol.objective, sol.lower_bound),
        stop_reason: (sol.stop != SolverStop::Certified).then(|| sol.stop.to_string()),
        solver: SLIDING_FRANK_WOLFE,
        precertificate_failed: sol.precertificate_failed,
        certifier: Certifier::Sliding(sol.frame),
    })
}
