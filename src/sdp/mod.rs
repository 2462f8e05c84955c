//! TV-norm minimisation and atomic-norm soft thresholding as semidefinite programs solved with clarabel
//! (method names `sdp` and `ast`).
//!
//! For exact data [`Tv`] solves
//!
//! ```text
//!   min ‖μ‖_TV  subject to  Fμ = y          (primal, over measures on the torus)
//!   max Re⟨y, c⟩ subject to  ‖F*c‖_∞ ≤ 1   (dual, a semidefinite program by the bounded-real lemma)
//! ```
//!
//! (Candès & Fernandez-Granda 2014, CPAM 67(6), §4; for a measured subset `K`, `c_k = 0` off `K`: Tang,
//! Bhaskar, Shah & Recht 2013, IEEE TIT 59(11)). The SDP is written in the compact real form of
//! [`compact`](self) (a real PSD block of size `N + 2`), solved by clarabel's interior point; the support is
//! where the dual polynomial `q = F*c` reaches modulus one, found on an FFT grid and polished by Newton
//! steps; amplitudes are least squares on that support. Exact recovery is guaranteed when the spikes are
//! at least `1.26/fc` apart (Fernandez-Granda 2016, Inf. Inference 5(3)).
//!
//! With noise of level `σ`, [`Tv`] solves the constrained problem `min ‖μ‖_TV s.t. ‖y − Fμ‖₂ ≤ δ` with
//! `δ² = σ²(|K| + 2√|K|)` — the mean of `‖n‖²` plus two standard deviations, since `2‖n‖²/σ²` is χ² with
//! `2|K|` degrees of freedom (a χ² bound, common practice). [`Ast`] solves atomic-norm soft
//! thresholding `min ½‖y − x‖₂² + τ‖x‖_A` (Bhaskar, Tang & Recht 2013, IEEE TSP 61(23)) with
//! `τ = η σ √(|K| ln |K|)`. The paper's choice is `η ≈ 1` up to lower-order terms (its bound on
//! `E‖F*n‖_∞`); a Monte Carlo with numpy of `max_t |Σ_k n_k e^{i2πkt}| / (σ√(N ln N))` gave a mean of
//! 1.15–1.19 and a 95th percentile of 1.39–1.55 for N = 17…129, so the default `η = 1.5` keeps the
//! dual polynomial of pure noise below 1 in about 95% of draws. In both cases the support is read
//! from `|q| = 1`, amplitudes are debiased by least squares and polished on the exact model
//! ([`crate::postprocess`]).

mod clarabel_adapter;
pub(crate) mod compact;

use crate::continuous::{self, Problem, SfwSettings};
use crate::dual::DualPolynomial;
use crate::error::{check, Error, Result};
use crate::estimator::{Diagnostics, Estimate, Estimator, NoiseLevel, Status, Warning};
use crate::model::Measurements;
use crate::postprocess::PostProcess;
use clarabel_adapter::IpmSettings;
use compact::{ConicProgram, Formulation};
use num_complex::Complex64;
use std::time::Instant;

/// Which solver [`Tv`] and [`Ast`] use for their convex problem.
///
/// Both solve the same problem and report the same diagnostics; they agree on every case both run
/// (objective to 1e-6 relative, positions to 1e-6/fc: `tests/continuous.rs`). The interior point's cost
/// grows like `N⁵`–`N⁶` in the band length `N` (a dense Schur complement of order `~N²/2`), the Sliding
/// Frank–Wolfe solver's like `N log N` per iteration.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Backend {
    /// The interior point below [`AUTO_SWITCH_BAND_LEN`] band coefficients, Sliding Frank–Wolfe from
    /// there on. When Sliding Frank–Wolfe cannot certify its solution (a degenerate exact problem,
    /// e.g. nearly as many spikes as coefficients) and the band is at most
    /// [`FALLBACK_MAX_BAND_LEN`] long, the interior point is run instead.
    #[default]
    Auto,
    /// clarabel's interior point on the compact SDP (this module).
    InteriorPoint,
    /// The certified Sliding Frank–Wolfe solver of [`crate::continuous`].
    SlidingFrankWolfe,
}

/// Band length (`kmax − kmin + 1`) from which [`Backend::Auto`] uses Sliding Frank–Wolfe: `fc = 25`.
/// Measured on a 2-core machine (benches `recovery` and `continuous`): the interior point takes
/// ~0.26 s at `fc = 16` and 4–11 s at `fc = 32`, Sliding Frank–Wolfe 2–4 ms at `fc = 32`.
pub const AUTO_SWITCH_BAND_LEN: usize = 50;

/// Longest band on which [`Backend::Auto`] falls back to the interior point when Sliding Frank–Wolfe
/// does not certify its solution (`fc = 32`: seconds, not minutes).
pub const FALLBACK_MAX_BAND_LEN: usize = 65;

/// Settings of the SDP path shared by [`Tv`] and [`Ast`]. Every default is chosen for double-precision
/// exact recovery and works for the noisy problems too.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SdpSettings {
    /// Interior-point iteration limit (default 100; typical runs take 10–20).
    pub max_iter: u32,
    /// Relative and absolute gap and feasibility tolerance of the interior point (default 1e-8,
    /// clarabel's own default).
    pub tolerance: f64,
    /// Wall-clock limit in seconds (default: none).
    pub time_limit: f64,
    /// A maximum of `|q|` is a support point when `|q| ≥ 1 − support_tolerance` (default 1e-4).
    pub support_tolerance: f64,
    /// Certificate caution: warn when `|q|` reaches `1 − weak_margin` off the support (default 1e-3).
    pub weak_margin: f64,
    /// Grid points per coefficient for peak searches (default 16).
    pub grid_oversample: usize,
    /// Merging, amplitude floor and least-squares polish of the support.
    pub postprocess: PostProcess,
    /// The solver (default [`Backend::Auto`]).
    pub backend: Backend,
}

impl Default for SdpSettings {
    fn default() -> Self {
        SdpSettings {
            max_iter: 100,
            tolerance: 1e-8,
            time_limit: f64::INFINITY,
            support_tolerance: 1e-4,
            weak_margin: 1e-3,
            grid_oversample: 16,
            postprocess: PostProcess::default(),
            backend: Backend::Auto,
        }
    }
}

impl SdpSettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: u32) -> Result<Self> {
        check::iterations("max_iter", max_iter as usize)?;
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the interior-point tolerance, in `(0, 1e-2]`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        self.tolerance = check::that(
            "tolerance",
            tolerance,
            tolerance > 0.0 && tolerance <= 1e-2,
            "must lie in (0, 1e-2]",
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

    /// Set the support tolerance, in `(0, 0.5)`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_support_tolerance(mut self, tol: f64) -> Result<Self> {
        self.support_tolerance = check::that(
            "support_tolerance",
            tol,
            tol > 0.0 && tol < 0.5,
            "must lie in (0, 0.5)",
        )?;
        Ok(self)
    }

    /// Set the post-processing.
    pub fn with_postprocess(mut self, postprocess: PostProcess) -> Self {
        self.postprocess = postprocess;
        self
    }

    /// Set the solver.
    pub fn with_backend(mut self, backend: Backend) -> Self {
        self.backend = backend;
        self
    }
}

/// [`Diagnostics::solver`] of an estimate made by the interior-point path.
pub const INTERIOR_POINT: &str = "interior point (clarabel, compact SDP)";

/// Solve `problem` with the backend the settings choose and finish the estimate (module docs).
fn run(
    method: &'static str,
    data: &Measurements,
    problem: Problem,
    sigma: Option<f64>,
    sigma_estimated: bool,
    settings: &SdpSettings,
) -> Result<Estimate> {
    let n = data.band_len();
    let sliding = match settings.backend {
        Backend::InteriorPoint => false,
        Backend::SlidingFrankWolfe => true,
        Backend::Auto => n >= AUTO_SWITCH_BAND_LEN,
    };
    if sliding {
        let est = continuous::solve_tv(
            data,
            problem,
            &SfwSettings::from(settings),
            method,
            sigma,
            sigma_estimated,
        )?;
        let fallback = settings.backend == Backend::Auto
            && est.status != Status::Solved
            && n <= FALLBACK_MAX_BAND_LEN;
        if !fallback {
            return Ok(est);
        }
    }
    let start = Instant::now();
    let formulation = match problem {
        Problem::Exact => Formulation::Exact,
        Problem::Constrained { delta } => Formulation::Constrained { delta },
        Problem::Penalised { lambda } => Formulation::Penalised { tau: lambda },
    };
    let (q, report) = solve_dual(data, formulation, settings)?;
    finish(
        method,
        data,
        q,
        report,
        sigma,
        sigma_estimated,
        settings,
        start,
    )
}

/// What the solve reports besides the dual polynomial.
struct SolveReport {
    status: Status,
    iterations: usize,
    objective: f64,
    gap: f64,
}

/// Assemble and solve one formulation; return the dual polynomial (`|q| ≤ 1`, `q = 1` on the support).
fn solve_dual(
    data: &Measurements,
    formulation: Formulation,
    settings: &SdpSettings,
) -> Result<(DualPolynomial, SolveReport)> {
    let n = data.band_len();
    let mut shifted: Vec<Option<Complex64>> = vec![None; n];
    for (&k, &v) in data.indices().iter().zip(data.values()) {
        shifted[(k - data.kmin()) as usize] = Some(v);
    }
    let prog = ConicProgram::assemble(n, &shifted, formulation);
    let sol = clarabel_adapter::solve(
        &prog,
        IpmSettings {
            max_iter: settings.max_iter,
            tolerance: settings.tolerance,
            time_limit: settings.time_limit,
        },
    )?;
    let c = prog.dual_coefficients(&sol.z);
    Ok((
        DualPolynomial::new(data.kmin(), c),
        SolveReport {
            status: sol.status,
            iterations: sol.iterations,
            objective: 0.5 * (sol.primal_objective + sol.dual_objective),
            gap: continuous::relative_gap(sol.primal_objective, sol.dual_objective).abs(),
        },
    ))
}

use crate::noise::resolve_noise as resolve_sigma;

/// Support from the dual polynomial, shared post-processing, certificate and diagnostics.
#[allow(clippy::too_many_arguments)]
fn finish(
    method: &'static str,
    data: &Measurements,
    q: DualPolynomial,
    report: SolveReport,
    sigma: Option<f64>,
    sigma_estimated: bool,
    settings: &SdpSettings,
    start: Instant,
) -> Result<Estimate> {
    // Every local maximum of |q| once: the support candidates are those at |q| = 1, and the
    // certificate below needs them all.
    let peaks = q.peaks(q.search_grid_len(settings.grid_oversample), 0.0);
    let candidates: Vec<f64> = peaks
        .iter()
        .filter(|p| p.modulus >= 1.0 - settings.support_tolerance)
        .map(|p| p.position)
        .collect();
    let spikes = settings.postprocess.apply(data, &candidates, sigma)?;
    // Off the support means away from both the final spikes and the convex solution's support: a
    // point of |q| = 1 that the post-processing merged, polished away or judged insignificant is part
    // of the convex solution, not a sign of a missed spike.
    let mut support = spikes.positions();
    support.extend_from_slice(&candidates);
    let cert = q.certificate_from_peaks(&peaks, &support);
    let mut diagnostics = Diagnostics::describe(data, &spikes);
    if cert.max_modulus > 1.0 + 1e-6 {
        diagnostics.warnings.push(Warning::CertificateViolated {
            max_modulus: cert.max_modulus,
        });
    }
    if cert.max_off_support > 1.0 - settings.weak_margin {
        diagnostics.warnings.push(Warning::WeakCertificate {
            max_off_support: cert.max_off_support,
        });
    }
    if !report.status.is_usable() {
        diagnostics.warnings.push(Warning::NotConverged {
            status: report.status,
        });
    }
    diagnostics.certificate = Some(cert);
    diagnostics.iterations = report.iterations;
    diagnostics.objective = Some(report.objective);
    diagnostics.duality_gap = Some(report.gap);
    diagnostics.solver = Some(INTERIOR_POINT);
    diagnostics.assess_noise(data, &spikes, sigma, sigma_estimated);
    diagnostics.solve_seconds = start.elapsed().as_secs_f64();
    Ok(Estimate {
        method,
        spikes,
        status: report.status,
        diagnostics,
        dual: Some(q),
    })
}

/// TV-norm minimisation (method name `sdp`): exact (`Fμ = y`) or constrained
/// (`‖y − Fμ‖₂ ≤ δ(σ)`) depending on the noise level.
///
/// # Examples
/// ```
/// use finespike::{Domain, Estimator, Measurements, Spikes, Tv};
/// use num_complex::Complex64;
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
    /// Solver, support and post-processing settings.
    pub settings: SdpSettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
}

impl Tv {
    /// Exact recovery: `min ‖μ‖_TV s.t. Fμ = y`.
    pub fn exact() -> Self {
        Tv {
            settings: SdpSettings::default(),
            noise: NoiseLevel::Exact,
        }
    }

    /// Constrained recovery with noise of known standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Tv {
            settings: SdpSettings::default(),
            noise: NoiseLevel::Known(sigma),
        }
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: SdpSettings) -> Self {
        self.settings = settings;
        self
    }

    /// Radius `δ = σ √(|K| + 2√|K|)` of the data-fit ball for `|K| = m` measurements.
    pub fn delta(sigma: f64, m: usize) -> f64 {
        let m = m as f64;
        sigma * (m + 2.0 * m.sqrt()).sqrt()
    }
}

impl Estimator for Tv {
    fn name(&self) -> &'static str {
        "sdp"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        let start = Instant::now();
        let (sigma, estimated) = resolve_sigma(data, self.noise)?;
        let problem = match sigma {
            None => Problem::Exact,
            Some(s) => Problem::Constrained {
                delta: Tv::delta(s, data.len()),
            },
        };
        let mut est = run(self.name(), data, problem, sigma, estimated, &self.settings)?;
        est.diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(est)
    }
}

/// Atomic-norm soft thresholding (method name `ast`): `min ½‖y − x‖₂² + τ‖x‖_A` with
/// `τ = η σ √(|K| ln |K|)` (Bhaskar, Tang & Recht 2013, IEEE TSP 61(23)).
#[derive(Debug, Clone)]
pub struct Ast {
    /// Solver, support and post-processing settings.
    pub settings: SdpSettings,
    /// Noise level (default: estimated from the data). AST needs a positive level.
    pub noise: NoiseLevel,
    /// Multiplier `η` of the regularisation weight (default 1.5; see the module docs).
    pub eta: f64,
}

impl Default for Ast {
    fn default() -> Self {
        Ast {
            settings: SdpSettings::default(),
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
    pub fn with_settings(mut self, settings: SdpSettings) -> Self {
        self.settings = settings;
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
        let start = Instant::now();
        let (sigma, estimated) = resolve_sigma(data, self.noise)?;
        let Some(s) = sigma else {
            return Err(Error::NeedsNoiseLevel {
                method: "ast",
                advice: "soft thresholding has no exact-data form; give sigma, or use 'sdp' for \
                         exact data",
            });
        };
        let problem = Problem::Penalised {
            lambda: self.tau(s, data.len()),
        };
        let mut est = run(self.name(), data, problem, sigma, estimated, &self.settings)?;
        est.diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(est)
    }
}
