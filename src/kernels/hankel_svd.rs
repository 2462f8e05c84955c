//! Singular values and singular vectors of the forward Hankel matrix of one record, computed once per
//! estimate and shared by the model-order choice of the subspace methods ([`crate::subspace`]) and the
//! noise-level estimate ([`crate::noise`]).
//!
//! For a sequence `h_0, …, h_{N−1}` and `L` rows the Hankel matrix is `H_{a,b} = h_{a+b}`, `L × P`,
//! `P = N − L + 1` (see [`super::hankel`] for its structure). The sequence is first divided by its
//! largest modulus, so that squared singular values can neither overflow nor underflow; singular values
//! are reported for the scaled matrix (every rule that reads them is relative, or multiplies back).
//!
//! **Small matrices** (`L·P ≤` [`DENSE_SVD_ENTRIES`]): faer's thin SVD of the dense matrix, left and
//! right singular vectors kept.
//!
//! **Large matrices** (a long record): `H` is never formed. With `L ≤ P`, a Householder QR of `Hᴴ`
//! (`P × L`) is accumulated over blocks of rows — the columns of `H`, generated from `h` as they are
//! needed:
//!
//! ```text
//!   R_0 = 0,   [R_{j−1}; X_j] = Q_j R_j   (X_j the j-th block of rows of Hᴴ),   Hᴴ = Q R,  R = R_last,
//! ```
//!
//! the sequential tall-skinny QR of Demmel, Grigori, Hoemmen & Langou (2012, SIAM J. Sci. Comput.
//! 34(1); algorithm name and reference recalled from memory). `Q` is never formed. Since
//! `H = Rᴴ Qᴴ` with orthonormal `Q`, `H` and the `L × L` matrix `Rᴴ` have the same singular values and
//! left singular vectors, taken from faer's SVD of `Rᴴ`. Memory `O(L² + B·L)` for blocks of `B` rows
//! instead of `O(L·P)`; work about `2·P·L²` complex multiply–adds for the QR plus `O(L³)` for the SVD.
//! The right singular vectors, when needed, are `V_k = Hᴴ U_k Σ_k⁻¹`, one FFT product per vector.
//! With `L > P` the same is done on the transpose, the Hankel matrix of `h` with `P` rows, which has
//! the same singular values (its left vectors are then not available; only the singular values are
//! asked for in that shape).
//!
//! Singular values are computed, not eigenvalues of `HHᴴ`: both routes are backward stable, so for
//! exact data the singular values beyond the rank stay at rounding level `ε‖H‖`, whereas eigenvalues of
//! `HHᴴ` floor at `ε‖H‖²`, i.e. singular values `√ε‖H‖` — too high for the exact-data rule of
//! [`super::rank`].

use super::budget::Cost;
use super::hankel::{fast_len, numerical, HankelOperator};
use crate::error::Result;
use faer::dyn_stack::{MemBuffer, MemStack};
use faer::linalg::qr::no_pivoting::factor::{
    qr_in_place, qr_in_place_scratch, recommended_blocksize,
};
use faer::{c64, Mat, MatRef};
use rustfft::FftPlanner;

/// Largest `L·P` for which the dense thin SVD is used (2^20 entries, 16 MB for the matrix; the
/// default noise-estimate and order windows, 256 rows, stay dense up to `N = 4351`). Above, the
/// streaming QR of the module docs.
pub const DENSE_SVD_ENTRIES: usize = 1 << 20;

/// Rows of `Hᴴ` per block of the streaming QR, as a multiple of `L` (the re-factorisation of the
/// carried `R` then costs `1/STREAM_BLOCK_FACTOR` of the total).
const STREAM_BLOCK_FACTOR: usize = 8;

/// The singular value decomposition of one Hankel matrix of the record (module docs).
pub(crate) struct HankelSvd {
    rows: usize,
    cols: usize,
    /// Singular values of the scaled matrix, non-increasing, `min(L, P)` of them.
    sv: Vec<f64>,
    /// Left singular vectors, `L × min(L, P)` (`None` when computed on the transpose).
    left: Option<Mat<c64>>,
    /// Right singular vectors, `P × min(L, P)` (dense path only; computed on demand otherwise).
    right: Option<Mat<c64>>,
}

impl HankelSvd {
    /// Singular values of the scaled Hankel matrix (non-increasing).
    pub(crate) fn singular_values(&self) -> &[f64] {
        &self.sv
    }
}

/// The Hankel analyses of one record: its scaled sequence and the decompositions computed so far,
/// at most one per row count (module docs).
pub(crate) struct HankelAnalysis {
    seq: Vec<c64>,
    scale: f64,
    svds: Vec<HankelSvd>,
}

/// Diagonal sums `Σ_a (X_k X_kᴴ)_{a+m, a}` (lower) and `Σ_a (X_k X_kᴴ)_{a, a+m}` (upper) of the
/// projector onto the first `k` columns of `x`, for `m = 0..lags`.
pub(crate) struct LagSums {
    pub lower: Vec<c64>,
    pub upper: Vec<c64>,
}

impl HankelAnalysis {
    /// The analysis of `seq` (nothing is decomposed yet).
    pub(crate) fn new(seq: &[c64]) -> Self {
        let scale = seq.iter().map(|v| v.norm()).fold(0.0, f64::max);
        let divisor = if scale > 0.0 { scale } else { 1.0 };
        HankelAnalysis {
            seq: seq.iter().map(|v| v / divisor).collect(),
            scale,
            svds: Vec::new(),
        }
    }

    /// Length `N` of the record.
    pub(crate) fn len(&self) -> usize {
        self.seq.len()
    }

    /// Largest modulus of the record (0 for an all-zero record): the singular values are those of
    /// `H / scale`.
    pub(crate) fn scale(&self) -> f64 {
        self.scale
    }

    /// Working memory and work of [`Self::svd`] for a record of `n` samples and `rows` rows (the
    /// FFT buffers of [`Self::projector_lag_sums`] included).
    pub(crate) fn svd_cost(n: usize, rows: usize) -> Cost {
        let cols = n + 1 - rows;
        let (l, p) = (rows.min(cols), rows.max(cols));
        if rows * cols <= DENSE_SVD_ENTRIES {
            dense_svd_cost(rows, cols)
        } else {
            let fft = Cost::new(4.0 * n as f64, 0.0);
            streaming_svd_cost(l, p).then(fft)
        }
    }

    /// The decomposition with `rows` rows (`1 ≤ rows ≤ N`, checked by the caller), computed on the
    /// first request and kept.
    pub(crate) fn svd(&mut self, rows: usize) -> Result<&HankelSvd> {
        let at = match self.svds.iter().position(|s| s.rows == rows) {
            Some(i) => i,
            None => {
                let svd = self.decompose(rows)?;
                self.svds.push(svd);
                self.svds.len() - 1
            }
        };
        Ok(&self.svds[at])
    }

    fn decompose(&self, rows: usize) -> Result<HankelSvd> {
        let n = self.seq.len();
        let cols = n + 1 - rows;
        let size = rows.min(cols);
        if self.scale == 0.0 {
            // An all-zero record: every singular value is 0 (nothing to decompose).
            return Ok(HankelSvd {
                rows,
                cols,
                sv: vec![0.0; size],
                left: None,
                right: None,
            });
        }
        let seq = &self.seq;
        if rows * cols <= DENSE_SVD_ENTRIES {
            let h = Mat::<c64>::from_fn(rows, cols, |a, b| seq[a + b]);
            let svd = h
                .thin_svd()
                .map_err(|e| numerical("Hankel singular value decomposition", e))?;
            // faer returns the singular values non-increasing (documented contract of `thin_svd`).
            let sv = svd.S().column_vector().iter().map(|z| z.re).collect();
            return Ok(HankelSvd {
                rows,
                cols,
                sv,
                left: Some(svd.U().to_owned()),
                right: Some(svd.V().to_owned()),
            });
        }
        // H_{a,b} = h_{a+b} is symmetric in its indices: the transpose is the Hankel matrix of h
        // with `cols` rows.
        let (short, long, transposed) = if rows <= cols {
            (rows, cols, false)
        } else {
            (cols, rows, true)
        };
        let r = streaming_r(short, long, |a, b| seq[a + b]);
        let svd = r
            .adjoint()
            .to_owned()
            .thin_svd()
            .map_err(|e| numerical("Hankel singular value decomposition", e))?;
        let sv = svd.S().column_vector().iter().map(|z| z.re).collect();
        Ok(HankelSvd {
            rows,
            cols,
            sv,
            left: (!transposed).then(|| svd.U().to_owned()),
            right: None,
        })
    }

    /// Diagonal sums of the projectors onto the leading `k` left and right singular vectors of the
    /// decomposition with `rows ≤ P` rows (computed by [`Self::svd`] before), for the lags
    /// `m = 0..rows`: `(P_U sums, P_V sums)`. The right vectors of a streamed decomposition are
    /// `Hᴴ u_j / s_j` (module docs); their diagonal sums are autocorrelations, accumulated in the
    /// frequency domain (one FFT per vector, one inverse FFT).
    ///
    /// # Errors
    /// [`crate::Error::Numerical`] if the decomposition is missing, was computed on the transpose,
    /// or has a zero singular value among the first `k`.
    pub(crate) fn projector_lag_sums(&self, rows: usize, k: usize) -> Result<(LagSums, LagSums)> {
        let missing = |detail: &str| crate::Error::Numerical {
            step: "Hankel projector diagonals",
            detail: detail.to_string(),
        };
        let svd = self
            .svds
            .iter()
            .find(|s| s.rows == rows)
            .ok_or_else(|| missing("no decomposition with this many rows was computed"))?;
        let left = svd
            .left
            .as_ref()
            .ok_or_else(|| missing("the left singular vectors are not available"))?;
        let u = lag_sums(left.as_ref(), k, rows);
        if let Some(right) = &svd.right {
            return Ok((u, lag_sums(right.as_ref(), k, rows)));
        }
        if svd.sv.iter().take(k).any(|&s| s.is_nan() || s <= 0.0) {
            return Err(missing("a leading singular value is zero"));
        }
        let op = HankelOperator::new(&self.seq, rows, false);
        let p = svd.cols;
        let nfft = fast_len(p + rows);
        let mut planner = FftPlanner::<f64>::new();
        let fft = planner.plan_fft_forward(nfft);
        let ifft = planner.plan_fft_inverse(nfft);
        let mut power = vec![0.0; nfft];
        let mut buf = vec![c64::new(0.0, 0.0); nfft];
        for j in 0..k {
            let col: Vec<c64> = (0..rows).map(|a| left[(a, j)]).collect();
            let v = op.apply_adjoint(&col);
            let inv = 1.0 / svd.sv[j];
            buf.iter_mut().for_each(|b| *b = c64::new(0.0, 0.0));
            for (b, x) in buf.iter_mut().zip(&v) {
                *b = x * inv;
            }
            fft.process(&mut buf);
            for (acc, b) in power.iter_mut().zip(&buf) {
                *acc += b.norm_sqr();
            }
        }
        // Σ_b v_{b+m} conj(v_b) = IFFT(|V̂|²)_m (no wrap-around: nfft ≥ P + rows).
        for (b, &pw) in buf.iter_mut().zip(&power) {
            *b = c64::new(pw, 0.0);
        }
        ifft.process(&mut buf);
        let scale = 1.0 / nfft as f64;
        let lower: Vec<c64> = buf[..rows].iter().map(|x| x * scale).collect();
        let upper = lower.iter().map(|x| x.conj()).collect();
        Ok((u, LagSums { lower, upper }))
    }
}

/// Diagonal sums of `X_k X_kᴴ` for `m = 0..lags` (see [`LagSums`]), summed directly.
pub(crate) fn lag_sums(x: MatRef<'_, c64>, k: usize, lags: usize) -> LagSums {
    let diag_sum = |m: usize, lower: bool| {
        let n = x.nrows();
        let mut acc = c64::new(0.0, 0.0);
        for a in 0..n - m {
            let (r, c) = if lower { (a + m, a) } else { (a, a + m) };
            for j in 0..k {
                acc += x[(r, j)] * x[(c, j)].conj();
            }
        }
        acc
    };
    LagSums {
        lower: (0..lags).map(|m| diag_sum(m, true)).collect(),
        upper: (0..lags).map(|m| diag_sum(m, false)).collect(),
    }
}

/// Working memory and work of faer's thin SVD of a dense `rows × cols` matrix: the matrix, both
/// factors and about one more copy of workspace; about `4·rows·cols·min` multiply–adds.
pub(crate) fn dense_svd_cost(rows: usize, cols: usize) -> Cost {
    let (m, n) = (rows as f64, cols as f64);
    let k = m.min(n);
    Cost::new(3.0 * m * n + k * k, 4.0 * m * n * k)
}

/// Working memory and work of [`streaming_r`] on an `l × p` matrix (`l ≤ p`) followed by the SVD of
/// the `l × l` factor: the carried factor with its stacked block, faer's QR workspace, the SVD's
/// matrices; `2·p·l²` multiply–adds for the QR (plus the re-factorisation of the carried factor) and
/// about `10·l³` for the SVD.
pub(crate) fn streaming_svd_cost(l: usize, p: usize) -> Cost {
    let (l, p) = (l as f64, p as f64);
    let block = STREAM_BLOCK_FACTOR as f64 * l;
    Cost::new(
        2.0 * (l + block) * l + 4.0 * l * l,
        2.0 * p * l * l * (1.0 + 1.0 / STREAM_BLOCK_FACTOR as f64) + 10.0 * l * l * l,
    )
}

/// The `l × l` triangular factor `R` of `Aᴴ = Q R` for the `l × p` matrix `A` (`l ≤ p`) whose entries
/// are `entry(row, column)`, accumulated over blocks of columns of `A` (module docs); `A` is never
/// formed.
pub(crate) fn streaming_r(l: usize, p: usize, entry: impl Fn(usize, usize) -> c64) -> Mat<c64> {
    let block = (STREAM_BLOCK_FACTOR * l).max(64).min(p);
    // Rows 0..l carry R; rows l..l+b take the next b rows of Aᴴ.
    let mut work = Mat::<c64>::zeros(l + block, l);
    let par = faer::get_global_parallelism();
    let blocksize = recommended_blocksize::<c64>(l + block, l);
    let mut coeff = Mat::<c64>::zeros(blocksize, l);
    let mut mem = MemBuffer::new(qr_in_place_scratch::<c64>(
        l + block,
        l,
        blocksize,
        par,
        Default::default(),
    ));
    let mut done = 0;
    while done < p {
        let b = block.min(p - done);
        for a in 0..l {
            // Keep R's upper triangle, clear the Householder vectors below it.
            for i in a + 1..l {
                work[(i, a)] = c64::new(0.0, 0.0);
            }
            for i in 0..b {
                work[(l + i, a)] = entry(a, done + i).conj();
            }
        }
        qr_in_place(
            work.get_mut(..l + b, ..),
            coeff.as_mut(),
            par,
            MemStack::new(&mut mem),
            Default::default(),
        );
        done += b;
    }
    Mat::from_fn(l, l, |i, j| {
        if i <= j {
            work[(i, j)]
        } else {
            c64::new(0.0, 0.0)
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sequence(n: usize) -> Vec<c64> {
        // Three exponentials plus a deterministic perturbation (an invented test signal).
        (0..n)
            .map(|m| {
                let t = m as f64;
                c64::from_polar(1.0, 0.7 * t)
                    + c64::from_polar(0.5, -2.1 * t)
                    + c64::from_polar(0.2, 1.3 * t)
                    + c64::new((0.37 * t * t).sin(), (0.11 * t * t).cos()) * 1e-3
            })
            .collect()
    }

    #[test]
    fn streamed_and_dense_decompositions_agree() {
        // Above DENSE_SVD_ENTRIES the streaming QR runs; compare with the dense SVD of the same matrix.
        let n = 9000;
        let rows = 200;
        let seq = sequence(n);
        let mut a = HankelAnalysis::new(&seq);
        assert!(rows * (n + 1 - rows) > DENSE_SVD_ENTRIES);
        let streamed: Vec<f64> = a.svd(rows).unwrap().singular_values().to_vec();
        let scaled: Vec<c64> = seq.iter().map(|v| v / a.scale()).collect();
        let h = Mat::<c64>::from_fn(rows, n + 1 - rows, |i, j| scaled[i + j]);
        let dense = h.thin_svd().unwrap();
        let top = streamed[0];
        // Both are backward stable: singular values agree to a modest multiple of ε‖H‖.
        for (s, d) in streamed.iter().zip(dense.S().column_vector().iter()) {
            assert!((s - d.re).abs() < 1e-12 * top, "{s} against {}", d.re);
        }
        // The projector diagonals of the leading 3 vectors agree as well (FFT route for V).
        let (u, v) = a.projector_lag_sums(rows, 3).unwrap();
        let du = lag_sums(dense.U(), 3, rows);
        let dv = lag_sums(dense.V(), 3, rows);
        for m in 0..rows {
            assert!((u.lower[m] - du.lower[m]).norm() < 1e-9, "u lag {m}");
            assert!((v.lower[m] - dv.lower[m]).norm() < 1e-9, "v lag {m}");
            assert!((v.upper[m] - dv.upper[m]).norm() < 1e-9, "v lag {m}");
        }
        // A second request with the same rows reuses the decomposition.
        assert_eq!(a.svd(rows).unwrap().singular_values(), &streamed[..]);
        assert_eq!(a.svds.len(), 1);
    }

    #[test]
    fn exact_data_stay_at_rounding_level_when_streamed() {
        // Exact rank 3 (no perturbation): the singular values beyond the rank are rounding errors,
        // far below the 1e-10 rank tolerance.
        let n = 9000;
        let seq: Vec<c64> = (0..n)
            .map(|m| {
                let t = m as f64;
                c64::from_polar(1.0, 0.7 * t)
                    + c64::from_polar(0.5, -2.1 * t)
                    + c64::from_polar(0.2, 1.3 * t)
            })
            .collect();
        let mut a = HankelAnalysis::new(&seq);
        let sv = a.svd(256).unwrap().singular_values().to_vec();
        let scaled: Vec<c64> = seq.iter().map(|v| v / a.scale()).collect();
        let h = Mat::<c64>::from_fn(256, n - 255, |i, j| scaled[i + j]);
        let dense = h.singular_values().unwrap();
        println!(
            "s_4/s_1: streamed {:e}, dense {:e}",
            sv[3] / sv[0],
            dense[3] / dense[0]
        );
        assert!(sv[2] > 1e-3 * sv[0]);
        // Rounding level: about 600 ε·s_1, the samples' own rounding (phases up to 6300 rad); the
        // dense SVD of the same matrix gives the same value to 5 digits (measured). Far below the
        // rank tolerance 1e-10.
        assert!(sv[3] < 1e-12 * sv[0], "{:e}", sv[3] / sv[0]);
        assert!(super::super::rank::looks_exact(&sv));
    }

    #[test]
    fn transposed_shape_and_zero_record() {
        let seq = sequence(4000);
        let mut a = HankelAnalysis::new(&seq);
        // 3700 rows, 301 columns: streamed on the transpose, same values as 301 rows.
        let wide = a.svd(3700).unwrap().singular_values().to_vec();
        let tall = a.svd(301).unwrap().singular_values().to_vec();
        assert_eq!(wide.len(), 301);
        for (x, y) in wide.iter().zip(&tall) {
            assert!((x - y).abs() < 1e-12 * tall[0]);
        }
        assert!(a.projector_lag_sums(3700, 2).is_err());
        let mut z = HankelAnalysis::new(&[c64::new(0.0, 0.0); 10]);
        assert_eq!(z.scale(), 0.0);
        assert_eq!(z.svd(5).unwrap().singular_values(), &[0.0; 5]);
    }
}
