//! What an estimator returns for a multi-snapshot record ([`Snapshots`]): sources with a position
//! shared by the snapshots, their amplitude in each snapshot, power, angle and bound.
//!
//! Every method that takes snapshots finishes through [`ArrayEstimate::assemble`] and
//! [`ArrayAssembly::noise`], so amplitudes (least squares per snapshot, `Ŝ = A⁺X`), powers, angles,
//! separation, residual and Cramér–Rao bounds are computed in one place for all of them.

use super::{ModelOrder, Status, Warning};
use crate::error::{Error, Result};
use crate::model::{min_separation, Snapshots, PROVEN_SEPARATION_FC};
use crate::SigmaMethod;
use nalgebra::DMatrix;
use num_complex::Complex64;
use serde::Serialize;

/// The methods that take multi-snapshot records, for error messages (kept equal to the registry's
/// `takes_snapshots` rows by a test in `registry.rs`).
pub const SNAPSHOT_METHODS: &str = "sdp, ast, sfw, music, esprit, pencil";

/// One source of an array estimate.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct Source {
    /// Position on the torus `[0, 1)`: the spatial frequency in cycles per sensor, wrapped.
    pub position: f64,
    /// The signed spatial frequency in `(−1/2, 1/2]` cycles per sensor (for Fourier data: the signed
    /// position).
    pub frequency: f64,
    /// Direction of arrival in degrees from broadside, `θ = asin(f/d)`, when the element spacing `d`
    /// is given and `|f| ≤ d` (with `d > 1/2` the one nearest broadside of several: see
    /// [`Warning::AmbiguousAngles`]).
    pub angle_deg: Option<f64>,
    /// Mean power over the snapshots, `Σ_t |s(t)|² / L`.
    pub power: f64,
    /// The amplitude in each snapshot, by least squares on the recovered positions.
    #[serde(serialize_with = "crate::model::complex_vec::serialize")]
    pub amplitudes: Vec<Complex64>,
    /// Deterministic Cramér–Rao standard deviation of the position (cycles per sensor), with the
    /// estimates taken as truth, when a noise level is known ([`crate::conditional_crb`]).
    pub crb_std_position: Option<f64>,
    /// The same for the angle, in degrees (`std θ = std f / (d cos θ)`), when the angle is known.
    pub crb_std_angle_deg: Option<f64>,
    /// Stochastic Cramér–Rao standard deviation of the position (cycles per sensor): amplitudes taken
    /// as circular Gaussian with the sample source covariance `P̂ = ŜŜᴴ/L` of the estimate, and the
    /// noise level used, as truth ([`crate::stochastic_crb`], Stoica & Nehorai 1990). At least the
    /// deterministic figure; the one a large-`L` maximum-likelihood estimator attains.
    pub crb_std_stochastic: Option<f64>,
}

/// How an array estimate went and how far to trust it.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[non_exhaustive]
pub struct ArrayDiagnostics {
    /// The numerical solver behind a convex estimate.
    pub solver: Option<&'static str>,
    /// Solver iterations.
    pub iterations: usize,
    /// Wall-clock seconds.
    pub solve_seconds: f64,
    /// Optimal objective value, where the method has one.
    pub objective: Option<f64>,
    /// Relative duality gap of a convex solve.
    pub duality_gap: Option<f64>,
    /// Largest `‖Q(f)‖₂` of the dual vector polynomial off the support, for convex methods (at most 1
    /// for a valid certificate).
    pub certificate_max: Option<f64>,
    /// Minimum separation of the sources in resolution cells `1/M` (`M` the array's span).
    pub separation_cells: Option<f64>,
    /// The same in the TV theory's unit `1/fc`, `fc = (M − 1)/2`.
    pub separation_fc: Option<f64>,
    /// Frobenius norm of the residual `X − A Ŝ`.
    pub residual_norm: f64,
    /// Frobenius norm of the data.
    pub data_norm: f64,
    /// The noise level used, where one was used.
    pub sigma: Option<f64>,
    /// Whether `sigma` was estimated.
    pub sigma_estimated: bool,
    /// How `sigma` was estimated, when it was.
    pub sigma_method: Option<SigmaMethod>,
    /// `‖X − AŜ‖²_F / (σ² (|K|L − sL − s/2))`: near 1 when the residual is noise.
    pub residual_ratio: Option<f64>,
    /// The model order a subspace method used and how it was chosen.
    pub model_order: Option<ModelOrder>,
    /// Plain-language cautions.
    pub warnings: Vec<Warning>,
}

/// The result of an estimator on a multi-snapshot record.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ArrayEstimate {
    /// The method that produced it.
    pub method: &'static str,
    /// The sources, sorted by position.
    pub sources: Vec<Source>,
    /// How the computation went.
    pub status: Status,
    /// Trust figures and cautions.
    pub diagnostics: ArrayDiagnostics,
}

/// An array estimate being finished: made by [`ArrayEstimate::assemble`], completed by the method's
/// own figures, finished by [`ArrayAssembly::noise`].
#[derive(Debug, Clone)]
#[must_use = "finish the estimate with `.noise(sigma, estimated, method)`"]
pub struct ArrayAssembly<'a> {
    data: &'a Snapshots,
    positions: Vec<f64>,
    amplitudes: DMatrix<Complex64>,
    estimate: ArrayEstimate,
}

impl ArrayEstimate {
    /// Start the estimate of `method` with sources at `positions` (any order; wrapped to `[0, 1)`):
    /// amplitudes by least squares in every snapshot, powers, angles, separation and residual.
    ///
    /// # Errors
    /// [`Error::Numerical`] when the least squares fails (it does not for distinct positions).
    pub fn assemble<'a>(
        method: &'static str,
        data: &'a Snapshots,
        positions: &[f64],
        status: Status,
    ) -> Result<ArrayAssembly<'a>> {
        let mut positions: Vec<f64> = positions.iter().map(|&p| crate::model::wrap(p)).collect();
        positions.sort_by(f64::total_cmp);
        let a = data.steering(&positions);
        let x = data.values();
        let amplitudes = if positions.is_empty() {
            DMatrix::zeros(0, data.snapshot_count())
        } else {
            a.clone()
                .svd(true, true)
                .solve(x, f64::EPSILON * data.len() as f64)
                .map_err(|e| Error::Numerical {
                    step: "least-squares amplitudes of the snapshots",
                    detail: e.to_string(),
                })?
        };
        let residual_norm = (x - &a * &amplitudes).norm();
        let l = data.snapshot_count() as f64;
        let mut warnings = Vec::new();
        let spacing = data.spacing();
        if let Some(d) = spacing.filter(|&d| d > 0.5) {
            warnings.push(Warning::AmbiguousAngles { spacing: d });
        }
        let sources: Vec<Source> = positions
            .iter()
            .enumerate()
            .map(|(j, &p)| {
                let frequency = if p > 0.5 { p - 1.0 } else { p };
                let angle_deg = spacing
                    .filter(|&d| frequency.abs() <= d)
                    .map(|d| (frequency / d).asin().to_degrees());
                if let Some(d) = spacing.filter(|&d| frequency.abs() > d) {
                    warnings.push(Warning::OutsideVisibleRegion {
                        frequency,
                        spacing: d,
                    });
                }
                let row: Vec<Complex64> = amplitudes.row(j).iter().copied().collect();
                Source {
                    position: p,
                    frequency,
                    angle_deg,
                    power: row.iter().map(|v| v.norm_sqr()).sum::<f64>() / l,
                    amplitudes: row,
                    crb_std_position: None,
                    crb_std_angle_deg: None,
                    crb_std_stochastic: None,
                }
            })
            .collect();
        let m = data.band_len() as f64;
        let sep = min_separation(&positions);
        let separation_cells = sep.is_finite().then_some(sep * m);
        let separation_fc = sep.is_finite().then(|| sep * (m - 1.0) / 2.0);
        if positions.is_empty() {
            warnings.push(Warning::NoSpikes);
        }
        if let (Some(cells), Some(fc)) = (separation_cells, separation_fc) {
            if cells < 1.0 {
                warnings.push(Warning::SourcesUnderResolved {
                    separation_fc: fc,
                    separation_cells: cells,
                });
            } else if fc < PROVEN_SEPARATION_FC {
                warnings.push(Warning::SourcesBelowProvenSeparation {
                    separation_fc: fc,
                    separation_cells: cells,
                });
            }
        }
        if !status.is_usable() {
            warnings.push(Warning::NotConverged { status });
        }
        Ok(ArrayAssembly {
            data,
            positions,
            amplitudes,
            estimate: ArrayEstimate {
                method,
                sources,
                status,
                diagnostics: ArrayDiagnostics {
                    solver: None,
                    iterations: 0,
                    solve_seconds: 0.0,
                    objective: None,
                    duality_gap: None,
                    certificate_max: None,
                    separation_cells,
                    separation_fc,
                    residual_norm,
                    data_norm: data.norm(),
                    sigma: None,
                    sigma_estimated: false,
                    sigma_method: None,
                    residual_ratio: None,
                    model_order: None,
                    warnings,
                },
            },
        })
    }

    /// The positions of the sources.
    pub fn positions(&self) -> Vec<f64> {
        self.sources.iter().map(|s| s.position).collect()
    }
}

impl ArrayAssembly<'_> {
    /// The numerical solver behind the estimate.
    pub fn solver(mut self, solver: &'static str) -> Self {
        self.estimate.diagnostics.solver = Some(solver);
        self
    }

    /// Solver iterations.
    pub fn iterations(mut self, iterations: usize) -> Self {
        self.estimate.diagnostics.iterations = iterations;
        self
    }

    /// Wall-clock seconds of the estimate.
    pub fn seconds(mut self, seconds: f64) -> Self {
        self.estimate.diagnostics.solve_seconds = seconds;
        self
    }

    /// Optimal objective value.
    pub fn objective(mut self, objective: f64) -> Self {
        self.estimate.diagnostics.objective = Some(objective);
        self
    }

    /// Relative duality gap.
    pub fn duality_gap(mut self, gap: f64) -> Self {
        self.estimate.diagnostics.duality_gap = Some(gap);
        self
    }

    /// Largest modulus of the dual vector polynomial off the support.
    pub fn certificate_max(mut self, value: f64) -> Self {
        self.estimate.diagnostics.certificate_max = Some(value);
        self
    }

    /// The model order a method worked with.
    pub fn model_order(mut self, order: ModelOrder) -> Self {
        self.estimate.diagnostics.model_order = Some(order);
        self
    }

    /// The method's own warnings.
    pub fn warnings(mut self, warnings: impl IntoIterator<Item = Warning>) -> Self {
        self.estimate.diagnostics.warnings.extend(warnings);
        self
    }

    /// Finish with the noise level used (`None`: exact data or unknown), whether it was estimated and
    /// how: the residual check (as for single records: warn beyond three standard deviations of the
    /// χ² ratio), the deterministic Cramér–Rao bound of every position and angle, and the
    /// stochastic bound of every position (with `P̂ = ŜŜᴴ/L`).
    pub fn noise(
        mut self,
        sigma: Option<f64>,
        estimated: bool,
        method: Option<SigmaMethod>,
    ) -> ArrayEstimate {
        let d = &mut self.estimate.diagnostics;
        d.sigma = sigma;
        d.sigma_estimated = estimated;
        d.sigma_method = method;
        let Some(s) = sigma.filter(|s| *s > 0.0) else {
            return self.estimate;
        };
        let l = self.data.snapshot_count() as f64;
        let k = self.positions.len() as f64;
        let dof = (self.data.len() as f64 * l - k * l - 0.5 * k).max(1.0);
        let ratio = d.residual_norm.powi(2) / (s * s * dof);
        d.residual_ratio = Some(ratio);
        let band = 3.0 / dof.sqrt();
        if ratio > 1.0 + band {
            d.warnings.push(Warning::ResidualAboveNoise { ratio });
        } else if ratio < 1.0 - band {
            d.warnings.push(Warning::ResidualBelowNoise { ratio });
        }
        if let Ok(var) =
            crate::bounds::conditional_crb(self.data, &self.positions, &self.amplitudes, s)
        {
            let spacing = self.data.spacing();
            for (src, v) in self.estimate.sources.iter_mut().zip(var) {
                let sd = v.sqrt();
                src.crb_std_position = Some(sd);
                if let (Some(d), Some(theta)) = (spacing, src.angle_deg) {
                    let c = theta.to_radians().cos();
                    src.crb_std_angle_deg = (c > 0.0).then(|| (sd / (d * c)).to_degrees());
                }
            }
        }
        let p = (&self.amplitudes * self.amplitudes.adjoint()).unscale(l);
        if let Ok(var) = crate::bounds::stochastic_crb(self.data, &self.positions, &p, s) {
            for (src, v) in self.estimate.sources.iter_mut().zip(var) {
                src.crb_std_stochastic = Some(v.sqrt());
            }
        }
        self.estimate
    }
}
