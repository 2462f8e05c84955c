//! The shared numerical kernel: the data on a centred, normalised band, atom matrices, Gram sums, FFT
//! grid evaluation of trigonometric polynomials and their derivatives at single points.
//!
//! **Centring.** A contiguous band `kmin..=kmax` is shifted to `k' = k − k_c` with `k_c` its centre, so
//! that `|k'| ≤ L ≈ N/2`. The data do not change (`y_k` is stored at `k'`); amplitudes rotate,
//! `a'_j = a_j exp(−i2πk_cτ_j)`, which leaves `|a_j|`, the TV norm, every residual and `|q(t)|`
//! unchanged. Derivatives in `τ` then carry factors `|k'| ≤ L` instead of up to `N`, which keeps the
//! Newton systems of the sliding step well scaled for one-sided bands (time samples, `k = −n`).
//!
//! **Normalisation.** Values are divided by `‖y‖₂`, so that every tolerance of the solver is relative.
//!
//! **Exponentials.** `exp(i2πkt)` for all measured `k` is computed by the recurrence
//! `z_{k+1} = z_k · exp(i2πt)`, re-anchored on the exact value (phase `kt` reduced modulo 1,
//! [`crate::model::atom`]) every [`ANCHOR`] terms and after every gap in `K`: the rounding error stays
//! below about `ANCHOR · ε_mach`.

use crate::dual::DualPolynomial;
use crate::error::{Error, Result};
use crate::model::{atom, wrap, Measurements, Spike, Spikes};
use faer::linalg::matmul::matmul_with_conj;
use faer::{c64, Accum, Conj, Mat, MatRef, Par};
use num_complex::Complex64;
use rayon::prelude::*;
use rustfft::{Fft, FftPlanner};
use std::f64::consts::PI;
use std::fmt;
use std::sync::Arc;

/// Largest FFT grid (points) a model may plan: 2^26 complex values, 1 GiB.
pub(crate) const MAX_GRID: usize = 1 << 26;

/// Supports from this many spikes on take their Gram entries in closed form on a contiguous band
/// ([`Model::grams`]); below it the `O(s²|K|)` products are cheap and kept.
pub(crate) const CLOSED_FORM_GRAM: usize = 16;

/// Re-anchoring period of the exponential recurrence.
pub(crate) const ANCHOR: usize = 32;

/// `exp(+i2πkt)`, with the phase reduced modulo 1 first.
#[inline]
pub(crate) fn cis(k: i64, t: f64) -> Complex64 {
    atom(k, t).conj()
}

/// Fill `out[i] = exp(i2πk_i t)` for the ascending indices `ks` by the anchored recurrence of the
/// module docs (rounding error below about `ANCHOR · ε_mach`).
pub(crate) fn exp_sweep(ks: &[i64], t: f64, out: &mut [Complex64]) {
    let w = cis(1, t);
    let mut z = Complex64::new(1.0, 0.0);
    let mut prev = i64::MIN;
    for (i, (&k, o)) in ks.iter().zip(out.iter_mut()).enumerate() {
        if i % ANCHOR == 0 || prev.checked_add(1) != Some(k) {
            z = cis(k, t);
        } else {
            z *= w;
        }
        *o = z;
        prev = k;
    }
}

/// `y_k − Σ_j a_j exp(−i2πk τ_j)` on the ascending indices `ks`, streamed: `O(|K|)` memory, the
/// indices cut into chunks handled in parallel (rayon), each entry summed over the spikes in order
/// (the result does not depend on the threads).
pub(crate) fn residual_on(
    ks: &[i64],
    y: &[Complex64],
    tau: &[f64],
    amp: &[Complex64],
) -> Vec<Complex64> {
    const CHUNK: usize = 1024;
    let mut r = y.to_vec();
    let chunk = |(rc, kc): (&mut [Complex64], &[i64])| {
        let mut col = vec![Complex64::new(0.0, 0.0); kc.len()];
        for (&t, a) in tau.iter().zip(amp) {
            exp_sweep(kc, t, &mut col);
            for (rk, z) in rc.iter_mut().zip(&col) {
                *rk -= z.conj() * a;
            }
        }
    };
    if parallel_pays(tau.len() * ks.len()) {
        r.par_chunks_mut(CHUNK)
            .zip(ks.par_chunks(CHUNK))
            .for_each(chunk);
    } else {
        r.chunks_mut(CHUNK).zip(ks.chunks(CHUNK)).for_each(chunk);
    }
    r
}

/// Work (complex multiply-adds) from which a product is spread over the cores: below it the
/// hand-off to rayon's workers costs more than it saves, and on a busy machine a wake-up can take
/// milliseconds.
pub(crate) const PARALLEL_WORK: usize = 1 << 21;

/// True when `work` multiply-adds are worth spreading over the cores ([`PARALLEL_WORK`]).
pub(crate) fn parallel_pays(work: usize) -> bool {
    work >= PARALLEL_WORK
}

/// `[D_0(t), D_1(t), D_2(t)]`, `D_p(t) = Σ_{k=a}^{b} k^p exp(i2πkt)`, for the contiguous band `a..=b`
/// in `O(1)` (the closed form of [`Model::kernel_sums`], which calls it on the centred band; the
/// refinement calls it on the data's own band).
pub(crate) fn dirichlet_sums(a: i64, b: i64, t: f64) -> [Complex64; 3] {
    let (ai, bi) = (a, b);
    let a = a as f64;
    let b = b as f64;
    let n = b - a + 1.0;
    let c = 0.5 * (a + b);
    let tr = t - t.round();
    let u = PI * tr;
    if (n * u).abs() < 0.1 {
        if tr == 0.0 {
            // Σk = nc, Σk² = Σ(k − c)² + nc² = n(n² − 1)/12 + nc².
            return [
                Complex64::new(n, 0.0),
                Complex64::new(n * c, 0.0),
                Complex64::new(n * (n * n - 1.0) / 12.0 + n * c * c, 0.0),
            ];
        }
        let zero = Complex64::new(0.0, 0.0);
        let mut out = [zero; 3];
        let ks: Vec<i64> = (ai..=bi).collect();
        let mut col = vec![zero; ks.len()];
        exp_sweep(&ks, tr, &mut col);
        for (z, &k) in col.iter().zip(&ks) {
            let k = k as f64;
            out[0] += z;
            out[1] += z * k;
            out[2] += z * (k * k);
        }
        return out;
    }
    // sin(nu) with the phase n·t reduced modulo 2 first (n·t is large for long bands).
    let nt = n * tr;
    let f = (PI * (nt - 2.0 * (0.5 * nt).round())).sin();
    let fc = (PI * (nt - 2.0 * (0.5 * nt).round())).cos();
    let (su, cu) = u.sin_cos();
    let s0 = f / su;
    let s1u = (n * fc - s0 * cu) / su;
    let s2u = (1.0 - n * n) * s0 - 2.0 * (cu / su) * s1u;
    // d/dx = ½ d/du.
    let s1 = 0.5 * s1u;
    let s2 = 0.25 * s2u;
    // e^{icx} = exp(iπ(a + b)t), a + b an integer: phase reduced modulo 2.
    let ab = a + b;
    let ph = ab * tr;
    let w = Complex64::from_polar(1.0, PI * (ph - 2.0 * (0.5 * ph).round()));
    let i = Complex64::new(0.0, 1.0);
    [
        w * s0,
        w * (c * s0 - i * s1),
        w * (c * c * s0 - 2.0 * i * c * s1 - s2),
    ]
}

/// Measurements on the centred band, normalised to unit norm, with a planned FFT for grid evaluation.
#[derive(Clone)]
pub(crate) struct Model {
    /// Centred measured indices `k' = k − k_c`, ascending.
    pub ks: Vec<i64>,
    /// The same indices as floating-point numbers.
    pub kf: Vec<f64>,
    /// Normalised values `y_k / ‖y‖` (all zero for zero data).
    pub y: Vec<Complex64>,
    /// `‖y‖₂` (1 for zero data, so that nothing divides by zero).
    pub scale: f64,
    /// Whether the data are identically zero.
    pub zero_data: bool,
    /// The band centre `k_c`.
    pub centre: i64,
    /// Original band `kmin..=kmax`.
    pub kmin: i64,
    /// Original band end.
    pub kmax: i64,
    /// `L = max |k'|` over the band: Bernstein's inequality bounds `‖q'‖∞ ≤ 2πL‖q‖∞`.
    pub half_width: f64,
    grid_len: usize,
    fft: Arc<dyn Fft<f64>>,
}

impl fmt::Debug for Model {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("Model")
            .field("measured", &self.ks.len())
            .field("band", &(self.kmin, self.kmax))
            .field("grid_len", &self.grid_len)
            .finish()
    }
}

impl Model {
    /// Centre and normalise `data`; plan an inverse FFT of `next_pow2(oversample · N)` points
    /// (`oversample` at least 8: the screening bound of [`super::certificate`] needs it).
    ///
    /// # Errors
    /// [`Error::TooLarge`] when the grid would exceed [`MAX_GRID`] points (a band so long that its
    /// FFT grid would not fit in memory).
    pub fn new(data: &Measurements, oversample: usize) -> Result<Self> {
        let kmin = data.kmin();
        let kmax = data.kmax();
        // kmax > kmin is guaranteed by Measurements; the floor keeps k_c inside the band.
        let centre = kmin + (kmax - kmin) / 2;
        let half_width = (centre - kmin).max(kmax - centre) as f64;
        let ks: Vec<i64> = data.indices().iter().map(|&k| k - centre).collect();
        let kf: Vec<f64> = ks.iter().map(|&k| k as f64).collect();
        let norm = data.norm();
        let zero_data = norm == 0.0;
        let scale = if zero_data { 1.0 } else { norm };
        let y: Vec<Complex64> = data.values().iter().map(|v| v / scale).collect();
        let grid_len = data
            .band_len()
            .checked_mul(oversample.max(8))
            .filter(|&g| g <= MAX_GRID)
            .ok_or_else(|| Error::TooLarge {
                method: "continuous solver",
                what: format!("the FFT grid of a band of {} coefficients", data.band_len()),
                needed: format!("more than {MAX_GRID} points"),
                limit: format!("{MAX_GRID} points"),
                advice: "lower grid_oversample, split the record, or use 'esprit', which needs no \
                         grid"
                    .into(),
            })?
            .next_power_of_two();
        let fft = FftPlanner::new().plan_fft_inverse(grid_len);
        Ok(Model {
            ks,
            kf,
            y,
            scale,
            zero_data,
            centre,
            kmin,
            kmax,
            half_width,
            grid_len,
            fft,
        })
    }

    /// Number of measured coefficients `|K|`.
    pub fn len(&self) -> usize {
        self.ks.len()
    }

    /// Band length `N`.
    pub fn band_len(&self) -> usize {
        (self.kmax - self.kmin + 1) as usize
    }

    /// Fill `out[i] = exp(i2πk'_i t)` for every measured index (see the module docs for accuracy).
    pub fn exp_column(&self, t: f64, out: &mut [Complex64]) {
        exp_sweep(&self.ks, t, out);
    }

    /// The atom matrix `E_{kj} = exp(i2πk'τ_j)` (`|K| × s`); the forward operator is `Φ = conj(E)`.
    pub fn atoms(&self, tau: &[f64]) -> Mat<c64> {
        let m = self.len();
        let mut e = Mat::<c64>::zeros(m, tau.len());
        let mut col = vec![Complex64::new(0.0, 0.0); m];
        for (j, &t) in tau.iter().enumerate() {
            self.exp_column(t, &mut col);
            for (i, v) in col.iter().enumerate() {
                e[(i, j)] = *v;
            }
        }
        e
    }

    /// Model values `(Φa)_k = Σ_j a_j exp(−i2πk'τ_j)` from the atom matrix.
    pub fn forward(&self, e: &Mat<c64>, amp: &[Complex64]) -> Vec<Complex64> {
        let m = self.len();
        let mut out = vec![Complex64::new(0.0, 0.0); m];
        for (j, a) in amp.iter().enumerate() {
            for (i, o) in out.iter_mut().enumerate() {
                *o += e[(i, j)].conj() * a;
            }
        }
        out
    }

    /// Residual `y − Φa`.
    pub fn residual(&self, e: &Mat<c64>, amp: &[Complex64]) -> Vec<Complex64> {
        let model = self.forward(e, amp);
        self.y.iter().zip(model).map(|(y, m)| y - m).collect()
    }

    /// Residual `y − Φa` at positions `tau`, streamed: one exponential sweep per spike, `O(|K|)`
    /// memory (no atom matrix).
    pub fn residual_at(&self, tau: &[f64], amp: &[Complex64]) -> Vec<Complex64> {
        residual_on(&self.ks, &self.y, tau, amp)
    }

    /// [`Model::correlate`] at positions `tau`, streamed (no atom matrix).
    pub fn correlate_at(&self, tau: &[f64], w: &[Complex64]) -> [Vec<Complex64>; 3] {
        let zero = Complex64::new(0.0, 0.0);
        let s = tau.len();
        let mut out = [vec![zero; s], vec![zero; s], vec![zero; s]];
        let d = Complex64::new(0.0, 2.0 * PI);
        // One spike per task (each sum in a fixed order: the result does not depend on the threads).
        let one = |col: &mut Vec<Complex64>, &t: &f64| {
            self.exp_column(t, col);
            let (mut p0, mut p1, mut p2) = (zero, zero, zero);
            for ((z, wk), &k) in col.iter().zip(w).zip(&self.kf) {
                let v = wk * z;
                p0 += v;
                p1 += v * k;
                p2 += v * (k * k);
            }
            [p0, d * p1, d * d * p2]
        };
        let sums: Vec<[Complex64; 3]> = if parallel_pays(s * self.len()) {
            tau.par_iter()
                .map_init(|| vec![zero; self.len()], one)
                .collect()
        } else {
            let mut col = vec![zero; self.len()];
            tau.iter().map(|t| one(&mut col, t)).collect()
        };
        for (j, v) in sums.into_iter().enumerate() {
            out[0][j] = v[0];
            out[1][j] = v[1];
            out[2][j] = v[2];
        }
        out
    }

    /// True when [`Model::grams`] takes its entries in closed form for `s` spikes (then
    /// [`Model::closed_grams`] needs no atom matrix).
    pub fn grams_closed_form(&self, s: usize) -> bool {
        self.is_contiguous() && s >= CLOSED_FORM_GRAM
    }

    /// The Gram sums of [`Model::grams`] in closed form ([`Model::kernel_sums`], `O(s²)`); only for a
    /// contiguous band.
    pub fn closed_grams(&self, tau: &[f64], orders: usize) -> Vec<Mat<c64>> {
        let s = tau.len();
        let orders = orders.min(3);
        let mut g: Vec<Mat<c64>> = (0..orders).map(|_| Mat::<c64>::zeros(s, s)).collect();
        let row = |j: usize| -> Vec<[Complex64; 3]> {
            (j..s).map(|l| self.kernel_sums(tau[l] - tau[j])).collect()
        };
        // A kernel sum costs a few dozen multiply-adds.
        let rows: Vec<Vec<[Complex64; 3]>> = if parallel_pays(16 * s * s) {
            (0..s).into_par_iter().map(row).collect()
        } else {
            (0..s).map(row).collect()
        };
        for (j, row) in rows.iter().enumerate() {
            for (l, d) in (j..s).zip(row) {
                for (p, gp) in g.iter_mut().enumerate() {
                    gp[(j, l)] = d[p];
                    // D_p(−t) = conj(D_p(t)) (k'^p real).
                    gp[(l, j)] = d[p].conj();
                }
            }
        }
        g
    }

    /// `Σ_k w_k (i2πk')^p E_{kj}` for `p = 0, 1, 2` and every column `j`: the values and first two
    /// derivatives of the polynomial `Σ_k w_k exp(i2πk't)` at the atoms' positions.
    pub fn correlate(&self, e: &Mat<c64>, w: &[Complex64]) -> [Vec<Complex64>; 3] {
        let s = e.ncols();
        let mut out = [
            vec![Complex64::new(0.0, 0.0); s],
            vec![Complex64::new(0.0, 0.0); s],
            vec![Complex64::new(0.0, 0.0); s],
        ];
        for j in 0..s {
            let zero = Complex64::new(0.0, 0.0);
            let (mut p0, mut p1, mut p2) = (zero, zero, zero);
            for (i, (&k, wk)) in self.kf.iter().zip(w).enumerate() {
                let t = wk * e[(i, j)];
                p0 += t;
                p1 += t * k;
                p2 += t * (k * k);
            }
            let d = Complex64::new(0.0, 2.0 * PI);
            out[0][j] = p0;
            out[1][j] = d * p1;
            out[2][j] = d * d * p2;
        }
        out
    }

    /// Gram-type sums `G_p = Eᴴ diag(k'^p) E` for `p = 0, …, orders − 1` (`orders` ≤ 3):
    /// `(G_p)_{jl} = D_p(τ_l − τ_j)` with `D_p(t) = Σ_{k∈K} k'^p exp(i2πk't)`; `e` is the atom
    /// matrix of `tau`.
    ///
    /// A contiguous band with at least [`CLOSED_FORM_GRAM`] spikes takes the entries in closed form
    /// ([`Model::kernel_sums`], `O(s²)`), a measured set with gaps or a small support the products
    /// `EᴴE` (`O(s²|K|)`).
    pub fn grams(&self, tau: &[f64], e: &Mat<c64>, orders: usize) -> Vec<Mat<c64>> {
        let (m, s) = (e.nrows(), e.ncols());
        let orders = orders.min(3);
        if self.grams_closed_form(s) {
            return self.closed_grams(tau, orders);
        }
        let product = |w: MatRef<'_, c64>| {
            let mut g = Mat::<c64>::zeros(s, s);
            matmul_with_conj(
                g.as_mut(),
                Accum::Replace,
                e.transpose(),
                Conj::Yes,
                w,
                Conj::No,
                c64::new(1.0, 0.0),
                Par::Seq,
            );
            g
        };
        (0..orders)
            .map(|p| match p {
                0 => product(e.as_ref()),
                1 => product(Mat::<c64>::from_fn(m, s, |i, j| e[(i, j)] * self.kf[i]).as_ref()),
                _ => product(
                    Mat::<c64>::from_fn(m, s, |i, j| e[(i, j)] * (self.kf[i] * self.kf[i]))
                        .as_ref(),
                ),
            })
            .collect()
    }

    /// True when `K` is the whole band `kmin..=kmax` (no gaps).
    pub fn is_contiguous(&self) -> bool {
        self.len() == self.band_len()
    }

    /// `[D_0(t), D_1(t), D_2(t)]`, `D_p(t) = Σ_{k'=a}^{b} k'^p exp(i2πk't)`, for a contiguous band
    /// `a..=b` in `O(1)`.
    ///
    /// With `x = 2πt`, `c = (a + b)/2`, `n = b − a + 1` and the Dirichlet kernel
    /// `S(x) = sin(nx/2)/sin(x/2)` (the geometric sum; e.g. Zygmund, *Trigonometric Series*, ch. II),
    /// `D_0 = e^{icx}S`, and since `D_1 = −i dD_0/dx`, `D_2 = −d²D_0/dx²`:
    /// `D_1 = e^{icx}(cS − iS')`, `D_2 = e^{icx}(c²S − 2icS' − S'')`, where, with `u = x/2`,
    /// `dS/du = (n cos nu − S cos u)/sin u` and `d²S/du² = (1 − n²)S − 2 cot(u) dS/du` (from
    /// `f = sin nu`, `g = sin u`, `f'' = −n²f`, `g'' = −g` in the quotient rule; derived for this
    /// crate, checked against direct sums in the tests). The quotients lose accuracy as `nu → 0`
    /// (relative error about `3ε/(nu)²`), so for `|nu| < 0.1` the sums are taken directly
    /// (`O(|K|)`; only spikes closer than `0.03/N` get there), and at `t = 0` exactly.
    /// Only called for contiguous bands.
    pub fn kernel_sums(&self, t: f64) -> [Complex64; 3] {
        dirichlet_sums(self.ks[0], self.ks[self.ks.len() - 1], t)
    }

    /// `(q(t), q'(t), q''(t))` for `q(t) = Σ_k c_k exp(i2πk't)`, by direct sums in `O(|K|)`.
    pub fn eval(&self, c: &[Complex64], t: f64) -> [Complex64; 3] {
        let w = cis(1, t);
        let mut z = Complex64::new(1.0, 0.0);
        let mut prev = i64::MIN;
        let (mut q0, mut q1, mut q2) = (
            Complex64::new(0.0, 0.0),
            Complex64::new(0.0, 0.0),
            Complex64::new(0.0, 0.0),
        );
        for (i, ((&k, &kf), ck)) in self.ks.iter().zip(&self.kf).zip(c).enumerate() {
            if i % ANCHOR == 0 || prev.checked_add(1) != Some(k) {
                z = cis(k, t);
            } else {
                z *= w;
            }
            prev = k;
            let term = ck * z;
            q0 += term;
            q1 += term * kf;
            q2 += term * (kf * kf);
        }
        let d = Complex64::new(0.0, 2.0 * PI);
        [q0, d * q1, d * d * q2]
    }

    /// `q(j/M)` for `j = 0..M` (`M` the grid length) by one inverse FFT.
    pub fn grid(&self, c: &[Complex64]) -> Vec<Complex64> {
        let m = self.grid_len;
        let mut buf = vec![Complex64::new(0.0, 0.0); m];
        for (&k, &v) in self.ks.iter().zip(c) {
            buf[k.rem_euclid(m as i64) as usize] += v;
        }
        // rustfft's inverse transform is the unnormalised sum Σ_k X_k exp(+i2πkj/M).
        self.fft.process(&mut buf);
        buf
    }

    /// The dual polynomial on the original band: `c_k` at `k = k' + k_c`, zero off `K`.
    ///
    /// `q(t) = Σ_k c_k exp(i2πkt) = exp(i2πk_c t) Σ_{k'} c_{k'} exp(i2πk't)`, so the modulus is the same.
    pub fn dual_polynomial(&self, c: &[Complex64]) -> DualPolynomial {
        let mut coeffs = vec![Complex64::new(0.0, 0.0); self.band_len()];
        for (&k, &v) in self.ks.iter().zip(c) {
            coeffs[(k + self.centre - self.kmin) as usize] = v;
        }
        DualPolynomial::new(self.kmin, coeffs)
    }

    /// Amplitude on the original band and scale: `a_j = ‖y‖ · a'_j · exp(i2πk_cτ_j)`.
    pub fn to_original(&self, tau: f64, amp: Complex64) -> Complex64 {
        amp * cis(self.centre, tau) * self.scale
    }

    /// Spikes on the original band and scale.
    ///
    /// # Errors
    /// [`Error::NonFinite`] if a position or amplitude is not finite.
    pub fn spikes(&self, tau: &[f64], amp: &[Complex64]) -> Result<Spikes> {
        let list: Vec<Spike> = tau
            .iter()
            .zip(amp)
            .map(|(&t, &a)| Spike::new(wrap(t), self.to_original(wrap(t), a)))
            .collect();
        Spikes::new(list)
    }

    /// Centred, normalised amplitude of a spike given on the original band and scale.
    #[cfg(test)]
    pub fn to_centred(&self, tau: f64, amp: Complex64) -> Complex64 {
        amp * atom(self.centre, tau) / self.scale
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain};

    fn data(kmin: i64, kmax: i64, idx: &[i64]) -> (Measurements, Spikes) {
        let truth = Spikes::from_parts(
            &[0.11, 0.52, 0.83],
            &[
                Complex64::new(1.0, -0.4),
                Complex64::new(-0.3, 0.7),
                Complex64::new(0.2, 0.9),
            ],
        )
        .unwrap();
        let y = forward(&truth, idx);
        (
            Measurements::in_band(kmin, kmax, idx, &y, Domain::Fourier).unwrap(),
            truth,
        )
    }

    /// The recurrence against exact exponentials, including across gaps in K.
    #[test]
    fn exponential_recurrence_matches_direct_values() {
        let idx: Vec<i64> = (-300..=300).filter(|k| k % 7 != 3).collect();
        let (d, _) = data(-300, 300, &idx);
        let model = Model::new(&d, 4).unwrap();
        let t = 0.123_456_789;
        let mut col = vec![Complex64::new(0.0, 0.0); model.len()];
        model.exp_column(t, &mut col);
        for (&k, v) in model.ks.iter().zip(&col) {
            // ANCHOR = 32 multiplications: error below 32·ε_mach·(a few), so 1e-13 is generous.
            assert!((v - cis(k, t)).norm() < 1e-13, "k = {k}");
        }
    }

    /// Centred residuals and spikes reproduce the original model exactly (one-sided band).
    #[test]
    fn centring_preserves_the_model() {
        let idx: Vec<i64> = (-40..=0).collect();
        let (d, truth) = data(-40, 0, &idx);
        let model = Model::new(&d, 4).unwrap();
        let tau = truth.positions();
        let amp: Vec<Complex64> = truth
            .iter()
            .map(|s| model.to_centred(s.position, s.amplitude))
            .collect();
        let e = model.atoms(&tau);
        let r = model.residual(&e, &amp);
        assert!(r.iter().map(|z| z.norm()).fold(0.0, f64::max) < 1e-14);
        let back = model.spikes(&tau, &amp).unwrap();
        for (a, b) in back.iter().zip(truth.iter()) {
            assert!((a.amplitude - b.amplitude).norm() < 1e-13);
        }
    }

    /// Grid values, point evaluation and derivatives against the reference DualPolynomial.
    #[test]
    fn evaluation_matches_dual_polynomial_reference() {
        let idx: Vec<i64> = (-17..=0).filter(|k| *k != -5).collect();
        let (d, _) = data(-17, 0, &idx);
        let model = Model::new(&d, 8).unwrap();
        let c: Vec<Complex64> = (0..model.len())
            .map(|i| Complex64::new((i as f64 * 0.3).cos(), (i as f64 * 0.7).sin()) / 9.0)
            .collect();
        let reference = model.dual_polynomial(&c);
        let grid = model.grid(&c);
        let m = grid.len();
        for (j, g) in grid.iter().enumerate().step_by(7) {
            let t = j as f64 / m as f64;
            // Modulus is frame independent; the values differ by the unit factor exp(i2πk_c t).
            let direct = reference.eval(t) * cis(-model.centre, t);
            assert!((direct - g).norm() < 1e-13);
        }
        let t = 0.3771;
        let [q, q1, _] = model.eval(&c, t);
        let shift = cis(-model.centre, t);
        let (r0, r1, _) = reference.eval_derivatives(t);
        assert!((r0 * shift - q).norm() < 1e-13);
        // q_ref = exp(i2πk_c t) q  ⇒  q_ref' = exp(i2πk_c t)(q' + i2πk_c q).
        let expected = (q1 + Complex64::new(0.0, 2.0 * PI * model.centre as f64) * q) / shift;
        assert!((r1 - expected).norm() < 1e-11 * r1.norm().max(1.0));
    }

    /// Gram sums against direct double sums.
    #[test]
    fn grams_match_direct_sums() {
        let idx: Vec<i64> = (-12..=12).filter(|k| k % 5 != 0).collect();
        let (d, _) = data(-12, 12, &idx);
        let model = Model::new(&d, 4).unwrap();
        let tau = [0.1, 0.47, 0.9];
        let e = model.atoms(&tau);
        let g = model.grams(&tau, &e, 3);
        for (p, gp) in g.iter().enumerate() {
            for j in 0..3 {
                for l in 0..3 {
                    let direct: Complex64 = model
                        .ks
                        .iter()
                        .map(|&k| cis(k, tau[l] - tau[j]) * (k as f64).powi(p as i32))
                        .sum();
                    assert!((gp[(j, l)] - direct).norm() < 1e-11, "p {p} ({j},{l})");
                }
            }
        }
    }

    /// Closed-form kernel sums against direct sums on contiguous bands (odd and even length, one-sided),
    /// from far apart down to below the switch to direct sums, and the closed-form Gram path of
    /// [`Model::grams`] against the products.
    #[test]
    fn kernel_sums_match_direct_sums() {
        for (kmin, kmax) in [(-40, 40), (-63, 0), (0, 1000), (-5000, 4999)] {
            let idx: Vec<i64> = (kmin..=kmax).collect();
            let (d, _) = data(kmin, kmax, &idx);
            let model = Model::new(&d, 8).unwrap();
            let n = (kmax - kmin + 1) as f64;
            for t in [
                0.0,
                1e-9,
                0.02 / n,
                0.05 / n,
                0.2 / n,
                1.3 / n,
                0.123,
                0.5,
                0.77,
                -0.31,
                2.4,
            ] {
                let got = model.kernel_sums(t);
                for (p, g) in got.iter().enumerate() {
                    let direct: Complex64 = model
                        .ks
                        .iter()
                        .map(|&k| cis(k, t) * (k as f64).powi(p as i32))
                        .sum();
                    // Entries are compared with the scale of the diagonal, Σ|k'|^p (rounding of
                    // the direct sum and of the phase n·t both scale with it).
                    let scale: f64 = model.kf.iter().map(|k| k.abs().powi(p as i32)).sum();
                    assert!(
                        (g - direct).norm() <= 1e-11 * scale,
                        "band {kmin}..{kmax} t {t} p {p}: {g} vs {direct}"
                    );
                }
            }
        }
        let idx: Vec<i64> = (-200..=200).collect();
        let (d, _) = data(-200, 200, &idx);
        let model = Model::new(&d, 8).unwrap();
        let tau: Vec<f64> = (0..CLOSED_FORM_GRAM + 3)
            .map(|j| 0.01 + j as f64 * 0.047)
            .collect();
        let e = model.atoms(&tau);
        let closed = model.grams(&tau, &e, 3);
        for (p, gp) in closed.iter().enumerate() {
            for j in 0..tau.len() {
                for l in 0..tau.len() {
                    let direct: Complex64 = model
                        .ks
                        .iter()
                        .map(|&k| cis(k, tau[l] - tau[j]) * (k as f64).powi(p as i32))
                        .sum();
                    let scale: f64 = model.kf.iter().map(|k| k.abs().powi(p as i32)).sum();
                    assert!((gp[(j, l)] - direct).norm() <= 1e-12 * scale);
                }
            }
        }
    }
}
