//! The dual vector polynomial `Q(f) = a(f)ᴴV` of the group atomic norm and its scan over the torus.
//!
//! Only the squared norm `g(f) = ‖Q(f)‖₂² = Σ_l |q_l(f)|²` is ever needed, and it is one real
//! trigonometric polynomial of degree `D = N − 1` (the band's span):
//! `g(f) = c₀ + 2 Re Σ_{d=1}^{D} c_d e^{i2πdf}`, `c_d = Σ_l Σ_k v_{k+d,l} v̄_{k,l}`, the summed
//! autocorrelation of the columns (the correlogram form of the periodogram, column by column; e.g.
//! Stoica & Moses 2005, *Spectral Analysis of Signals*, ch. 2 — recalled). The `c_d` are computed once (one zero-padded FFT per
//! column, `O(r·N log N)`); after that a grid scan is one FFT and an evaluation of `g, g', g''` costs
//! `O(N)` instead of `O(N·r)`: the cost of the certificate no longer grows with the rank `r`.
//! Every grid maximum that can hide the global maximum is polished by Newton steps on `g' = 0`.
//!
//! Which grid maxima can be skipped follows from Bernstein's inequality as in
//! [`crate::kernels::peaks`]: `|g''| ≤ (2πD)²‖g‖∞` (Bernstein 1912; e.g. Zygmund, *Trigonometric
//! Series*, ch. X), and a maximum lies within `h/2` of a grid point, which therefore has
//! `g ≥ g* − ½(πDh)²‖g‖∞`.

use crate::kernels::peaks::{grid_maxima, Peak};
use crate::model::wrap_distance;
use num_complex::Complex64;
use std::f64::consts::PI;

/// `Q(f) = a(f)ᴴV` (Li & Chi 2016, IEEE TSP 64(5), the dual of the group atomic norm:
/// `‖X‖*_A = sup_f ‖a(f)ᴴV‖₂`), held as the autocorrelation `c_d`, `d = 0..N−1`, of its columns
/// (module docs).
#[derive(Debug, Clone)]
pub(crate) struct VectorPolynomial {
    /// `c_0, …, c_{N−1}` (`c_{−d} = c̄_d`).
    autocorrelation: Vec<Complex64>,
}

/// How well a dual vector polynomial certifies a support (the group analogue of
/// [`crate::dual::Certificate`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct VectorCertificate {
    /// `sup_f ‖Q(f)‖₂`.
    pub max_norm: f64,
    /// Largest local maximum of `‖Q‖₂` farther than `0.25/N` from every support point.
    pub max_off_support: f64,
}

impl VectorPolynomial {
    /// Columns of `v` (`N × r`, band order; the lowest index drops out of `‖Q‖₂`, so `_kmin` is
    /// kept only for the callers' symmetry with [`crate::dual::DualPolynomial`]).
    pub fn new(_kmin: i64, v: &[Vec<Complex64>]) -> Self {
        let n = v.first().map_or(1, |c| c.len()).max(1);
        // Zero padding to at least 2N − 1 makes the circular autocorrelation the linear one.
        let m = (2 * n).next_power_of_two();
        let mut planner = rustfft::FftPlanner::new();
        let forward = planner.plan_fft_forward(m);
        let inverse = planner.plan_fft_inverse(m);
        let mut power = vec![Complex64::new(0.0, 0.0); m];
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        for col in v {
            buf.iter_mut().for_each(|b| *b = Complex64::new(0.0, 0.0));
            buf[..col.len()].copy_from_slice(col);
            forward.process(&mut buf);
            for (p, b) in power.iter_mut().zip(&buf) {
                *p += b.norm_sqr();
            }
        }
        inverse.process(&mut power);
        // (1/m) Σ_j |V̂_j|² e^{+i2πjd/m} = Σ_k v_{k+d} v̄_k (rustfft: forward e^{−i}, inverse e^{+i},
        // both unnormalised).
        let scale = 1.0 / m as f64;
        let mut autocorrelation: Vec<Complex64> = power[..n].iter().map(|c| c * scale).collect();
        // c₀ = ‖V‖²_F is real.
        autocorrelation[0] = Complex64::new(autocorrelation[0].re, 0.0);
        VectorPolynomial { autocorrelation }
    }

    /// Band length `N`.
    fn band_len(&self) -> usize {
        self.autocorrelation.len().max(1)
    }

    /// `(g, g', g'')` at `f`, `g = ‖Q(f)‖²` (module docs).
    fn eval_sq(&self, f: f64) -> [f64; 3] {
        let c = &self.autocorrelation;
        let Some(c0) = c.first() else {
            return [0.0; 3];
        };
        let step = Complex64::from_polar(1.0, 2.0 * PI * f);
        let mut e = step;
        let (mut s0, mut s1, mut s2) = (0.0, 0.0, 0.0);
        for (d, cd) in c.iter().enumerate().skip(1) {
            // Re-anchor every 64 terms so the recurrence's rounding does not grow.
            if d % 64 == 0 {
                e = Complex64::from_polar(1.0, 2.0 * PI * f * d as f64);
            }
            let w = 2.0 * PI * d as f64;
            let t = cd * e;
            s0 += t.re;
            // d/df Re(c e^{iwf}) = −w Im(c e^{iwf}); d²/df² = −w² Re(c e^{iwf}).
            s1 -= w * t.im;
            s2 -= w * w * t.re;
            e *= step;
        }
        [c0.re + 2.0 * s0, 2.0 * s1, 2.0 * s2]
    }

    /// Newton steps on `g' = 0` from `t0`, staying within `h` of it; the visited point with the
    /// largest `g`.
    fn polish(&self, t0: f64, h: f64) -> Peak {
        let width = self.band_len().max(1) as f64;
        let mut t = t0;
        let mut best = (t0, self.eval_sq(t0)[0]);
        for _ in 0..40 {
            let [g, g1, g2] = self.eval_sq(t);
            if g > best.1 {
                best = (t, g);
            }
            if g2 >= 0.0 {
                break;
            }
            let step = -g1 / g2;
            if (t + step - t0).abs() > h {
                break;
            }
            t += step;
            if step.abs() * width < 1e-15 {
                let g = self.eval_sq(t)[0];
                if g > best.1 {
                    best = (t, g);
                }
                break;
            }
        }
        Peak {
            position: crate::model::wrap(best.0),
            modulus: best.1.max(0.0).sqrt(),
        }
    }

    /// Every local maximum of `‖Q‖₂` that can matter for the global maximum or the support (grid
    /// values within the Bernstein margin of the best, or above `floor`), polished, largest first.
    pub fn peaks(&self, oversample: usize, floor: f64) -> Vec<Peak> {
        let n = self.band_len();
        let m = (n * oversample.max(8)).next_power_of_two();
        // One FFT of the autocorrelation (m ≥ 8N > 2N − 1: no aliasing); rustfft's inverse transform
        // is the unnormalised sum Σ_d c_d exp(+i2πdj/m), as in [`crate::dual::DualPolynomial`].
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        for (d, cd) in self.autocorrelation.iter().enumerate() {
            buf[d] += cd;
            if d > 0 {
                buf[m - d] += cd.conj();
            }
        }
        rustfft::FftPlanner::new()
            .plan_fft_inverse(m)
            .process(&mut buf);
        let g: Vec<f64> = buf.iter().map(|v| v.re.max(0.0)).collect();
        let h = 1.0 / m as f64;
        let gmax = g.iter().copied().fold(0.0, f64::max);
        let degree = n.saturating_sub(1) as f64;
        let slack = 0.5 * (PI * degree * h).powi(2) * gmax;
        let level = (gmax - 2.0 * slack).min(floor * floor);
        let mut peaks: Vec<Peak> = grid_maxima(&g)
            .filter(|&j| g[j] >= level)
            .map(|j| self.polish(j as f64 * h, h))
            .collect();
        peaks.sort_by(|a, b| b.modulus.total_cmp(&a.modulus));
        peaks
    }

    /// `sup_f ‖Q(f)‖₂` alone: the scan of [`VectorPolynomial::peaks`] on a grid eight times finer
    /// (oversampling 64), where the Bernstein margin is 64 times narrower, so that only the few grid
    /// maxima that can hold the supremum are polished (the Monte Carlo levels call this hundreds of
    /// times on noise, whose `‖Q‖` is nearly flat when there are many snapshots).
    pub fn sup(&self) -> f64 {
        self.peaks(64, f64::INFINITY)
            .first()
            .map_or(0.0, |p| p.modulus)
    }

    /// The certificate of `support` from `peaks` (as returned by [`VectorPolynomial::peaks`]).
    pub fn certificate(&self, peaks: &[Peak], support: &[f64]) -> VectorCertificate {
        let n = self.band_len() as f64;
        let max_norm = peaks.iter().map(|p| p.modulus).fold(0.0, f64::max);
        let max_off_support = peaks
            .iter()
            .filter(|p| {
                support
                    .iter()
                    .all(|&s| wrap_distance(s, p.position) > 0.25 / n)
            })
            .map(|p| p.modulus)
            .fold(0.0, f64::max);
        VectorCertificate {
            max_norm,
            max_off_support,
        }
    }
}

#[cfg(test)]
#[path = "certificate_tests.rs"]
mod tests;
