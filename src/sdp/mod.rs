//! TV-norm minimisation through its semidefinite dual, solved with clarabel (method name `sdp`).
//!
//! For exact data the estimator solves
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

mod clarabel_adapter;
pub(crate) mod compact;

use crate::amplitudes;
use crate::dual::DualPolynomial;
use crate::error::{Error, Result};
use crate::estimator::{Diagnostics, Estimate, Estimator, Status, Warning};
use crate::model::{Measurements, Spikes};
use crate::refine::{refine, RefineSettings};
use clarabel_adapter::IpmSettings;
use compact::{ConicProgram, Formulation};
use num_complex::Complex64;
use std::time::Instant;

/// Settings of the SDP path. Every default is chosen for double-precision exact recovery.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SdpSettings {
    /// Interior-point iteration limit (default 100; typical runs take 10–20).
    pub max_iter: u32,
    /// Relative and absolute gap and feasibility tolerance of the interior point (default 1e-8, clarabel's own default).
    pub tolerance: f64,
    /// Wall-clock limit in seconds (default: none).
    pub time_limit: f64,
    /// A maximum of `|q|` is a support point when `|q| ≥ 1 − support_tolerance` (default 1e-4).
    pub support_tolerance: f64,
    /// Certificate caution: warn when `|q|` reaches `1 − weak_margin` off the support (default 1e-3).
    pub weak_margin: f64,
    /// Grid points per coefficient for peak searches (default 16).
    pub grid_oversample: usize,
    /// Drop recovered spikes whose amplitude is below this fraction of the largest (default 1e-6):
    /// such points touch `|q| = 1` but carry no mass in the primal solution.
    pub amplitude_floor: f64,
    /// Polish positions and amplitudes together by nonlinear least squares on the exact model, never
    /// moving a spike by more than the set fraction of `1/fc` (default: on, 0.25/fc). `None` reports the
    /// dual polynomial's support as it is.
    pub refine: Option<RefineSettings>,
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
            amplitude_floor: 1e-6,
            refine: Some(RefineSettings::default()),
        }
    }
}

impl SdpSettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: u32) -> Result<Self> {
        if max_iter == 0 {
            return Err(invalid("max_iter", max_iter, "must be at least 1"));
        }
        self.max_iter = max_iter;
        Ok(self)
    }

    /// Set the interior-point tolerance, in `(0, 1e-2]`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_tolerance(mut self, tolerance: f64) -> Result<Self> {
        if !(tolerance > 0.0 && tolerance <= 1e-2) {
            return Err(invalid("tolerance", tolerance, "must lie in (0, 1e-2]"));
        }
        self.tolerance = tolerance;
        Ok(self)
    }

    /// Set the time limit in seconds (positive; `f64::INFINITY` for none).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for zero, negative or NaN.
    pub fn with_time_limit(mut self, seconds: f64) -> Result<Self> {
        if seconds.is_nan() || seconds <= 0.0 {
            return Err(invalid("time_limit", seconds, "must be positive"));
        }
        self.time_limit = seconds;
        Ok(self)
    }

    /// Turn the least-squares polish on (with these settings) or off (`None`).
    pub fn with_refine(mut self, refine: Option<RefineSettings>) -> Self {
        self.refine = refine;
        self
    }

    /// Set the support tolerance, in `(0, 0.5)`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_support_tolerance(mut self, tol: f64) -> Result<Self> {
        if !(tol > 0.0 && tol < 0.5) {
            return Err(invalid("support_tolerance", tol, "must lie in (0, 0.5)"));
        }
        self.support_tolerance = tol;
        Ok(self)
    }
}

fn invalid(name: &'static str, value: impl ToString, rule: &'static str) -> Error {
    Error::InvalidSetting {
        name,
        value: value.to_string(),
        rule,
    }
}

/// Exact recovery by TV-norm minimisation (method name `sdp`).
///
/// # Examples
/// ```
/// use finespike::{Estimator, Measurements, Spikes, TvExact, Domain};
/// use num_complex::Complex64;
/// let truth = Spikes::from_parts(&[0.2, 0.45], &[Complex64::new(1.0, 0.0), Complex64::new(0.0, -2.0)])?;
/// let idx: Vec<i64> = (-6..=6).collect();
/// let data = Measurements::synthesize(&truth, -6, 6, &idx, Domain::Fourier)?;
/// let est = TvExact::default().estimate(&data)?;
/// assert_eq!(est.spikes.len(), 2);
/// assert!((est.spikes.positions()[1] - 0.45).abs() < 1e-6);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct TvExact {
    /// Solver and support-detection settings.
    pub settings: SdpSettings,
}

impl TvExact {
    /// With the given settings.
    pub fn new(settings: SdpSettings) -> Self {
        TvExact { settings }
    }

    /// Solve the dual SDP and return the dual polynomial with the solver's report.
    fn solve_dual(&self, data: &Measurements) -> Result<(DualPolynomial, SolveReport)> {
        let n = data.band_len();
        let mut shifted: Vec<Option<Complex64>> = vec![None; n];
        for (&k, &v) in data.indices().iter().zip(data.values()) {
            shifted[(k - data.kmin()) as usize] = Some(v);
        }
        let prog = ConicProgram::assemble(n, &shifted, Formulation::Exact);
        let sol = clarabel_adapter::solve(
            &prog,
            IpmSettings {
                max_iter: self.settings.max_iter,
                tolerance: self.settings.tolerance,
                time_limit: self.settings.time_limit,
            },
        )?;
        let c = prog.dual_coefficients(&sol.z);
        Ok((
            DualPolynomial::new(data.kmin(), c),
            SolveReport {
                status: sol.status,
                iterations: sol.iterations,
                objective: 0.5 * (sol.primal_objective + sol.dual_objective),
            },
        ))
    }
}

struct SolveReport {
    status: Status,
    iterations: usize,
    objective: f64,
}

impl Estimator for TvExact {
    fn name(&self) -> &'static str {
        "sdp"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        let start = Instant::now();
        let (q, report) = self.solve_dual(data)?;
        let s = &self.settings;
        let grid = q.search_grid_len(s.grid_oversample);
        let mut positions: Vec<f64> = q
            .peaks(grid, 1.0 - s.support_tolerance)
            .iter()
            .map(|p| p.position)
            .collect();
        let mut spikes = amplitudes::fit(data, &positions)?;
        // Points where |q| touches 1 but the primal puts no mass: drop and refit once.
        let amax = spikes.iter().map(|p| p.amplitude.norm()).fold(0.0, f64::max);
        if spikes
            .iter()
            .any(|p| p.amplitude.norm() < s.amplitude_floor * amax)
        {
            positions = spikes
                .iter()
                .filter(|p| p.amplitude.norm() >= s.amplitude_floor * amax)
                .map(|p| p.position)
                .collect();
            spikes = amplitudes::fit(data, &positions)?;
        }
        if let Some(rs) = s.refine {
            spikes = refine(data, &spikes, rs)?.spikes;
        }
        let cert = q.certificate(&spikes.positions(), s.grid_oversample);
        let mut diagnostics = Diagnostics::describe(data, &spikes);
        if cert.max_modulus > 1.0 + 1e-6 {
            diagnostics.warnings.push(Warning::CertificateViolated {
                max_modulus: cert.max_modulus,
            });
        }
        if cert.max_off_support > 1.0 - s.weak_margin {
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
        diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(Estimate {
            method: self.name(),
            spikes: Spikes::new(spikes.as_slice().to_vec())?,
            status: report.status,
            diagnostics,
            dual: Some(q),
        })
    }
}
