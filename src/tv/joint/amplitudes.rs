//! The amplitude step of the joint sliding solver ([`super::sliding`]): the group lasso
//! `min_B ½‖Ỹ − AB‖²_F + τ Σ_j ‖B_j‖₂` for fixed positions (steering matrix `A`), by accelerated
//! proximal gradient (Beck & Teboulle 2009, SIAM J. Imaging Sci. 2(1), FISTA, with the gradient
//! restart of O'Donoghue & Candès 2015, FoCM 15(3)); the proximal map of the group penalty is block
//! soft thresholding, `B_j ← B_j · max(0, 1 − sτ/‖B_j‖)` (Yuan & Lin 2006, J. R. Stat. Soc. B
//! 68(1)). Every 20 steps, once the optimality conditions fail, Newton–CG on the current nonzero rows
//! tries to finish the step ([`support_refine`]; after a failure on the same rows, twice as many
//! steps later each time); it is accepted only when the conditions then hold.

use nalgebra::DMatrix;
use num_complex::Complex64;

/// Longest wait (proximal steps) between two Newton–CG tries on the same support.
const MAX_WAIT: usize = 320;

/// `Σ_j ‖B_j‖₂`.
pub(super) fn group_norm(b: &DMatrix<Complex64>) -> f64 {
    b.row_iter().map(|r| r.norm()).sum()
}

/// The amplitudes for the steering matrix `a` and data `y`, warm-started from `b0` (`s × r`), once
/// the optimality conditions hold to `rel·τ` or after `max_steps` steps (module docs).
pub(super) fn solve(
    a: &DMatrix<Complex64>,
    y: &DMatrix<Complex64>,
    b0: &DMatrix<Complex64>,
    tau: f64,
    rel: f64,
    max_steps: usize,
) -> DMatrix<Complex64> {
    let g = a.adjoint() * a;
    let c = a.adjoint() * y;
    let lip = nalgebra::SymmetricEigen::new(g.clone())
        .eigenvalues
        .iter()
        .copied()
        .fold(0.0, f64::max)
        .max(f64::MIN_POSITIVE);
    let step = 1.0 / lip;
    let prox = |m: &mut DMatrix<Complex64>| {
        for mut row in m.row_iter_mut() {
            let nr = row.norm();
            let scale = if nr > step * tau {
                1.0 - step * tau / nr
            } else {
                0.0
            };
            row *= Complex64::new(scale, 0.0);
        }
    };
    let mut x = b0.clone();
    let mut z = x.clone();
    let mut t = 1.0_f64;
    // Newton–CG tries: the support of the last failure, the step of the next try, its wait.
    let mut failed_on: Vec<usize> = Vec::new();
    let (mut next_try, mut wait) = (0usize, 20usize);
    for it in 0..max_steps {
        let mut next = &z - (&g * &z - &c).scale(step);
        prox(&mut next);
        // Gradient restart: the momentum points uphill.
        let uphill = (&z - &next).dotc(&(&next - &x)).re > 0.0;
        let t_next = if uphill {
            1.0
        } else {
            0.5 * (1.0 + (1.0 + 4.0 * t * t).sqrt())
        };
        let momentum = if uphill { 0.0 } else { (t - 1.0) / t_next };
        z = &next + (&next - &x).scale(momentum);
        x = next;
        t = t_next;
        // Optimality (every 20 steps): with the correlations E = Aᴴ(Ỹ − AB), a nonzero row has
        // E_j = τ B_j/‖B_j‖, a zero row ‖E_j‖ ≤ τ.
        if it % 20 == 19 {
            let goal = rel * tau.max(f64::MIN_POSITIVE);
            if violation(&g, &c, &x, tau) <= goal {
                break;
            }
            // The support has (most likely) settled: finish on it by Newton–CG. After a failure on
            // one support, the next try on the same support waits twice as long: near a cluster of
            // close atoms Newton can miss the goal for thousands of steps, and each try costs up
            // to 20 Newton steps (M = 32, L = 100, 0 dB, seed 1 of `joint_timing`: 43 -> 5.6 s,
            // same iterations, positions equal to 1e-9).
            let support = nonzero_rows(&x);
            if it >= next_try || support != failed_on {
                if let Some(b) = support_refine(&g, &c, &x, tau, goal) {
                    x = b;
                    break;
                }
                wait = if support == failed_on {
                    (2 * wait).min(MAX_WAIT)
                } else {
                    20
                };
                next_try = it + wait;
                failed_on = support;
            }
        }
    }
    x
}

/// The rows of `x` that [`support_refine`] treats as nonzero (above `1e-12` of the largest norm).
fn nonzero_rows(x: &DMatrix<Complex64>) -> Vec<usize> {
    let top = x.row_iter().map(|r| r.norm()).fold(0.0, f64::max);
    (0..x.nrows())
        .filter(|&j| x.row(j).norm() > 1e-12 * top)
        .collect()
}

/// Worst violation of the optimality conditions of `min_B ½‖Ỹ − AB‖²_F + τ Σ_j ‖B_j‖₂` (Gram
/// `G = AᴴA`, correlations `C = AᴴỸ`): with `E = C − GB`, a nonzero row needs `E_j = τ B_j/‖B_j‖`, a
/// zero row `‖E_j‖ ≤ τ` (Yuan & Lin 2006, J. R. Stat. Soc. B 68(1), eq. (2.4)).
fn violation(
    g: &DMatrix<Complex64>,
    c: &DMatrix<Complex64>,
    x: &DMatrix<Complex64>,
    tau: f64,
) -> f64 {
    let e = c - g * x;
    (0..x.nrows())
        .map(|j| {
            let nb = x.row(j).norm();
            if nb > 0.0 {
                (e.row(j) - x.row(j).scale(tau / nb)).norm()
            } else {
                (e.row(j).norm() - tau).max(0.0)
            }
        })
        .fold(0.0, f64::max)
}

/// `½ Re tr(BᴴGB) − Re tr(BᴴC) + τ Σ_j ‖B_j‖₂`: the amplitude objective less the constant `½‖Ỹ‖²`.
fn objective(
    g: &DMatrix<Complex64>,
    c: &DMatrix<Complex64>,
    b: &DMatrix<Complex64>,
    tau: f64,
) -> f64 {
    0.5 * b.dotc(&(g * b)).re - b.dotc(c).re + tau * group_norm(b)
}

/// Newton steps on the nonzero rows `S` of `x` (Nocedal & Wright 2006, Numerical Optimization, 2nd
/// ed., Algorithm 7.1, Newton–CG with a backtracking line search). On `S` the objective is smooth,
/// with gradient `F = G_SS B − C_S + τ D B` (`D = diag(1/‖B_j‖)`) and Hessian
/// `H[Δ] = G_SS Δ + τ D (Δ_j − u_j Re(u_jᴴΔ_j))_j` (`u_j = B_j/‖B_j‖`). Conjugate gradients on
/// `HΔ = −F` are preconditioned by `P = (G_SS + τD)⁻¹` (one Cholesky factor per step): `H` differs
/// from `P⁻¹` by one real rank-one term per row, so the preconditioned iteration ends in at most
/// `|S| + 1` steps in exact arithmetic however ill-conditioned a cluster of close atoms makes `G`,
/// where proximal gradient needs thousands. Returns the amplitudes once the optimality conditions
/// (zero rows included) hold to `goal`, `None` when they do not within the step limit (the caller
/// goes on with proximal gradient: the answer is the same either way, only reached sooner).
fn support_refine(
    g: &DMatrix<Complex64>,
    c: &DMatrix<Complex64>,
    x: &DMatrix<Complex64>,
    tau: f64,
    goal: f64,
) -> Option<DMatrix<Complex64>> {
    const NEWTON_STEPS: usize = 20;
    if tau.is_nan() || tau <= 0.0 {
        return None;
    }
    let active = nonzero_rows(x);
    if active.is_empty() {
        return None;
    }
    let n = active.len();
    let gs = DMatrix::from_fn(n, n, |i, k| g[(active[i], active[k])]);
    let cs = DMatrix::from_fn(n, c.ncols(), |i, l| c[(active[i], l)]);
    let mut b = DMatrix::from_fn(n, c.ncols(), |i, l| x[(active[i], l)]);
    let embed = |b: &DMatrix<Complex64>| {
        let mut full = DMatrix::zeros(x.nrows(), x.ncols());
        for (i, &j) in active.iter().enumerate() {
            full.set_row(j, &b.row(i));
        }
        full
    };
    // Gradient on S (`None` when a row vanished: S is then not the support).
    let gradient = |b: &DMatrix<Complex64>| {
        let mut grad = &gs * b - &cs;
        for i in 0..n {
            let w = b.row(i).norm();
            if w.is_nan() || w <= 0.0 {
                return None;
            }
            let bi = b.row(i).scale(tau / w);
            let mut row = grad.row_mut(i);
            row += bi;
        }
        Some(grad)
    };
    let mut f = objective(&gs, &cs, &b, tau);
    let mut grad = gradient(&b)?;
    for _ in 0..NEWTON_STEPS {
        let w: Vec<f64> = b.row_iter().map(|r| r.norm()).collect();
        let hess = |d: &DMatrix<Complex64>| {
            let mut out = &gs * d;
            for (i, &wi) in w.iter().enumerate() {
                let u = b.row(i).unscale(wi);
                let radial = u.dotc(&d.row(i)).re;
                let term = (d.row(i) - u.scale(radial)).scale(tau / wi);
                let mut row = out.row_mut(i);
                row += term;
            }
            out
        };
        let mut pre = gs.clone();
        for (i, &wi) in w.iter().enumerate() {
            pre[(i, i)] += Complex64::new(tau / wi, 0.0);
        }
        let chol = pre.cholesky()?;
        // Preconditioned conjugate gradients on HΔ = −F (real inner product Re⟨·,·⟩).
        let mut d = DMatrix::zeros(n, c.ncols());
        let mut r = -grad.clone();
        let mut z = chol.solve(&r);
        let mut p = z.clone();
        let mut rz = r.dotc(&z).re;
        let stop = 1e-24 * rz.abs();
        for _ in 0..(n + 10) {
            let hp = hess(&p);
            let curv = p.dotc(&hp).re;
            if curv.is_nan() || curv <= 0.0 {
                break;
            }
            let alpha = rz / curv;
            d += p.scale(alpha);
            r -= hp.scale(alpha);
            z = chol.solve(&r);
            let rz_next = r.dotc(&z).re;
            if rz_next <= stop {
                break;
            }
            p = &z + p.scale(rz_next / rz);
            rz = rz_next;
        }
        // Backtracking (Armijo) line search on the objective.
        let slope = grad.dotc(&d).re;
        if slope.is_nan() || slope >= 0.0 {
            break;
        }
        // Near the solution the objective's decrease drowns in rounding; the step is then judged by
        // the gradient norm instead (Nocedal & Wright 2006, §11.2, the merit ‖F‖²).
        let gnorm = grad.norm();
        let mut step = 1.0;
        let mut accepted = false;
        for _ in 0..12 {
            let trial = &b + d.scale(step);
            let ft = objective(&gs, &cs, &trial, tau);
            let gt = gradient(&trial);
            let smaller = gt
                .as_ref()
                .is_some_and(|gt| gt.norm() <= (1.0 - 1e-4 * step) * gnorm);
            if gt.is_some() && (ft <= f + 1e-4 * step * slope || smaller) {
                b = trial;
                f = ft;
                grad = gt?;
                accepted = true;
                break;
            }
            step *= 0.5;
        }
        let full = embed(&b);
        if violation(g, c, &full, tau) <= goal {
            return Some(full);
        }
        if !accepted {
            break;
        }
    }
    None
}
