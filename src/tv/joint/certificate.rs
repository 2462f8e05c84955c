//! The dual vector polynomial `Q(f) = a(f)ᴴV` of the group atomic norm and its scan over the torus:
//! `g(f) = ‖Q(f)‖₂² = Σ_l |q_l(f)|²` on an FFT grid (one FFT per column), every grid maximum that can
//! hide the global maximum polished by Newton steps on `g' = 0`.
//!
//! Which grid maxima can be skipped follows from Bernstein's inequality as in
//! [`crate::kernels::peaks`]: `g` is a real trigonometric polynomial of degree `D = N − 1` (the band's
//! span), so `|g''| ≤ (2πD)²‖g‖∞` (Bernstein 1912; e.g. Zygmund, *Trigonometric Series*, ch. X), and a
//! maximum lies within `h/2` of a grid point, which therefore has `g ≥ g* − ½(πDh)²‖g‖∞`.

use crate::dual::DualPolynomial;
use crate::kernels::peaks::{grid_maxima, Peak};
use crate::model::wrap_distance;
use num_complex::Complex64;
use std::f64::consts::PI;

/// `Q(f) = a(f)ᴴV`, one [`DualPolynomial`] per column of `V` (Li & Chi 2016, IEEE TSP 64(5), the dual
/// of the group atomic norm: `‖X‖*_A = sup_f ‖a(f)ᴴV‖₂`).
#[derive(Debug, Clone)]
pub(crate) struct VectorPolynomial {
    /// One polynomial per column.
    pub columns: Vec<DualPolynomial>,
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
    /// Columns of `v` (`N × r`, band order from `kmin`).
    pub fn new(kmin: i64, v: &[Vec<Complex64>]) -> Self {
        VectorPolynomial {
            columns: v
                .iter()
                .map(|c| DualPolynomial::new(kmin, c.clone()))
                .collect(),
        }
    }

    /// Band length `N`.
    fn band_len(&self) -> usize {
        self.columns.first().map_or(1, |c| c.coeffs().len())
    }

    /// `(g, g', g'')` at `f`, `g = ‖Q(f)‖²`: the exponentials `e^{i2πkf}` once, then every column.
    fn eval_sq(&self, f: f64) -> [f64; 3] {
        let Some(first) = self.columns.first() else {
            return [0.0; 3];
        };
        let kmin = first.kmin();
        let n = first.coeffs().len();
        let step = Complex64::from_polar(1.0, 2.0 * PI * f);
        let mut e = Complex64::from_polar(1.0, 2.0 * PI * f * kmin as f64);
        let mut terms = Vec::with_capacity(n);
        for i in 0..n {
            // Re-anchor every 64 terms so the recurrence's rounding does not grow.
            if i % 64 == 0 {
                e = Complex64::from_polar(1.0, 2.0 * PI * f * (kmin + i as i64) as f64);
            }
            terms.push((e, 2.0 * PI * (kmin + i as i64) as f64));
            e *= step;
        }
        let mut out = [0.0; 3];
        let i = Complex64::new(0.0, 1.0);
        for c in &self.columns {
            let (mut q, mut d1, mut d2) = (
                Complex64::new(0.0, 0.0),
                Complex64::new(0.0, 0.0),
                Complex64::new(0.0, 0.0),
            );
            for (&ck, &(ek, w)) in c.coeffs().iter().zip(&terms) {
                let t = ck * ek;
                q += t;
                d1 += t * w;
                d2 -= t * (w * w);
            }
            d1 *= i;
            out[0] += q.norm_sqr();
            out[1] += 2.0 * (q.conj() * d1).re;
            out[2] += 2.0 * (d1.norm_sqr() + (q.conj() * d2).re);
        }
        out
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
        let mut g = vec![0.0; m];
        // One plan for every column (rustfft's inverse transform is the unnormalised sum
        // Σ_k c_k exp(+i2πkj/m), as in [`DualPolynomial::grid_values`]).
        let fft = rustfft::FftPlanner::new().plan_fft_inverse(m);
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        for c in &self.columns {
            buf.iter_mut().for_each(|b| *b = Complex64::new(0.0, 0.0));
            for (i, v) in c.coeffs().iter().enumerate() {
                let k = c.kmin() + i as i64;
                buf[k.rem_euclid(m as i64) as usize] += v;
            }
            fft.process(&mut buf);
            for (gj, v) in g.iter_mut().zip(&buf) {
                *gj += v.norm_sqr();
            }
        }
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
