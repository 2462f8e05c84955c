//! Greedy continuous fit with sliding positions (method name `greedy`): the alternating descent
//! conditional gradient method used as a heuristic least-squares fit, not as a convex solve.
//!
//! Starting from no spike, each iteration
//!
//! 1. adds the point maximising `|(F*r)(t)| = |Σ_k r_k exp(i2πkt)|`, the correlation of the residual
//!    `r = y − Fμ` with an atom (FFT grid and Newton polish, shared with [`crate::Sfw`]);
//! 2. refits all amplitudes by least squares, `min_a ‖y − Φ(τ)a‖₂`;
//! 3. slides positions and amplitudes jointly by Newton's method on `‖y − Φ(τ)a‖₂²` (the slide of
//!    Sliding Frank–Wolfe with `λ = 0`);
//! 4. prunes spikes below the amplitude floor and merges coincident ones;
//!
//! and stops when the residual reaches the noise level, `‖r‖² ≤ σ²(|K| + 2√|K|)` (the χ² bound of
//! [`crate::Tv::delta`]), when a requested number of spikes is reached, or, for exact data, when the
//! fit is exact to `1e-10‖y‖`. The result is polished by the shared Levenberg–Marquardt polish on the exact model.
//!
//! This is ADCG (Boyd, Schiebinger & Recht 2017, SIAM J. Optim. 27(2), Alg. 2) without the norm
//! constraint — a conditional-gradient selection with a nonconvex local improvement, as also in
//! Sliding Frank–Wolfe (Denoyelle, Duval, Peyré & Soubies 2019, Inverse Problems 36(1)). Its status
//! says whether the stopping rule was met; there is no optimality certificate (use
//! [`crate::Sfw`] for a certified convex solution).

use crate::error::{check, Error, Result};
use crate::estimator::{Diagnostics, Estimate, Estimator, NoiseLevel, Status};
use crate::kernels::band::Model;
use crate::kernels::lstsq::on_band as least_squares;
use crate::kernels::peaks::scan;
use crate::kernels::refine::{refine, RefineSettings};
use crate::kernels::slide::{slide, Point};
use crate::kernels::{noise_ball_radius, EXACT_STOP};
use crate::model::{wrap, Measurements};
use crate::noise::resolve_noise as resolve_sigma;
use std::time::Instant;

/// Settings of the greedy fit; the defaults work for the demo and test problems.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct GreedySettings {
    /// Limit on added spikes (iterations), default 500.
    pub max_iter: usize,
    /// FFT grid points per band coefficient for the correlation search (default 16, at least 8).
    pub grid_oversample: usize,
    /// With noise of level `σ`, prune spikes with `|a| < floor_sigmas · σ/√|K|` (default 4, the
    /// detection level of [`crate::PostProcess`]); without noise, below `1e-6` of the largest.
    pub floor_sigmas: f64,
    /// Spikes closer than this many Rayleigh lengths are merged (default 0.05, as [`crate::PostProcess`]).
    pub merge_distance_fc: f64,
    /// Final local least-squares polish (the shared Levenberg–Marquardt polish).
    pub refine: RefineSettings,
}

impl Default for GreedySettings {
    fn default() -> Self {
        GreedySettings {
            max_iter: 500,
            grid_oversample: 16,
            floor_sigmas: 4.0,
            merge_distance_fc: 0.05,
            refine: RefineSettings::default(),
        }
    }
}

impl GreedySettings {
    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        check::iterations("max_iter", max_iter)?;
        self.max_iter = max_iter;
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

    /// Set the pruning floor in units of `σ/√|K|` (non-negative, finite).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] otherwise.
    pub fn with_floor_sigmas(mut self, k: f64) -> Result<Self> {
        self.floor_sigmas = check::that(
            "floor_sigmas",
            k,
            k.is_finite() && k >= 0.0,
            "must be non-negative and finite",
        )?;
        Ok(self)
    }

    /// Set the merge distance in Rayleigh units, in `[0, 0.5]`.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] outside that range.
    pub fn with_merge_distance_fc(mut self, d: f64) -> Result<Self> {
        self.merge_distance_fc = check::that(
            "merge_distance_fc",
            d,
            (0.0..=0.5).contains(&d),
            "must lie in [0, 0.5]",
        )?;
        Ok(self)
    }

    /// Set the final polish.
    pub fn with_refine(mut self, refine: RefineSettings) -> Self {
        self.refine = refine;
        self
    }

    /// Every setting checked (fields can be written directly); [`Greedy::estimate`] calls this.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] naming the first setting out of range.
    pub fn validated(self) -> Result<Self> {
        Ok(Self::default()
            .with_max_iter(self.max_iter)?
            .with_grid_oversample(self.grid_oversample)?
            .with_floor_sigmas(self.floor_sigmas)?
            .with_merge_distance_fc(self.merge_distance_fc)?
            .with_refine(self.refine.validated()?))
    }
}

/// The greedy continuous fit (method name `greedy`; module docs).
///
/// # Examples
/// ```
/// use finespike::Greedy;
/// use finespike::{Estimator, Scenario};
/// // An invented scene: 5 lines at fc = 64, 1.5/fc apart, 30 dB.
/// let sample = Scenario::new(64, 5).with_separation(1.5).with_snr_db(30.0).with_seed(2).generate()?;
/// let est = Greedy::with_sigma(sample.sigma).estimate(&sample.data)?;
/// assert!(est.status.is_usable());
/// assert_eq!(est.spikes.len(), 5);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct Greedy {
    /// Settings.
    pub settings: GreedySettings,
    /// Noise level (default: estimated from the data).
    pub noise: NoiseLevel,
    /// Stop at this many spikes (default: none, stop by the residual).
    pub count: Option<usize>,
}

impl Greedy {
    /// Fit exact data until the residual is at rounding level.
    pub fn exact() -> Self {
        Greedy {
            noise: NoiseLevel::Exact,
            ..Greedy::default()
        }
    }

    /// Fit until the residual reaches the level of noise of standard deviation `sigma`.
    pub fn with_sigma(sigma: f64) -> Self {
        Greedy {
            noise: NoiseLevel::Known(sigma),
            ..Greedy::default()
        }
    }

    /// Stop at `count` spikes (at least 1), or earlier if the residual reaches the noise level.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for 0.
    pub fn with_count(mut self, count: usize) -> Result<Self> {
        if count == 0 {
            return Err(Error::invalid(
                "count",
                count,
                "at least one spike must be asked for",
            ));
        }
        self.count = Some(count);
        Ok(self)
    }

    /// Replace the settings.
    pub fn with_settings(mut self, settings: GreedySettings) -> Self {
        self.settings = settings;
        self
    }
}

/// Why the loop stopped.
enum Stop {
    Rule,
    Limit,
    Stalled,
}

impl Estimator for Greedy {
    fn name(&self) -> &'static str {
        "greedy"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        let start = Instant::now();
        let settings = self.settings.validated()?;
        // One complex value against three real unknowns per spike: any position fits it exactly.
        if data.len() < 2 {
            return Err(Error::RunTooShort {
                method: "greedy",
                found: data.len(),
                needed: 2,
                advice: "a single sample holds no position information",
            });
        }
        // With a requested count and no noise level, the count alone stops the fit.
        let (sigma, estimated) = match (self.count, self.noise) {
            (Some(_), NoiseLevel::Estimate) => (None, false),
            (_, noise) => resolve_sigma(data, noise)?,
        };
        let model = Model::new(data, settings.grid_oversample.max(8))?;
        let m = model.len() as f64;
        // Stopping level of ‖r‖ in normalised units.
        let target = match sigma {
            Some(s) => noise_ball_radius(s, model.len()) / model.scale,
            None if self.count.is_some() => 0.0,
            None => EXACT_STOP,
        };
        let floor_abs = sigma.map(|s| settings.floor_sigmas * s / m.sqrt() / model.scale);
        let merge_tol = settings.merge_distance_fc / data.fc();
        // 3s real unknowns must not exceed the 2|K| real equations.
        let max_spikes = (2 * model.len() / 3).max(1);
        let mut point = Point::default();
        let mut rn = residual_norm(&model, &point);
        let mut iterations = 0;
        let stop = loop {
            let counted = self.count.is_some_and(|c| point.len() >= c);
            if rn <= target || counted || model.zero_data {
                break Stop::Rule;
            }
            if iterations >= settings.max_iter || point.len() >= max_spikes {
                break Stop::Limit;
            }
            iterations += 1;
            let e = model.atoms(&point.tau);
            let r = model.residual(&e, &point.amp);
            let Some(peak) = scan(&model, &r, &point.tau).best_off else {
                break Stop::Stalled;
            };
            point.tau.push(peak.position);
            point.amp.push(num_complex::Complex64::new(0.0, 0.0));
            fit(&model, &mut point);
            // Merge coincident spikes and prune the weakest below the floor, refitting after each change.
            for _ in 0..=point.len() {
                if point.merge_close(merge_tol) > 0 {
                    fit(&model, &mut point);
                    continue;
                }
                let amax = point.amp.iter().map(|a| a.norm()).fold(0.0, f64::max);
                let floor = floor_abs.unwrap_or(1e-6 * amax);
                let weakest = (0..point.len())
                    .min_by(|&i, &j| point.amp[i].norm().total_cmp(&point.amp[j].norm()));
                match weakest {
                    Some(i) if point.amp[i].norm() < floor => {
                        let mut keep = vec![true; point.len()];
                        keep[i] = false;
                        point.retain(&keep);
                        fit(&model, &mut point);
                    }
                    _ => break,
                }
            }
            let new_rn = residual_norm(&model, &point);
            if new_rn >= rn * (1.0 - 1e-12) {
                break Stop::Stalled;
            }
            rn = new_rn;
        };
        for t in &mut point.tau {
            *t = wrap(*t);
        }
        let spikes = model.spikes(&point.tau, &point.amp)?;
        let spikes = refine(data, &spikes, settings.refine)?.spikes;
        let status = match stop {
            Stop::Rule => Status::Solved,
            Stop::Limit => Status::IterationLimit,
            Stop::Stalled => Status::NumericalFailure,
        };
        let mut diagnostics = Diagnostics::builder(data, &spikes)
            .status(status)
            .iterations(iterations)
            .noise(sigma, estimated);
        diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(Estimate {
            method: self.name(),
            spikes,
            status,
            diagnostics,
            dual: None,
        })
    }
}

/// Least-squares amplitudes, then the joint slide (λ = 0); a failed amplitude fit (coincident
/// positions) is resolved by merging.
fn fit(model: &Model, point: &mut Point) {
    if !least_squares(model, point) {
        point.merge_close(1e-6 / model.half_width.max(1.0));
        least_squares(model, point);
    }
    slide(model, point, 0.0, false, 50);
}

fn residual_norm(model: &Model, point: &Point) -> f64 {
    let e = model.atoms(&point.tau);
    model
        .residual(&e, &point.amp)
        .iter()
        .map(|z| z.norm_sqr())
        .sum::<f64>()
        .sqrt()
}
