//! Amplitudes at fixed positions: the complex LASSO
//!
//! ```text
//!   min_a ½‖y − Φa‖₂² + λ Σ_j |a_j|   ⇔   min_a ½ aᴴGa − Re(aᴴb) + λ Σ_j |a_j|,
//!   G = ΦᴴΦ (G_{jl} = D_0(τ_j − τ_l)),  b = Φᴴy,
//! ```
//!
//! a convex problem in `s` complex unknowns (the amplitude step of Sliding Frank–Wolfe, Denoyelle et al.
//! 2019, Inverse Problems 36(1), Alg. 2). Solved by cyclic coordinate descent with exact coordinate
//! minimisation — complex soft-thresholding `a_j ← S_λ(b_j − Σ_{l≠j} G_{jl} a_l)/G_{jj}`,
//! `S_λ(z) = z·max(0, 1 − λ/|z|)` (Friedman, Hastie, Höfling & Tibshirani 2007, Ann. Appl. Stat. 1(2)) —
//! which identifies the zero pattern, then Newton's method on the nonzero amplitudes (the slide of
//! [`crate::kernels::slide`] with positions frozen), which reaches rounding level; the optimality (KKT)
//! conditions `|b_j − (Ga)_j| ≤ λ` for `a_j = 0` and `b_j − (Ga)_j = λ a_j/|a_j|` otherwise are checked
//! and the two stages repeated until they hold. With `λ = 0` it is plain least squares, solved by a
//! column-pivoted QR factorisation ([`crate::kernels::lstsq`]).

use crate::kernels::band::Model;
use crate::kernels::lstsq::on_band;
use crate::kernels::slide::{slide, Point};
use num_complex::Complex64;

/// Relative KKT tolerance at which the amplitudes count as optimal: rounding in `b − Ga` is about
/// `ε_mach · |K| · max|a|`, far below this.
const KKT_TOLERANCE: f64 = 1e-10;

/// Complex soft-thresholding `S_λ(z) = z·max(0, 1 − λ/|z|)`.
#[inline]
pub(crate) fn soft_threshold(z: Complex64, lambda: f64) -> Complex64 {
    let m = z.norm();
    if m <= lambda {
        Complex64::new(0.0, 0.0)
    } else {
        z * (1.0 - lambda / m)
    }
}

/// Solve the LASSO in the amplitudes of `point` (warm-started from its amplitudes; zero amplitudes are
/// kept in place, not removed). Returns true when the KKT conditions hold to [`KKT_TOLERANCE`].
pub(crate) fn lasso(model: &Model, point: &mut Point, lambda: f64) -> bool {
    let s = point.len();
    if s == 0 {
        return true;
    }
    if lambda == 0.0 {
        return on_band(model, point);
    }
    // b_j = Σ_k y_k exp(i2πkτ_j) and G_{jl} = D_0(τ_j − τ_l) = conj((EᴴE)_{jl}); for large supports
    // on a contiguous band streamed and in closed form, without the |K| × s atom matrix E.
    let (b, g) = if model.grams_closed_form(s) {
        let [b, _, _] = model.correlate_at(&point.tau, &model.y);
        (b, model.closed_grams(&point.tau, 1))
    } else {
        let e = model.atoms(&point.tau);
        let [b, _, _] = model.correlate(&e, &model.y);
        (b, model.grams(&point.tau, &e, 1))
    };
    let gram = |j: usize, l: usize| g[0][(j, l)].conj();
    let diag = model.len() as f64;
    for _round in 0..8 {
        // Coordinate descent; u = Ga kept up to date.
        let mut u: Vec<Complex64> = (0..s)
            .map(|j| (0..s).map(|l| gram(j, l) * point.amp[l]).sum())
            .collect();
        for _sweep in 0..500 {
            let mut change: f64 = 0.0;
            let mut amax: f64 = 0.0;
            for j in 0..s {
                let z = b[j] - (u[j] - point.amp[j] * diag);
                let new = soft_threshold(z, lambda) / diag;
                let delta = new - point.amp[j];
                if delta != Complex64::new(0.0, 0.0) {
                    for (l, ul) in u.iter_mut().enumerate() {
                        *ul += gram(l, j) * delta;
                    }
                    point.amp[j] = new;
                }
                change = change.max(delta.norm());
                amax = amax.max(new.norm());
            }
            if change <= 1e-13 * amax.max(f64::MIN_POSITIVE) {
                break;
            }
        }
        // Newton on the nonzero amplitudes (smooth there), positions frozen.
        let nonzero: Vec<usize> = (0..s).filter(|&j| point.amp[j].norm() > 0.0).collect();
        if !nonzero.is_empty() {
            let mut sub = Point {
                tau: nonzero.iter().map(|&j| point.tau[j]).collect(),
                amp: nonzero.iter().map(|&j| point.amp[j]).collect(),
            };
            slide(model, &mut sub, lambda, true, 100);
            for (i, &j) in nonzero.iter().enumerate() {
                point.amp[j] = sub.amp[i];
            }
        }
        if kkt_holds(&b, &gram, &point.amp, lambda) {
            return true;
        }
    }
    false
}

/// The LASSO optimality conditions, relative to λ.
fn kkt_holds(
    b: &[Complex64],
    gram: &dyn Fn(usize, usize) -> Complex64,
    amp: &[Complex64],
    lambda: f64,
) -> bool {
    let s = amp.len();
    (0..s).all(|j| {
        let ga: Complex64 = (0..s).map(|l| gram(j, l) * amp[l]).sum();
        let v = b[j] - ga;
        let m = amp[j].norm();
        if m == 0.0 {
            v.norm() <= lambda * (1.0 + KKT_TOLERANCE)
        } else {
            (v - amp[j] / m * lambda).norm() <= KKT_TOLERANCE * lambda
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain, Measurements, Spikes};

    fn model() -> Model {
        let truth = Spikes::from_parts(
            &[0.2, 0.26, 0.7],
            &[
                Complex64::new(1.0, 0.3),
                Complex64::new(-0.5, 0.8),
                Complex64::new(0.05, -0.04),
            ],
        )
        .unwrap();
        let idx: Vec<i64> = (-8..=8).collect();
        let d =
            Measurements::in_band(-8, 8, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        Model::new(&d, 8).unwrap()
    }

    /// A single atom: the LASSO solution is the soft-thresholded correlation, `S_λ(b)/|K|`.
    #[test]
    fn single_atom_is_soft_thresholding() {
        let m = model();
        let mut p = Point {
            tau: vec![0.2],
            amp: vec![Complex64::new(0.0, 0.0)],
        };
        let lambda = 0.3;
        assert!(lasso(&m, &mut p, lambda));
        let e = m.atoms(&p.tau);
        let [b, _, _] = m.correlate(&e, &m.y);
        let want = soft_threshold(b[0], lambda) / m.len() as f64;
        assert!((p.amp[0] - want).norm() < 1e-14);
    }

    /// Close atoms (0.96/fc apart), a weak one that must be zeroed: the KKT conditions hold, and the
    /// objective is not above that of any nearby amplitude vector (convexity).
    #[test]
    fn kkt_conditions_hold_and_solution_is_a_minimum() {
        let m = model();
        let mut p = Point {
            tau: vec![0.2, 0.26, 0.7, 0.45],
            amp: vec![Complex64::new(0.0, 0.0); 4],
        };
        let lambda = 0.05;
        assert!(lasso(&m, &mut p, lambda));
        assert_eq!(
            p.amp[3],
            Complex64::new(0.0, 0.0),
            "an empty spot gets no mass"
        );
        let f0 = crate::kernels::slide::objective(&m, &p, lambda);
        for v in 0..8 {
            for h in [1e-4, -1e-4] {
                let mut q = p.clone();
                if v < 4 {
                    q.amp[v].re += h;
                } else {
                    q.amp[v - 4].im += h;
                }
                assert!(crate::kernels::slide::objective(&m, &q, lambda) >= f0 - 1e-15);
            }
        }
    }
}
