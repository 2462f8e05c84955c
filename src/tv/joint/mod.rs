//! Joint convex recovery from many snapshots: the group atomic norm (multiple measurement vectors),
//! behind `estimate_snapshots` of `sdp` ([`crate::Tv`]), `ast` ([`crate::Ast`]) and `sfw`
//! ([`crate::Sfw`]).
//!
//! # The problems
//!
//! The snapshots `Y` (`|K| × L`, rows on the measured sensors `K` of a span of `N`) share the line
//! positions; the atoms are `a(f) bᴴ` with `‖b‖₂ = 1`, and the group atomic norm `‖X‖_A` of an
//! `N × L` matrix is the gauge of their convex hull (Li & Chi 2016, IEEE TSP 64(5), eq. (9); Yang &
//! Xie 2016, IEEE TSP 64(4), eq. (10)). Over measures with vector amplitudes `μ = Σ_j b_j δ_{f_j}`,
//! `‖X‖_A = min Σ_j ‖b_j‖₂` over the representations `X = Σ_j a(f_j) b_jᵀ`:
//!
//! ```text
//!   exact          min ‖X‖_A  s.t.  X_K = Y                     (all sensors measured or not)
//!   constrained    min ‖X‖_A  s.t.  ‖Y − X_K‖_F ≤ δ
//!   penalised      min ½‖Y − X_K‖²_F + τ‖X‖_A                  (Li & Chi 2016, eq. (20))
//! ```
//!
//! The dual of each is `max Re⟨V, Y⟩ (− δ‖V‖_F, resp. − τ/2·‖V‖²…)` over `V` on `K` with
//! `sup_f ‖a(f)ᴴV‖₂ ≤ 1` (Li & Chi 2016, eq. (13)); the support is where the dual vector polynomial
//! `Q(f) = a(f)ᴴV` reaches norm one (module `certificate`).
//!
//! # Dimension reduction
//!
//! With the thin SVD `Y = UΣVᴴ` (`r = rank Y ≤ min(|K|, L)`), each problem is solved on
//! `Ỹ = UΣ = YV` (`|K| × r`) and its solution mapped back as `X = X̃Vᴴ`. Exactness: for any unitary
//! `Q`, `‖XQ‖_A = ‖X‖_A` (the atoms `a bᴴ` are mapped onto atoms `a (Qᴴb)ᴴ`), and a right contraction
//! `X ↦ XP`, `‖P‖ ≤ 1`, cannot raise the norm (it maps the atom set into its convex hull scaled by at
//! most one). Write `X = XVVᴴ + X(I − VVᴴ)`. Since `Y(I − VVᴴ) = 0`,
//! `‖Y − X_K‖²_F = ‖Y − X_K VVᴴ‖²_F + ‖X_K(I − VVᴴ)‖²_F`, so replacing `X` by `XVVᴴ` keeps the exact
//! constraint, keeps (and never enlarges) the constrained residual — the residual outside `span(V)`
//! vanishes — lowers the penalised data term, and does not raise the norm. The optimum therefore lies
//! in `{X̃Vᴴ}`, on which `‖X̃Vᴴ‖_A = ‖X̃‖_A` and `‖Y − X̃_KVᴴ‖_F = ‖Ỹ − X̃_K‖_F`: the three problems on
//! `Ỹ` are the three problems on `Y` (compare the notes' derivation and Steffens, Pesavento & Pfetsch
//! 2018, IEEE TSP 66(6), for the exact problem through `YYᴴ`). The dual matrix maps back the same way
//! (`V_Y = V_Ỹ Vᴴ`), and `‖a(f)ᴴV_Y‖₂ = ‖a(f)ᴴV_Ỹ‖₂`: the certificate is computed on `Ỹ` unchanged.
//! The cost beyond the SVD (`O(|K|²L)`) depends on `r ≤ |K|`, not on `L`.
//!
//! # Noise level and weights
//!
//! - `sdp` / `sfw` with noise of level `σ`: the constrained problem with `δ² = σ²(n + 2√n)`,
//!   `n = |K|·L`, the χ² radius of the single-record problems (common practice). The count is that of the
//!   original residual `Y − AS`, whose `|K|·L` complex entries are the noise; the reduction does not
//!   change it, since `‖Ỹ‖_F = ‖Y‖_F`. The reduced residual has `|K|·r` entries, which equals `|K|·L`
//!   whenever `L ≤ |K|` (noisy data have full rank `r = L`); for `L > |K|`, `r = |K|` and a radius
//!   from `|K|·r` entries would leave the true signal outside the ball.
//! - `ast`: the penalised problem with `τ` calibrated by Monte Carlo from `σ` ([`tau`]).
//! - Exact data (`σ = 0`, given or estimated): the exact problem.
//!
//! # Solvers
//!
//! `sdp`: the compact SDP through clarabel at small sizes (PSD block `N + 2r`); `sliding`: a
//! group Sliding Frank–Wolfe, certified by `sup_f ‖Q(f)‖₂ ≤ 1 + ε` with `Q` from the residual.
//! [`Backend::Auto`] takes the interior point up to a block of [`AUTO_MAX_BLOCK`].

mod amplitudes;
mod certificate;
mod polish;
pub mod prune;
mod sdp;
mod sliding;
pub mod tau;

pub use sdp::MAX_BLOCK;

use crate::error::{Error, Result};
use crate::estimator::{ArrayEstimate, NoiseLevel, Status, Warning};
use crate::model::Snapshots;
use crate::noise::estimate_snapshot_sigma;
use crate::tv::settings::{Backend, TvSettings};
use crate::tv::{relative_gap, Problem};
use crate::SigmaMethod;
use certificate::VectorPolynomial;
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::time::Instant;

/// Largest PSD block `N + 2r` on which [`Backend::Auto`] takes the interior point (the single-record
/// switch, [`crate::tv::AUTO_SWITCH_BAND_LEN`], plus two: the same block size and cost).
pub const AUTO_MAX_BLOCK: usize = crate::tv::AUTO_SWITCH_BAND_LEN + 2;

/// Largest relative residual `‖Y − AŜ‖_F/‖Y‖_F` of an exact-data estimate reported as solved (as for
/// single records).
const EXACT_FIT: f64 = 1e-6;

/// Tolerance on `sup ‖Q‖₂ − 1` of an interior-point certificate (as for single records).
const IPM_CERT_TOL: f64 = 1e-6;

/// The reduced data: `Ỹ = UΣ` on the measured rows, with the band they lie in.
#[derive(Debug, Clone)]
pub(crate) struct Reduced {
    /// Internal indices `k` of the measured rows (sorted).
    pub indices: Vec<i64>,
    /// Lowest index of the span.
    pub kmin: i64,
    /// Span `N`.
    pub band_len: usize,
    /// `Ỹ`, `|K| × r`.
    pub y: DMatrix<Complex64>,
}

impl Reduced {
    /// The reduction of `data` (module docs): singular values below `max(|K|, L)·ε·σ₁` count as zero.
    ///
    /// # Errors
    /// [`Error::Numerical`] if the SVD fails to converge.
    pub fn new(data: &Snapshots) -> Result<Self> {
        let values = data.values();
        let svd = nalgebra::linalg::SVD::try_new(values.clone(), true, false, f64::EPSILON, 0)
            .ok_or_else(|| Error::Numerical {
                step: "singular value decomposition of the snapshots",
                detail: "did not converge".into(),
            })?;
        let u = svd.u.as_ref().ok_or_else(|| Error::Numerical {
            step: "singular value decomposition of the snapshots",
            detail: "no left singular vectors".into(),
        })?;
        let s1 = svd.singular_values.iter().copied().fold(0.0, f64::max);
        let tol = values.nrows().max(values.ncols()) as f64 * f64::EPSILON * s1;
        let keep: Vec<usize> = (0..svd.singular_values.len())
            .filter(|&i| svd.singular_values[i] > tol)
            .collect();
        let y = DMatrix::from_fn(values.nrows(), keep.len(), |i, j| {
            u[(i, keep[j])] * svd.singular_values[keep[j]]
        });
        let indices = data.indices().to_vec();
        let kmin = indices.first().copied().unwrap_or(0);
        Ok(Reduced {
            kmin,
            band_len: data.band_len(),
            indices,
            y,
        })
    }

    /// Number of columns `r`.
    pub fn rank(&self) -> usize {
        self.y.ncols()
    }

    /// The columns of `M` (`|K| × r`) placed on the band `0..N`.
    pub fn on_band(&self, m: &DMatrix<Complex64>) -> Vec<Vec<Complex64>> {
        (0..m.ncols())
            .map(|l| {
                let mut c = vec![Complex64::new(0.0, 0.0); self.band_len];
                for (i, &k) in self.indices.iter().enumerate() {
                    c[(k - self.kmin) as usize] = m[(i, l)];
                }
                c
            })
            .collect()
    }
}

/// What a backend hands back.
#[derive(Debug, Clone)]
pub(crate) struct JointSolution {
    /// Support of the convex solution.
    pub support: Vec<f64>,
    /// The dual vector polynomial `Q`.
    pub dual: VectorPolynomial,
    /// The solver's own status.
    pub status: Status,
    /// Iterations.
    pub iterations: usize,
    /// Objective value.
    pub objective: f64,
    /// Relative duality gap.
    pub gap: f64,
    /// Which solver ran.
    pub solver: &'static str,
    /// Tolerance on `sup ‖Q‖₂ − 1`.
    pub cert_tol: f64,
}

/// [`crate::ArrayDiagnostics::solver`] of a joint interior-point estimate.
pub const JOINT_INTERIOR_POINT: &str = "interior point (clarabel, compact group SDP)";

/// [`crate::ArrayDiagnostics::solver`] of an estimate whose joint problem has the optimum `X = 0`.
pub const JOINT_ZERO: &str =
    "none: zero is the optimum (noise ball holds the data, or weight above max ‖a(f)ᴴY‖)";

/// The noise level of `data` under `noise`: `(σ, estimated, how)`, `σ = None` for exact data.
///
/// # Errors
/// An invalid known level; the errors of [`estimate_snapshot_sigma`].
pub(crate) fn resolve(
    data: &Snapshots,
    noise: NoiseLevel,
) -> Result<(Option<f64>, bool, Option<SigmaMethod>)> {
    match noise.validated()? {
        NoiseLevel::Exact => Ok((None, false, None)),
        NoiseLevel::Known(s) => Ok(((s > 0.0).then_some(s), false, None)),
        NoiseLevel::Estimate => {
            let est = estimate_snapshot_sigma(data)?;
            Ok((
                (est.sigma > 0.0).then_some(est.sigma),
                true,
                Some(est.method),
            ))
        }
    }
}

/// The problem `sdp` and `sfw` solve at noise level `sigma` (module docs).
pub(crate) fn problem_for_noise(sigma: Option<f64>, data: &Snapshots) -> Problem {
    match sigma {
        None => Problem::Exact,
        Some(s) => Problem::Constrained {
            delta: crate::kernels::noise_ball_radius(s, data.len() * data.snapshot_count()),
        },
    }
}

/// Resolve the noise, reduce the data, solve the joint problem with the backend the settings choose
/// and assemble the estimate; the one place where the joint estimators are timed.
pub(crate) fn run(
    method: &'static str,
    data: &Snapshots,
    noise: NoiseLevel,
    settings: &TvSettings,
    problem_for: impl Fn(Option<f64>) -> Result<Problem>,
) -> Result<ArrayEstimate> {
    let start = Instant::now();
    let settings = settings.validated()?;
    let (sigma, estimated, how) = resolve(data, noise)?;
    let problem = problem_for(sigma)?.validated()?;
    let red = Reduced::new(data)?;
    let block = red.band_len + 2 * red.rank();
    let solution = if let Some(zero) = zero_solution(&red, problem, &settings) {
        zero
    } else {
        let use_sliding = match settings.backend {
            Backend::InteriorPoint => false,
            Backend::SlidingFrankWolfe => true,
            _ => block > AUTO_MAX_BLOCK,
        };
        if use_sliding {
            let sol = sliding::solve(&red, problem, &settings)?;
            let fallback = settings.backend == Backend::Auto
                && sol.status != Status::Solved
                && block <= crate::tv::FALLBACK_MAX_BAND_LEN + 2;
            if fallback {
                solve_interior(&red, problem, &settings)?
            } else {
                sol
            }
        } else {
            solve_interior(&red, problem, &settings)?
        }
    };
    finish(
        method, data, &red, solution, sigma, estimated, how, &settings, start,
    )
}

/// The interior point on the reduced data; support from the maxima of `‖Q‖₂` at
/// `≥ 1 − support_tolerance`.
fn solve_interior(red: &Reduced, problem: Problem, settings: &TvSettings) -> Result<JointSolution> {
    let sol = sdp::solve(red, problem, settings)?;
    let dual = VectorPolynomial::new(red.kmin, &sol.v);
    let tol = settings.interior.support_tolerance;
    let peaks = dual.peaks(settings.grid_oversample, 1.0 - tol);
    let support = peaks
        .iter()
        .filter(|p| p.modulus >= 1.0 - tol)
        .map(|p| p.position)
        .collect();
    Ok(JointSolution {
        support,
        dual,
        status: sol.conic.status,
        iterations: sol.conic.iterations,
        objective: 0.5 * (sol.conic.primal_objective + sol.conic.dual_objective),
        gap: relative_gap(sol.conic.primal_objective, sol.conic.dual_objective).abs(),
        solver: JOINT_INTERIOR_POINT,
        cert_tol: IPM_CERT_TOL,
    })
}

/// `X = 0` with its certificate when it is the optimum: constrained with `δ ≥ ‖Y‖_F` (`V = 0`), or
/// penalised with `sup_f ‖a(f)ᴴY‖₂ ≤ τ` (`V = Y/τ`; Li & Chi 2016, eq. (21) with an empty support).
fn zero_solution(red: &Reduced, problem: Problem, settings: &TvSettings) -> Option<JointSolution> {
    let (v, objective) = match problem {
        Problem::Exact => return None,
        Problem::Constrained { delta } if delta >= red.y.norm() => {
            (DMatrix::zeros(red.y.nrows(), 1), 0.0)
        }
        Problem::Constrained { .. } => return None,
        Problem::Penalised { tau } => (red.y.unscale(tau), 0.5 * red.y.norm_squared()),
    };
    let dual = VectorPolynomial::new(red.kmin, &red.on_band(&v));
    let peaks = dual.peaks(settings.grid_oversample, 1.0);
    if peaks.first().is_some_and(|p| p.modulus > 1.0) {
        return None;
    }
    Some(JointSolution {
        support: Vec::new(),
        dual,
        status: Status::Solved,
        iterations: 0,
        objective,
        gap: 0.0,
        solver: JOINT_ZERO,
        cert_tol: 0.0,
    })
}

/// Support → [`ArrayEstimate::assemble`] → certificate, exact-fit check, warnings, noise.
#[allow(clippy::too_many_arguments)]
fn finish(
    method: &'static str,
    data: &Snapshots,
    red: &Reduced,
    sol: JointSolution,
    sigma: Option<f64>,
    estimated: bool,
    how: Option<SigmaMethod>,
    settings: &TvSettings,
    start: Instant,
) -> Result<ArrayEstimate> {
    let mut support = sol.support.clone();
    support.sort_by(f64::total_cmp);
    let peaks = sol.dual.peaks(settings.grid_oversample, 0.0);
    let cert = sol.dual.certificate(&peaks, &support);
    let mut warnings = Vec::new();
    let mut status = sol.status;
    let violated = cert.max_norm > 1.0 + sol.cert_tol.max(IPM_CERT_TOL);
    if violated {
        warnings.push(Warning::CertificateViolated {
            max_modulus: cert.max_norm,
        });
        if status == Status::Solved {
            status = Status::ReducedAccuracy;
        }
    }
    if cert.max_off_support > 1.0 - settings.weak_margin {
        warnings.push(Warning::WeakCertificate {
            max_off_support: cert.max_off_support,
        });
    }
    // With noise, the support's atoms that fit only the noise go ([`prune`]); the certificate above
    // stays that of the convex solution.
    let mut sources = match sigma {
        Some(s) => prune::significant(red, data.snapshot_count(), support, s)?,
        None => support,
    };
    if settings.postprocess.refine.is_some() {
        sources = polish::polish(red, &sources);
    }
    let assembly = ArrayEstimate::assemble(method, data, &sources, status)?;
    let mut est = assembly
        .solver(sol.solver)
        .iterations(sol.iterations)
        .objective(sol.objective)
        .duality_gap(sol.gap)
        .certificate_max(cert.max_off_support)
        .warnings(warnings)
        .noise(sigma, estimated, how);
    // Exact data are fitted exactly or the fit is not verified.
    if sigma.is_none()
        && est.status == Status::Solved
        && est.diagnostics.residual_norm > EXACT_FIT * est.diagnostics.data_norm
    {
        est.status = Status::ReducedAccuracy;
        est.diagnostics.warnings.push(Warning::NotConverged {
            status: Status::ReducedAccuracy,
        });
    }
    est.diagnostics.solve_seconds = start.elapsed().as_secs_f64();
    Ok(est)
}
