//! Local nonlinear least-squares refinement of positions and amplitudes together.
//!
//! Minimises `‖y − Σ_j a_j φ(τ_j)‖₂²` (with `φ(τ)_k = exp(−i2πkτ)`) over all positions and amplitudes
//! by Levenberg–Marquardt (Levenberg 1944, Q. Appl. Math. 2(2); Marquardt 1963, SIAM J. Appl. Math.
//! 11(2)) with Marquardt's diagonal scaling, starting from a convex solution. A step is accepted only if
//! it lowers the residual and keeps every position within `max_shift_fc / fc` of where it started, so
//! the refinement polishes an estimate and can never move a spike to another place.
//!
//! For exact data the TV solution *is* the zero-residual fit on its support, so this step takes the
//! interior point's position error (about the square root of its tolerance) down to rounding level.

use crate::error::{check, Result};
use crate::model::{atom, wrap, wrap_difference, Measurements, Spike, Spikes};
use faer::linalg::solvers::Solve;
use faer::{Mat, Side};
use num_complex::Complex64;
use std::f64::consts::PI;

/// Settings of the refinement.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub struct RefineSettings {
    /// Iteration limit (default 50).
    pub max_iter: usize,
    /// No position moves further than this many Rayleigh lengths `1/fc` from its start (default 0.25).
    pub max_shift_fc: f64,
    /// Stop when a step changes the residual norm by less than this fraction (default 1e-15).
    pub rel_tolerance: f64,
}

impl Default for RefineSettings {
    fn default() -> Self {
        RefineSettings {
            max_iter: 50,
            max_shift_fc: 0.25,
            rel_tolerance: 1e-15,
        }
    }
}

impl RefineSettings {
    /// Set the largest allowed move, in Rayleigh units, in `(0, 1]`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_max_shift_fc(mut self, shift: f64) -> Result<Self> {
        self.max_shift_fc = check::that(
            "max_shift_fc",
            shift,
            shift > 0.0 && shift <= 1.0,
            "must lie in (0, 1]",
        )?;
        Ok(self)
    }

    /// Set the iteration limit (at least 1).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] for 0.
    pub fn with_max_iter(mut self, max_iter: usize) -> Result<Self> {
        self.max_iter = check::iterations("max_iter", max_iter)?;
        Ok(self)
    }

    /// Set the relative stopping tolerance on the residual norm, in `[0, 1)`.
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] outside that range.
    pub fn with_rel_tolerance(mut self, tol: f64) -> Result<Self> {
        self.rel_tolerance = check::that(
            "rel_tolerance",
            tol,
            (0.0..1.0).contains(&tol),
            "must lie in [0, 1)",
        )?;
        Ok(self)
    }

    /// Every setting checked (fields can be written directly).
    ///
    /// # Errors
    /// [`crate::Error::InvalidSetting`] naming the first setting out of range.
    pub fn validated(self) -> Result<Self> {
        Self::default()
            .with_max_iter(self.max_iter)?
            .with_max_shift_fc(self.max_shift_fc)?
            .with_rel_tolerance(self.rel_tolerance)
    }
}

/// The refined spikes and how the refinement went.
#[derive(Debug, Clone, PartialEq)]
pub struct Refined {
    /// Refined spikes (the input if no step was accepted).
    pub spikes: Spikes,
    /// Accepted steps.
    pub iterations: usize,
    /// Residual norm before.
    pub initial_residual: f64,
    /// Residual norm after.
    pub final_residual: f64,
}

/// The residual, after refitting the record's trend if it has one (`P⊥(x − Fμ)`).
fn residual(data: &Measurements, pos: &[f64], amp: &[Complex64]) -> Vec<Complex64> {
    let mut r: Vec<Complex64> = data
        .indices()
        .iter()
        .zip(data.values())
        .map(|(&k, &y)| {
            let model: Complex64 = pos.iter().zip(amp).map(|(&t, &a)| a * atom(k, t)).sum();
            y - model
        })
        .collect();
    if let Some(b) = data.trend_basis() {
        b.project(&mut r);
    }
    r
}

fn norm(r: &[Complex64]) -> f64 {
    r.iter().map(|z| z.norm_sqr()).sum::<f64>().sqrt()
}

/// Refine `spikes` against `data` (see the module docs).
///
/// # Errors
/// Never for valid input; the signature leaves room for decomposition failures, which are reported
/// as [`crate::Error::Numerical`].
pub fn refine(data: &Measurements, spikes: &Spikes, settings: RefineSettings) -> Result<Refined> {
    let s = spikes.len();
    let mut pos = spikes.positions();
    let mut amp = spikes.amplitudes();
    let start = pos.clone();
    let mut r = residual(data, &pos, &amp);
    let initial = norm(&r);
    let mut cost = initial;
    if s == 0 || cost == 0.0 {
        return Ok(Refined {
            spikes: spikes.clone(),
            iterations: 0,
            initial_residual: initial,
            final_residual: initial,
        });
    }
    let limit = settings.max_shift_fc / data.fc();
    let m = data.len();
    let p = 3 * s;
    let mut lambda = 1e-3;
    let mut accepted = 0;
    for _ in 0..settings.max_iter {
        // Jacobian of the stacked real residual [Re r; Im r] with respect to [τ, Re a, Im a]; with a
        // trend, each column is projected like the residual (variable projection, module docs of
        // `Trend`).
        let mut jac = Mat::<f64>::zeros(2 * m, p);
        let mut column = vec![Complex64::new(0.0, 0.0); m];
        for j in 0..s {
            for (which, col) in [j, s + j, 2 * s + j].into_iter().enumerate() {
                for (row, &k) in data.indices().iter().enumerate() {
                    let e = atom(k, pos[j]);
                    column[row] = match which {
                        0 => -(amp[j] * Complex64::new(0.0, -2.0 * PI * k as f64) * e),
                        1 => -e,
                        _ => -(Complex64::new(0.0, 1.0) * e),
                    };
                }
                if let Some(b) = data.trend_basis() {
                    b.project(&mut column);
                }
                for (row, d) in column.iter().enumerate() {
                    jac[(row, col)] = d.re;
                    jac[(m + row, col)] = d.im;
                }
            }
        }
        let mut rvec = Mat::<f64>::zeros(2 * m, 1);
        for (row, z) in r.iter().enumerate() {
            rvec[(row, 0)] = z.re;
            rvec[(m + row, 0)] = z.im;
        }
        let jtj = jac.transpose() * &jac;
        let jtr = jac.transpose() * &rvec;
        let mut improved = false;
        for _ in 0..20 {
            let mut a = jtj.clone();
            for i in 0..p {
                a[(i, i)] += lambda * jtj[(i, i)].max(1e-300);
            }
            let Ok(chol) = a.llt(Side::Lower) else {
                lambda *= 10.0;
                continue;
            };
            let step = chol.solve(&jtr);
            let new_pos: Vec<f64> = (0..s).map(|j| pos[j] - step[(j, 0)]).collect();
            let new_amp: Vec<Complex64> = (0..s)
                .map(|j| amp[j] - Complex64::new(step[(s + j, 0)], step[(2 * s + j, 0)]))
                .collect();
            let within = new_pos
                .iter()
                .zip(&start)
                .all(|(&t, &t0)| wrap_difference(t, t0).abs() <= limit);
            let finite = new_pos.iter().all(|t| t.is_finite())
                && new_amp.iter().all(|a| a.re.is_finite() && a.im.is_finite());
            if within && finite {
                let new_r = residual(data, &new_pos, &new_amp);
                let new_cost = norm(&new_r);
                if new_cost < cost {
                    let rel = (cost - new_cost) / cost;
                    pos = new_pos;
                    amp = new_amp;
                    r = new_r;
                    cost = new_cost;
                    lambda = (lambda / 10.0).max(1e-12);
                    improved = true;
                    accepted += 1;
                    if rel < settings.rel_tolerance {
                        improved = false;
                    }
                    break;
                }
            }
            lambda *= 10.0;
        }
        if !improved {
            break;
        }
    }
    let refined = Spikes::new(
        pos.iter()
            .zip(&amp)
            .map(|(&t, &a)| Spike::new(wrap(t), a))
            .collect(),
    )?;
    Ok(Refined {
        spikes: refined,
        iterations: accepted,
        initial_residual: initial,
        final_residual: cost,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain};

    #[test]
    fn polishes_perturbed_exact_fit_to_rounding_level() {
        let truth = Spikes::from_parts(
            &[0.1, 0.2, 0.7],
            &[
                Complex64::new(1.0, 0.5),
                Complex64::new(-0.4, 0.9),
                Complex64::new(0.0, -1.2),
            ],
        )
        .unwrap();
        let idx: Vec<i64> = (-12..=12).collect();
        let data =
            Measurements::in_band(-12, 12, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        let start = Spikes::from_parts(
            &[0.1 + 1e-4, 0.2 - 2e-4, 0.7 + 3e-5],
            &[
                Complex64::new(1.01, 0.5),
                Complex64::new(-0.4, 0.88),
                Complex64::new(0.01, -1.2),
            ],
        )
        .unwrap();
        let out = refine(&data, &start, RefineSettings::default()).unwrap();
        for (a, b) in out.spikes.iter().zip(truth.iter()) {
            assert!((a.position - b.position).abs() < 1e-13);
            assert!((a.amplitude - b.amplitude).norm() < 1e-12);
        }
        assert!(out.final_residual < 1e-12 * data.norm());
    }

    #[test]
    fn never_moves_a_spike_beyond_the_limit() {
        // Start one spike far from any true line: the fit would like to move it, the limit forbids it.
        let truth = Spikes::from_parts(&[0.3], &[Complex64::new(1.0, 0.0)]).unwrap();
        let idx: Vec<i64> = (-8..=8).collect();
        let data =
            Measurements::in_band(-8, 8, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        let start = Spikes::from_parts(&[0.3 + 0.05], &[Complex64::new(1.0, 0.0)]).unwrap();
        let settings = RefineSettings::default().with_max_shift_fc(0.1).unwrap();
        let out = refine(&data, &start, settings).unwrap();
        let moved = wrap_difference(out.spikes.positions()[0], 0.35).abs();
        assert!(moved <= 0.1 / 8.0 + 1e-15, "moved {moved}");
        assert!(out.final_residual <= out.initial_residual);
    }
}
