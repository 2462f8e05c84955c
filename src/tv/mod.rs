//! Total-variation-norm minimisation and atomic-norm soft thresholding: the convex problems, their
//! two solvers, and the estimators `sdp` ([`Tv`]), `ast` ([`Ast`]) and `sfw` ([`Sfw`]).
//!
//! # The problems
//!
//! Over complex spike trains `μ = Σ_j a_j δ_{τ_j}` on the torus, with `F` the Fourier operator on the
//! measured set `K` of a contiguous band (gaps allowed):
//!
//! ```text
//!   exact          min_μ ‖μ‖_TV  s.t.  Fμ = y                        (Problem::Exact)
//!   constrained    min_μ ‖μ‖_TV  s.t.  ‖y − Fμ‖₂ ≤ δ                 (Problem::Constrained)
//!   penalised      min_μ ½‖y − Fμ‖₂² + τ‖μ‖_TV                       (Problem::Penalised)
//! ```
//!
//! The exact problem is the one of Candès & Fernandez-Granda (2014, CPAM 67(6)); for a measured subset
//! `K` the unmeasured coefficients are free (Tang, Bhaskar, Shah & Recht 2013, IEEE TIT 59(11)). Its
//! dual is `max Re⟨y, c⟩ s.t. ‖F*c‖_∞ ≤ 1`, a semidefinite program by the bounded-real lemma; the
//! support is where the dual polynomial `q = F*c` reaches modulus one, and exact recovery is guaranteed
//! when the spikes are at least `1.26/fc` apart (Fernandez-Granda 2016, Inf. Inference 5(3)).
//!
//! The penalised problem is BLASSO (Duval & Peyré 2015, FoCM 15(5)), which on a subset `K` is exactly
//! atomic-norm soft thresholding `min_x ½‖y − x_K‖² + τ‖x‖_A` (Bhaskar, Tang & Recht 2013, IEEE TSP
//! 61(23)): the unmeasured band coefficients of `x = F_band μ` are free. The weight is called `τ`
//! throughout this crate (the BLASSO literature writes `λ`).
//!
//! With noise of level `σ`, [`Tv`] solves the constrained problem with `δ² = σ²(|K| + 2√|K|)` — the
//! mean of `‖n‖²` plus two standard deviations, since `2‖n‖²/σ²` is χ² with `2|K|` degrees of freedom
//! (a χ² bound, common practice). [`Ast`] solves the penalised problem with `τ = η σ √(|K| ln |K|)`.
//! The paper's choice is `η ≈ 1` up to lower-order terms (its bound on `E‖F*n‖_∞`); a Monte Carlo
//! with numpy of `max_t |Σ_k n_k e^{i2πkt}| / (σ√(N ln N))` gave a mean of 1.15–1.19 and a 95th
//! percentile of 1.39–1.55 for N = 17…129, so the default `η = 1.5` keeps the dual polynomial of pure
//! noise below 1 in about 95% of draws.
//!
//! # The solvers ([`Backend`])
//!
//! - [`interior`]: clarabel's interior point on the dual SDP in a compact real form (one PSD block of
//!   size `N + 2`; for a real-valued record two real symmetric blocks of sizes `⌈N/2⌉ + 1` and
//!   `⌊N/2⌋ + 1`); cost grows like `N⁵`–`N⁶` in the band length `N`.
//! - [`sliding`]: the certified Sliding Frank–Wolfe solver over measures (Denoyelle, Duval, Peyré &
//!   Soubies 2019, Inverse Problems 36(1)), `O(N log N)` per iteration, certified by the dual
//!   polynomial on the whole torus.
//!
//! Both return a convex solution that one function, `finish`, turns into an
//! [`Estimate`]: support of the convex solution → shared post-processing (merge, least-squares
//! amplitudes, floor, significance test, polish; [`crate::PostProcess`]) → certificate of the dual
//! polynomial against the final positions, warnings, diagnostics. Both backends agree on every case
//! both run (objective to 1e-6 relative, positions to 1e-6/fc: `tests/continuous.rs`).

mod estimators;
pub mod interior;
pub mod joint;
mod settings;
pub mod sliding;

pub use estimators::{Ast, Sfw, Tv};
pub use settings::{
    Backend, InteriorPointSettings, SlidingSettings, TvSettings, AUTO_SWITCH_BAND_LEN,
    FALLBACK_MAX_BAND_LEN,
};

use crate::dual::{Certificate, DualPolynomial};
use crate::error::{Error, Result};
use crate::estimator::{Diagnostics, Estimate, NoiseLevel, Status, Warning};
use crate::kernels::peaks::Peak;
use crate::model::Measurements;
use crate::noise::resolve_noise;
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
    /// BLASSO / atomic-norm soft thresholding `min ½‖y − Fμ‖₂² + τ‖μ‖_TV` (Bhaskar, Tang & Recht
    /// 2013, IEEE TSP 61(23); Duval & Peyré 2015, FoCM 15(5)).
    Penalised {
        /// Weight `τ > 0`, in the units of the data.
        tau: f64,
    },
}

impl Problem {
    /// Check the problem's parameter: `δ` finite and non-negative, `τ` positive and finite.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] otherwise.
    pub fn validated(self) -> Result<Self> {
        match self {
            Problem::Constrained { delta } if !(delta.is_finite() && delta >= 0.0) => Err(
                Error::invalid("delta", delta, "the radius must be finite and non-negative"),
            ),
            Problem::Penalised { tau } if !(tau.is_finite() && tau > 0.0) => Err(Error::invalid(
                "tau",
                tau,
                "the weight must be positive and finite",
            )),
            p => Ok(p),
        }
    }

    /// The problem [`Tv`] and [`Sfw`] solve on `data` at noise level `sigma` (`None`: exact data):
    /// exact, or constrained with `δ = σ √(m + 2√m)` for `m` complex measurements (module docs) and
    /// `δ = σ √(m + 2√(2m))` for a real-valued record (real noise: χ² with `m` degrees of freedom).
    pub fn for_noise(sigma: Option<f64>, data: &Measurements) -> Self {
        match sigma {
            None => Problem::Exact,
            Some(s) => Problem::Constrained {
                delta: crate::kernels::noise_ball_for(data, s),
            },
        }
    }
}

/// How the certificate of a convex solution is checked against a support.
#[derive(Debug, Clone)]
enum Certifier {
    /// Every local maximum of `|q|`, found once on the FFT grid (the interior-point backend).
    Peaks(Vec<Peak>),
    /// The sliding backend's screened scan, in its own frame.
    Sliding(sliding::Frame),
}

/// What a backend hands back: the convex solution's support, its dual polynomial, how the solve went.
#[derive(Debug, Clone)]
pub(crate) struct ConvexSolution {
    /// Positions of the convex solution's support (before post-processing).
    support: Vec<f64>,
    /// The dual polynomial `q` (`|q| ≤ 1`, `|q| = 1` on the support when optimal).
    dual: DualPolynomial,
    /// How the solve went.
    status: Status,
    /// Solver iterations.
    iterations: usize,
    /// Objective value.
    objective: f64,
    /// Relative duality gap `(primal − dual)/|primal|`.
    gap: f64,
    /// The backend's own account of a stop short of certified optimality (`None` when certified or
    /// when the backend has none).
    stop_reason: Option<String>,
    /// Which solver ran ([`Diagnostics::solver`]).
    solver: &'static str,
    /// For exact data: every interpolating certificate exceeds 1 (the support is not certified).
    precertificate_failed: bool,
    certifier: Certifier,
}

impl ConvexSolution {
    /// The certificate of the dual polynomial against `support`.
    fn certificate(&self, support: &[f64]) -> Certificate {
        match &self.certifier {
            Certifier::Peaks(peaks) => self.dual.certificate_from_peaks(peaks, support),
            Certifier::Sliding(frame) => frame.certificate(support),
        }
    }
}

/// Largest relative residual `‖y − Fμ̂‖/‖y‖` of an exact-data estimate reported as solved: well
/// above the polish's rounding level (1e-16 to 1e-12 on the reference cases and the evaluation's
/// clusters), below the misfit of a missing or misplaced spike. It was 1e-6, which let a support
/// short of one spike pass as solved: six real-positive spikes 0.3/N apart in N = 33 fitted by five
/// to 2e-9–3e-8, eight 0.6/N apart by seven to 8e-9–1.3e-8, and eight 0.9/N apart with positions
/// 2e-3/N off at 1.6e-9 (`examples/exact_cluster.rs`; ESPRIT fits the same draws to 1e-14).
const EXACT_FIT: f64 = 1e-10;

/// `(primal − dual)/|primal|`, 0 for a zero primal value.
pub(crate) fn relative_gap(primal: f64, dual: f64) -> f64 {
    if primal == 0.0 {
        0.0
    } else {
        (primal - dual) / primal.abs()
    }
}

/// Resolve the noise level, build the problem for it, solve it with the backend the settings choose
/// (with [`Backend::Auto`]'s fallback to the interior point) and finish the estimate; the one place
/// where the convex estimators are timed.
pub(crate) fn run(
    method: &'static str,
    data: &Measurements,
    noise: NoiseLevel,
    settings: &TvSettings,
    problem_for: impl Fn(Option<f64>) -> Result<Problem>,
) -> Result<Estimate> {
    let start = Instant::now();
    let settings = settings.validated()?;
    let (sigma, sigma_method) = resolve_noise(data, noise)?;
    let sigma_estimated = sigma_method.is_some();
    let problem = problem_for(sigma)?.validated()?;
    let n = data.band_len();
    if let Some(zero) = zero_solution(data, problem, &settings) {
        let mut est = finish(method, data, zero, sigma, sigma_estimated, &settings)?;
        est.diagnostics.sigma_method = sigma_method;
        est.diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        return Ok(est);
    }
    let use_sliding = match settings.backend {
        Backend::InteriorPoint => false,
        Backend::SlidingFrankWolfe => true,
        Backend::Auto => n >= AUTO_SWITCH_BAND_LEN,
    };
    let solution = if use_sliding {
        let sol = sliding::solve_convex(data, problem, &settings)?;
        let fallback = settings.backend == Backend::Auto
            && sol.status != Status::Solved
            && n <= FALLBACK_MAX_BAND_LEN;
        if fallback {
            interior::solve_convex(data, problem, &settings)?
        } else {
            sol
        }
    } else {
        interior::solve_convex(data, problem, &settings)?
    };
    let mut est = finish(method, data, solution, sigma, sigma_estimated, &settings)?;
    est.diagnostics.sigma_method = sigma_method;
    est.diagnostics.solve_seconds = start.elapsed().as_secs_f64();
    Ok(est)
}

/// [`crate::Diagnostics::solver`] of an estimate whose convex problem has the optimum `μ = 0`, found
/// without a solver.
pub const ZERO_OPTIMUM: &str =
    "none: zero is the optimum (noise ball holds the data, or weight above max |F*y|)";

/// The solution `μ = 0` with its certificate, when it is the optimum; `None` otherwise (or for the
/// exact problem, which the solvers handle).
///
/// - Constrained, `δ ≥ ‖y‖`: `μ = 0` is feasible with norm 0; the dual vector `c = 0` attains the
///   dual value `Re⟨y, c⟩ − δ‖c‖ = 0`.
/// - Penalised, `‖F*y‖∞ ≤ τ`: `c = y/τ` satisfies `|q| = |F*c| ≤ 1`, the optimality condition of
///   `μ = 0` for BLASSO (Duval & Peyré 2015, FoCM 15(5), Prop. 3 with an empty support). The maximum
///   of `|F*y|` is found with the peak search of the dual polynomial (grid and Newton polish).
fn zero_solution(
    data: &Measurements,
    problem: Problem,
    settings: &TvSettings,
) -> Option<ConvexSolution> {
    let zero = num_complex::Complex64::new(0.0, 0.0);
    let (q, objective) = match problem {
        Problem::Exact => return None,
        // c = 0: the zero polynomial, one coefficient (nothing the size of the band is allocated).
        Problem::Constrained { delta } if delta >= data.norm() => {
            (DualPolynomial::new(data.kmin(), vec![zero]), 0.0)
        }
        Problem::Constrained { .. } => return None,
        Problem::Penalised { tau } => {
            // The peak search needs the band's FFT grid: past the grid limit, leave the problem to
            // the solvers, which refuse it with a typed error.
            let grid = data
                .band_len()
                .checked_mul(settings.grid_oversample.max(2))?;
            if grid > crate::kernels::band::MAX_GRID {
                return None;
            }
            let mut c = vec![zero; data.band_len()];
            for (&k, &v) in data.indices().iter().zip(data.values()) {
                c[(k - data.kmin()) as usize] = v / tau;
            }
            (
                DualPolynomial::new(data.kmin(), c),
                0.5 * data.norm().powi(2),
            )
        }
    };
    // Only the largest peaks decide (and certify): polishing every local maximum of a long noisy
    // record's |F*y| costs O(N) each, O(N²) in all.
    let peaks = q.top_peaks(q.search_grid_len(settings.grid_oversample.max(8)), 0.9);
    if peaks.iter().any(|p| p.modulus > 1.0) {
        return None;
    }
    Some(ConvexSolution {
        support: Vec::new(),
        dual: q,
        status: Status::Solved,
        iterations: 0,
        objective,
        gap: 0.0,
        stop_reason: None,
        solver: ZERO_OPTIMUM,
        precertificate_failed: false,
        certifier: Certifier::Peaks(peaks),
    })
}

/// Support of the convex solution → shared post-processing → certificate against the final
/// positions, warnings, diagnostics (module docs). The one place where a convex solution becomes an
/// [`Estimate`].
fn finish(
    method: &'static str,
    data: &Measurements,
    sol: ConvexSolution,
    sigma: Option<f64>,
    sigma_estimated: bool,
    settings: &TvSettings,
) -> Result<Estimate> {
    let spikes = settings.postprocess.apply(data, &sol.support, sigma)?;
    // Off the support means away from both the final spikes and the convex solution's support: a
    // point of |q| = 1 that the post-processing merged, polished away or judged insignificant is part
    // of the convex solution, not a sign of a missed spike.
    let mut support = spikes.positions();
    support.extend_from_slice(&sol.support);
    let cert = sol.certificate(&support);
    let mut warnings = Vec::new();
    // An exact fit whose interpolating certificates all exceed 1 is reported as a violated
    // certificate (its max |q| > 1 is in the certificate); every other status short of Solved as not
    // converged.
    let violated =
        cert.max_modulus > 1.0 + 1e-6 || (sol.precertificate_failed && cert.max_modulus > 1.0);
    if violated {
        warnings.push(Warning::CertificateViolated {
            max_modulus: cert.max_modulus,
        });
    }
    if cert.max_off_support > 1.0 - settings.weak_margin {
        warnings.push(Warning::WeakCertificate {
            max_off_support: cert.max_off_support,
        });
    }
    // Exact data are fitted exactly or the fit is not verified: a residual above `EXACT_FIT·‖y‖`
    // after the post-processing means the support read from the dual polynomial does not explain
    // the data (e.g. a maximum of |q| merged away, or a constant |q| with no strict maximum),
    // whatever the solver's own status says.
    let mut status = sol.status;
    if sigma.is_none()
        && status == Status::Solved
        && data.residual_norm(&spikes) > EXACT_FIT * data.norm()
    {
        status = Status::ReducedAccuracy;
    }
    if let Some(reason) = &sol.stop_reason {
        warnings.push(Warning::Stopped {
            reason: reason.clone(),
        });
    }
    if !status.is_usable() || (status != Status::Solved && !violated) {
        warnings.push(Warning::NotConverged { status });
    }
    let diagnostics = Diagnostics::builder(data, &spikes)
        .solver(sol.solver)
        .iterations(sol.iterations)
        .objective(sol.objective)
        .duality_gap(sol.gap)
        .certificate(cert)
        .warnings(warnings)
        .noise(sigma, sigma_estimated);
    Ok(Estimate {
        method,
        spikes,
        status,
        diagnostics,
        dual: Some(sol.dual),
    })
}
