//! Sliding Frank–Wolfe for BLASSO, its continuation to exact data, and the root search of the
//! constrained problem.
//!
//! **BLASSO at fixed λ** (Denoyelle, Duval, Peyré & Soubies 2019, Inverse Problems 36(1), Alg. 2):
//! repeat — amplitudes by the LASSO at fixed positions ([`super::lasso`]); joint slide of positions and
//! amplitudes ([`super::slide`]); remove zero amplitudes; evaluate `η = F*(y − Fμ)/λ` on the FFT grid
//! and polish its maxima ([`super::certificate::scan`]); stop when `max |η| ≤ 1 + ε` and
//! `η(τ_j) = a_j/|a_j|` (the optimality conditions of BLASSO, Duval & Peyré 2015, FoCM 15(5), Prop. 3),
//! otherwise add the maximiser of `|η|` with zero amplitude — and with it every other peak of `|η|`
//! above `1 + ε` and at least half as high (several missing spikes enter in one iteration; one that is
//! not needed gets a zero amplitude from the LASSO and is removed; the stopping test is unchanged).
//! Under the non-degeneracy condition of Denoyelle et al. the loop stops after finitely many steps.
//! When the certificate can only be checked at the rounding level of `η` (very small λ: `η = r/λ`
//! amplifies the rounding of `r`), a certified solve reports [`Status::ReducedAccuracy`].
//!
//! **Support guard.** A spike carries 3 real unknowns (position, real and imaginary amplitude) and the
//! data `2|K|` real values, so a support of more than `2|K|/3` spikes cannot be determined by the data:
//! it only arises when the solve is fitting the noise (a noise level given far too low, a weight far
//! too small, or a record whose offset, trend or slow wander is being fitted as lines), and each
//! further iteration would cost more than the last. When an iteration would grow the support past
//! that count, the solve stops with [`Status::TargetNotReached`] (a limit reached before convergence,
//! not a numerical failure: the record or the noise level is the problem; [`SolverStop::SupportCap`]
//! says what to do) and the uncertified point reached so far, instead of running on for minutes.
//!
//! **Exact data**: continuation `λ_{i+1} = λ_i/10` from `λ_0 = 0.1‖F*y‖∞`, warm started; after each level
//! the support is fitted by least squares on the exact model (zero residual) and checked with the
//! vanishing-derivative pre-certificate ([`super::certificate::vanishing_derivative`]) and, if that
//! exceeds 1, with the level's BLASSO dual projected onto the interpolation conditions
//! ([`super::certificate::projected_dual`]). Either one bounded by 1 proves optimality. If none is
//! found down to `λ = 1e-10‖y‖`, the weak-duality bound of the last BLASSO dual is reported and the
//! status is [`Status::ReducedAccuracy`] (relative gap ≤ 1e-6 at an exact fit) or
//! [`Status::NumericalFailure`].
//!
//! **Constrained**: `‖y − Fμ_λ‖` is non-decreasing in `λ`. (For `λ₁ < λ₂` with minimisers `μ₁, μ₂`,
//! residuals `R_i = ‖y − Fμ_i‖²` and norms `T_i = ‖μ_i‖_TV`, optimality of each gives
//! `½R₁ + λ₁T₁ ≤ ½R₂ + λ₁T₂` and `½R₂ + λ₂T₂ ≤ ½R₁ + λ₂T₁`; adding them, `(λ₂ − λ₁)(T₂ − T₁) ≤ 0`, so
//! `T₂ ≤ T₁`, and then the first gives `R₁ ≤ R₂`.) The `λ` with residual `δ` is found by the Illinois
//! variant of regula falsi (Dowell & Jarratt 1971, BIT 11(2)) on `(ln λ, ln ‖r‖ − ln δ)`, safeguarded by
//! bisection, each solve warm started from the last. At that `λ`, `c = (y − Fμ)/λ` is also the optimal
//! dual vector of the constrained problem: its dual `max Re⟨y, c⟩ − δ‖c‖₂ s.t. ‖F*c‖∞ ≤ 1` takes the
//! value `(Re⟨y, r⟩ − ‖r‖²)/λ = Re⟨Fμ, r⟩/λ = ‖μ‖_TV` there.

use super::certificate::{projected_dual, vanishing_derivative};
use super::lasso::lasso;
use super::SolverStop;
use crate::estimator::Status;
use crate::kernels::band::Model;
use crate::kernels::lstsq::on_band as least_squares;
use crate::kernels::peaks::{scan, scan_above, Scan};
use crate::kernels::slide::{slide, Point};
use num_complex::Complex64;
use std::time::Instant;

/// Iteration and time budget shared by every stage of one solve.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Budget {
    /// Sliding Frank–Wolfe iterations used so far.
    pub iterations: usize,
    /// Limit on them.
    pub max_iter: usize,
    /// Start of the solve.
    pub start: Instant,
    /// Wall-clock limit in seconds.
    pub time_limit: f64,
}

impl Budget {
    /// A fresh budget.
    pub fn new(max_iter: usize, time_limit: f64) -> Self {
        Budget {
            iterations: 0,
            max_iter,
            start: Instant::now(),
            time_limit,
        }
    }

    /// The status to stop with, if the budget is used up.
    fn exhausted(&self) -> Option<Status> {
        if self.iterations >= self.max_iter {
            Some(Status::IterationLimit)
        } else if self.start.elapsed().as_secs_f64() > self.time_limit {
            Some(Status::TimeLimit)
        } else {
            None
        }
    }
}

/// The result of one solve, in the model's centred, normalised frame.
#[derive(Debug, Clone)]
pub(crate) struct Outcome {
    /// The convex problem's solution.
    pub point: Point,
    /// Dual coefficients on `K` (model order): the certificate.
    pub c: Vec<Complex64>,
    /// The scan of `|q|` for `c` against `point`.
    pub scan: Scan,
    /// How it went.
    pub status: Status,
    /// The BLASSO weight of the last solve (normalised units; 0 when the exact fit is reported).
    pub lambda: f64,
    /// Objective value (normalised units).
    pub objective: f64,
    /// Certified lower bound on the optimal value by weak duality (normalised units).
    pub lower_bound: f64,
    /// True when the exact problem's pre-certificate was computed and failed.
    pub precertificate_failed: bool,
    /// Why the solve stopped.
    pub stop: SolverStop,
}

/// What one BLASSO solve reports.
struct Blasso {
    /// The optimality conditions hold to `eps`.
    certified: bool,
    /// The tolerance they were checked at: the requested one, or the rounding floor of `η` if
    /// that is larger (very small λ).
    rounding_limited: bool,
    halt: Option<Status>,
    /// Why the loop returned.
    stop: SolverStop,
    c: Vec<Complex64>,
    scan: Scan,
}

/// Largest support a solve may grow to: `⌊2|K|/3⌋` spikes, the number whose `3s` real unknowns
/// (position, real and imaginary amplitude) the `2|K|` real data values can still determine.
fn support_cap(model: &Model) -> usize {
    2 * model.len() / 3
}

/// Peaks of `|η|` above `1 + ε` and at least this fraction of the highest one enter together.
const ADD_RATIO: f64 = 0.5;

/// Positions closer than this many `1/L` are merged during sliding (two BLASSO spikes that close are
/// one spike split by rounding).
const MERGE_FC: f64 = 1e-3;

/// Rounding floor of the certificate at weight λ: `r_k` carries an error of about
/// `ANCHOR·ε_mach·Σ|a_j| + ε_mach|y_k|`, which `F*` sums over `|K|` terms with varying phases
/// (`≈ √|K|` growth), divided by λ. A factor 2 over the anchor length for safety.
fn rounding_floor(model: &Model, point: &Point, lambda: f64) -> f64 {
    let ymax = model.y.iter().map(|v| v.norm()).fold(0.0, f64::max);
    let anchor = 2.0 * crate::kernels::band::ANCHOR as f64;
    anchor * f64::EPSILON * (model.len() as f64).sqrt() * (point.l1() + ymax) / lambda
}

/// Dual coefficients `c = (y − Φa)/λ` on `K`.
fn dual_of(model: &Model, point: &Point, lambda: f64) -> (Vec<Complex64>, f64) {
    // Large supports on a contiguous band: streamed, without the |K| × s atom matrix.
    let r = if model.grams_closed_form(point.len()) {
        model.residual_at(&point.tau, &point.amp)
    } else {
        model.residual(&model.atoms(&point.tau), &point.amp)
    };
    let rn = r.iter().map(|z| z.norm_sqr()).sum::<f64>().sqrt();
    (r.iter().map(|z| z / lambda).collect(), rn)
}

/// Sliding Frank–Wolfe for `min ½‖y − Φa‖² + λ‖a‖₁` from the warm start `point` (module docs).
fn blasso(
    model: &Model,
    lambda: f64,
    point: &mut Point,
    tolerance: f64,
    budget: &mut Budget,
) -> Blasso {
    let merge_tol = MERGE_FC / model.half_width.max(1.0);
    let near_tol = 0.25 / model.band_len() as f64;
    let mut last_added: Option<f64> = None;
    let mut repeats = 0;
    let mut stalls = 0;
    let mut near_adds = 0;
    loop {
        let halt = budget.exhausted();
        budget.iterations += 1;
        lasso(model, point, lambda);
        point.prune_zeros();
        for _ in 0..4 {
            slide(model, point, lambda, false, 100);
            let merged = point.merge_close(merge_tol);
            lasso(model, point, lambda);
            let pruned = point.prune_zeros();
            if merged == 0 && pruned == 0 {
                break;
            }
        }
        let (c, _) = dual_of(model, point, lambda);
        let eps = tolerance.max(rounding_floor(model, point, lambda));
        let sc = scan_above(model, &c, &point.tau, 1.0 + eps, ADD_RATIO);
        let phases_ok = sc
            .on_support
            .iter()
            .zip(&point.amp)
            .all(|(q, a)| (q - a / a.norm()).norm() <= eps);
        if sc.max_modulus <= 1.0 + eps && phases_ok {
            return Blasso {
                certified: true,
                rounding_limited: eps > tolerance,
                halt: None,
                stop: SolverStop::Certified,
                c,
                scan: sc,
            };
        }
        if halt.is_some() {
            return Blasso {
                certified: false,
                rounding_limited: eps > tolerance,
                halt,
                stop: SolverStop::Budget,
                c,
                scan: sc,
            };
        }
        match sc.best_off {
            Some(p) if p.modulus > 1.0 + eps => {
                if last_added.is_some_and(|t| crate::model::wrap_distance(t, p.position) < near_tol)
                {
                    repeats += 1;
                } else {
                    repeats = 0;
                }
                if repeats >= 3 {
                    // The same point keeps being added and removed: the slide cannot settle it.
                    return Blasso {
                        certified: false,
                        rounding_limited: eps > tolerance,
                        halt: Some(Status::NumericalFailure),
                        stop: SolverStop::Cycling {
                            position: crate::model::wrap(p.position),
                        },
                        c,
                        scan: sc,
                    };
                }
                // The maximiser of |η| (Denoyelle et al., Alg. 2), and with it every other violating
                // peak at least half as high: several spikes per iteration when many are missing,
                // which saves whole slides; a peak that is not needed gets a zero amplitude from the
                // LASSO and is removed. The stopping test is unchanged.
                let adding: Vec<f64> = sc
                    .peaks_off
                    .iter()
                    .filter(|q| q.modulus >= ADD_RATIO * p.modulus)
                    .map(|q| q.position)
                    .collect();
                if point.len() + adding.len() > support_cap(model) {
                    // More spikes than the data can determine (module docs): stop instead of
                    // running the LASSO and the slide on an ever larger support. A limit reached before
                    // convergence, not a numerical failure (module docs).
                    return Blasso {
                        certified: false,
                        rounding_limited: eps > tolerance,
                        halt: Some(Status::TargetNotReached),
                        stop: SolverStop::SupportCap {
                            spikes: point.len(),
                            cap: support_cap(model),
                        },
                        c,
                        scan: sc,
                    };
                }
                for t in adding {
                    point.tau.push(t);
                    point.amp.push(Complex64::new(0.0, 0.0));
                }
                last_added = Some(p.position);
            }
            _ => {
                // The violation sits within 0.25/N of the support. If it is not at a support point,
                // it is a missing spike close to an existing one: add it. Otherwise the slide has not
                // converged: slide again, a few times.
                if let Some(p) = sc.best_any.filter(|p| p.modulus > 1.0 + eps) {
                    let apart = point
                        .tau
                        .iter()
                        .all(|&t| crate::model::wrap_distance(t, p.position) > 10.0 * merge_tol);
                    if apart && near_adds < 8 {
                        point.tau.push(p.position);
                        point.amp.push(Complex64::new(0.0, 0.0));
                        near_adds += 1;
                        continue;
                    }
                }
                stalls += 1;
                if stalls >= 4 {
                    return Blasso {
                        certified: false,
                        rounding_limited: eps > tolerance,
                        halt: Some(Status::NumericalFailure),
                        stop: SolverStop::Stalled,
                        c,
                        scan: sc,
                    };
                }
            }
        }
    }
}

/// `‖F*y‖∞` (normalised units): the smallest λ for which `μ = 0` solves BLASSO.
fn correlation_max(model: &Model) -> f64 {
    scan(model, &model.y, &[]).max_modulus
}

/// The solution `μ = 0`, certified by `c = y/λ` (BLASSO) or `c = 0` (constrained, `‖y‖ ≤ δ`).
fn zero_outcome(model: &Model, c: Vec<Complex64>, objective: f64) -> Outcome {
    let sc = scan(model, &c, &[]);
    Outcome {
        point: Point::default(),
        scan: sc,
        c,
        status: Status::Solved,
        lambda: 0.0,
        objective,
        lower_bound: objective,
        precertificate_failed: false,
        stop: SolverStop::Certified,
    }
}

/// BLASSO dual value `λRe⟨y, c̃⟩ − (λ²/2)‖c̃‖²` at the feasible `c̃ = c / max(1, max|η|)`.
fn blasso_lower_bound(model: &Model, c: &[Complex64], max_modulus: f64, lambda: f64) -> f64 {
    let s = 1.0 / max_modulus.max(1.0);
    let inner: f64 = model.y.iter().zip(c).map(|(y, c)| (c.conj() * y).re).sum();
    let cn: f64 = c.iter().map(|v| v.norm_sqr()).sum();
    lambda * s * inner - 0.5 * lambda * lambda * s * s * cn
}

/// `min ½‖y − Fμ‖² + λ‖μ‖_TV` (normalised λ).
pub(crate) fn solve_penalised(
    model: &Model,
    lambda: f64,
    tolerance: f64,
    budget: &mut Budget,
) -> Outcome {
    if model.zero_data || correlation_max(model) <= lambda {
        let c: Vec<Complex64> = model.y.iter().map(|v| v / lambda).collect();
        // ½‖y‖² in normalised units (‖y‖ = 1 unless the data are zero).
        let half_norm = if model.zero_data { 0.0 } else { 0.5 };
        return zero_outcome(model, c, half_norm);
    }
    let mut point = Point::default();
    let res = blasso(model, lambda, &mut point, tolerance, budget);
    let (_, rn) = dual_of(model, &point, lambda);
    let objective = 0.5 * rn * rn + lambda * point.l1();
    let lower_bound = blasso_lower_bound(model, &res.c, res.scan.max_modulus, lambda);
    Outcome {
        point,
        status: status_of(&res),
        stop: res.stop,
        c: res.c,
        scan: res.scan,
        lambda,
        objective,
        lower_bound,
        precertificate_failed: false,
    }
}

/// Solved when certified at the requested tolerance; reduced accuracy when only at the rounding floor.
fn status_of(res: &Blasso) -> Status {
    match (res.certified, res.halt) {
        (true, _) if res.rounding_limited => Status::ReducedAccuracy,
        (true, _) => Status::Solved,
        (false, Some(s)) => s,
        (false, None) => Status::NumericalFailure,
    }
}

/// Smallest continuation weight (normalised units, i.e. relative to `‖y‖`).
const LAMBDA_MIN: f64 = 1e-10;

/// Relative residual below which a least-squares fit counts as exact (`‖y − Φa‖ ≤ 1e-9‖y‖`): rounding
/// of an exact fit is about `ε_mach · cond(Φ)`, below 1e-12 for supports the pre-certificate can certify.
const EXACT_FIT: f64 = 1e-9;

/// `min ‖μ‖_TV s.t. Fμ = y` by BLASSO continuation, exact fit and pre-certificate (module docs).
pub(crate) fn solve_exact(model: &Model, tolerance: f64, budget: &mut Budget) -> Outcome {
    if model.zero_data {
        return zero_outcome(model, vec![Complex64::new(0.0, 0.0); model.len()], 0.0);
    }
    let mut lambda = 0.1 * correlation_max(model);
    let mut point = Point::default();
    loop {
        let res = blasso(model, lambda, &mut point, tolerance, budget);
        let fit = exact_fit(model, &point);
        let certified = fit
            .as_ref()
            .and_then(|f| certify_exact(model, f, &res.c))
            .filter(|(_, sc)| sc.max_modulus <= 1.0 + tolerance);
        if let (Some(fit), Some((c, sc))) = (&fit, certified) {
            return Outcome {
                lower_bound: lower_bound_exact(model, &c, sc.max_modulus).min(fit.l1()),
                objective: fit.l1(),
                point: fit.clone(),
                c,
                scan: sc,
                status: Status::Solved,
                lambda: 0.0,
                precertificate_failed: false,
                stop: SolverStop::Certified,
            };
        }
        let next = lambda / 10.0;
        if res.halt.is_some() || next < LAMBDA_MIN {
            return uncertified_exact(model, res, lambda, point, fit);
        }
        lambda = next;
    }
}

/// The interpolating certificates of an exact fit — the vanishing-derivative pre-certificate, and the
/// BLASSO dual `c_λ` projected onto the interpolation conditions — with their scans; the one with the
/// smaller `max |q|` (any one bounded by 1 proves optimality). `None` if neither exists.
fn certify_exact(
    model: &Model,
    fit: &Point,
    c_lambda: &[Complex64],
) -> Option<(Vec<Complex64>, Scan)> {
    let signs: Vec<Complex64> = fit.amp.iter().map(|a| a / a.norm()).collect();
    [
        vanishing_derivative(model, &fit.tau, &signs),
        projected_dual(model, &fit.tau, &signs, c_lambda),
    ]
    .into_iter()
    .flatten()
    .map(|c| {
        let sc = scan(model, &c, &fit.tau);
        (c, sc)
    })
    .min_by(|a, b| a.1.max_modulus.total_cmp(&b.1.max_modulus))
}

/// Weak-duality bound of the exact problem: `Re⟨y, c̃⟩` with the feasible `c̃ = c/max(1, max|q|)`.
fn lower_bound_exact(model: &Model, c: &[Complex64], max_modulus: f64) -> f64 {
    let inner: f64 = model.y.iter().zip(c).map(|(y, c)| (c.conj() * y).re).sum();
    inner / max_modulus.max(1.0)
}

/// The exact problem without an interpolating certificate bounded by 1: report the exact fit (or, if
/// there is none, the last BLASSO point) with the weak-duality bound of the last BLASSO dual, which is
/// feasible up to `max|η|`. Reduced accuracy when the fit is exact and that bound is within 1e-6
/// (relative) of its TV norm; otherwise the budget's status or numerical failure.
fn uncertified_exact(
    model: &Model,
    res: Blasso,
    lambda: f64,
    point: Point,
    fit: Option<Point>,
) -> Outcome {
    let lower = lower_bound_exact(model, &res.c, res.scan.max_modulus);
    let stop = match res.halt {
        Some(_) => res.stop,
        None => SolverStop::Uncertified,
    };
    let status_for = |objective: f64, feasible: bool| match res.halt {
        Some(h) => h,
        None if feasible && objective - lower <= 1e-6 * objective.max(f64::MIN_POSITIVE) => {
            Status::ReducedAccuracy
        }
        None => Status::NumericalFailure,
    };
    match fit {
        Some(f) => {
            // Report the interpolating certificate that comes closest (it exceeds 1), or, if none
            // could be built, the BLASSO dual against the fit's support.
            let (c, sc) = certify_exact(model, &f, &res.c).unwrap_or_else(|| {
                let sc = scan(model, &res.c, &f.tau);
                (res.c.clone(), sc)
            });
            let objective = f.l1();
            Outcome {
                status: status_for(objective, true),
                point: f,
                c,
                scan: sc,
                lambda: 0.0,
                objective,
                lower_bound: lower,
                precertificate_failed: true,
                stop,
            }
        }
        None => {
            let objective = point.l1();
            Outcome {
                status: status_for(objective, false),
                point,
                c: res.c,
                scan: res.scan,
                lambda,
                objective,
                lower_bound: lower,
                precertificate_failed: false,
                stop,
            }
        }
    }
}

/// Least-squares fit of the support of `point` on the exact model (amplitudes, then positions and
/// amplitudes together); `None` unless the residual reaches [`EXACT_FIT`].
fn exact_fit(model: &Model, point: &Point) -> Option<Point> {
    if point.is_empty() || 3 * point.len() > 2 * model.len() {
        return None;
    }
    let mut fit = point.clone();
    if !least_squares(model, &mut fit) {
        return None;
    }
    slide(model, &mut fit, 0.0, false, 200);
    // Two spikes slid onto one point with cancelling amplitudes form a dipole, not a sparse fit:
    // merge such pairs and fit again (the merged support must then fit exactly on its own).
    if fit.merge_close(MERGE_FC / model.half_width.max(1.0)) > 0 {
        if !least_squares(model, &mut fit) {
            return None;
        }
        slide(model, &mut fit, 0.0, false, 200);
        if fit.merge_close(MERGE_FC / model.half_width.max(1.0)) > 0 {
            return None;
        }
    }
    let (_, rn) = dual_of(model, &fit, 1.0);
    if rn > EXACT_FIT || fit.amp.iter().any(|a| a.norm() == 0.0) {
        return None;
    }
    for t in &mut fit.tau {
        *t = crate::model::wrap(*t);
    }
    Some(fit)
}

/// Relative accuracy of the residual match `‖y − Fμ_λ‖ = δ` in the constrained problem.
const RESIDUAL_MATCH: f64 = 1e-10;

/// `min ‖μ‖_TV s.t. ‖y − Fμ‖ ≤ δ` (normalised δ) by a root search in λ (module docs).
pub(crate) fn solve_constrained(
    model: &Model,
    delta: f64,
    tolerance: f64,
    budget: &mut Budget,
) -> Outcome {
    if model.zero_data || delta >= 1.0 {
        return zero_outcome(model, vec![Complex64::new(0.0, 0.0); model.len()], 0.0);
    }
    let target = delta.ln();
    let lambda_hi = correlation_max(model);
    // Bracket: ln‖r‖ − ln δ > 0 at λ_hi (μ = 0, ‖r‖ = 1 > δ). Descend by secant steps on
    // (ln λ, ln‖r‖ − ln δ), each at least ×1/1.2 and at most ×1/10: below the root the BLASSO solution
    // fits the noise with many spikes, so the descent must not overshoot it by much.
    let mut hi = (lambda_hi.ln(), -target);
    let mut lambda = 0.5 * lambda_hi;
    let mut point = Point::default();
    let lo;
    loop {
        let res = blasso(model, lambda, &mut point, tolerance, budget);
        let (_, rn) = dual_of(model, &point, lambda);
        if res.halt.is_some() {
            return finish_constrained(model, point, res, lambda, delta, rn);
        }
        let fx = rn.ln() - target;
        if (rn - delta).abs() <= RESIDUAL_MATCH * delta {
            return finish_constrained(model, point, res, lambda, delta, rn);
        }
        let x = lambda.ln();
        if fx < 0.0 {
            lo = (x, fx);
            break;
        }
        let secant = if hi.1 > fx {
            x - fx * (x - hi.0) / (fx - hi.1)
        } else {
            f64::NEG_INFINITY
        };
        hi = (x, fx);
        let next = secant.clamp(x - 10f64.ln(), x - 1.2f64.ln());
        lambda = next.exp();
        if lambda < LAMBDA_MIN {
            return finish_constrained(model, point, res, lambda, delta, rn);
        }
    }
    // Illinois regula falsi on x = ln λ, bracket (lo: residual below δ, hi: above).
    let (mut lo, mut hi) = (lo, hi);
    let mut side = 0i8;
    let mut last = None;
    for _ in 0..80 {
        let width = hi.0 - lo.0;
        let mut x = hi.0 - hi.1 * width / (hi.1 - lo.1);
        if !(x > lo.0 && x < hi.0) {
            x = 0.5 * (lo.0 + hi.0);
        }
        let lam = x.exp();
        let res = blasso(model, lam, &mut point, tolerance, budget);
        let (_, rn) = dual_of(model, &point, lam);
        let fx = rn.ln() - target;
        let done = (rn - delta).abs() <= RESIDUAL_MATCH * delta || res.halt.is_some();
        if done || width < 1e-15 {
            return finish_constrained(model, point, res, lam, delta, rn);
        }
        if fx < 0.0 {
            lo = (x, fx);
            if side == -1 {
                hi.1 *= 0.5;
            }
            side = -1;
        } else {
            hi = (x, fx);
            if side == 1 {
                lo.1 *= 0.5;
            }
            side = 1;
        }
        last = Some((res, lam, rn));
    }
    match last {
        Some((res, lam, rn)) => {
            let mut out = finish_constrained(model, point, res, lam, delta, rn);
            if out.status == Status::Solved {
                out.status = Status::IterationLimit;
                out.stop = SolverStop::ResidualSearch;
            }
            out
        }
        // The loop body runs at least once; this arm only keeps the function total.
        None => zero_outcome(model, vec![Complex64::new(0.0, 0.0); model.len()], 0.0),
    }
}

fn finish_constrained(
    model: &Model,
    point: Point,
    res: Blasso,
    lambda: f64,
    delta: f64,
    rn: f64,
) -> Outcome {
    // Dual of the constrained problem: Re⟨y, c̃⟩ − δ‖c̃‖ with c̃ = c/max(1, max|η|).
    let s = 1.0 / res.scan.max_modulus.max(1.0);
    let inner: f64 = model
        .y
        .iter()
        .zip(&res.c)
        .map(|(y, c)| (c.conj() * y).re)
        .sum();
    let cn: f64 = res.c.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
    let lower = s * (inner - delta * cn);
    let matched = (rn - delta).abs() <= RESIDUAL_MATCH * delta;
    let (status, stop) = match status_of(&res) {
        Status::Solved if !matched => (Status::IterationLimit, SolverStop::ResidualSearch),
        other => (other, res.stop),
    };
    Outcome {
        objective: point.l1(),
        point,
        status,
        stop,
        c: res.c,
        scan: res.scan,
        lambda,
        lower_bound: lower,
        precertificate_failed: false,
    }
}

#[cfg(test)]
mod tests;
