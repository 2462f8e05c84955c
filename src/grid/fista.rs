//! The LASSO on the grid by restarted FISTA with a duality-gap stop, and the grid solution with its
//! clusters (module docs of [`crate::grid`]: "The solver", "The continuous step").

use super::operator::{operator, GridOperator};
use super::settings::GridSettings;
use crate::error::{Error, Result};
use crate::estimator::Status;
use crate::model::{wrap, Measurements};
use num_complex::Complex64;

pub(super) const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// The LASSO solution on the grid, before the continuous step.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub struct GridSolution {
    /// Number of grid points `M`.
    pub grid_len: usize,
    /// Nonzero grid amplitudes `(m, x_m)`, ascending in `m` (position `m/M`).
    pub support: Vec<(usize, Complex64)>,
    /// The weight `λ` used, in data units.
    pub lambda: f64,
    /// Primal objective `P(x) = ½‖y − Ax‖² + λ‖x‖₁` at the returned point.
    pub objective: f64,
    /// Dual objective `D(θ)` at the scaled residual: a lower bound on the optimal value.
    pub dual_objective: f64,
    /// Relative duality gap `(P − D)/P` at the returned point (0 for zero data).
    pub relative_gap: f64,
    /// FISTA iterations.
    pub iterations: usize,
    /// [`Status::Solved`] when the relative gap reached the tolerance, else [`Status::IterationLimit`].
    pub status: Status,
}

impl GridSolution {
    /// Group the nonzero grid points into clusters (neighbours closer than `gap + 1` grid steps,
    /// circularly) and return, per cluster, the amplitude-weighted circular mean position and the
    /// summed amplitude (module docs).
    pub fn clusters(&self, gap: usize) -> Vec<(f64, Complex64)> {
        let m = self.grid_len;
        let n = self.support.len();
        if n == 0 {
            return Vec::new();
        }
        let step = |a: usize, b: usize| (b + m - a) % m;
        // Start after the widest circular gap, so that no cluster is cut at the end of the grid.
        let mut start = 0;
        if n > 1 {
            let mut widest = 0;
            for i in 0..n {
                let d = step(self.support[i].0, self.support[(i + 1) % n].0);
                if d > widest {
                    widest = d;
                    start = (i + 1) % n;
                }
            }
        }
        let mut out = Vec::new();
        let mut i = 0;
        while i < n {
            let (m0, first) = self.support[(start + i) % n];
            let (mut wsum, mut wofs, mut amp) = (first.norm(), 0.0, first);
            let mut last = m0;
            i += 1;
            while i < n {
                let (mi, xi) = self.support[(start + i) % n];
                if step(last, mi) > gap + 1 {
                    break;
                }
                let w = xi.norm();
                wsum += w;
                wofs += w * step(m0, mi) as f64;
                amp += xi;
                last = mi;
                i += 1;
            }
            let offset = if wsum > 0.0 { wofs / wsum } else { 0.0 };
            out.push((wrap((m0 as f64 + offset) / m as f64), amp));
        }
        out
    }
}

/// Solve the LASSO `min ½‖y − Ax‖² + λ‖x‖₁` on the grid of `settings.oversample · N` points by
/// restarted FISTA with the duality-gap stop (module docs).
///
/// # Errors
/// [`Error::InvalidSetting`] for a `λ` that is not positive and finite, or invalid settings
/// ([`GridSettings::validated`]); [`Error::TooLarge`] for a grid above 2^26 points.
pub fn solve(data: &Measurements, lambda: f64, settings: &GridSettings) -> Result<GridSolution> {
    if !(lambda.is_finite() && lambda > 0.0) {
        return Err(Error::invalid(
            "lambda",
            lambda,
            "must be positive and finite",
        ));
    }
    let settings = settings.validated()?;
    let op = operator(data, settings.oversample)?;
    Ok(fista(&op, data.values(), lambda, &settings))
}

/// Complex soft threshold `S_τ(v) = v·max(0, 1 − τ/|v|)`, and `|S_τ(v)|`. Compares squared moduli
/// (one square root per surviving entry, none per zero).
#[inline]
pub(super) fn soft(v: Complex64, tau: f64) -> (Complex64, f64) {
    let a2 = v.norm_sqr();
    if a2 <= tau * tau {
        (ZERO, 0.0)
    } else {
        let a = a2.sqrt();
        (v * (1.0 - tau / a), a - tau)
    }
}

/// `max_i |v_i|`.
pub(super) fn max_modulus(v: &[Complex64]) -> f64 {
    v.iter().map(|z| z.norm_sqr()).fold(0.0, f64::max).sqrt()
}

/// Primal and dual objective at `x` from `r = y − Ax`, `c = A*r` and `‖x‖₁`.
pub(super) fn objectives(
    y: &[Complex64],
    r: &[Complex64],
    c: &[Complex64],
    l1: f64,
    lambda: f64,
) -> (f64, f64) {
    let rr: f64 = r.iter().map(|v| v.norm_sqr()).sum();
    let primal = 0.5 * rr + lambda * l1;
    let cmax = max_modulus(c);
    let s = if cmax > lambda { lambda / cmax } else { 1.0 };
    // D(θ) = Re⟨y, θ⟩ − ½‖θ‖² at θ = s·r.
    let yr: f64 = y.iter().zip(r).map(|(a, b)| (a.conj() * b).re).sum();
    let dual = s * yr - 0.5 * s * s * rr;
    (primal, dual)
}

pub(crate) fn fista(
    op: &GridOperator,
    y: &[Complex64],
    lambda: f64,
    settings: &GridSettings,
) -> GridSolution {
    let m = op.grid_len();
    let step = 1.0 / op.lipschitz();
    let thresh = lambda * step;
    let mut scratch = vec![ZERO; op.scratch_len];
    let mut x = vec![ZERO; m];
    let mut x_new = vec![ZERO; m];
    let mut z = vec![ZERO; m];
    // c = A*(y − Ax) at x; cz at z.
    let mut c = vec![ZERO; m];
    op.adjoint_into(y, &mut c, &mut scratch);
    let mut cz = c.clone();
    let mut c_new = vec![ZERO; m];
    let mut r = y.to_vec();
    let mut t: f64 = 1.0;
    let (mut primal, mut dual) = objectives(y, &r, &c, 0.0, lambda);
    let gap = |p: f64, d: f64| if p > 0.0 { ((p - d) / p).max(0.0) } else { 0.0 };
    let mut iterations = 0;
    while gap(primal, dual) > settings.tolerance && iterations < settings.max_iter {
        iterations += 1;
        // Proximal gradient step from z; x_new doubles as the FFT buffer afterwards.
        let mut l1 = 0.0;
        let mut restart = 0.0;
        for i in 0..m {
            let (v, a) = soft(z[i] + cz[i] * step, thresh);
            l1 += a;
            restart += ((z[i] - v).conj() * (v - x[i])).re;
            x_new[i] = v;
        }
        // r = y − A x_new, c_new = A* r (two FFTs).
        c_new.copy_from_slice(&x_new);
        op.apply_into(&mut c_new, &mut scratch, &mut r);
        for (ri, yi) in r.iter_mut().zip(y) {
            *ri = yi - *ri;
        }
        op.adjoint_into(&r, &mut c_new, &mut scratch);
        (primal, dual) = objectives(y, &r, &c_new, l1, lambda);
        let t_new = (1.0 + (1.0 + 4.0 * t * t).sqrt()) / 2.0;
        let beta = if restart > 0.0 {
            t = 1.0;
            0.0
        } else {
            let b = (t - 1.0) / t_new;
            t = t_new;
            b
        };
        for i in 0..m {
            z[i] = x_new[i] + (x_new[i] - x[i]) * beta;
            cz[i] = c_new[i] + (c_new[i] - c[i]) * beta;
        }
        std::mem::swap(&mut x, &mut x_new);
        std::mem::swap(&mut c, &mut c_new);
    }
    let relative_gap = gap(primal, dual);
    let support = x
        .iter()
        .enumerate()
        .filter(|(_, v)| **v != ZERO)
        .map(|(i, v)| (i, *v))
        .collect();
    GridSolution {
        grid_len: m,
        support,
        lambda,
        objective: primal,
        dual_objective: dual,
        relative_gap,
        iterations,
        status: if relative_gap <= settings.tolerance {
            Status::Solved
        } else {
            Status::IterationLimit
        },
    }
}
