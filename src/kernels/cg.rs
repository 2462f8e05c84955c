//! Preconditioned conjugate gradients for the symmetric systems of the sliding step, the refinement
//! and the interpolating certificates when the support is large.
//!
//! The systems are dense (`n = 3s` or `4s` unknowns for `s` spikes), but their entries come from the
//! Dirichlet kernel and its derivatives, which decay like `1/(N|τ_j − τ_l|)` away from the diagonal
//! when spikes are separated: the per-spike diagonal blocks hold most of the matrix. Conjugate
//! gradients (Hestenes & Stiefel 1952, J. Res. Nat. Bur. Standards 49(6); in the preconditioned form
//! of Nocedal & Wright 2006, *Numerical Optimization*, 2nd ed., Alg. 5.3) with the block-diagonal
//! (block Jacobi) preconditioner then converge in a few tens of `O(n²)` products, against the `n³/3`
//! of a Cholesky factorisation. A direction of non-positive curvature ends the iteration with
//! [`CgFailure::NotPositive`], as in truncated (Newton–)CG (Nocedal & Wright 2006, ch. 7.1): the
//! damped Newton methods that call it then raise their damping, as they do when a Cholesky
//! factorisation fails.
//!
//! faer 0.21 has a conjugate-gradient operator (`faer::operator::conjugate_gradient`); it does not
//! report negative curvature, which the damping loops need, so this short one is used.

use faer::linalg::matmul::matmul;
use faer::{Accum, MatRef, Par};

/// Systems from this many unknowns on (`3s` for the slide and the refinement, `3s`/`4s` for the
/// certificates, `2s` for the least squares of `lstsq`: 150 spikes) are solved by [`solve_spd`]
/// instead of a dense Cholesky factorisation. Chosen, not timed: the factorisation's `n³/3` flops equal
/// the `2kn²` of `k` iterations at `n ≈ 6k`, and on the dense invented scenes `k` was 10–20 (counted),
/// so the iterations win from about `n ≈ 120`; 300 leaves the supports of every existing test on the
/// dense path.
pub(crate) const ITERATIVE_FROM: usize = 300;

/// Why a conjugate-gradient solve failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum CgFailure {
    /// The matrix (or a diagonal block of it) is not positive definite.
    NotPositive,
    /// A non-finite value appeared.
    NonFinite,
}

/// Systems from this many unknowns on take their products on every core (rayon; each entry is
/// computed by one thread in a fixed order, so the result does not depend on the thread count).
const PARALLEL_FROM: usize = 1024;

/// `y = (H + diag(shift)) x` for a dense symmetric `H`.
fn apply(h: MatRef<'_, f64>, shift: &[f64], x: &[f64], y: &mut [f64]) {
    let n = x.len();
    let xm = MatRef::from_column_major_slice(x, n, 1);
    let ym = faer::MatMut::from_column_major_slice_mut(y, n, 1);
    let par = if n >= PARALLEL_FROM {
        Par::rayon(0)
    } else {
        Par::Seq
    };
    matmul(ym, Accum::Replace, h, xm, 1.0, par);
    for ((yi, xi), di) in y.iter_mut().zip(x).zip(shift) {
        *yi += di * xi;
    }
}

/// Block-Jacobi preconditioner: the Cholesky factors of the diagonal blocks (one block per spike).
struct BlockJacobi {
    blocks: Vec<Vec<usize>>,
    /// Lower Cholesky factors, row-major `b × b` each.
    factors: Vec<Vec<f64>>,
}

impl BlockJacobi {
    fn new(h: MatRef<'_, f64>, shift: &[f64], blocks: Vec<Vec<usize>>) -> Result<Self, CgFailure> {
        let mut factors = Vec::with_capacity(blocks.len());
        for idx in &blocks {
            let b = idx.len();
            let mut l = vec![0.0; b * b];
            for i in 0..b {
                for j in 0..=i {
                    let mut v = h[(idx[i], idx[j])] + if i == j { shift[idx[i]] } else { 0.0 };
                    for k in 0..j {
                        v -= l[i * b + k] * l[j * b + k];
                    }
                    if i == j {
                        if v.is_nan() || v <= 0.0 {
                            return Err(CgFailure::NotPositive);
                        }
                        l[i * b + i] = v.sqrt();
                    } else {
                        l[i * b + j] = v / l[j * b + j];
                    }
                }
            }
            factors.push(l);
        }
        Ok(BlockJacobi { blocks, factors })
    }

    /// `z = M⁻¹ r` block by block (forward then backward substitution).
    fn apply(&self, r: &[f64], z: &mut [f64]) {
        let mut w = [0.0; 8];
        for (idx, l) in self.blocks.iter().zip(&self.factors) {
            let b = idx.len();
            for i in 0..b {
                let mut v = r[idx[i]];
                for k in 0..i {
                    v -= l[i * b + k] * w[k];
                }
                w[i] = v / l[i * b + i];
            }
            for i in (0..b).rev() {
                let mut v = w[i];
                for k in i + 1..b {
                    v -= l[k * b + i] * w[k];
                }
                w[i] = v / l[i * b + i];
            }
            for i in 0..b {
                z[idx[i]] = w[i];
            }
        }
    }
}

/// Solve `(H + diag(shift)) x = b` for a dense symmetric `H` by block-Jacobi preconditioned
/// conjugate gradients (module docs), `blocks` listing the unknowns of each block (at most 8 each;
/// every unknown in exactly one block). Stops when `‖r‖ ≤ rel_tol·‖b‖` or after `max_iter`
/// iterations (the last iterate is returned: for a positive definite matrix every iterate lowers the
/// quadratic model, so it is a usable step).
///
/// # Errors
/// [`CgFailure::NotPositive`] at a diagonal block or a search direction of non-positive curvature;
/// [`CgFailure::NonFinite`] when a value is not finite.
pub(crate) fn solve_spd(
    h: MatRef<'_, f64>,
    shift: &[f64],
    b: &[f64],
    blocks: Vec<Vec<usize>>,
    rel_tol: f64,
    max_iter: usize,
) -> Result<Vec<f64>, CgFailure> {
    let n = b.len();
    let pre = BlockJacobi::new(h, shift, blocks)?;
    let dot = |u: &[f64], v: &[f64]| u.iter().zip(v).map(|(a, b)| a * b).sum::<f64>();
    let bnorm = dot(b, b).sqrt();
    let mut x = vec![0.0; n];
    if bnorm == 0.0 {
        return Ok(x);
    }
    if !bnorm.is_finite() {
        return Err(CgFailure::NonFinite);
    }
    let mut r = b.to_vec();
    let mut z = vec![0.0; n];
    pre.apply(&r, &mut z);
    let mut p = z.clone();
    let mut ap = vec![0.0; n];
    let mut rz = dot(&r, &z);
    for _ in 0..max_iter {
        apply(h, shift, &p, &mut ap);
        let curvature = dot(&p, &ap);
        if !curvature.is_finite() {
            return Err(CgFailure::NonFinite);
        }
        if curvature <= 0.0 {
            return Err(CgFailure::NotPositive);
        }
        let alpha = rz / curvature;
        for i in 0..n {
            x[i] += alpha * p[i];
            r[i] -= alpha * ap[i];
        }
        if dot(&r, &r).sqrt() <= rel_tol * bnorm {
            break;
        }
        pre.apply(&r, &mut z);
        let rz_next = dot(&r, &z);
        let beta = rz_next / rz;
        rz = rz_next;
        for i in 0..n {
            p[i] = z[i] + beta * p[i];
        }
    }
    if x.iter().all(|v| v.is_finite()) {
        Ok(x)
    } else {
        Err(CgFailure::NonFinite)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::linalg::solvers::Solve;
    use faer::{Mat, Side};

    /// A symmetric positive definite system shaped like the slide's (3×3 blocks, decaying coupling):
    /// the iterative solution against faer's Cholesky solve of the same matrix.
    #[test]
    fn matches_dense_cholesky_solve() {
        let s = 60;
        let n = 3 * s;
        let h = Mat::<f64>::from_fn(n, n, |i, j| {
            let (a, b) = (i % s, j % s);
            let d = (a as f64 - b as f64).abs();
            let base = 0.3 * ((i * 7 + j * 7) as f64 * 0.1).cos() / (1.0 + 4.0 * d);
            if i == j {
                4.0 + (i as f64 * 0.37).sin()
            } else {
                base
            }
        });
        // Symmetrise.
        let h = Mat::<f64>::from_fn(n, n, |i, j| 0.5 * (h[(i, j)] + h[(j, i)]));
        let shift = vec![0.1; n];
        let b: Vec<f64> = (0..n).map(|i| (i as f64 * 0.91).sin()).collect();
        let blocks: Vec<Vec<usize>> = (0..s).map(|j| vec![j, s + j, 2 * s + j]).collect();
        let x = solve_spd(h.as_ref(), &shift, &b, blocks, 1e-14, 500).unwrap();
        let damped =
            Mat::<f64>::from_fn(n, n, |i, j| h[(i, j)] + if i == j { shift[i] } else { 0.0 });
        let rhs = Mat::<f64>::from_fn(n, 1, |i, _| b[i]);
        let want = damped.llt(Side::Lower).unwrap().solve(&rhs);
        for i in 0..n {
            assert!(
                (x[i] - want[(i, 0)]).abs() < 1e-12,
                "{i}: {} vs {}",
                x[i],
                want[(i, 0)]
            );
        }
    }

    /// An indefinite matrix is reported, not solved.
    #[test]
    fn reports_non_positive_curvature() {
        let n = 6;
        let h = Mat::<f64>::from_fn(n, n, |i, j| {
            if i == j {
                if i == 4 {
                    -1.0
                } else {
                    1.0
                }
            } else {
                0.0
            }
        });
        let b = vec![1.0; n];
        let blocks: Vec<Vec<usize>> = (0..n).map(|i| vec![i]).collect();
        assert_eq!(
            solve_spd(h.as_ref(), &[0.0; 6], &b, blocks, 1e-12, 50),
            Err(CgFailure::NotPositive)
        );
    }
}
