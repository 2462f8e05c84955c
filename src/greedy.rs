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
//! # Why the fit stopped, and its status
//!
//! Every stop has a documented reason, a [`GreedyStop`] ([`Greedy::estimate_with_stop`]); the
//! status follows from it and from the final, polished fit, which is checked against the same target:
//!
//! | stop | status |
//! |---|---|
//! | residual target met (after the polish), count reached, exact fit, zero data | [`Status::Solved`] |
//! | [`GreedyStop::IterationLimit`] | [`Status::IterationLimit`] |
//! | [`GreedyStop::SpikeLimit`], [`GreedyStop::NoProgress`] | [`Status::TargetNotReached`] |
//! | exact data, [`GreedyStop::NoProgress`] with the final fit within `1e-6‖y‖` | [`Status::ReducedAccuracy`] |
//! | [`GreedyStop::NonFinite`] (a residual or amplitude that is NaN or infinite) | [`Status::NumericalFailure`] |
//!
//! A stop short of the residual target is a normal outcome of a greedy method, not a numerical
//! failure: the target may be out of reach because the noise level is underestimated (coloured
//! noise, slow wander), or because the record carries an offset or trend that a sum of lines
//! separated by more than the merge distance cannot model (the best new spike then slides into the
//! component at zero frequency). [`GreedyStop::NoProgress`] says which, and its text tells the user
//! what to do (it is also in the estimate's warnings, as [`crate::Warning::Stopped`]).
//! [`Status::TargetNotReached`] is not usable and not a failure.
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
use crate::kernels::{noise_ball_for, EXACT_STOP};
use crate::model::{wrap, wrap_distance, Domain, Measurements};
use crate::noise::resolve_noise as resolve_sigma;
use std::fmt;
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

    /// Stop at `count` spikes (at least 1; for a real-valued record, `count` lines), or earlier if the
    /// residual reaches the noise level.
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

/// Why the greedy fit stopped (module docs): the reason behind its [`Status`].
///
/// ```
/// use finespike::{Estimator, Greedy, Scenario, Status};
/// // An invented scene: 3 lines at fc = 32, 2/fc apart, 30 dB.
/// let sample = Scenario::new(32, 3).with_separation(2.0).with_snr_db(30.0).with_seed(4).generate()?;
/// let fit = Greedy::with_sigma(sample.sigma).estimate_with_stop(&sample.data)?;
/// assert!(fit.stop.reached_target());
/// assert_eq!(fit.estimate.status, Status::Solved);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum GreedyStop {
    /// The residual reached the noise level's χ² bound `σ√(|K| + 2√|K|)`.
    ResidualTarget,
    /// The requested number of spikes was reached.
    Count,
    /// Exact data fitted to `1e-10‖y‖`.
    ExactFit,
    /// The data are zero: no spike.
    ZeroData,
    /// [`GreedySettings::max_iter`] spikes were added without reaching the target.
    IterationLimit {
        /// Iterations run.
        iterations: usize,
    },
    /// The fit holds `⌊2|K|/3⌋` spikes, as many as the `2|K|` real data values can determine,
    /// without reaching the target (the noise level is far too low for the record).
    SpikeLimit {
        /// Spikes held.
        spikes: usize,
    },
    /// No new spike lowers the residual any more, and the residual is above the target: the best
    /// new spike slid into (and was merged with) an existing one or fell below the floor, or no
    /// correlation peak was left away from the support.
    NoProgress {
        /// Where the last spike tried was added (cycles per sample for a time record), if one was.
        candidate: Option<f64>,
        /// Time record without a fitted trend whose stall happened at zero frequency (the candidate
        /// within two resolution cells `2/N` of it): an offset, trend or slow wander the lines
        /// cannot model.
        offset_or_trend: bool,
        /// Final `‖r‖ / target` (above 1), the target being the noise ball radius; `None` for
        /// exact data.
        residual_over_target: Option<f64>,
    },
    /// A residual or amplitude became NaN or infinite: the fit of the last finite iterate is
    /// reported.
    NonFinite,
}

impl GreedyStop {
    /// True when the stopping rule was met (residual target, count, exact fit or zero data).
    pub fn reached_target(self) -> bool {
        matches!(
            self,
            GreedyStop::ResidualTarget
                | GreedyStop::Count
                | GreedyStop::ExactFit
                | GreedyStop::ZeroData
        )
    }
}

impl fmt::Display for GreedyStop {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            GreedyStop::ResidualTarget => f.write_str("the residual reached the noise level"),
            GreedyStop::Count => f.write_str("the requested number of spikes was reached"),
            GreedyStop::ExactFit => f.write_str("the exact data are fitted to rounding level"),
            GreedyStop::ZeroData => f.write_str("the data are zero"),
            GreedyStop::IterationLimit { iterations } => write!(
                f,
                "stopped after {iterations} iterations (the iteration limit) before the residual \
                 reached the noise level: raise the limit, or check the noise level"
            ),
            GreedyStop::SpikeLimit { spikes } => write!(
                f,
                "stopped at {spikes} spikes, as many as the data can determine, before the residual \
                 reached the noise level: the noise level is far too low for this record — give it \
                 (sigma), or ask for a number of spikes"
            ),
            GreedyStop::NoProgress {
                offset_or_trend: true,
                ..
            } => f.write_str(
                "stopped before the residual reached the noise level: the next spike slides into \
                 the component at zero frequency — the record has an offset, trend or slow wander \
                 that lines cannot model: fit it with a trend (Measurements::with_trend, e.g. a \
                 mean or linear trend), or give the noise level (sigma)",
            ),
            GreedyStop::NoProgress {
                residual_over_target,
                ..
            } => {
                f.write_str("stopped before the residual reached the noise level: no further spike lowers it")?;
                if let Some(r) = residual_over_target {
                    write!(f, " (residual {r:.3}× the target)")?;
                }
                f.write_str(
                    "; the noise level is likely underestimated (coloured noise or slow wander in \
                     the record) — give the noise level (sigma), fit a trend, or ask for a number \
                     of spikes",
                )
            }
            GreedyStop::NonFinite => f.write_str(
                "numerical failure: a residual or amplitude became NaN or infinite; the last \
                 finite iterate is reported",
            ),
        }
    }
}

/// A greedy estimate with the reason the fit stopped ([`Greedy::estimate_with_stop`]).
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct GreedyFit {
    /// The estimate, as [`Estimator::estimate`] returns it.
    pub estimate: Estimate,
    /// Why the fit stopped; [`Estimate::status`] follows from it (module docs).
    pub stop: GreedyStop,
}

/// Largest relative residual of an exact-data fit that stopped without progress and is still
/// reported as reduced accuracy (the exact-fit tolerance of the convex estimators).
const EXACT_REDUCED: f64 = 1e-6;

impl Estimator for Greedy {
    fn name(&self) -> &'static str {
        "greedy"
    }

    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        self.estimate_with_stop(data).map(|fit| fit.estimate)
    }
}

impl Greedy {
    /// [`Estimator::estimate`], with the reason the fit stopped (`GreedyStop`, in the module docs
    /// of `greedy`; its `Display` says what to do when the target was not reached).
    ///
    /// # Errors
    /// As [`Estimator::estimate`]: [`Error::RunTooShort`] for a single sample, invalid settings, or
    /// a noise level that cannot be resolved.
    pub fn estimate_with_stop(&self, data: &Measurements) -> Result<GreedyFit> {
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
        let (sigma, sigma_method) = match (self.count, self.noise) {
            (Some(_), NoiseLevel::Estimate) => (None, None),
            (_, noise) => resolve_sigma(data, noise)?,
        };
        let estimated = sigma_method.is_some();
        let model = Model::new(data, settings.grid_oversample.max(8))?;
        let m = model.len() as f64;
        // Stopping level of ‖r‖ in normalised units.
        let target = match sigma {
            Some(s) => noise_ball_for(data, s) / model.scale,
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
            if !rn.is_finite() {
                break GreedyStop::NonFinite;
            }
            // A count of lines: a real record's lines are mirror pairs, two spikes each.
            let counted = self
                .count
                .is_some_and(|c| point.len() >= if data.is_real() { 2 * c } else { c });
            if model.zero_data {
                break GreedyStop::ZeroData;
            }
            if rn <= target {
                break match sigma {
                    Some(_) => GreedyStop::ResidualTarget,
                    None => GreedyStop::ExactFit,
                };
            }
            if counted {
                break GreedyStop::Count;
            }
            if iterations >= settings.max_iter {
                break GreedyStop::IterationLimit { iterations };
            }
            if point.len() >= max_spikes {
                break GreedyStop::SpikeLimit {
                    spikes: point.len(),
                };
            }
            iterations += 1;
            let e = model.atoms(&point.tau);
            let r = model.residual(&e, &point.amp);
            let Some(peak) = scan(&model, &r, &point.tau).best_off else {
                break no_progress(None);
            };
            let candidate = Some(wrap(peak.position));
            let before = point.clone();
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
            let finite = new_rn.is_finite()
                && point.tau.iter().all(|t| t.is_finite())
                && point
                    .amp
                    .iter()
                    .all(|a| a.re.is_finite() && a.im.is_finite());
            if !finite {
                point = before;
                break GreedyStop::NonFinite;
            }
            if new_rn >= rn * (1.0 - 1e-12) {
                break no_progress(candidate);
            }
            rn = new_rn;
        };
        for t in &mut point.tau {
            *t = wrap(*t);
        }
        let mut spikes = model.spikes(&point.tau, &point.amp)?;
        if data.is_real() && !spikes.is_empty() {
            // A real record's lines are mirror pairs: least squares on the mirror-symmetric
            // support (the polish keeps the symmetry).
            spikes = crate::kernels::lstsq::fit(data, &spikes.positions())?;
        }
        let spikes = refine(data, &spikes, settings.refine)?.spikes;
        // The final, polished fit against the same target, in data units.
        let final_rn = data.residual_norm(&spikes);
        let target_data = match sigma {
            Some(s) => Some(noise_ball_for(data, s)),
            None if self.count.is_none() => Some(EXACT_STOP * data.norm()),
            None => None,
        };
        let stop = match stop {
            GreedyStop::NoProgress { candidate, .. } => {
                let met = target_data.is_some_and(|t| final_rn <= t);
                match (met, sigma) {
                    (true, Some(_)) => GreedyStop::ResidualTarget,
                    (true, None) => GreedyStop::ExactFit,
                    (false, _) => GreedyStop::NoProgress {
                        candidate,
                        offset_or_trend: at_zero_frequency(data, candidate),
                        residual_over_target: sigma.map(|s| final_rn / noise_ball_for(data, s)),
                    },
                }
            }
            other => other,
        };
        let status = match stop {
            s if s.reached_target() => Status::Solved,
            GreedyStop::NonFinite => Status::NumericalFailure,
            GreedyStop::NoProgress { .. }
                if sigma.is_none()
                    && self.count.is_none()
                    && final_rn <= EXACT_REDUCED * data.norm() =>
            {
                Status::ReducedAccuracy
            }
            GreedyStop::IterationLimit { .. } => Status::IterationLimit,
            _ => Status::TargetNotReached,
        };
        let stopped = (!stop.reached_target()).then(|| crate::Warning::Stopped {
            reason: stop.to_string(),
        });
        let mut diagnostics = Diagnostics::builder(data, &spikes)
            .warnings(stopped)
            .status(status)
            .iterations(iterations)
            .noise(sigma, estimated);
        diagnostics.sigma_method = sigma_method;
        diagnostics.solve_seconds = start.elapsed().as_secs_f64();
        Ok(GreedyFit {
            estimate: Estimate {
                method: self.name(),
                spikes,
                status,
                diagnostics,
                dual: None,
            },
            stop,
        })
    }
}

/// A stop without progress, its cause filled in once the final fit is known.
fn no_progress(candidate: Option<f64>) -> GreedyStop {
    GreedyStop::NoProgress {
        candidate,
        offset_or_trend: false,
        residual_over_target: None,
    }
}

/// A time record without a fitted trend whose last candidate lies within two resolution cells `2/N`
/// of zero frequency: the stall is the record's offset, trend or slow wander (an offset alone is
/// one spike at zero frequency and fits; what stalls is the next spike sliding into it).
fn at_zero_frequency(data: &Measurements, candidate: Option<f64>) -> bool {
    if data.domain() != Domain::Time || data.trend_basis().is_some() {
        return false;
    }
    let cell = 1.0 / data.band_len() as f64;
    candidate.is_some_and(|t| wrap_distance(t, 0.0) <= 2.0 * cell)
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::Spikes;
    use num_complex::Complex64;

    /// Two lines of an invented scene, exact data on 33 time samples.
    fn exact() -> Measurements {
        let truth = Spikes::from_parts(
            &[0.1, 0.4],
            &[Complex64::new(1.0, 0.0), Complex64::new(0.0, 0.5)],
        )
        .unwrap();
        let idx: Vec<i64> = (-32..=0).collect();
        Measurements::synthesize(&truth, -32, 0, &idx, Domain::Time).unwrap()
    }

    #[test]
    fn greedy_stops_say_why() {
        let fit = Greedy::exact().estimate_with_stop(&exact()).unwrap();
        assert_eq!(fit.stop, GreedyStop::ExactFit);
        assert_eq!(fit.estimate.status, Status::Solved);
        let fit = Greedy::exact()
            .with_count(1)
            .unwrap()
            .estimate_with_stop(&exact())
            .unwrap();
        assert_eq!(fit.stop, GreedyStop::Count);
        let one = GreedySettings::default().with_max_iter(1).unwrap();
        let fit = Greedy::exact()
            .with_settings(one)
            .estimate_with_stop(&exact())
            .unwrap();
        assert_eq!(fit.stop, GreedyStop::IterationLimit { iterations: 1 });
        assert_eq!(fit.estimate.status, Status::IterationLimit);
        let zero = exact()
            .with_values(&[Complex64::new(0.0, 0.0); 33])
            .unwrap();
        let fit = Greedy::exact().estimate_with_stop(&zero).unwrap();
        assert_eq!(fit.stop, GreedyStop::ZeroData);
    }

    /// An invented record of 64 samples, an offset and a linear trend: a candidate within two
    /// resolution cells of zero frequency is attributed to them, unless a trend is fitted; the stop's
    /// text says what to do in each case.
    #[test]
    fn zero_frequency_stalls_are_attributed_to_an_offset_or_trend() {
        let n = 64;
        let z: Vec<Complex64> = (0..n)
            .map(|i| Complex64::new(2.0 + 0.05 * i as f64, 0.0))
            .collect();
        let data = Measurements::from_time_samples(&z).unwrap();
        assert!(at_zero_frequency(&data, Some(0.5 / n as f64)));
        assert!(at_zero_frequency(&data, Some(1.0 - 1.5 / n as f64)));
        assert!(!at_zero_frequency(&data, Some(0.25)));
        assert!(!at_zero_frequency(&data, None));
        let detrended = data.with_trend(crate::model::Trend::Linear).unwrap();
        assert!(!at_zero_frequency(&detrended, Some(0.0)));
        let stop = GreedyStop::NoProgress {
            candidate: Some(0.0),
            offset_or_trend: true,
            residual_over_target: Some(40.0),
        };
        assert!(stop.to_string().contains("fit it with a trend"));
        let stop = GreedyStop::NoProgress {
            candidate: Some(0.2),
            offset_or_trend: false,
            residual_over_target: Some(3.0),
        };
        assert!(stop
            .to_string()
            .contains("noise level is likely underestimated"));
        assert!(!stop.reached_target());
    }
}
