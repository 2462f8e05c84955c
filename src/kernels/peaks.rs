//! The peak scan: every local maximum of `|q|` that matters, and the global maximum over the torus, in
//! `O(N log N)`, for a dual polynomial given by its coefficients on the measured set of a band
//! ([`crate::kernels::band::Model`]).
//!
//! `|q|²` is evaluated on an FFT grid of `M` points; every local maximum of the grid
//! values that could hide a peak above the current best is polished by Newton steps on
//! `d|q|²/dt = 0` ([`polish_maximum`], with `O(|K|)` recurrences for the derivatives). Which grid maxima can be skipped follows from Bernstein's inequality for a
//! trigonometric polynomial of degree `L` (after centring), `‖q^{(m)}‖∞ ≤ (2πL)^m ‖q‖∞` (Bernstein 1912;
//! e.g. Zygmund, *Trigonometric Series*, ch. X): with `g = |q|²`, `|g''| ≤ 16π²L²‖q‖²∞`, and a peak `t*`
//! (`g'(t*) = 0`) lies within `h/2 = 1/(2M)` of a grid point, so that grid point has
//! `g ≥ g(t*) − 2π²(L/M)²‖q‖²∞`. Grid maxima more than that below the best polished value are
//! skipped, so only a handful of Newton polishes run, whatever `N`.

use super::band::Model;
use crate::model::wrap_distance;
use num_complex::Complex64;
use std::f64::consts::PI;

/// A polished local maximum of `|q|`: the one peak type of the crate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Peak {
    /// Position on `[0, 1)`.
    pub position: f64,
    /// `|q|` there.
    pub modulus: f64,
}

/// What a scan of `|q|` over the torus found.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Scan {
    /// `max_t |q(t)|`.
    pub max_modulus: f64,
    /// The largest local maximum more than `0.25/N` from every support point.
    pub best_off: Option<Peak>,
    /// The largest polished local maximum anywhere (it may sit next to a support point).
    pub best_any: Option<Peak>,
    /// `q(τ_j)` at the support points, in their order.
    pub on_support: Vec<Complex64>,
    /// Every off-support local maximum with `|q| ≥ max(level, relative · max_off_support)` for the
    /// `level` and `relative` asked for ([`scan_above`]), polished, largest first.
    pub peaks_off: Vec<Peak>,
}

impl Scan {
    /// Largest off-support maximum of `|q|` (0 when there is none).
    pub fn max_off_support(&self) -> f64 {
        self.best_off.map_or(0.0, |p| p.modulus)
    }

    /// Smallest `|q|` on the support (0 for an empty support, as in [`crate::dual::DualPolynomial`]).
    pub fn min_on_support(&self) -> f64 {
        if self.on_support.is_empty() {
            0.0
        } else {
            self.on_support
                .iter()
                .map(|v| v.norm())
                .fold(f64::INFINITY, f64::min)
        }
    }

    /// The certificate in the crate's reporting form.
    pub fn certificate(&self) -> crate::dual::Certificate {
        crate::dual::Certificate {
            max_modulus: self.max_modulus,
            max_off_support: self.max_off_support(),
            min_on_support: self.min_on_support(),
        }
    }
}

/// Newton steps on `g = |q|²` from `t0`, never leaving `[t0 − h, t0 + h]`; returns the visited point
/// with the largest `|q|` (a lower bound of the local maximum, equal to it once Newton has converged).
/// `eval(t)` gives `(q, q', q'')` at `t`; `g' = 2 Re(q̄ q')`, `g'' = 2(|q'|² + Re(q̄ q''))`. Steps stop
/// once they fall below `1e-15/width`, `width` being the largest frequency of `q` (after centring),
/// once a step would not move `t`, or once a step below `1e-9/width` is no shorter than the one
/// before (rounding level: Newton's steps shrink quadratically until then, then wander by a few ulps).
/// The one local-maximum polish of the crate: the scan below and
/// [`crate::DualPolynomial::polish_maximum`] both use it.
pub(crate) fn polish_maximum(
    eval: impl Fn(f64) -> [Complex64; 3],
    t0: f64,
    h: f64,
    width: f64,
) -> Peak {
    let mut t = t0;
    let mut best = Peak {
        position: t0,
        modulus: eval(t0)[0].norm(),
    };
    let mut last_step = f64::INFINITY;
    for _ in 0..40 {
        let [q, d1, d2] = eval(t);
        let m = q.norm();
        if m > best.modulus {
            best = Peak {
                position: t,
                modulus: m,
            };
        }
        let g1 = 2.0 * (q.conj() * d1).re;
        let g2 = 2.0 * (d1.norm_sqr() + (q.conj() * d2).re);
        if g2 >= 0.0 {
            break;
        }
        let step = -g1 / g2;
        if (t + step - t0).abs() > h {
            break;
        }
        // Converged to rounding level (see above): further evaluations only revisit the same points.
        if t + step == t || (step.abs() >= last_step && step.abs() * width.max(1.0) < 1e-9) {
            break;
        }
        last_step = step.abs();
        t += step;
        if step.abs() * width.max(1.0) < 1e-15 {
            let m = eval(t)[0].norm();
            if m > best.modulus {
                best = Peak {
                    position: t,
                    modulus: m,
                };
            }
            break;
        }
    }
    best.position = crate::model::wrap(best.position);
    best
}

/// [`polish_maximum`] of the polynomial with centred coefficients `c` in `model`'s frame.
fn polish(model: &Model, c: &[Complex64], t0: f64, h: f64) -> Peak {
    polish_maximum(|t| model.eval(c, t), t0, h, model.half_width)
}

/// Indices of the local maxima of `g` on a periodic grid (`g[j] ≥ g[j−1]` and `g[j] > g[j+1]`).
pub(crate) fn grid_maxima(g: &[f64]) -> impl Iterator<Item = usize> + '_ {
    let m = g.len();
    (0..m).filter(move |&j| g[j] >= g[(j + m - 1) % m] && g[j] > g[(j + 1) % m])
}

/// True when `t` is within `tol` of a point of `sorted` (positions in `[0, 1)`, ascending).
fn near(sorted: &[f64], t: f64, tol: f64) -> bool {
    if sorted.is_empty() {
        return false;
    }
    let i = sorted.partition_point(|&s| s < t);
    let n = sorted.len();
    [i % n, (i + n - 1) % n]
        .iter()
        .any(|&j| wrap_distance(sorted[j], t) < tol)
}

/// Scan `|q|` for `q(t) = Σ_{k'} c_k exp(i2πk't)` (centred coefficients on `K`) against `support`
/// (see the module docs).
pub(crate) fn scan(model: &Model, c: &[Complex64], support: &[f64]) -> Scan {
    scan_above(model, c, support, f64::INFINITY, 0.0)
}

/// [`scan`], also collecting every off-support local maximum with
/// `|q| ≥ max(level, relative · max_off_support)`.
///
/// The relative floor is what keeps the scan cheap when `|q|` is far above `level` (the first
/// iterations of Sliding Frank–Wolfe, when `η = F*y/λ` has every sidelobe of every strong line above
/// 1): a grid maximum whose Bernstein bound stays below `relative` times the best off-support value
/// polished so far cannot reach the final floor either (that value only grows), so it is skipped
/// without changing the result; without it, every one of the thousands of sidelobes above `level`
/// would be polished at `O(|K|)` per Newton step.
pub(crate) fn scan_above(
    model: &Model,
    c: &[Complex64],
    support: &[f64],
    level: f64,
    relative: f64,
) -> Scan {
    let on_support: Vec<Complex64> = support.iter().map(|&t| model.eval(c, t)[0]).collect();
    let vals = model.grid(c);
    let m = vals.len();
    let g: Vec<f64> = vals.iter().map(|v| v.norm_sqr()).collect();
    let mut cands: Vec<(f64, usize)> = grid_maxima(&g).map(|j| (g[j], j)).collect();
    cands.sort_by(|a, b| b.0.total_cmp(&a.0));
    let gmax = cands.first().map_or(0.0, |c| c.0);
    let h = 1.0 / m as f64;
    let lh = model.half_width * h;
    // Bernstein bound (module docs). The grid has M ≥ 8N ≥ 16L points (Model::new), so
    // bound ≤ 2π²/256 < 0.08 and ‖q‖²∞ ≤ gmax/(1 − bound).
    let bound = 2.0 * PI * PI * lh * lh;
    let gq = gmax / (1.0 - bound);
    let slack = bound * gq;
    let mut sorted: Vec<f64> = support.iter().map(|&t| crate::model::wrap(t)).collect();
    sorted.sort_by(f64::total_cmp);
    let tol = 0.25 / model.band_len() as f64;
    let mut max_modulus = on_support.iter().map(|v| v.norm()).fold(0.0, f64::max);
    let mut best_off: Option<Peak> = None;
    let mut best_any: Option<Peak> = None;
    let mut peaks_off: Vec<Peak> = Vec::new();
    let level_sq = if level.is_finite() {
        level * level
    } else {
        f64::INFINITY
    };
    for &(gj, j) in &cands {
        let off_floor = best_off.map_or(f64::NEG_INFINITY, |p| p.modulus * p.modulus);
        let any_floor = max_modulus * max_modulus;
        let rel = relative * best_off.map_or(0.0, |p| p.modulus);
        let collect_floor = level_sq.max(rel * rel);
        if gj + slack < off_floor.min(any_floor).min(collect_floor) {
            break;
        }
        let p = polish(model, c, j as f64 * h, h);
        max_modulus = max_modulus.max(p.modulus);
        if best_any.is_none_or(|b: Peak| p.modulus > b.modulus) {
            best_any = Some(p);
        }
        if near(&sorted, p.position, tol) {
            continue;
        }
        if best_off.is_none_or(|b| p.modulus > b.modulus) {
            best_off = Some(p);
        }
        let duplicate = peaks_off
            .iter()
            .any(|q| wrap_distance(q.position, p.position) < tol);
        if p.modulus >= level && !duplicate {
            peaks_off.push(p);
        }
    }
    let rel = relative * best_off.map_or(0.0, |p| p.modulus);
    peaks_off.retain(|p| p.modulus >= rel);
    peaks_off.sort_by(|a, b| b.modulus.total_cmp(&a.modulus));
    Scan {
        max_modulus,
        best_off,
        best_any,
        on_support,
        peaks_off,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{atom, Domain, Measurements};

    fn model(fc: i64) -> Model {
        let idx: Vec<i64> = (-fc..=fc).collect();
        let y = vec![Complex64::new(1.0, 0.0); idx.len()];
        let d = Measurements::in_band(-fc, fc, &idx, &y, Domain::Fourier).unwrap();
        Model::new(&d, 16).unwrap()
    }

    /// The scan agrees with the reference certificate of DualPolynomial (which polishes every grid
    /// maximum) on a random-looking polynomial.
    #[test]
    fn scan_matches_reference_certificate() {
        let m = model(20);
        let c: Vec<Complex64> = (0..m.len())
            .map(|i| Complex64::new((i as f64 * 1.37).sin(), (i as f64 * 0.61).cos()) / 20.0)
            .collect();
        let support = [0.31, 0.77];
        let ours = scan(&m, &c, &support).certificate();
        let reference = m.dual_polynomial(&c).certificate(&support, 16);
        assert!(
            (ours.max_modulus - reference.max_modulus).abs() < 1e-12,
            "{ours:?} {reference:?}"
        );
        assert!((ours.max_off_support - reference.max_off_support).abs() < 1e-12);
        assert!((ours.min_on_support - reference.min_on_support).abs() < 1e-12);
    }

    /// Dirichlet kernel `q(t) = (1/N) Σ_k exp(i2πk(t − t0))`: maximum 1 at t0, largest sidelobe from the
    /// closed form `|sin(Nπx)/(N sin(πx))|` (textbook formula), checked on a dense grid.
    #[test]
    fn dirichlet_kernel_maximum_and_sidelobe() {
        let fc = 50i64;
        let m = model(fc);
        let n = (2 * fc + 1) as f64;
        let t0 = 0.4321;
        let c: Vec<Complex64> = m.ks.iter().map(|&k| atom(k, t0) / n).collect();
        let sc = scan(&m, &c, &[t0]);
        assert!((sc.max_modulus - 1.0).abs() < 1e-13);
        let dense = 1 << 20;
        let sidelobe = (1..dense)
            .map(|j| j as f64 / dense as f64)
            .filter(|&x| x.min(1.0 - x) >= 1.0 / n)
            .map(|x| ((n * PI * x).sin() / (n * (PI * x).sin())).abs())
            .fold(0.0, f64::max);
        assert!((sc.max_off_support() - sidelobe).abs() < 1e-9);
    }
}
