//! Position moves shared by the sliding solver and the final polish: the exact minimiser of the
//! data fit over one position with the amplitudes fixed, and the least-squares polish of all
//! positions (variable projection by block coordinates).
//!
//! With the residual `R` of the current measure and atom `j` of amplitude row `b_j`, the fit without
//! atom `j`, `R₋ⱼ = R + a(f_j)b_jᵀ`, is best matched at the maximum of
//! `Re p_j(f)`, `p_j(f) = a(f)ᴴR₋ⱼ b̄_j = Σ_k e^{i2πkf}(R₋ⱼ b̄_j)_k` (`‖a(f)‖` is constant), found by
//! Newton steps on `Re p_j' = 0`. The polish alternates least-squares amplitudes `B = A⁺Ỹ` with one
//! such move per position until the positions stop moving — the deterministic maximum-likelihood
//! fit of the positions (Stoica & Nehorai 1989, IEEE TASSP 37(5), the criterion `‖P⊥_A Y‖²_F`),
//! started from the convex solution and never moving a position more than `0.25/fc`, as the
//! single-record polish ([`crate::PostProcess::refine`]).

use super::Reduced;
use crate::dual::DualPolynomial;
use crate::model::{atom, wrap, wrap_difference};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// The steering matrix of `pos` on the measured rows of `red`.
pub(crate) fn steering(red: &Reduced, pos: &[f64]) -> DMatrix<Complex64> {
    DMatrix::from_fn(red.indices.len(), pos.len(), |i, j| {
        atom(red.indices[i], pos[j])
    })
}

/// The best position for atom `j` (module docs) from `f0`, given the residual `r` of the current
/// measure and the atom's amplitude row `bj`, staying within `reach` of `f0`; `f0` itself when no
/// Newton step improves the fit.
pub(crate) fn best_position(
    red: &Reduced,
    r: &DMatrix<Complex64>,
    bj: &[Complex64],
    f0: f64,
    reach: f64,
) -> f64 {
    let nb2: f64 = bj.iter().map(|v| v.norm_sqr()).sum();
    if nb2 == 0.0 {
        return f0;
    }
    let mut band = vec![Complex64::new(0.0, 0.0); red.band_len];
    for (i, &k) in red.indices.iter().enumerate() {
        let rb: Complex64 = (0..r.ncols()).map(|l| r[(i, l)] * bj[l].conj()).sum();
        band[(k - red.kmin) as usize] = rb + atom(k, f0) * nb2;
    }
    let p = DualPolynomial::new(red.kmin, band);
    let n = red.band_len as f64;
    let mut f = f0;
    for _ in 0..30 {
        let (_, d1, d2) = p.eval_derivatives(f);
        if d2.re >= 0.0 {
            break;
        }
        let step = (-d1.re / d2.re).clamp(-0.25 / n, 0.25 / n);
        let next = f0 + (f + step - f0).clamp(-reach, reach);
        if next == f {
            break;
        }
        f = next;
        if step.abs() * n < 1e-15 {
            break;
        }
    }
    if p.eval(f).re >= p.eval(f0).re {
        wrap(f)
    } else {
        f0
    }
}

/// Least-squares amplitudes `A⁺Ỹ` (`None` if the solve fails).
fn amplitudes(red: &Reduced, pos: &[f64]) -> Option<DMatrix<Complex64>> {
    steering(red, pos)
        .svd(true, true)
        .solve(&red.y, f64::EPSILON * red.indices.len() as f64)
        .ok()
}

/// `‖P⊥Ỹ‖²_F` and the amplitudes, for `pos`.
fn fit(red: &Reduced, pos: &[f64]) -> Option<(f64, DMatrix<Complex64>)> {
    let b = amplitudes(red, pos)?;
    let rss = (&red.y - steering(red, pos) * &b).norm_squared();
    Some((rss, b))
}

/// The least-squares polish of `pos` (module docs); `pos` unchanged if it does not lower the fit.
pub(crate) fn polish(red: &Reduced, pos: &[f64]) -> Vec<f64> {
    if pos.is_empty() {
        return pos.to_vec();
    }
    let reach = 0.5 / (red.band_len.max(2) - 1) as f64;
    let Some((start_rss, _)) = fit(red, pos) else {
        return pos.to_vec();
    };
    let mut cur = pos.to_vec();
    for _ in 0..200 {
        let mut moved: f64 = 0.0;
        for j in 0..cur.len() {
            let Some((_, b)) = fit(red, &cur) else {
                return pos.to_vec();
            };
            let r = &red.y - steering(red, &cur) * &b;
            let bj: Vec<Complex64> = b.row(j).iter().copied().collect();
            let room = reach - wrap_difference(cur[j], pos[j]).abs();
            let f = best_position(red, &r, &bj, cur[j], room.max(0.0));
            moved = moved.max(wrap_difference(f, cur[j]).abs());
            cur[j] = f;
        }
        if moved * (red.band_len as f64) < 1e-14 {
            break;
        }
    }
    match fit(red, &cur) {
        Some((rss, _)) if rss <= start_rss => cur,
        _ => pos.to_vec(),
    }
}
