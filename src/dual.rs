//! The dual polynomial `q(t) = Σ_k c_k exp(i2πkt)`: evaluation, support detection, certificate checks.
//!
//! For TV-norm minimisation the optimal dual vector `c` certifies the recovered support: `|q(t)| ≤ 1`
//! everywhere and `q(τ_j) = sign(a_j)` on the support (Candès & Fernandez-Granda 2014, CPAM 67(6),
//! §1 and Prop. A.1). The support is where `1 − |q(t)|²`, a non-negative trigonometric polynomial, has
//! its (double) roots, i.e. the maxima of `|q|²` that reach 1. We locate the maxima of `|q|²` on an FFT
//! grid and polish each one with Newton steps on `d|q|²/dt = 0` against the exact polynomial.

use crate::kernels::peaks::{grid_maxima, polish_maximum, Peak};
use crate::model::{atom, wrap_distance};
use num_complex::Complex64;
use rustfft::FftPlanner;
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

/// A trigonometric polynomial with coefficients on a contiguous band `kmin..=kmin+len−1`.
#[derive(Debug, Clone, PartialEq)]
pub struct DualPolynomial {
    kmin: i64,
    coeffs: Vec<Complex64>,
}

/// How well a dual polynomial certifies a support.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Certificate {
    /// `max_t |q(t)|` over the torus (should be ≤ 1 up to solver tolerance).
    pub max_modulus: f64,
    /// Largest local maximum of `|q|` not at a support point (the certificate's margin is
    /// `1 − max_off_support`; a value close to 1 means the support is barely identified).
    pub max_off_support: f64,
    /// Smallest `|q|` at the support points (should be 1 up to solver tolerance).
    pub min_on_support: f64,
}

impl DualPolynomial {
    /// Coefficients `c_k` for `k = kmin, kmin+1, …`.
    pub fn new(kmin: i64, coeffs: Vec<Complex64>) -> Self {
        DualPolynomial { kmin, coeffs }
    }

    /// Lowest frequency index.
    pub fn kmin(&self) -> i64 {
        self.kmin
    }

    /// The coefficients, from `kmin` upward.
    pub fn coeffs(&self) -> &[Complex64] {
        &self.coeffs
    }

    /// `q(t)` by a direct sum (the reference evaluation).
    pub fn eval(&self, t: f64) -> Complex64 {
        self.coeffs
            .iter()
            .enumerate()
            .map(|(n, c)| c * atom(self.kmin + n as i64, t).conj())
            .sum()
    }

    /// `(q(t), q'(t), q''(t))` by direct sums.
    pub fn eval_derivatives(&self, t: f64) -> (Complex64, Complex64, Complex64) {
        let mut q = Complex64::new(0.0, 0.0);
        let mut d1 = q;
        let mut d2 = q;
        for (n, c) in self.coeffs.iter().enumerate() {
            let k = self.kmin + n as i64;
            let term = c * atom(k, t).conj();
            let w = Complex64::new(0.0, 2.0 * PI * k as f64);
            q += term;
            d1 += w * term;
            d2 += w * w * term;
        }
        (q, d1, d2)
    }

    /// `q(j/m)` for `j = 0..m` by one FFT of length `m` (`m` at least the number of coefficients).
    pub fn grid_values(&self, m: usize) -> Vec<Complex64> {
        let m = m.max(self.coeffs.len()).max(1);
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        for (n, c) in self.coeffs.iter().enumerate() {
            let k = self.kmin + n as i64;
            buf[k.rem_euclid(m as i64) as usize] += c;
        }
        // rustfft's inverse transform is the unnormalised sum Σ_k X_k exp(+i2πkj/m).
        FftPlanner::new().plan_fft_inverse(m).process(&mut buf);
        buf
    }

    /// Grid length used for peak searches: a power of two with at least `oversample` points per
    /// coefficient (common practice: 8–16 points per 1/N brackets every peak of `|q|`).
    pub fn search_grid_len(&self, oversample: usize) -> usize {
        (self.coeffs.len() * oversample.max(2)).next_power_of_two()
    }

    /// Every local maximum of `|q|` with `|q| ≥ floor`, found on a grid of `m` points and polished.
    pub(crate) fn peaks(&self, m: usize, floor: f64) -> Vec<Peak> {
        let vals = self.grid_values(m);
        let mag: Vec<f64> = vals.iter().map(|v| v.norm_sqr()).collect();
        self.polish_grid_maxima(&mag, floor)
    }

    /// The local maxima of `|q|` within `fraction` of its largest grid value, polished: the largest
    /// peaks only, at the cost of one grid evaluation and a few polishes. On a grid of at least 8
    /// points per coefficient the largest value between grid points exceeds the nearest grid value by
    /// well under 1 % (the curvature of `|q|` at a maximum is at most `(πN)²` times its value,
    /// Bernstein's inequality), so with `fraction ≤ 0.9` the largest peak is always among them.
    pub(crate) fn top_peaks(&self, m: usize, fraction: f64) -> Vec<Peak> {
        let vals = self.grid_values(m);
        let mag: Vec<f64> = vals.iter().map(|v| v.norm_sqr()).collect();
        let top = mag.iter().copied().fold(0.0, f64::max).sqrt();
        self.polish_grid_maxima(&mag, fraction * top)
    }

    /// Polish the grid maxima of `mag = |q|²` (on a uniform grid of the torus) with `|q| ≥ floor`.
    fn polish_grid_maxima(&self, mag: &[f64], floor: f64) -> Vec<Peak> {
        let m = mag.len();
        let h = 1.0 / m as f64;
        let mut peaks: Vec<Peak> = Vec::new();
        for j in grid_maxima(mag) {
            if mag[j].sqrt() >= floor * (1.0 - 1e-3) {
                let p = polish_maximum(|t| self.derivatives_at(t), j as f64 * h, h, self.width());
                if p.modulus >= floor {
                    peaks.push(p);
                }
            }
        }
        merge_peaks(peaks, 0.25 / self.coeffs.len().max(1) as f64)
    }

    /// Newton steps on `f(t) = |q(t)|²` towards the local maximum near `t0`, never leaving
    /// `[t0 − h, t0 + h]`; `f' = 2 Re(q̄ q')`, `f'' = 2(|q'|² + Re(q̄ q''))`. Returns the point with
    /// the largest `|q|` visited (the maximum itself once Newton has converged).
    pub fn polish_maximum(&self, t0: f64, h: f64) -> f64 {
        polish_maximum(|t| self.derivatives_at(t), t0, h, self.width()).position
    }

    /// `[q, q', q'']` at `t`, the form the shared polish takes.
    fn derivatives_at(&self, t: f64) -> [Complex64; 3] {
        let (q, d1, d2) = self.eval_derivatives(t);
        [q, d1, d2]
    }

    /// Largest `|k|` of the coefficients: the scale of the derivatives.
    fn width(&self) -> f64 {
        let kmax = self.kmin + self.coeffs.len() as i64 - 1;
        self.kmin.abs().max(kmax.abs()) as f64
    }

    /// Check the certificate for `support`: global maximum of `|q|`, largest maximum away from the
    /// support (peaks within `0.25/N` of a support point count as that point), and `|q|` on the support.
    pub fn certificate(&self, support: &[f64], oversample: usize) -> Certificate {
        let m = self.search_grid_len(oversample);
        self.certificate_from_peaks(&self.peaks(m, 0.0), support)
    }

    /// [`DualPolynomial::certificate`] from every local maximum of `|q|` already found
    /// (`self.peaks(m, 0.0)`), so that a caller who also needs the peaks evaluates the grid once.
    pub(crate) fn certificate_from_peaks(&self, peaks: &[Peak], support: &[f64]) -> Certificate {
        let tol = 0.25 / self.coeffs.len().max(1) as f64;
        let mut max_modulus: f64 = 0.0;
        let mut max_off: f64 = 0.0;
        for p in peaks {
            max_modulus = max_modulus.max(p.modulus);
            if !support.iter().any(|&s| wrap_distance(s, p.position) < tol) {
                max_off = max_off.max(p.modulus);
            }
        }
        let mut min_on = f64::INFINITY;
        for &s in support {
            let v = self.eval(s).norm();
            max_modulus = max_modulus.max(v);
            min_on = min_on.min(v);
        }
        Certificate {
            max_modulus,
            max_off_support: max_off,
            min_on_support: if support.is_empty() { 0.0 } else { min_on },
        }
    }
}

/// Merge peaks closer than `tol` (wrap-around), keeping the larger modulus; result sorted by position.
fn merge_peaks(mut peaks: Vec<Peak>, tol: f64) -> Vec<Peak> {
    peaks.sort_by(|a, b| b.modulus.total_cmp(&a.modulus));
    let mut kept: Vec<Peak> = Vec::new();
    for p in peaks {
        if !kept
            .iter()
            .any(|k| wrap_distance(k.position, p.position) < tol)
        {
            kept.push(p);
        }
    }
    kept.sort_by(|a, b| a.position.total_cmp(&b.position));
    kept
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample_poly() -> DualPolynomial {
        let coeffs: Vec<Complex64> = (0..9)
            .map(|n| Complex64::new((n as f64 * 0.7).sin(), (n as f64 * 1.3).cos()) / 9.0)
            .collect();
        DualPolynomial::new(-4, coeffs)
    }

    #[test]
    fn fft_grid_matches_direct_sums() {
        let q = sample_poly();
        let m = 64;
        let grid = q.grid_values(m);
        for (j, g) in grid.iter().enumerate() {
            let direct = q.eval(j as f64 / m as f64);
            assert!((direct - g).norm() < 1e-13, "j = {j}");
        }
    }

    #[test]
    fn derivatives_match_finite_differences() {
        let q = sample_poly();
        let t = 0.377;
        let h = 1e-6;
        let (_, d1, d2) = q.eval_derivatives(t);
        let fd1 = (q.eval(t + h) - q.eval(t - h)) / (2.0 * h);
        let fd2 = (q.eval(t + h) - 2.0 * q.eval(t) + q.eval(t - h)) / (h * h);
        assert!((d1 - fd1).norm() < 1e-6 * d1.norm().max(1.0));
        assert!((d2 - fd2).norm() < 1e-2 * d2.norm().max(1.0));
    }

    #[test]
    fn dirichlet_kernel_peaks_at_its_centre() {
        // q(t) = (1/N) Σ_k exp(i2πk(t − t0)) has a single maximum |q| = 1 at t0 (the Dirichlet kernel).
        let fc = 6i64;
        let t0 = 0.3141;
        let coeffs: Vec<Complex64> = (-fc..=fc)
            .map(|k| atom(k, t0) / (2 * fc + 1) as f64)
            .collect();
        let q = DualPolynomial::new(-fc, coeffs);
        let peaks = q.peaks(q.search_grid_len(16), 0.99);
        assert_eq!(peaks.len(), 1);
        assert!(wrap_distance(peaks[0].position, t0) < 1e-12);
        assert!((peaks[0].modulus - 1.0).abs() < 1e-12);
        let cert = q.certificate(&[t0], 16);
        assert!((cert.max_modulus - 1.0).abs() < 1e-12);
        // Largest sidelobe, from the closed form |sin(Nπx) / (N sin(πx))| of the Dirichlet kernel
        // (textbook formula) sampled densely outside the main lobe |x| < 1/N.
        let n = 13.0;
        let dense = 1 << 18;
        let sidelobe = (1..dense)
            .map(|j| j as f64 / dense as f64)
            .filter(|&x| x.min(1.0 - x) >= 1.0 / n)
            .map(|x| ((n * PI * x).sin() / (n * (PI * x).sin())).abs())
            .fold(0.0, f64::max);
        assert!((cert.max_off_support - sidelobe).abs() < 1e-9);
    }
}
