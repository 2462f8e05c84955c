//! The sliding backend of the joint problems: a group Sliding Frank–Wolfe over measures with vector
//! amplitudes `μ = Σ_j b_j δ_{f_j}`, `b_j ∈ ℂ^r` (Denoyelle, Duval, Peyré & Soubies 2019, Inverse
//! Problems 36(1), Algorithm 2, with the group penalty `Σ_j ‖b_j‖₂` of the MMV BLASSO), on the reduced
//! data `Ỹ` (`|K| × r`, [`super::Reduced`]).
//!
//! # One penalised solve (weight `τ`)
//!
//! 1. With the residual `R = Ỹ − A(f)B`, the dual vector polynomial is `Q(f) = a(f)ᴴR/τ`; its norm is
//!    scanned over the torus ([`super::certificate`]). If `sup ‖Q‖₂ ≤ 1 + ε` the solution is certified
//!    (Li & Chi 2016, IEEE TSP 64(5), eq. (21): `‖Q‖₂ ≤ 1`, `Q(f_j) = b_j/‖b_j‖₂` on the support;
//!    the second holds by the amplitude step's optimality).
//! 2. Otherwise the maximiser of `‖Q‖₂` enters the support (the Frank–Wolfe step).
//! 3. Amplitudes: `min_B ½‖Ỹ − AB‖²_F + τ Σ_j ‖B_j‖₂`, the group lasso for fixed positions, by
//!    accelerated proximal gradient finished by Newton–CG ([`super::amplitudes`]).
//! 4. Sliding: each position `f_j` in turn is moved to the maximum of `Re p_j(f)`,
//!    `p_j(f) = a(f)ᴴ R₋ⱼ B_jᴴ` (`R₋ⱼ` the residual without atom `j`), by Newton steps — the exact
//!    minimiser of the objective over `f_j` — and the amplitudes are recomputed; repeated until the
//!    positions stop moving. Atoms whose amplitude vanishes are removed.
//!
//! # Constrained and exact problems
//!
//! The constrained problem is the penalised one at the weight `τ*` where `‖R(τ*)‖_F = δ` (its
//! Lagrange multiplier; `‖R(τ)‖` grows with `τ`), found by a safeguarded secant search on `ln τ` in
//! `[δ, sup ‖a(f)ᴴỸ‖)` with warm starts; there `Re⟨R/τ*, Ỹ⟩ − δ‖R/τ*‖ = Σ_j ‖b_j‖`, so the duality
//! gap closes. The lower end: at any weight the residual obeys `‖a(f)ᴴR‖₂ ≤ τ` for all `f`, and
//! `∫₀¹ ‖a(f)ᴴR‖₂² df = ‖R‖²_F` (the measured indices are distinct integers, so the exponentials
//! are orthonormal on the torus); hence `‖R(τ)‖_F ≤ τ` and `τ* ≥ δ`. The search never goes below
//! `δ`: on snapshots the noise spreads `‖a(f)ᴴW‖₂` evenly over the torus, close to `‖W‖_F ≈ δ`,
//! and a weight below `δ` would let dozens of noise atoms in (M = 64, L = 1000: 72 atoms at
//! `τ = 0.76 τ*`, 3 at `τ*`), which is where the time went. Each certified solve carries a path
//! error in `‖R(τ)‖` (positions certified to `ε` depend on the warm starts), so the answer is the
//! certified solve inside the ball closest to its boundary, not merely the last one. The exact problem is followed by continuation, `τ ← τ/10`, until the fit is exact to
//! rounding; its dual certificate is the limit of `R/τ` (Duval & Peyré 2015, FoCM 15(5), Prop. 8, for
//! the scalar case).

use super::amplitudes;
use super::certificate::VectorPolynomial;
use super::polish::{best_position, steering};
use super::{JointSolution, Reduced};
use crate::error::Result;
use crate::estimator::Status;
use crate::model::atom;
use crate::tv::settings::TvSettings;
use crate::tv::{relative_gap, Problem};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// [`crate::ArrayDiagnostics::solver`] of a joint sliding estimate.
pub const JOINT_SLIDING: &str = "group Sliding Frank-Wolfe (certified)";

/// Certificate tolerance `ε` on `sup ‖Q‖₂ − 1` and on the relative duality gap.
const CERT_TOL: f64 = 1e-6;

/// Relative residual `‖R‖/‖Ỹ‖` at which exact-problem continuation stops (the support is then fitted
/// exactly by the least-squares polish).
const EXACT_RESIDUAL: f64 = 1e-6;

/// Amplitude-step accuracy (relative to `τ`) and step limit while the positions still slide…
const COARSE: f64 = 1e-7;
const COARSE_STEPS: usize = 2_000;
/// …and once they have settled.
const FINE: f64 = 1e-11;
const FINE_STEPS: usize = 20_000;

/// Atoms closer than `MERGE/N` are merged.
const MERGE: f64 = 1e-3;

/// Current measure: positions and amplitude rows.
#[derive(Debug, Clone)]
struct State {
    pos: Vec<f64>,
    /// `s × r`.
    b: DMatrix<Complex64>,
}

/// Outcome of one penalised solve.
#[derive(Debug, Clone, Copy)]
struct Penalised {
    /// `sup ‖a(f)ᴴR‖₂ / τ`.
    eta_max: f64,
    /// Whether the Frank–Wolfe loop stopped certified.
    certified: bool,
}

/// The solver with its data.
struct Solver<'a> {
    red: &'a Reduced,
    oversample: usize,
    max_iter: usize,
    iterations: usize,
}

impl Solver<'_> {
    fn steering(&self, pos: &[f64]) -> DMatrix<Complex64> {
        steering(self.red, pos)
    }

    fn residual(&self, st: &State) -> DMatrix<Complex64> {
        if st.pos.is_empty() {
            return self.red.y.clone();
        }
        &self.red.y - self.steering(&st.pos) * &st.b
    }

    /// `Q = a(f)ᴴ M` as a vector polynomial.
    fn poly(&self, m: &DMatrix<Complex64>) -> VectorPolynomial {
        VectorPolynomial::new(self.red.kmin, &self.red.on_band(m))
    }

    /// Amplitude step (module docs, 3), warm-started from `st.b`, until the optimality conditions
    /// hold to `rel·τ` or after `max_steps` steps.
    fn amplitudes(&self, st: &mut State, tau: f64, rel: f64, max_steps: usize) {
        if st.pos.is_empty() {
            return;
        }
        let a = self.steering(&st.pos);
        st.b = amplitudes::solve(&a, &self.red.y, &st.b, tau, rel, max_steps);
    }

    /// Slide every position to the exact minimiser over it (module docs, 4); the largest move.
    fn slide(&self, st: &mut State) -> f64 {
        let mut moved: f64 = 0.0;
        let reach = 0.25 / self.red.band_len as f64;
        let mut r = self.residual(st);
        for j in 0..st.pos.len() {
            let bj: Vec<Complex64> = st.b.row(j).iter().copied().collect();
            let f = best_position(self.red, &r, &bj, st.pos[j], reach);
            if f != st.pos[j] {
                // R += (a(f_old) − a(f_new)) b_jᵀ
                for (i, &k) in self.red.indices.iter().enumerate() {
                    let da = atom(k, st.pos[j]) - atom(k, f);
                    for (l, b) in bj.iter().enumerate() {
                        r[(i, l)] += da * b;
                    }
                }
            }
            moved = moved.max(crate::model::wrap_distance(f, st.pos[j]));
            st.pos[j] = f;
        }
        moved
    }

    /// Remove atoms whose amplitude vanished (below `1e-12` of the largest) and merge atoms closer than
    /// `MERGE/N` (rows added, position weighted by the row norms): two atoms that slid onto one
    /// point are one atom.
    fn prune(&self, st: &mut State) {
        let norms: Vec<f64> = st.b.row_iter().map(|r| r.norm()).collect();
        let top = norms.iter().copied().fold(0.0, f64::max);
        let mut order: Vec<usize> = (0..st.pos.len())
            .filter(|&j| norms[j] > 1e-12 * top)
            .collect();
        order.sort_by(|&a, &b| st.pos[a].total_cmp(&st.pos[b]));
        let tol = MERGE / self.red.band_len as f64;
        let mut pos: Vec<f64> = Vec::new();
        let mut weight: Vec<f64> = Vec::new();
        let mut rows: Vec<Vec<Complex64>> = Vec::new();
        for j in order {
            let row: Vec<Complex64> = st.b.row(j).iter().copied().collect();
            match pos.last() {
                Some(&last) if crate::model::wrap_distance(last, st.pos[j]) < tol => {
                    let i = pos.len() - 1;
                    let w = weight[i] + norms[j];
                    let d = crate::model::wrap_difference(st.pos[j], last);
                    pos[i] = crate::model::wrap(last + d * norms[j] / w);
                    weight[i] = w;
                    for (a, b) in rows[i].iter_mut().zip(&row) {
                        *a += b;
                    }
                }
                _ => {
                    pos.push(st.pos[j]);
                    weight.push(norms[j]);
                    rows.push(row);
                }
            }
        }
        st.b = DMatrix::from_fn(pos.len(), st.b.ncols(), |i, l| rows[i][l]);
        st.pos = pos;
    }

    /// One penalised solve at weight `tau` from `st` (module docs, 1–4).
    fn penalised(&mut self, st: &mut State, tau: f64) -> Penalised {
        // A warm start comes from another weight: its amplitudes are re-optimised first (the
        // certificate alone does not check the optimality conditions on the support).
        if !st.pos.is_empty() {
            self.amplitudes(st, tau, FINE, FINE_STEPS);
            // …and its positions slid to this weight: a warm start that is certified at once
            // otherwise keeps positions from another weight, and `‖R(τ)‖` then depends on the path
            // enough (1e-5 relative) to stall the weight search above `δ`.
            self.settle(st, tau);
            self.prune(st);
        }
        loop {
            let r = self.residual(st);
            let q = self.poly(&r.unscale(tau));
            let peaks = q.peaks(self.oversample, 1.0);
            let best = peaks.first().copied();
            let eta_max = best.map_or(0.0, |p| p.modulus);
            if eta_max <= 1.0 + CERT_TOL || self.iterations >= self.max_iter {
                return Penalised {
                    eta_max,
                    certified: eta_max <= 1.0 + CERT_TOL,
                };
            }
            self.iterations += 1;
            if let Some(p) = best {
                st.pos.push(p.position);
                st.b =
                    st.b.clone()
                        .insert_row(st.b.nrows(), Complex64::new(0.0, 0.0));
            }
            self.amplitudes(st, tau, COARSE, COARSE_STEPS);
            for _ in 0..100 {
                let moved = self.slide(st);
                self.amplitudes(st, tau, COARSE, COARSE_STEPS);
                if moved * (self.red.band_len as f64) < 1e-11 {
                    break;
                }
            }
            self.amplitudes(st, tau, FINE, FINE_STEPS);
            self.settle(st, tau);
            self.prune(st);
        }
    }

    /// Fine sliding: positions and fine amplitudes alternately, until the positions stop moving
    /// (at most 20 rounds).
    fn settle(&self, st: &mut State, tau: f64) {
        for _ in 0..20 {
            let moved = self.slide(st);
            self.amplitudes(st, tau, FINE, FINE_STEPS);
            if moved * (self.red.band_len as f64) < 1e-13 {
                break;
            }
        }
    }
}

/// The exact problem from the support found by continuation: positions polished to an exact fit,
/// least-squares amplitudes `B`, and a dual certificate, the better of two: the minimal-norm
/// interpolating `V = A(AᴴA)⁻¹U`, `U_j = B_j/‖B_j‖₂`, for which `a(f_j)ᴴV = U_j` and
/// `Re⟨V, Ỹ⟩ = Σ_j ‖B_j‖₂` when the fit is exact (zero gap; Li & Chi 2016, IEEE TSP 64(5), Prop. 1,
/// the group form of the dual certificate), and the scaled residual `R/τ` of the last penalised solve
/// (`from_penalty`, dual feasible by its certificate; its gap closes as `τ → 0`). Solved when the
/// fit is exact, `sup ‖Q‖₂ ≤ 1 + ε` and the gap is below `ε`.
fn exact_finish(
    red: &Reduced,
    st: &State,
    from_penalty: &DMatrix<Complex64>,
    iterations: usize,
    oversample: usize,
) -> JointSolution {
    let pos = super::polish::polish(red, &st.pos);
    let a = steering(red, &pos);
    let failed = |pos: Vec<f64>| JointSolution {
        dual: VectorPolynomial::new(
            red.kmin,
            &red.on_band(&DMatrix::zeros(red.indices.len(), 1)),
        ),
        support: pos,
        status: Status::NumericalFailure,
        iterations,
        objective: f64::NAN,
        gap: f64::NAN,
        solver: JOINT_SLIDING,
        cert_tol: CERT_TOL,
    };
    let Ok(b) = a
        .clone()
        .svd(true, true)
        .solve(&red.y, f64::EPSILON * red.indices.len() as f64)
    else {
        return failed(pos);
    };
    let u = DMatrix::from_fn(b.nrows(), b.ncols(), |j, l| {
        let n = b.row(j).norm();
        if n > 0.0 {
            b[(j, l)] / n
        } else {
            Complex64::new(0.0, 0.0)
        }
    });
    let gram = a.adjoint() * &a;
    let Some(w) = gram.cholesky().map(|c| c.solve(&u)) else {
        return failed(pos);
    };
    let residual = (&red.y - &a * &b).norm();
    let primal: f64 = b.row_iter().map(|r| r.norm()).sum();
    let exact = residual <= 1e-9 * red.y.norm();
    // (gap, sup ‖Q‖, Q) of each candidate; the certified one with the smaller gap wins.
    let judge = |v: DMatrix<Complex64>| {
        let dual = (v.adjoint() * &red.y).trace().re;
        let poly = VectorPolynomial::new(red.kmin, &red.on_band(&v));
        let sup = poly
            .peaks(oversample, 1.0)
            .first()
            .map_or(0.0, |p| p.modulus);
        (relative_gap(primal, dual).abs(), sup, poly)
    };
    let first = judge(&a * w);
    let second = judge(from_penalty.clone());
    let ok = |c: &(f64, f64, VectorPolynomial)| c.1 <= 1.0 + CERT_TOL && c.0 <= CERT_TOL;
    let (gap, sup, dual_poly) = match (ok(&first), ok(&second)) {
        (true, false) => first,
        (false, true) => second,
        _ if first.0 <= second.0 => first,
        _ => second,
    };
    JointSolution {
        dual: dual_poly,
        support: pos,
        status: if exact && gap <= CERT_TOL && sup <= 1.0 + CERT_TOL {
            Status::Solved
        } else {
            Status::ReducedAccuracy
        },
        iterations,
        objective: primal,
        gap,
        solver: JOINT_SLIDING,
        cert_tol: CERT_TOL,
    }
}

/// Solve `problem` on the reduced data (module docs).
///
/// # Errors
/// None at present beyond the typed errors of the callers; kept fallible for the solver's limits.
pub(crate) fn solve(
    red: &Reduced,
    problem: Problem,
    settings: &TvSettings,
) -> Result<JointSolution> {
    let mut solver = Solver {
        red,
        oversample: settings.grid_oversample,
        max_iter: settings.sliding.max_iter,
        iterations: 0,
    };
    let r = red.rank();
    let mut st = State {
        pos: Vec::new(),
        b: DMatrix::zeros(0, r),
    };
    let ynorm = red.y.norm();
    let tau_max = solver
        .poly(&red.y)
        .peaks(settings.grid_oversample, 0.0)
        .first()
        .map_or(0.0, |p| p.modulus);
    let (tau, outcome) = match problem {
        Problem::Penalised { tau } => {
            let out = solver.penalised(&mut st, tau);
            (tau, out)
        }
        Problem::Exact => {
            let mut tau = 0.5 * tau_max;
            let mut out = solver.penalised(&mut st, tau);
            let mut last = None;
            while tau > 1e-9 * tau_max && solver.iterations < solver.max_iter {
                if out.certified && solver.residual(&st).norm() <= EXACT_RESIDUAL * ynorm {
                    let r = solver.residual(&st).unscale(tau * out.eta_max.max(1.0));
                    let sol =
                        exact_finish(red, &st, &r, solver.iterations, settings.grid_oversample);
                    if sol.status == Status::Solved {
                        return Ok(sol);
                    }
                    last = Some(sol);
                }
                tau *= 0.1;
                out = solver.penalised(&mut st, tau);
            }
            if let Some(sol) = last {
                return Ok(sol);
            }
            (tau, out)
        }
        Problem::Constrained { delta } => {
            // ‖R(τ)‖ − δ grows with τ and is positive at τ_max: halve τ until it is not (a path of
            // warm starts from the sparse end), never below the geometric midpoint to the lower
            // bound τ* ≥ δ (module docs), then regula falsi on ln τ with the Illinois
            // modification (Dowell & Jarratt 1971, BIT 11) inside the bracket.
            let mut tau = 0.5 * tau_max;
            let mut out = solver.penalised(&mut st, tau);
            let mut h = solver.residual(&st).norm() - delta;
            let tol = 1e-9 * delta.max(ynorm * 1e-3);
            let (mut hi, mut h_hi) = (tau, h);
            while h > tol && tau > 1e-12 * tau_max && solver.iterations < solver.max_iter {
                hi = tau;
                h_hi = h;
                let next = (0.5 * tau).max((delta * tau).sqrt());
                if next >= hi * (1.0 - 1e-14) {
                    break;
                }
                tau = next;
                out = solver.penalised(&mut st, tau);
                h = solver.residual(&st).norm() - delta;
            }
            let (mut lo, mut h_lo) = (tau, h);
            let mut side = 0i8;
            // The certified solve inside the ball closest to its boundary (largest `h`, with the
            // fit tolerance of the status below) is the answer: near `τ*` the residual of a solve
            // carries its solver error (up to 1e-5 relative: positions certified to `ε` differ
            // with the path of warm starts), which can leave the last solve of a collapsed bracket
            // just outside the ball, or deeper inside it than an earlier one.
            let fits = 1e-8 * delta;
            let mut inside: Option<(State, f64, Penalised, f64)> =
                (h <= fits && out.certified).then(|| (st.clone(), tau, out, h));
            while h.abs() > tol && h_hi > 0.0 && solver.iterations < solver.max_iter {
                let (x0, x1) = (lo.ln(), hi.ln());
                let x = x1 - h_hi * (x1 - x0) / (h_hi - h_lo);
                let next = x.exp();
                if !(next > lo && next < hi) || hi / lo < 1.0 + 1e-14 {
                    break;
                }
                tau = next;
                out = solver.penalised(&mut st, tau);
                h = solver.residual(&st).norm() - delta;
                if h > 0.0 {
                    hi = tau;
                    h_hi = h;
                    if side == 1 {
                        h_lo *= 0.5;
                    }
                    side = 1;
                } else {
                    lo = tau;
                    h_lo = h;
                    if side == -1 {
                        h_hi *= 0.5;
                    }
                    side = -1;
                }
                if h <= fits && out.certified && inside.as_ref().is_none_or(|b| h > b.3) {
                    inside = Some((st.clone(), tau, out, h));
                }
            }
            if let Some((best, t, o, h_best)) = inside {
                if h > fits || h_best > h {
                    st = best;
                    tau = t;
                    out = o;
                }
            }
            (tau, out)
        }
    };
    let res = solver.residual(&st);
    let norm = amplitudes::group_norm(&st.b);
    // Dual point scaled into the dual feasible set.
    let scale = tau * outcome.eta_max.max(1.0);
    let v = res.unscale(scale);
    let re_vy = (v.adjoint() * &red.y).trace().re;
    let (primal, dual) = match problem {
        Problem::Penalised { tau } => (
            0.5 * res.norm_squared() + tau * norm,
            tau * re_vy - 0.5 * (tau * tau) * v.norm_squared(),
        ),
        Problem::Exact => (norm, re_vy),
        Problem::Constrained { delta } => (norm, re_vy - delta * v.norm()),
    };
    let gap = relative_gap(primal, dual).abs();
    let fits = match problem {
        Problem::Exact => false,
        Problem::Constrained { delta } => res.norm() <= delta * (1.0 + 1e-8),
        Problem::Penalised { .. } => true,
    };
    let status = if outcome.certified && fits && gap <= CERT_TOL {
        Status::Solved
    } else if solver.iterations >= solver.max_iter {
        Status::IterationLimit
    } else {
        Status::ReducedAccuracy
    };
    let dual_poly = solver.poly(&res.unscale(tau));
    Ok(JointSolution {
        support: st.pos.clone(),
        dual: dual_poly,
        status,
        iterations: solver.iterations,
        objective: primal,
        gap,
        solver: JOINT_SLIDING,
        cert_tol: CERT_TOL,
    })
}
