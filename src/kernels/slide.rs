//! The sliding step: a damped Newton method on positions and amplitudes together.
//!
//! Minimises the nonconvex, but smooth away from `a_j = 0`, objective
//!
//! ```text
//!   f(τ, a) = ½‖y − Φ(τ)a‖₂² + λ Σ_j |a_j|,        Φ(τ)_{kj} = exp(−i2πkτ_j)
//! ```
//!
//! over the real variables `(τ_j, Re a_j, Im a_j)` (the "sliding" step of Sliding Frank–Wolfe, Denoyelle,
//! Duval, Peyré & Soubies 2019, Inverse Problems 36(1), Alg. 2; the local step of ADCG, Boyd, Schiebinger
//! & Recht 2017, SIAM J. Optim. 27(2)). With `λ = 0` it is the nonlinear least-squares fit on a fixed
//! number of spikes; with positions frozen it is the amplitude LASSO restricted to its support.
//!
//! The exact Hessian is used (Gauss–Newton term `JᵀJ` plus the residual term, which does not vanish at a
//! BLASSO optimum, plus the curvature `λ(I − â âᵀ)/|a|` of the modulus), with Levenberg–Marquardt damping
//! `H + μ diag(JᵀJ)` and Nielsen's update of `μ` (Nielsen 1999, IMM-REP-1999-05): near a non-degenerate
//! minimum the iteration is Newton's and converges quadratically.
//!
//! Derivatives, with `p(t) = Σ_k r_k exp(i2πkt) = (F*r)(t)`, `r = y − Φa` and
//! `D_p(t) = Σ_{k∈K} k^p exp(i2πkt)`:
//!
//! ```text
//!   ∂f/∂τ_j = −Re(a_j conj p'(τ_j)),   ∂f/∂Re a_j + i ∂f/∂Im a_j = −p(τ_j) + λ a_j/|a_j|
//!   (JᵀJ)_{τ_j τ_l} = 4π² Re(conj(a_j) a_l D_2(τ_j − τ_l)),  (JᵀJ)_{τ_j, Re a_l} = Re(i2π conj(a_j) D_1(τ_j − τ_l)),
//!   (JᵀJ)_{τ_j, Im a_l} = −2π Re(conj(a_j) D_1(τ_j − τ_l)),  amplitude block = real form of D_0(τ_j − τ_l),
//!   residual term (j = l only): ττ −Re(a_j conj p''(τ_j)),  τ Re a −Re p'(τ_j),  τ Im a −Im p'(τ_j).
//! ```
//!
//! (derived for this crate; checked against finite differences in the tests below).

use crate::kernels::band::Model;
use crate::kernels::cg::{solve_spd, ITERATIVE_FROM};
use faer::linalg::matmul::matmul;
use faer::linalg::solvers::Solve;
use faer::{Accum, Mat, MatRef, Par, Side};
use num_complex::Complex64;
use std::f64::consts::PI;

/// A spike train in the centred, normalised frame of a [`Model`].
#[derive(Debug, Clone, Default, PartialEq)]
pub(crate) struct Point {
    /// Positions (not necessarily wrapped during a slide).
    pub tau: Vec<f64>,
    /// Centred, normalised amplitudes.
    pub amp: Vec<Complex64>,
}

impl Point {
    /// Number of spikes.
    pub fn len(&self) -> usize {
        self.tau.len()
    }

    /// True for no spikes.
    pub fn is_empty(&self) -> bool {
        self.tau.is_empty()
    }

    /// `Σ_j |a_j|`.
    pub fn l1(&self) -> f64 {
        self.amp.iter().map(|a| a.norm()).sum()
    }

    /// Remove spikes whose amplitude is exactly zero (the soft-thresholding output) or not finite.
    pub fn prune_zeros(&mut self) -> usize {
        let before = self.len();
        let keep: Vec<bool> = self
            .amp
            .iter()
            .map(|a| a.norm() > 0.0 && a.re.is_finite() && a.im.is_finite())
            .collect();
        self.retain(&keep);
        before - self.len()
    }

    /// Keep the spikes flagged `true`.
    pub fn retain(&mut self, keep: &[bool]) {
        let mut k = keep.iter();
        self.tau.retain(|_| *k.next().unwrap_or(&true));
        let mut k = keep.iter();
        self.amp.retain(|_| *k.next().unwrap_or(&true));
    }

    /// Merge spikes closer than `tol` (wrap-around) into one at the modulus-weighted mean position
    /// with the summed amplitude. Returns the number of merges.
    pub fn merge_close(&mut self, tol: f64) -> usize {
        let mut merges = 0;
        let mut j = 0;
        while j < self.len() {
            let mut l = j + 1;
            while l < self.len() {
                let d = crate::model::wrap_difference(self.tau[l], self.tau[j]);
                if d.abs() < tol {
                    let (wj, wl) = (self.amp[j].norm(), self.amp[l].norm());
                    let w = if wj + wl > 0.0 { wl / (wj + wl) } else { 0.5 };
                    self.tau[j] += w * d;
                    let extra = self.amp[l];
                    self.amp[j] += extra;
                    self.tau.remove(l);
                    self.amp.remove(l);
                    merges += 1;
                } else {
                    l += 1;
                }
            }
            j += 1;
        }
        merges
    }
}

/// Objective, gradient and Hessian at one point.
pub(crate) struct Local {
    /// `f(τ, a)`.
    pub f: f64,
    /// Gradient over `(τ, Re a, Im a)`.
    pub grad: Vec<f64>,
    /// Hessian (exact) over the same variables.
    pub hess: Mat<f64>,
    /// `diag(JᵀJ)`, the damping scale.
    pub scale: Vec<f64>,
}

/// `f(τ, a) = ½‖y − Φa‖² + λΣ|a_j|`.
pub(crate) fn objective(model: &Model, point: &Point, lambda: f64) -> f64 {
    let r = model.residual_at(&point.tau, &point.amp);
    0.5 * r.iter().map(|z| z.norm_sqr()).sum::<f64>() + lambda * point.l1()
}

/// Objective, gradient and exact Hessian at `point` (see the module docs for the formulas). With
/// `positions` false only the amplitude entries are filled (the others are zero).
pub(crate) fn local(model: &Model, point: &Point, lambda: f64, positions: bool) -> Local {
    let s = point.len();
    let orders = if positions { 3 } else { 1 };
    // Large supports on a contiguous band never form the |K| × s atom matrix: the residual and the
    // correlations are streamed and the Gram sums taken in closed form.
    let (r, [p0, p1, p2], g) = if model.grams_closed_form(s) {
        let r = model.residual_at(&point.tau, &point.amp);
        let p = model.correlate_at(&point.tau, &r);
        (r, p, model.closed_grams(&point.tau, orders))
    } else {
        let e = model.atoms(&point.tau);
        let r = model.residual(&e, &point.amp);
        let p = model.correlate(&e, &r);
        let g = model.grams(&point.tau, &e, orders);
        (r, p, g)
    };
    let f = 0.5 * r.iter().map(|z| z.norm_sqr()).sum::<f64>() + lambda * point.l1();
    let a = &point.amp;
    let n = 3 * s;
    let mut grad = vec![0.0; n];
    let mut hess = Mat::<f64>::zeros(n, n);
    let two_pi = 2.0 * PI;
    let i2pi = Complex64::new(0.0, two_pi);
    for j in 0..s {
        let modulus = a[j].norm();
        let unit = if modulus > 0.0 {
            a[j] / modulus
        } else {
            Complex64::new(0.0, 0.0)
        };
        grad[s + j] = -p0[j].re + lambda * unit.re;
        grad[2 * s + j] = -p0[j].im + lambda * unit.im;
        for l in 0..s {
            // D_p(τ_j − τ_l) = conj((G_p)_{jl}).
            let d0 = g[0][(j, l)].conj();
            hess[(s + j, s + l)] += d0.re;
            hess[(s + j, 2 * s + l)] += -d0.im;
            hess[(2 * s + j, s + l)] += d0.im;
            hess[(2 * s + j, 2 * s + l)] += d0.re;
            if !positions {
                continue;
            }
            let d1 = g[1][(j, l)].conj();
            let d2 = g[2][(j, l)].conj();
            hess[(j, l)] += two_pi * two_pi * (a[j].conj() * a[l] * d2).re;
            let ta = (i2pi * a[j].conj() * d1).re;
            let tb = -two_pi * (a[j].conj() * d1).re;
            hess[(j, s + l)] += ta;
            hess[(s + l, j)] += ta;
            hess[(j, 2 * s + l)] += tb;
            hess[(2 * s + l, j)] += tb;
        }
        if positions {
            grad[j] = -(a[j] * p1[j].conj()).re;
            // Residual (second-order) terms, diagonal blocks only.
            hess[(j, j)] += -(a[j] * p2[j].conj()).re;
            hess[(j, s + j)] += -p1[j].re;
            hess[(s + j, j)] += -p1[j].re;
            hess[(j, 2 * s + j)] += -p1[j].im;
            hess[(2 * s + j, j)] += -p1[j].im;
        }
        // Curvature of λ|a|: (λ/|a|)(I − â âᵀ).
        if modulus > 0.0 && lambda > 0.0 {
            let c = lambda / modulus;
            hess[(s + j, s + j)] += c * (1.0 - unit.re * unit.re);
            hess[(2 * s + j, 2 * s + j)] += c * (1.0 - unit.im * unit.im);
            hess[(s + j, 2 * s + j)] -= c * unit.re * unit.im;
            hess[(2 * s + j, s + j)] -= c * unit.re * unit.im;
        }
    }
    let m = model.len() as f64;
    let mut scale = vec![m; n];
    if positions {
        for j in 0..s {
            scale[j] = (two_pi * two_pi * a[j].norm_sqr() * g[2][(j, j)].re).max(1e-300);
        }
    }
    Local {
        f,
        grad,
        hess,
        scale,
    }
}

/// The damped Newton step `(H + μ diag(d)) δ = −g`: Cholesky (faer) for small systems, block-Jacobi
/// preconditioned conjugate gradients ([`crate::kernels::cg`]) from [`ITERATIVE_FROM`] unknowns on
/// (the blocks are the 2 or 3 unknowns of each spike). `None` when the damped matrix is not positive
/// definite or the step is not finite (the caller raises `μ`).
fn newton_step(
    h: MatRef<'_, f64>,
    d: &[f64],
    mu: f64,
    g: &[f64],
    s: usize,
    iterative: bool,
) -> Option<Vec<f64>> {
    let n = g.len();
    let step = if iterative {
        let shift: Vec<f64> = d.iter().map(|v| mu * v).collect();
        let rhs: Vec<f64> = g.iter().map(|v| -v).collect();
        // Unknowns of spike j: j, s + j (and 2s + j) among the trailing n of (τ, Re a, Im a).
        let per = n / s;
        let blocks: Vec<Vec<usize>> = (0..s)
            .map(|j| (0..per).map(|r| r * s + j).collect())
            .collect();
        solve_spd(h, &shift, &rhs, blocks, CG_TOLERANCE, CG_MAX_ITER).ok()?
    } else {
        let damped = Mat::<f64>::from_fn(n, n, |i, j| {
            h[(i, j)] + if i == j { mu * d[i] } else { 0.0 }
        });
        let llt = damped.llt(Side::Lower).ok()?;
        let rhs = Mat::<f64>::from_fn(n, 1, |i, _| -g[i]);
        let delta = llt.solve(&rhs);
        (0..n).map(|i| delta[(i, 0)]).collect()
    };
    step.iter().all(|x| x.is_finite()).then_some(step)
}

/// `δᵀHδ`.
fn quadratic(h: MatRef<'_, f64>, step: &[f64]) -> f64 {
    let n = step.len();
    let mut hs = vec![0.0; n];
    let x = MatRef::from_column_major_slice(step, n, 1);
    let y = faer::MatMut::from_column_major_slice_mut(&mut hs, n, 1);
    matmul(y, Accum::Replace, h, x, 1.0, Par::Seq);
    step.iter().zip(&hs).map(|(a, b)| a * b).sum()
}

/// Relative residual at which the iterative Newton solve stops: far below the steps the slide's
/// convergence test resolves (inexact Newton with a small forcing term converges like Newton's
/// method; Nocedal & Wright 2006, *Numerical Optimization*, Thm. 7.2).
const CG_TOLERANCE: f64 = 1e-12;

/// Iteration cap of the iterative Newton solve.
const CG_MAX_ITER: usize = 400;

/// How a slide ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct SlideOutcome {
    /// Accepted steps.
    pub steps: usize,
    /// True when the last step was below rounding level (or the decrease the model predicts was).
    pub converged: bool,
}

/// Damped Newton on `f` over `(τ, a)` (or over `a` alone when `freeze_positions`), at most `max_steps`
/// accepted steps. Never increases `f`.
pub(crate) fn slide(
    model: &Model,
    point: &mut Point,
    lambda: f64,
    freeze_positions: bool,
    max_steps: usize,
) -> SlideOutcome {
    let s = point.len();
    if s == 0 {
        return SlideOutcome {
            steps: 0,
            converged: true,
        };
    }
    let vars: Vec<usize> = if freeze_positions {
        (s..3 * s).collect()
    } else {
        (0..3 * s).collect()
    };
    let n = vars.len();
    let iterative = n >= ITERATIVE_FROM;
    let mut mu = 1e-8;
    let mut nu = 2.0;
    let mut steps = 0;
    let positions = !freeze_positions;
    let mut cur = local(model, point, lambda, positions);
    let mut converged = false;
    'outer: while steps < max_steps {
        let g: Vec<f64> = vars.iter().map(|&v| cur.grad[v]).collect();
        // The variables are the trailing `n` of `(τ, Re a, Im a)`: a view, no copy.
        let h = cur.hess.as_ref().submatrix(3 * s - n, 3 * s - n, n, n);
        let d: Vec<f64> = vars.iter().map(|&v| cur.scale[v]).collect();
        let mut accepted = false;
        for _ in 0..60 {
            let Some(step) = newton_step(h, &d, mu, &g, s, iterative) else {
                mu = (mu * nu).max(1e-12);
                nu *= 2.0;
                continue;
            };
            // Predicted decrease of the quadratic model.
            let quad = quadratic(h, &step);
            let pred = -(g.iter().zip(&step).map(|(a, b)| a * b).sum::<f64>() + 0.5 * quad);
            let mut trial = point.clone();
            for (i, &v) in vars.iter().enumerate() {
                let j = v % s;
                match v / s {
                    0 => trial.tau[j] += step[i],
                    1 => trial.amp[j].re += step[i],
                    _ => trial.amp[j].im += step[i],
                }
            }
            let f_trial = objective(model, &trial, lambda);
            let rounding = 1e-15 * cur.f.abs().max(f64::MIN_POSITIVE);
            if pred > 0.0 && f_trial.is_finite() && cur.f - f_trial >= 1e-4 * pred {
                let rho = (cur.f - f_trial) / pred;
                mu *= (1.0 / 3.0f64).max(1.0 - (2.0 * rho - 1.0).powi(3));
                mu = mu.max(1e-15);
                nu = 2.0;
                let amax = trial.amp.iter().map(|a| a.norm()).fold(0.0, f64::max);
                let small = (0..n).all(|i| {
                    let v = vars[i];
                    if v < s {
                        step[i].abs() * model.half_width.max(1.0) <= 1e-13
                    } else {
                        step[i].abs() <= 1e-13 * amax.max(f64::MIN_POSITIVE)
                    }
                });
                *point = trial;
                cur = local(model, point, lambda, positions);
                steps += 1;
                accepted = true;
                if small {
                    converged = true;
                    break 'outer;
                }
                break;
            }
            if pred >= 0.0 && pred <= rounding {
                // The decrease is below the rounding level of f, so f cannot judge the step: accept a
                // Newton step that halves the scaled gradient (quadratic convergence region), and
                // stop when none does.
                let trial_local = local(model, &trial, lambda, positions);
                let gnorm = |l: &Local| -> f64 {
                    vars.iter()
                        .map(|&v| l.grad[v] * l.grad[v] / l.scale[v])
                        .sum::<f64>()
                        .sqrt()
                };
                if trial_local.f.is_finite() && gnorm(&trial_local) <= 0.5 * gnorm(&cur) {
                    *point = trial;
                    cur = trial_local;
                    steps += 1;
                    accepted = true;
                    break;
                }
                converged = true;
                break 'outer;
            }
            mu = (mu * nu).max(1e-12);
            nu *= 2.0;
        }
        if !accepted {
            break;
        }
    }
    SlideOutcome { steps, converged }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain, Measurements, Spikes};

    fn model(noise: f64) -> Model {
        let truth = Spikes::from_parts(
            &[0.2, 0.31, 0.7],
            &[
                Complex64::new(1.0, 0.3),
                Complex64::new(-0.5, 0.8),
                Complex64::new(0.1, -1.1),
            ],
        )
        .unwrap();
        let idx: Vec<i64> = (-10..=10).collect();
        let mut y = forward(&truth, &idx);
        for (i, v) in y.iter_mut().enumerate() {
            *v += Complex64::new((i as f64 * 1.7).sin(), (i as f64 * 2.3).cos()) * noise;
        }
        let d = Measurements::in_band(-10, 10, &idx, &y, Domain::Fourier).unwrap();
        Model::new(&d, 8).unwrap()
    }

    fn point() -> Point {
        Point {
            tau: vec![0.203, 0.305, 0.69],
            amp: vec![
                Complex64::new(0.2, 0.05),
                Complex64::new(-0.1, 0.15),
                Complex64::new(0.03, -0.2),
            ],
        }
    }

    fn perturb(p: &Point, v: usize, h: f64) -> Point {
        let s = p.len();
        let mut q = p.clone();
        match v / s {
            0 => q.tau[v % s] += h,
            1 => q.amp[v % s].re += h,
            _ => q.amp[v % s].im += h,
        }
        q
    }

    /// Gradient and Hessian against central differences (step 1e-6: truncation ~h², rounding ~ε/h).
    #[test]
    fn derivatives_match_finite_differences() {
        let m = model(0.05);
        let p = point();
        let lambda = 0.02;
        let loc = local(&m, &p, lambda, true);
        let h = 1e-6;
        for v in 0..9 {
            let fp = objective(&m, &perturb(&p, v, h), lambda);
            let fm = objective(&m, &perturb(&p, v, -h), lambda);
            let fd = (fp - fm) / (2.0 * h);
            assert!(
                (fd - loc.grad[v]).abs() <= 1e-6 * (1.0 + loc.grad[v].abs()),
                "grad {v}: {fd} vs {}",
                loc.grad[v]
            );
            let gp = local(&m, &perturb(&p, v, h), lambda, true).grad;
            let gm = local(&m, &perturb(&p, v, -h), lambda, true).grad;
            for u in 0..9 {
                let fd = (gp[u] - gm[u]) / (2.0 * h);
                let an = loc.hess[(u, v)];
                assert!(
                    (fd - an).abs() <= 1e-5 * (1.0 + an.abs()),
                    "hess ({u},{v}): {fd} vs {an}"
                );
            }
        }
    }

    /// The iterative Newton solve (conjugate gradients from ITERATIVE_FROM unknowns on): with λ = 0
    /// and exact data a slide of 110 spikes from a perturbed start recovers the generating spikes to
    /// rounding level.
    #[test]
    fn iterative_slide_recovers_exact_spikes() {
        let s = 110;
        let fc = 250i64;
        let pos: Vec<f64> = (0..s)
            .map(|j| (j as f64 + 0.1 * (j as f64).sin()) / s as f64 + 0.01)
            .collect();
        let amp: Vec<Complex64> = (0..s)
            .map(|j| Complex64::from_polar(1.0 + 0.5 * (1.3 * j as f64).sin(), 2.1 * j as f64))
            .collect();
        let truth = Spikes::from_parts(&pos, &amp).unwrap();
        let idx: Vec<i64> = (-fc..=fc).collect();
        let d =
            Measurements::in_band(-fc, fc, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        let m = Model::new(&d, 8).unwrap();
        assert!(3 * s >= ITERATIVE_FROM);
        let mut p = Point {
            tau: pos
                .iter()
                .enumerate()
                .map(|(j, t)| t + 2e-5 * (j as f64).cos())
                .collect(),
            amp: pos
                .iter()
                .zip(&amp)
                .map(|(&t, &a)| m.to_centred(t, a) * Complex64::new(1.01, -0.005))
                .collect(),
        };
        let out = slide(&m, &mut p, 0.0, false, 200);
        assert!(out.converged);
        assert!(objective(&m, &p, 0.0) < 1e-26);
        for (t, want) in p.tau.iter().zip(&pos) {
            assert!((t - want).abs() < 1e-12);
        }
    }

    /// With λ = 0 and exact data, the slide recovers the generating spikes to rounding level.
    #[test]
    fn least_squares_slide_recovers_exact_spikes() {
        let m = model(0.0);
        let mut p = point();
        let out = slide(&m, &mut p, 0.0, false, 200);
        assert!(out.converged);
        let f = objective(&m, &p, 0.0);
        assert!(f < 1e-28, "f = {f}");
        for (t, want) in p.tau.iter().zip([0.2, 0.31, 0.7]) {
            assert!((t - want).abs() < 1e-13);
        }
    }

    /// At a converged slide with λ > 0 the stationarity conditions hold: η(τ_j) = a_j/|a_j| with
    /// η = F*(y − Φa)/λ (Duval & Peyré 2015, FoCM 15(5), Prop. 3, restricted to the support).
    #[test]
    fn penalised_slide_reaches_stationarity() {
        let m = model(0.02);
        let mut p = point();
        let lambda = 0.01;
        let out = slide(&m, &mut p, lambda, false, 200);
        assert!(out.converged);
        let e = m.atoms(&p.tau);
        let r = m.residual(&e, &p.amp);
        let [p0, _, _] = m.correlate(&e, &r);
        for (v, a) in p0.iter().zip(&p.amp) {
            assert!((v / lambda - a / a.norm()).norm() < 1e-9);
        }
    }
}
