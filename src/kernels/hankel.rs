//! The Hankel data matrix, its FFT-fast products, and its dominant left singular subspace.
//!
//! For a contiguous band of `N` coefficients `h_m = y_{k0+m} = Σ_j b_j z_j^m` (`z_j = exp(−i2πτ_j)`,
//! `b_j = a_j z_j^{k0}`), the Hankel matrix with `L` rows and `M = N − L + 1` columns is
//!
//! ```text
//!   H_{p,q} = h_{p+q} = Σ_j b_j z_j^p z_j^q,   i.e.  H = A_L diag(b) A_M^T,   (A_L)_{p,j} = z_j^p,
//! ```
//!
//! so its column space is spanned by the Vandermonde vectors `(1, z_j, …, z_j^{L−1})`. With
//! forward–backward averaging the data matrix is `[H, J H̄ J]` (`J` the exchange matrix): the backward
//! sequence `conj(h_{N−1−m}) = Σ_j conj(b_j z_j^{N−1}) z_j^m` holds the same `z_j` because `|z_j| = 1`,
//! so both blocks share the column space and the noise is averaged over twice as many columns.
//!
//! Products with `H` are correlations of `h`, done with one FFT of `h` and two FFTs per vector
//! (`O(N log N)` instead of `O(LM)`). The dominant subspace comes from a full thin SVD (faer) for
//! small `N`, or from a randomized range finder with power iterations (Halko, Martinsson & Tropp 2011,
//! SIAM Review 53(2), Algorithms 4.3/4.4 and 5.1, numbers recalled from memory) built on the FFT
//! products for large `N`.

use super::budget::Cost;
use super::hankel_svd::{dense_svd_cost, streaming_r, streaming_svd_cost, DENSE_SVD_ENTRIES};
use crate::error::{Error, Result};
use faer::{c64, Mat, MatRef};
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use rand_distr::StandardNormal;
use rustfft::{Fft, FftPlanner};
use std::sync::Arc;

/// Which decomposition computes the signal subspace.
///
/// Measured on the 2-core reference machine (criterion bench `benches/subspace.rs`, ESPRIT, 10 lines,
/// whole estimate; figures vary by some 30% with the machine's load), dense against randomized:
/// 0.87 against 1.04 ms at `N = 64`, 2.6 against 2.0 ms at `N = 96`, 5.3 against 1.8 ms at `N = 128`,
/// 8.6 against 2.3 ms at `N = 256`, 386 against 7.9 ms at `N = 1024`; hence the crossover
/// [`DENSE_MAX`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Decomposition {
    /// Dense thin SVD for `N ≤ DENSE_MAX`, randomized range finder above (the default).
    #[default]
    Auto,
    /// Always a full SVD of the (forward–backward) Hankel matrix: `O(L² M)`. Dense (faer) up to
    /// [`DENSE_SVD_ENTRIES`](crate::subspace::DENSE_SVD_ENTRIES) entries; above, with `L ≤ M`, the
    /// left singular vectors come from a QR of the conjugate transpose accumulated block by block
    /// (`O(L²)` memory; see `kernels::hankel_svd`).
    Dense,
    /// Always the randomized range finder with FFT Hankel products (Halko, Martinsson & Tropp 2011):
    /// `O((r + p)(q + 1) N log N)` for `q` power iterations and `p` extra columns.
    Randomized,
}

/// Largest `N` for which [`Decomposition::Auto`] uses the dense SVD (the measured crossover, see
/// [`Decomposition`]).
pub const DENSE_MAX: usize = 80;

/// The (possibly forward–backward averaged) Hankel data matrix of a sequence, as an operator.
pub(crate) struct HankelOperator {
    n: usize,
    rows: usize,
    cols: usize,
    forward_backward: bool,
    seq: Vec<c64>,
    nfft: usize,
    seq_hat: Vec<c64>,
    fft: Arc<dyn Fft<f64>>,
    ifft: Arc<dyn Fft<f64>>,
}

/// Smallest `m ≥ n` whose only prime factors are 2, 3 and 5 (fast FFT sizes).
pub(crate) fn fast_len(n: usize) -> usize {
    let mut m = n.max(1);
    loop {
        let mut r = m;
        for p in [2, 3, 5] {
            while r % p == 0 {
                r /= p;
            }
        }
        if r == 1 {
            return m;
        }
        m += 1;
    }
}

impl HankelOperator {
    /// The `rows × (N − rows + 1)` Hankel matrix of `seq` (forward–backward: twice the columns).
    /// Requires `1 ≤ rows ≤ seq.len()` (checked by the caller).
    pub(crate) fn new(seq: &[c64], rows: usize, forward_backward: bool) -> Self {
        let n = seq.len();
        let nfft = fast_len(n);
        let mut planner = FftPlanner::new();
        let fft = planner.plan_fft_forward(nfft);
        let ifft = planner.plan_fft_inverse(nfft);
        let mut seq_hat = vec![c64::new(0.0, 0.0); nfft];
        seq_hat[..n].copy_from_slice(seq);
        fft.process(&mut seq_hat);
        HankelOperator {
            n,
            rows,
            cols: n - rows + 1,
            forward_backward,
            seq: seq.to_vec(),
            nfft,
            seq_hat,
            fft,
            ifft,
        }
    }

    /// Rows `L`.
    pub(crate) fn nrows(&self) -> usize {
        self.rows
    }

    /// Columns: `M = N − L + 1`, or `2M` with forward–backward averaging.
    pub(crate) fn ncols(&self) -> usize {
        if self.forward_backward {
            2 * self.cols
        } else {
            self.cols
        }
    }

    /// `out_i = Σ_j h_{i+j} x_j` for `i < out_len`, `j < x.len()`, with `out_len + x.len() − 1 = N`:
    /// a correlation, computed as the circular convolution of `h` with the reversed `x` (length
    /// `nfft ≥ N`; the wanted outputs `x.len() − 1 ..= N − 1` never wrap).
    fn correlate(&self, out_len: usize, x: &[c64]) -> Vec<c64> {
        let m = x.len();
        debug_assert_eq!(out_len + m - 1, self.n);
        let mut buf = vec![c64::new(0.0, 0.0); self.nfft];
        for (j, &v) in x.iter().enumerate() {
            buf[m - 1 - j] = v;
        }
        self.fft.process(&mut buf);
        for (b, h) in buf.iter_mut().zip(&self.seq_hat) {
            *b *= h;
        }
        self.ifft.process(&mut buf);
        let scale = 1.0 / self.nfft as f64;
        buf[m - 1..m - 1 + out_len]
            .iter()
            .map(|v| v * scale)
            .collect()
    }

    /// `A x` for the data matrix `A` (`x` of length [`Self::ncols`]).
    pub(crate) fn apply(&self, x: &[c64]) -> Vec<c64> {
        let (x1, x2) = x.split_at(self.cols);
        let mut y = self.correlate(self.rows, x1);
        if self.forward_backward {
            // J H̄ J x2 = J conj(H conj(J x2)).
            let t: Vec<c64> = x2.iter().rev().map(|v| v.conj()).collect();
            let u = self.correlate(self.rows, &t);
            for (yi, ui) in y.iter_mut().zip(u.iter().rev()) {
                *yi += ui.conj();
            }
        }
        y
    }

    /// `A^H y` for the data matrix `A` (`y` of length [`Self::nrows`]).
    pub(crate) fn apply_adjoint(&self, y: &[c64]) -> Vec<c64> {
        // H^H y = conj(H^T conj(y)), and H^T is the Hankel matrix of h with M rows.
        let t: Vec<c64> = y.iter().map(|v| v.conj()).collect();
        let mut out: Vec<c64> = self
            .correlate(self.cols, &t)
            .iter()
            .map(|v| v.conj())
            .collect();
        if self.forward_backward {
            // (J H̄ J)^H y = J H^T J y.
            let r: Vec<c64> = y.iter().rev().copied().collect();
            let u = self.correlate(self.cols, &r);
            out.extend(u.iter().rev());
        }
        out
    }

    /// `A X`, column by column.
    pub(crate) fn apply_mat(&self, x: MatRef<'_, c64>) -> Mat<c64> {
        let mut out = Mat::<c64>::zeros(self.rows, x.ncols());
        for j in 0..x.ncols() {
            let col: Vec<c64> = (0..x.nrows()).map(|i| x[(i, j)]).collect();
            for (i, v) in self.apply(&col).into_iter().enumerate() {
                out[(i, j)] = v;
            }
        }
        out
    }

    /// `A^H Y`, column by column.
    pub(crate) fn apply_adjoint_mat(&self, y: MatRef<'_, c64>) -> Mat<c64> {
        let mut out = Mat::<c64>::zeros(self.ncols(), y.ncols());
        for j in 0..y.ncols() {
            let col: Vec<c64> = (0..y.nrows()).map(|i| y[(i, j)]).collect();
            for (i, v) in self.apply_adjoint(&col).into_iter().enumerate() {
                out[(i, j)] = v;
            }
        }
        out
    }

    /// Entry `(p, q)` of the data matrix: `h_{p+q}` in the forward block, `conj(h_{N−1−p−(q−M)})` in
    /// the backward one.
    #[inline]
    pub(crate) fn entry(&self, p: usize, q: usize) -> c64 {
        if q < self.cols {
            self.seq[p + q]
        } else {
            self.seq[self.n - 1 - p - (q - self.cols)].conj()
        }
    }

    /// The data matrix as a dense matrix (small matrices, and the brute-force reference for the fast
    /// products).
    pub(crate) fn dense(&self) -> Mat<c64> {
        Mat::from_fn(self.rows, self.ncols(), |p, q| self.entry(p, q))
    }
}

/// The dominant left singular subspace of the data matrix.
pub(crate) struct Subspace {
    /// Orthonormal basis, `L × r`, columns ordered by decreasing singular value.
    pub basis: Mat<c64>,
    /// Power iterations used (0 for the dense SVD).
    pub power_iterations: usize,
}

/// Parameters of the randomized range finder.
#[derive(Debug, Clone, Copy)]
pub(crate) struct RandomizedParams {
    pub oversampling: usize,
    pub power_iterations: usize,
    pub seed: u64,
}

pub(crate) fn numerical(step: &'static str, e: impl std::fmt::Debug) -> Error {
    Error::Numerical {
        step,
        detail: format!("{e:?}"),
    }
}

/// The `r` dominant left singular vectors of `op`'s data matrix (`1 ≤ r ≤ min(L, cols)`, checked by
/// the caller), by a dense thin SVD or by the randomized range finder.
pub(crate) fn signal_subspace(
    op: &HankelOperator,
    r: usize,
    decomposition: Decomposition,
    params: RandomizedParams,
) -> Result<Subspace> {
    let dense = match decomposition {
        Decomposition::Auto => op.n <= DENSE_MAX,
        Decomposition::Dense => true,
        Decomposition::Randomized => false,
    };
    let width = r + params.oversampling;
    if dense || width >= op.nrows().min(op.ncols()) {
        let (l, m) = (op.nrows(), op.ncols());
        if l * m > DENSE_SVD_ENTRIES && l <= m {
            // A long record: the left singular vectors of A are those of Rᴴ for Aᴴ = QR, R
            // accumulated over blocks of columns of A (see `hankel_svd`); A is never formed.
            let rf = streaming_r(l, m, |p, q| op.entry(p, q));
            let svd = rf
                .adjoint()
                .to_owned()
                .thin_svd()
                .map_err(|e| numerical("singular value decomposition", e))?;
            return Ok(Subspace {
                basis: svd.U().get(.., ..r).to_owned(),
                power_iterations: 0,
            });
        }
        let svd = op
            .dense()
            .thin_svd()
            .map_err(|e| numerical("singular value decomposition", e))?;
        return Ok(Subspace {
            basis: svd.U().get(.., ..r).to_owned(),
            power_iterations: 0,
        });
    }
    // Randomized range finder with power iterations, re-orthonormalised at every half step
    // (Halko, Martinsson & Tropp 2011, Algorithm 4.4), then the SVD of the small factor
    // B = Q^H A (Algorithm 5.1; numbers recalled from memory).
    let mut rng = StdRng::seed_from_u64(params.seed);
    let scale = std::f64::consts::FRAC_1_SQRT_2;
    let omega = Mat::<c64>::from_fn(op.ncols(), width, |_, _| {
        let re: f64 = rng.sample(StandardNormal);
        let im: f64 = rng.sample(StandardNormal);
        c64::new(scale * re, scale * im)
    });
    let mut y = op.apply_mat(omega.as_ref());
    for _ in 0..params.power_iterations {
        let q = y.qr().compute_thin_Q();
        let z = op.apply_adjoint_mat(q.as_ref());
        let z = z.qr().compute_thin_Q();
        y = op.apply_mat(z.as_ref());
    }
    let q = y.qr().compute_thin_Q();
    // B^H = A^H Q = U_b S V_b^H  ⇒  A ≈ Q B = (Q V_b) S U_b^H.
    let bh = op.apply_adjoint_mat(q.as_ref());
    let svd = bh
        .thin_svd()
        .map_err(|e| numerical("singular value decomposition", e))?;
    let basis = &q * svd.V().get(.., ..r);
    Ok(Subspace {
        basis,
        power_iterations: params.power_iterations,
    })
}

/// Working memory and work of [`signal_subspace`] for a record of `n` samples, `rows` rows, order `r`
/// (the same choice of decomposition; see [`super::budget`]).
pub(crate) fn subspace_cost(
    n: usize,
    rows: usize,
    forward_backward: bool,
    r: usize,
    decomposition: Decomposition,
    params: RandomizedParams,
) -> Cost {
    let blocks = if forward_backward { 2 } else { 1 };
    let cols = blocks * (n + 1 - rows);
    let dense = match decomposition {
        Decomposition::Auto => n <= DENSE_MAX,
        Decomposition::Dense => true,
        Decomposition::Randomized => false,
    };
    let width = r + params.oversampling;
    if dense || width >= rows.min(cols) {
        return if rows * cols > DENSE_SVD_ENTRIES && rows <= cols {
            streaming_svd_cost(rows, cols)
        } else {
            dense_svd_cost(rows, cols)
        };
    }
    let (l, m, w) = (rows as f64, cols as f64, width as f64);
    let nfft = fast_len(n) as f64;
    // Ω, Y, Z and B^H with their QR and SVD copies (about four matrices of each height), the operator's
    // transform and per-product FFT buffers.
    let entries = 4.0 * (l + m) * w + 6.0 * nfft;
    // Each product with A or Aᴴ: `blocks` correlations of two FFTs of length nfft per column; each
    // half step orthonormalises (QR of an l × w or m × w matrix); the last SVD is of an m × w matrix.
    let steps = 2.0 * params.power_iterations as f64 + 2.0;
    let fft = blocks as f64 * 2.0 * nfft * nfft.log2().max(1.0);
    let work = steps * w * fft + steps * (l + m) * w * w + 4.0 * m * w * w;
    Cost::new(entries, work)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sequence(n: usize) -> Vec<c64> {
        (0..n)
            .map(|m| {
                let t = m as f64;
                c64::new((0.3 * t).sin() + 0.1 * t, (1.7 * t).cos() - 0.05 * t * t)
            })
            .collect()
    }

    fn dense_mul(a: &Mat<c64>, x: &[c64]) -> Vec<c64> {
        (0..a.nrows())
            .map(|i| (0..a.ncols()).map(|j| a[(i, j)] * x[j]).sum())
            .collect()
    }

    #[test]
    fn fast_products_match_the_dense_matrix() {
        for (n, rows, fb) in [
            (17, 9, false),
            (17, 9, true),
            (16, 9, true),
            (31, 4, true),
            (7, 7, true),
            (97, 40, false),
        ] {
            let h = sequence(n);
            let op = HankelOperator::new(&h, rows, fb);
            let a = op.dense();
            let x: Vec<c64> = (0..op.ncols())
                .map(|j| c64::new(j as f64 * 0.1 - 1.0, 0.3 - (j as f64).sqrt()))
                .collect();
            let y: Vec<c64> = (0..rows)
                .map(|i| c64::new(1.0 / (i as f64 + 1.0), i as f64 * 0.2))
                .collect();
            let fast = op.apply(&x);
            let slow = dense_mul(&a, &x);
            let ah = a.adjoint().to_owned();
            let fast_adj = op.apply_adjoint(&y);
            let slow_adj = dense_mul(&ah, &y);
            let scale = h.iter().map(|v| v.norm()).fold(0.0, f64::max) * n as f64 * 10.0;
            // FFT round-off: O(ε log N) relative to ‖h‖·‖x‖; 1e-13 of the scale bounds it with margin.
            for (f, s) in fast.iter().zip(&slow).chain(fast_adj.iter().zip(&slow_adj)) {
                assert!((f - s).norm() < 1e-13 * scale, "n={n} rows={rows} fb={fb}");
            }
        }
    }

    #[test]
    fn randomized_subspace_matches_the_dense_svd_for_a_low_rank_matrix() {
        // Exact rank-3 sequence: the randomized range of the FFT operator equals the SVD's.
        let n = 300;
        let z = [0.11, 0.13, 0.6];
        let b = [c64::new(1.0, 0.5), c64::new(-0.7, 0.2), c64::new(0.1, 2.0)];
        let h: Vec<c64> = (0..n)
            .map(|m| {
                z.iter()
                    .zip(&b)
                    .map(|(&t, &a)| {
                        a * c64::from_polar(1.0, -2.0 * std::f64::consts::PI * t * m as f64)
                    })
                    .sum()
            })
            .collect();
        let op = HankelOperator::new(&h, 151, true);
        let params = RandomizedParams {
            oversampling: 5,
            power_iterations: 1,
            seed: 1,
        };
        let fast = signal_subspace(&op, 3, Decomposition::Randomized, params).unwrap();
        let slow = signal_subspace(&op, 3, Decomposition::Dense, params).unwrap();
        assert_eq!(fast.power_iterations, 1);
        // Same subspace: the projector difference ‖P_f − P_s‖ is at rounding level (ε times the
        // conditioning σ_1/σ_3 of this well-separated scene, O(1)).
        let pf = &fast.basis * fast.basis.adjoint();
        let ps = &slow.basis * slow.basis.adjoint();
        let diff = (&pf - &ps).norm_max();
        assert!(diff < 1e-12, "projector difference {diff}");
    }

    #[test]
    fn fast_lengths_are_smooth() {
        assert_eq!(fast_len(1024), 1024);
        assert_eq!(fast_len(17), 18);
        assert_eq!(fast_len(31), 32);
        assert_eq!(fast_len(1), 1);
    }
}
