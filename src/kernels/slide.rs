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

use crate::kernels::band::{dirichlet_sums, parallel_pays, Model};
use crate::kernels::cg::{solve_spd, ITERATIVE_FROM};
use faer::linalg::matmul::matmul;
use faer::linalg::solvers::Solve;
use faer::{Accum, ColMut, Mat, MatMut, MatRef, Par, Side};
use num_complex::Complex64;
use rayon::prelude::*;
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
    /// Hessian (exact) over the same variables (over the amplitudes alone, `2s × 2s`, when the
    /// positions are frozen: see [`local`]).
    pub hess: Mat<f64>,
    /// `diag(JᵀJ)`, the damping scale.
    pub scale: Vec<f64>,
}

/// `f(τ, a) = ½‖y − Φa‖² + λΣ|a_j|` (the slide itself takes it from the residual it keeps).
#[cfg(test)]
pub(crate) fn objective(model: &Model, point: &Point, lambda: f64) -> f64 {
    objective_of(&model.residual_at(&point.tau, &point.amp), point, lambda)
}

/// `f` from the residual `r = y − Φa` of `point`.
fn objective_of(r: &[Complex64], point: &Point, lambda: f64) -> f64 {
    0.5 * r.iter().map(|z| z.norm_sqr()).sum::<f64>() + lambda * point.l1()
}

/// Objective, gradient and exact Hessian at `point` (see the module docs for the formulas). With
/// `positions` false only the amplitude entries are filled: the gradient and scale are still over all
/// `3s` variables (the position entries zero), but the Hessian is the trailing `2s × 2s` amplitude
/// block alone.
///
/// The Hessian is filled column by column (three columns per spike, from one column of kernel sums
/// `D_p(τ_j − τ_l)`, `j = 1..s`), in parallel over the spikes for large supports: every entry is
/// computed by one thread, so the result does not depend on the thread count.
pub(crate) fn local(model: &Model, point: &Point, lambda: f64, positions: bool) -> Local {
    local_with(model, point, lambda, positions, None)
}

/// [`local`], reusing the residual `y − Φa` of `point` when the caller has it (the slide has, from
/// the objective value of the step it accepts); only the streamed path takes it.
fn local_with(
    model: &Model,
    point: &Point,
    lambda: f64,
    positions: bool,
    residual: Option<Vec<Complex64>>,
) -> Local {
    let s = point.len();
    let orders = if positions { 3 } else { 1 };
    // Large supports on a contiguous band never form the |K| × s atom matrix: the residual and the
    // correlations are streamed and the kernel sums taken in closed form.
    let closed = model.grams_closed_form(s);
    let (r, [p0, p1, p2], g) = if closed {
        let r = residual.unwrap_or_else(|| model.residual_at(&point.tau, &point.amp));
        let p = model.correlate_at(&point.tau, &r);
        (r, p, Vec::new())
    } else {
        let e = model.atoms(&point.tau);
        let r = model.residual(&e, &point.amp);
        let p = model.correlate(&e, &r);
        let g = model.grams(&point.tau, &e, orders);
        (r, p, g)
    };
    let f = 0.5 * r.iter().map(|z| z.norm_sqr()).sum::<f64>() + lambda * point.l1();
    let a = &point.amp;
    let tau = &point.tau;
    let zero = Complex64::new(0.0, 0.0);
    let pairs = closed.then(|| PairSums::new(model.ks[0], model.ks[model.len() - 1], tau));
    // [D_0, D_1, D_2](τ_j − τ_l); from the Gram sums, (G_p)_{jl} = D_p(τ_l − τ_j) = conj(D_p(τ_j − τ_l)).
    let kernel = |j: usize, l: usize| -> [Complex64; 3] {
        if let Some(pairs) = &pairs {
            pairs.at(tau, j, l)
        } else {
            let d = |p: usize| g.get(p).map_or(zero, |m| m[(j, l)].conj());
            [d(0), d(1), d(2)]
        }
    };
    let two_pi = 2.0 * PI;
    let off = if positions { s } else { 0 };
    let mut hess = gauss_newton(a, kernel, positions);
    let mut grad = vec![0.0; 3 * s];
    for j in 0..s {
        let modulus = a[j].norm();
        let unit = if modulus > 0.0 {
            a[j] / modulus
        } else {
            Complex64::new(0.0, 0.0)
        };
        grad[s + j] = -p0[j].re + lambda * unit.re;
        grad[2 * s + j] = -p0[j].im + lambda * unit.im;
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
            let (re, im) = (off + j, off + s + j);
            hess[(re, re)] += c * (1.0 - unit.re * unit.re);
            hess[(im, im)] += c * (1.0 - unit.im * unit.im);
            hess[(re, im)] -= c * unit.re * unit.im;
            hess[(im, re)] -= c * unit.re * unit.im;
        }
    }
    let m = model.len() as f64;
    let mut scale = vec![m; 3 * s];
    if positions {
        for j in 0..s {
            let d2 = kernel(j, j)[2];
            scale[j] = (two_pi * two_pi * a[j].norm_sqr() * d2.re).max(1e-300);
        }
    }
    Local {
        f,
        grad,
        hess,
        scale,
    }
}

/// Kernel sums `[D_0, D_1, D_2](τ_j − τ_l)` of a contiguous band `a..=b` for every pair of a support,
/// without trigonometric functions per pair: the closed form of [`dirichlet_sums`] needs only
/// `exp(iπt)`, `exp(iπnt)` and `exp(iπ(a + b)t)` at `t = τ_j − τ_l` (`n = b − a + 1`), and each is the
/// product of one per-spike phasor and the conjugate of another (`exp(iπm(τ_j − τ_l)) =
/// exp(iπmτ_j) exp(−iπmτ_l)`), so the `s²` pairs cost a few complex products each instead of four
/// sines and cosines. The formula holds for every non-integer `t` (the signs of the half-period
/// reductions cancel: `(−1)^{(n−1+a+b)m} = (−1)^{2bm} = 1` for `t → t + m`). Pairs closer than the
/// closed form's accuracy limit, and `t = 0`, go to [`dirichlet_sums`] itself.
///
/// Accuracy: the phase `nτ_j` carries a rounding of about `nε`, so entries carry a relative error of
/// about `N·ε_mach` (1e-12 at `N = 8193`) against about `N|t|ε_mach` for [`dirichlet_sums`]. Only
/// the Newton matrices ([`gauss_newton`], for the slide and the refinement) use them: the gradient
/// and residual stay exact, and an inexact Newton step with a small relative error converges like
/// Newton's method (Nocedal & Wright 2006, *Numerical Optimization*, Thm. 7.2).
pub(crate) struct PairSums {
    a: i64,
    b: i64,
    /// `exp(iπτ_j)`, `exp(iπnτ_j)`, `exp(iπ(a + b)τ_j)` per spike.
    phasors: Vec<[Complex64; 3]>,
}

/// `exp(iπmτ)`, the phase `mτ` reduced modulo 2 first.
fn half_turns(m: i64, tau: f64) -> Complex64 {
    let ph = m as f64 * tau;
    Complex64::from_polar(1.0, PI * (ph - 2.0 * (0.5 * ph).round()))
}

impl PairSums {
    /// The phasors of `tau` on the contiguous band `a..=b`.
    pub(crate) fn new(a: i64, b: i64, tau: &[f64]) -> Self {
        let n = b - a + 1;
        let phasors = tau
            .iter()
            .map(|&t| [half_turns(1, t), half_turns(n, t), half_turns(a + b, t)])
            .collect();
        PairSums { a, b, phasors }
    }

    /// `[D_0, D_1, D_2](τ_j − τ_l)`, `tau` the positions the phasors were made from.
    pub(crate) fn at(&self, tau: &[f64], j: usize, l: usize) -> [Complex64; 3] {
        let t = tau[j] - tau[l];
        let n = (self.b - self.a + 1) as f64;
        let tr = t - t.round();
        // The same switch to direct sums as dirichlet_sums (and t = 0 exactly).
        if (n * PI * tr).abs() < 0.1 {
            return dirichlet_sums(self.a, self.b, t);
        }
        let (pj, pl) = (&self.phasors[j], &self.phasors[l]);
        let e1 = pj[0] * pl[0].conj();
        let en = pj[1] * pl[1].conj();
        let w = pj[2] * pl[2].conj();
        let (su, cu) = (e1.im, e1.re);
        let (f, fc) = (en.im, en.re);
        let c = 0.5 * (self.a + self.b) as f64;
        // As in dirichlet_sums: S = sin(nu)/sin(u), dS/du, d²S/du², d/dx = ½ d/du.
        let s0 = f / su;
        let s1u = (n * fc - s0 * cu) / su;
        let s2u = (1.0 - n * n) * s0 - 2.0 * (cu / su) * s1u;
        let (s1, s2) = (0.5 * s1u, 0.25 * s2u);
        let i = Complex64::new(0.0, 1.0);
        [
            w * s0,
            w * (c * s0 - i * s1),
            w * (c * c * s0 - 2.0 * i * c * s1 - s2),
        ]
    }
}

/// The Gauss–Newton matrix `JᵀJ` of `s` spikes with amplitudes `amp` over `(τ, Re a, Im a)` (module
/// docs), from `kernel(j, l) = [D_0, D_1, D_2](τ_j − τ_l)`; over the amplitudes alone (`2s × 2s`) when
/// `positions` is false. Filled column by column (three columns per spike from one column of kernel
/// sums), in parallel over the spikes for large supports: every entry is computed by one thread, so
/// the result does not depend on the thread count. The refinement ([`crate::kernels::refine`]) uses it
/// on the data's own band.
pub(crate) fn gauss_newton(
    a: &[Complex64],
    kernel: impl Fn(usize, usize) -> [Complex64; 3] + Sync,
    positions: bool,
) -> Mat<f64> {
    let s = a.len();
    let two_pi = 2.0 * PI;
    let i2pi = Complex64::new(0.0, two_pi);
    // Columns of spike l: τ_l (positions only), Re a_l, Im a_l; rows j, s + j, 2s + j likewise (the
    // amplitude-only Hessian drops the τ rows and columns: offset 0 instead of s).
    let off = if positions { s } else { 0 };
    let n = off + 2 * s;
    let mut hess = Mat::<f64>::zeros(n, n);
    let fill = |l: usize, kcol: &mut Vec<[Complex64; 3]>, cols: [Option<&mut [f64]>; 3]| {
        kcol.clear();
        kcol.extend((0..s).map(|j| kernel(j, l)));
        let [ct, cre, cim] = cols;
        if let Some(ct) = ct {
            for (j, d) in kcol.iter().enumerate() {
                // Row τ_j: 4π² Re(conj(a_j) a_l D_2); rows Re/Im a_j: the transposed τ–amplitude
                // entries, with D_1(τ_l − τ_j) = conj(D_1(τ_j − τ_l)).
                let d1t = d[1].conj();
                ct[j] = two_pi * two_pi * (a[j].conj() * a[l] * d[2]).re;
                ct[s + j] = (i2pi * a[l].conj() * d1t).re;
                ct[2 * s + j] = -two_pi * (a[l].conj() * d1t).re;
            }
        }
        if let Some(cre) = cre {
            for (j, d) in kcol.iter().enumerate() {
                if positions {
                    cre[j] = (i2pi * a[j].conj() * d[1]).re;
                }
                cre[off + j] = d[0].re;
                cre[off + s + j] = d[0].im;
            }
        }
        if let Some(cim) = cim {
            for (j, d) in kcol.iter().enumerate() {
                if positions {
                    cim[j] = -two_pi * (a[j].conj() * d[1]).re;
                }
                cim[off + j] = -d[0].im;
                cim[off + s + j] = d[0].re;
            }
        }
    };
    fn as_slice(c: MatMut<'_, f64>) -> Option<&mut [f64]> {
        col(c.col_mut(0))
    }
    fn col(c: ColMut<'_, f64>) -> Option<&mut [f64]> {
        c.try_as_col_major_mut().map(|c| c.as_slice_mut())
    }
    {
        let (ht, hamp) = hess.as_mut().split_at_col_mut(off);
        let (hre, him) = hamp.split_at_col_mut(s);
        // A kernel sum costs a few dozen multiply-adds.
        if parallel_pays(16 * s * s) {
            let re = hre.par_col_chunks_mut(1);
            let im = him.par_col_chunks_mut(1);
            if positions {
                ht.par_col_chunks_mut(1)
                    .zip(re)
                    .zip(im)
                    .enumerate()
                    .for_each_init(Vec::new, |kcol, (l, ((t, re), im))| {
                        fill(l, kcol, [as_slice(t), as_slice(re), as_slice(im)])
                    });
            } else {
                re.zip(im)
                    .enumerate()
                    .for_each_init(Vec::new, |kcol, (l, (re, im))| {
                        fill(l, kcol, [None, as_slice(re), as_slice(im)])
                    });
            }
        } else {
            let mut kcol = Vec::with_capacity(s);
            let (mut t_it, mut re_it, mut im_it) =
                (ht.col_iter_mut(), hre.col_iter_mut(), him.col_iter_mut());
            for l in 0..s {
                let t = if positions {
                    t_it.next().and_then(col)
                } else {
                    None
                };
                let (re, im) = (re_it.next().and_then(col), im_it.next().and_then(col));
                fill(l, &mut kcol, [t, re, im]);
            }
        }
    }
    hess
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
    // `local` streams the residual for such supports and can take the one of an accepted step.
    let streamed = model.grams_closed_form(s);
    let mut converged = false;
    'outer: while steps < max_steps {
        let g: Vec<f64> = vars.iter().map(|&v| cur.grad[v]).collect();
        // The variables are the trailing `n` of `(τ, Re a, Im a)`, which `local` assembled alone.
        let h = cur.hess.as_ref();
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
            let r_trial = model.residual_at(&trial.tau, &trial.amp);
            let f_trial = objective_of(&r_trial, &trial, lambda);
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
                cur = local_with(model, point, lambda, positions, streamed.then_some(r_trial));
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
mod tests;
