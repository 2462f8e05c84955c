//! The `Estimator` trait at the centre of the crate, and what every estimator returns.
//!
//! Every method — convex (`sdp`), subspace, greedy — takes validated [`Measurements`] and returns an
//! [`Estimate`]: the recovered spikes, a [`Status`] that says how the computation went, and
//! [`Diagnostics`] that say how far the answer can be trusted (separation against the proven
//! thresholds, residual, certificate). Multi-snapshot records ([`Snapshots`], array data) go through
//! [`Estimator::estimate_snapshots`] and return an [`ArrayEstimate`] (module `array.rs`).

use crate::dual::{Certificate, DualPolynomial};
use crate::error::Result;
use crate::model::{Measurements, Snapshots, Spikes, PROVEN_SEPARATION_FC};
use num_complex::Complex64;
use serde::Serialize;
use std::fmt;

/// A spike-recovery method. Object safe: `Box<dyn Estimator>` works.
///
/// # Examples
/// ```
/// use finespike::{Estimator, Tv};
/// let methods: Vec<Box<dyn Estimator>> = vec![Box::new(Tv::exact())];
/// assert_eq!(methods[0].name(), "sdp");
/// ```
pub trait Estimator: Send + Sync + fmt::Debug {
    /// The method's name, as used on the command line (e.g. `"sdp"`).
    fn name(&self) -> &'static str;

    /// Recover spikes from `data`.
    ///
    /// # Errors
    /// Only for data the method cannot handle at all (e.g. gaps in `K` for a subspace method);
    /// solver trouble is reported in [`Estimate::status`].
    fn estimate(&self, data: &Measurements) -> Result<Estimate>;

    /// Recover the sources shared by the snapshots of a multi-snapshot record (array data): one
    /// position per source for all snapshots, an amplitude per snapshot.
    ///
    /// # Errors
    /// The default refuses with [`crate::Error::SnapshotsNotTaken`], naming the methods that take
    /// snapshots ([`SNAPSHOT_METHODS`]); those methods refuse only what they cannot handle at all.
    fn estimate_snapshots(&self, data: &Snapshots) -> Result<ArrayEstimate> {
        let _ = data;
        Err(crate::Error::SnapshotsNotTaken {
            method: self.name().to_string(),
            takers: SNAPSHOT_METHODS,
        })
    }
}

/// The noise level a noise-aware estimator works with.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum NoiseLevel {
    /// Exact data: fit the measurements exactly.
    Exact,
    /// Complex white Gaussian noise of this standard deviation (`E|n_k|² = σ²`).
    Known(f64),
    /// Estimate `σ` from the data (the usual case); exact data are detected and fitted exactly.
    #[default]
    Estimate,
}

impl NoiseLevel {
    /// Check a known level: finite and non-negative.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for NaN, infinite or negative `σ`.
    pub fn validated(self) -> Result<Self> {
        if let NoiseLevel::Known(s) = self {
            if !(s.is_finite() && s >= 0.0) {
                return Err(crate::Error::InvalidSetting {
                    name: "sigma",
                    value: s.to_string(),
                    rule: "the noise level must be finite and non-negative",
                });
            }
        }
        Ok(self)
    }
}

/// How the computation behind an estimate went.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum Status {
    /// Converged to the requested accuracy.
    ///
    /// ```
    /// assert_eq!(finespike::Status::Solved.to_string(), "solved");
    /// ```
    Solved,
    /// Converged only to the solver's relaxed tolerances; positions may be less accurate.
    ///
    /// ```
    /// assert!(finespike::Status::ReducedAccuracy.is_usable());
    /// ```
    ReducedAccuracy,
    /// Stopped at the iteration limit before converging.
    ///
    /// ```
    /// assert!(!finespike::Status::IterationLimit.is_usable());
    /// ```
    IterationLimit,
    /// Stopped before reaching its target for a reason the method documents (a greedy fit whose next
    /// spike no longer lowers the residual; a convex solve whose support outgrew what the data can
    /// determine): not converged, and not a numerical failure. The estimate's warnings say why and
    /// what to do.
    ///
    /// ```
    /// assert!(!finespike::Status::TargetNotReached.is_usable());
    /// assert_eq!(finespike::Status::TargetNotReached.to_string(), "target not reached");
    /// ```
    TargetNotReached,
    /// Stopped at the time limit before converging.
    ///
    /// ```
    /// assert_eq!(finespike::Status::TimeLimit.to_string(), "time limit");
    /// ```
    TimeLimit,
    /// The solver ran into numerical trouble (failed factorisation, stalled steps).
    ///
    /// ```
    /// assert!(!finespike::Status::NumericalFailure.is_usable());
    /// ```
    NumericalFailure,
    /// The solver declared the problem infeasible (not expected for well-posed data; a sign of
    /// numerical trouble or of inconsistent settings).
    ///
    /// ```
    /// assert_eq!(finespike::Status::Infeasible.to_string(), "infeasible");
    /// ```
    Infeasible,
}

impl Status {
    /// True for [`Status::Solved`] and [`Status::ReducedAccuracy`].
    pub fn is_usable(self) -> bool {
        matches!(self, Status::Solved | Status::ReducedAccuracy)
    }
}

impl fmt::Display for Status {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Status::Solved => "solved",
            Status::ReducedAccuracy => "reduced accuracy",
            Status::IterationLimit => "iteration limit",
            Status::TargetNotReached => "target not reached",
            Status::TimeLimit => "time limit",
            Status::NumericalFailure => "numerical failure",
            Status::Infeasible => "infeasible",
        })
    }
}

/// What an estimator reports besides the spikes: how it went and how far to trust it.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct Diagnostics {
    /// The numerical solver behind a convex estimate (`None` for the other methods), e.g. the
    /// interior point or Sliding Frank–Wolfe for `sdp` and `ast` (see [`crate::Backend`]).
    pub solver: Option<&'static str>,
    /// Solver iterations (0 for direct methods).
    pub iterations: usize,
    /// Wall-clock time of the estimate, in seconds.
    pub solve_seconds: f64,
    /// Optimal objective value where the method has one (for `sdp`: the TV norm).
    pub objective: Option<f64>,
    /// Relative duality gap of the convex solve where the solver reports one: `(primal − dual)/|primal|`
    /// (for `grid` the largest over its rounds; for the Sliding Frank–Wolfe solver from its
    /// weak-duality lower bound; for the interior point from clarabel's primal and dual objectives).
    pub duality_gap: Option<f64>,
    /// Minimum separation of the recovered lines times `fc`, the TV theory's unit (`None` for fewer
    /// than two lines).
    pub separation_fc: Option<f64>,
    /// The same in the record's resolution cells `1/N` (one periodogram bin).
    pub separation_cells: Option<f64>,
    /// Each line once, in the record's unit (for a real record: one per cosine), with its bound.
    pub lines: Vec<Line>,
    /// The polynomial nuisance fitted with the lines, for a record with a trend.
    pub trend: Option<crate::model::TrendFit>,
    /// Residual norm `‖y − Fμ̂‖₂`.
    pub residual_norm: f64,
    /// Data norm `‖y‖₂`, for scale.
    pub data_norm: f64,
    /// The noise level used, where one was used.
    pub sigma: Option<f64>,
    /// Whether `sigma` was estimated from the data (true) or given (false).
    pub sigma_estimated: bool,
    /// How `sigma` was estimated, when it was (see [`crate::estimate_sigma`]).
    pub sigma_method: Option<crate::SigmaMethod>,
    /// The dual certificate, for methods that produce one.
    pub certificate: Option<Certificate>,
    /// Plain-language cautions.
    pub warnings: Vec<Warning>,
    /// The model order (number of spikes) a subspace method worked with, and how it was chosen
    /// (`None` for methods without a model-order step).
    pub model_order: Option<ModelOrder>,
    /// `‖y − Fμ̂‖² / (σ² (|K| − 1.5 s))` when a noise level is known or estimated: near 1 when the
    /// residual is consistent with the noise (3 real parameters per spike against 2 per sample).
    pub residual_ratio: Option<f64>,
    /// Plug-in Cramér–Rao standard deviation of each position, in Rayleigh units (estimates taken as
    /// truth; Stoica & Nehorai 1989, IEEE TASSP 37(5)), in spike order.
    pub crb_std_position_fc: Option<Vec<f64>>,
}

/// Assembles the [`Diagnostics`] of an estimate; the only way to finish one is
/// [`DiagnosticsBuilder::noise`], so that every estimator runs the shared noise assessment.
///
/// ```
/// use finespike::{Complex64, Diagnostics, Measurements, Spikes};
/// let data = Measurements::full_band(2, &[Complex64::new(1.0, 0.0); 5])?;
/// let spikes = Spikes::from_parts(&[0.0], &[Complex64::new(1.0, 0.0)])?;
/// let d = Diagnostics::builder(&data, &spikes).iterations(3).noise(Some(0.1), false);
/// assert_eq!(d.iterations, 3);
/// assert!(d.residual_ratio.is_some());
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone)]
#[must_use = "finish the diagnostics with `.noise(sigma, estimated)`"]
pub struct DiagnosticsBuilder<'a> {
    data: &'a Measurements,
    spikes: &'a Spikes,
    diagnostics: Diagnostics,
}

impl DiagnosticsBuilder<'_> {
    /// The numerical solver behind the estimate.
    pub fn solver(mut self, solver: &'static str) -> Self {
        self.diagnostics.solver = Some(solver);
        self
    }

    /// Solver iterations.
    pub fn iterations(mut self, iterations: usize) -> Self {
        self.diagnostics.iterations = iterations;
        self
    }

    /// Optimal objective value.
    pub fn objective(mut self, objective: f64) -> Self {
        self.diagnostics.objective = Some(objective);
        self
    }

    /// Relative duality gap of a convex solve.
    pub fn duality_gap(mut self, gap: f64) -> Self {
        self.diagnostics.duality_gap = Some(gap);
        self
    }

    /// The dual certificate.
    pub fn certificate(mut self, certificate: Certificate) -> Self {
        self.diagnostics.certificate = Some(certificate);
        self
    }

    /// The model order a method worked with.
    pub fn model_order(mut self, order: ModelOrder) -> Self {
        self.diagnostics.model_order = Some(order);
        self
    }

    /// The method's own warnings, after the separation warnings and before the noise warnings.
    pub fn warnings(mut self, warnings: impl IntoIterator<Item = Warning>) -> Self {
        self.diagnostics.warnings.extend(warnings);
        self
    }

    /// The solver's status: a status short of usable adds [`Warning::NotConverged`].
    pub fn status(mut self, status: Status) -> Self {
        if !status.is_usable() {
            self.diagnostics
                .warnings
                .push(Warning::NotConverged { status });
        }
        self
    }

    /// Finish with the noise level the estimate worked with (`None`: exact data or unknown) and
    /// whether it was estimated: records it and runs [`Diagnostics::assess_noise`].
    pub fn noise(mut self, sigma: Option<f64>, estimated: bool) -> Diagnostics {
        self.diagnostics
            .assess_noise(self.data, self.spikes, sigma, estimated);
        self.diagnostics
    }
}

impl Diagnostics {
    /// Start the diagnostics of `spikes` fitted to `data` ([`Diagnostics::describe`]), to be completed
    /// by the estimator and finished by the noise assessment.
    pub fn builder<'a>(data: &'a Measurements, spikes: &'a Spikes) -> DiagnosticsBuilder<'a> {
        DiagnosticsBuilder {
            data,
            spikes,
            diagnostics: Diagnostics::describe(data, spikes),
        }
    }

    /// Diagnostics for `spikes` fitted to `data`: separation, residual and the separation warnings.
    pub fn describe(data: &Measurements, spikes: &Spikes) -> Self {
        let lines = crate::lines::report(data, spikes, None);
        let positions: Vec<f64> = lines.iter().map(|l| l.position).collect();
        let sep = crate::model::min_separation(&positions);
        let separation_fc = sep.is_finite().then(|| sep * data.fc());
        let separation_cells = sep.is_finite().then(|| sep * data.band_len() as f64);
        let mut warnings = Vec::new();
        if spikes.is_empty() {
            warnings.push(Warning::NoSpikes);
        }
        if let (Some(separation_fc), Some(separation_cells)) = (separation_fc, separation_cells) {
            if separation_cells < 1.0 {
                warnings.push(Warning::UnderResolved {
                    separation_fc,
                    separation_cells,
                });
            } else if separation_fc < PROVEN_SEPARATION_FC {
                warnings.push(Warning::BelowProvenSeparation {
                    separation_fc,
                    separation_cells,
                });
            }
        }
        warnings.extend(crate::lines::cautions(data, &lines));
        Diagnostics {
            solver: None,
            iterations: 0,
            solve_seconds: 0.0,
            objective: None,
            duality_gap: None,
            separation_fc,
            separation_cells,
            lines,
            trend: data.trend_fit(spikes),
            residual_norm: data.residual_norm(spikes),
            data_norm: data.norm(),
            sigma: None,
            sigma_estimated: false,
            sigma_method: None,
            certificate: None,
            warnings,
            model_order: None,
            residual_ratio: None,
            crb_std_position_fc: None,
        }
    }

    /// Record the noise level and judge the estimate against it: residual consistency (a χ² check:
    /// `2‖n‖²/σ²` is χ² with `2·dof` degrees of freedom, so the ratio has standard deviation `1/√dof`;
    /// warn beyond 3 of those) and the plug-in Cramér–Rao bound of every position (warn when one
    /// standard deviation exceeds 0.1/fc or a tenth of the distance to the nearest other spike).
    pub fn assess_noise(
        &mut self,
        data: &Measurements,
        spikes: &Spikes,
        sigma: Option<f64>,
        estimated: bool,
    ) {
        self.sigma = sigma;
        self.sigma_estimated = estimated;
        let Some(s) = sigma.filter(|s| *s > 0.0) else {
            return;
        };
        let dof = (data.len() as f64 - 1.5 * spikes.len() as f64).max(1.0);
        let ratio = self.residual_norm.powi(2) / (s * s * dof);
        self.residual_ratio = Some(ratio);
        let band = 3.0 / dof.sqrt();
        if ratio > 1.0 + band {
            self.warnings.push(Warning::ResidualAboveNoise { ratio });
        } else if ratio < 1.0 - band {
            self.warnings.push(Warning::ResidualBelowNoise { ratio });
        }
        if let Some(w) = residual_colour(data, spikes) {
            self.warnings.push(w);
        }
        if spikes.is_empty() {
            return;
        }
        self.lines = crate::lines::report(data, spikes, Some(s));
        if let Ok(bound) = crate::bounds::crb_for(data, spikes, s) {
            let stds: Vec<f64> = bound.per_spike.iter().map(|b| b.std_position_fc).collect();
            let positions = spikes.positions();
            let fc = data.fc();
            let noisy = stds.iter().enumerate().any(|(i, &sd)| {
                let nearest = positions
                    .iter()
                    .enumerate()
                    .filter(|(j, _)| *j != i)
                    .map(|(_, &p)| crate::model::wrap_distance(p, positions[i]) * fc)
                    .fold(f64::INFINITY, f64::min);
                sd > 0.1 || sd > 0.1 * nearest
            });
            if noisy {
                let worst = stds.iter().copied().fold(0.0, f64::max);
                self.warnings.push(Warning::NoisyPositions {
                    worst_std_fc: worst,
                });
            }
            self.crb_std_position_fc = Some(stds);
        }
    }
}

/// One line (or point source) of an estimate as the user reads it: for a real-valued record one per
/// cosine, at `f ∈ [0, 1/2]` with the phasor amplitude `A e^{iφ}` (see [`crate::lines`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[non_exhaustive]
pub struct Line {
    /// Position on the torus `[0, 1)` (for a real record `[0, 1/2]`): for a time record the frequency
    /// in cycles per sample.
    pub position: f64,
    /// For a time record, the frequency in the user's unit: Hz with a sample rate, otherwise cycles
    /// per sample; signed in `(−R/2, R/2]` for a complex record, in `[0, R/2]` for a real one.
    pub frequency: Option<f64>,
    /// For Fourier data with a domain length `L`, the position in the user's unit (`τ·L`).
    pub location: Option<f64>,
    /// Complex amplitude; for a real record the phasor `A e^{iφ}` (`|amplitude|` is the cosine
    /// amplitude, the phase refers to the index origin `n = 0`).
    #[serde(serialize_with = "crate::model::complex_pair::serialize")]
    pub amplitude: Complex64,
    /// Plug-in Cramér–Rao standard deviation of the position, in cycles per sample (or fractions of
    /// the domain), when a noise level is known.
    pub crb_std_position: Option<f64>,
}

/// [`Warning::NoiseNotWhite`] when the residual's spectral floor is not flat (the whiteness rule of
/// the noise-level estimate, applied to `y − Fμ̂`); `None` for short records and bands beyond 2^22.
fn residual_colour(data: &Measurements, spikes: &Spikes) -> Option<Warning> {
    if data.band_len() > 1 << 22 {
        return None;
    }
    let r = data.residual(spikes);
    let spec =
        crate::kernels::spectrum::noise_spectrum(data.kmin(), data.band_len(), data.indices(), &r)?;
    spec.coloured().then(|| Warning::NoiseNotWhite {
        ratio: spec.ratio,
        threshold: spec.threshold,
        loudest_at: data.physical(spec.loudest_position),
    })
}

/// How a model order was obtained.
///
/// ```
/// use finespike::subspace::OrderMethod;
/// assert_eq!(OrderMethod::Mdl.to_string(), "MDL");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum OrderMethod {
    /// Given in the settings.
    Given,
    /// Minimum description length (Wax & Kailath 1985).
    Mdl,
    /// Akaike's information criterion (Wax & Kailath 1985).
    Aic,
    /// Numerical rank of the Hankel data matrix.
    NumericalRank,
}

impl fmt::Display for OrderMethod {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            OrderMethod::Given => "given",
            OrderMethod::Mdl => "MDL",
            OrderMethod::Aic => "AIC",
            OrderMethod::NumericalRank => "numerical rank",
        })
    }
}

/// The model order an estimate used, and how it was chosen (reported in
/// [`Diagnostics::model_order`](crate::Diagnostics::model_order)).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct ModelOrder {
    /// Number of spikes.
    pub order: usize,
    /// How the number was obtained.
    pub method: OrderMethod,
}

impl fmt::Display for ModelOrder {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} ({})", self.order, self.method)
    }
}

/// The result of an estimator: spikes, status and diagnostics.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Estimate {
    /// The method that produced it.
    pub method: &'static str,
    /// Recovered spikes, sorted by position.
    pub spikes: Spikes,
    /// How the computation went.
    pub status: Status,
    /// Trust figures and cautions.
    pub diagnostics: Diagnostics,
    /// The dual polynomial behind the estimate, for methods that have one (not serialised).
    #[serde(skip)]
    pub dual: Option<DualPolynomial>,
}

mod array;
mod warning;
pub use array::{ArrayAssembly, ArrayDiagnostics, ArrayEstimate, Source, SNAPSHOT_METHODS};
pub use warning::Warning;

#[cfg(test)]
mod tests;
