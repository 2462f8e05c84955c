//! Information-theoretic model-order criteria on sample-covariance eigenvalues (Wax & Kailath 1985,
//! IEEE TASSP 33(2), 387–392), shared by the subspace methods (Hankel snapshots, see
//! [`crate::subspace::order`]) and the noise level of multi-snapshot records.

/// The log-likelihood term `L(k) = n (p − k) log(a(k)/g(k))` for every `k = 0..p`, from the covariance
/// eigenvalues `λ` (sorted non-increasing, `p = λ.len()`).
///
/// Eigenvalues are floored at `ε² λ_1` so that exact zeros (exact data) give equal noise eigenvalues
/// instead of `log 0`.
fn likelihood_terms(lambda: &[f64], snapshots: usize) -> Vec<f64> {
    let p = lambda.len();
    let top = lambda
        .first()
        .copied()
        .unwrap_or(0.0)
        .max(f64::MIN_POSITIVE);
    let floor = top * f64::EPSILON * f64::EPSILON;
    let l: Vec<f64> = lambda.iter().map(|&x| x.max(floor)).collect();
    let n = snapshots as f64;
    (0..p)
        .map(|k| {
            let tail = &l[k..];
            let m = tail.len() as f64;
            let mean = tail.iter().sum::<f64>() / m;
            let log_geo = tail.iter().map(|x| x.ln()).sum::<f64>() / m;
            // log(a/g) ≥ 0 by the AM–GM inequality; clamp the rounding below zero.
            n * m * (mean.ln() - log_geo).max(0.0)
        })
        .collect()
}

/// MDL order estimate (Wax & Kailath 1985): `argmin_{0 ≤ k ≤ kmax} L(k) + ½ k(2p − k) log n`, from the
/// sample-covariance eigenvalues `lambda` (non-increasing) of `p = lambda.len()` sensors and `snapshots`
/// snapshots `n`.
pub fn mdl(lambda: &[f64], snapshots: usize, kmax: usize) -> usize {
    let p = lambda.len() as f64;
    let log_n = (snapshots.max(1) as f64).ln();
    argmin(&likelihood_terms(lambda, snapshots), kmax, |k| {
        0.5 * k * (2.0 * p - k) * log_n
    })
}

/// AIC order estimate (Wax & Kailath 1985): `argmin_{0 ≤ k ≤ kmax} 2 L(k) + 2 k(2p − k)`, inputs as in
/// [`mdl`].
pub fn aic(lambda: &[f64], snapshots: usize, kmax: usize) -> usize {
    let p = lambda.len() as f64;
    let terms: Vec<f64> = likelihood_terms(lambda, snapshots)
        .iter()
        .map(|t| 2.0 * t)
        .collect();
    argmin(&terms, kmax, |k| 2.0 * k * (2.0 * p - k))
}

fn argmin(terms: &[f64], kmax: usize, penalty: impl Fn(f64) -> f64) -> usize {
    let mut best = 0;
    let mut best_value = f64::INFINITY;
    for (k, t) in terms.iter().enumerate().take(kmax + 1) {
        let v = t + penalty(k as f64);
        if v < best_value {
            best_value = v;
            best = k;
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn criteria_find_a_clear_gap() {
        // Three strong eigenvalues over a flat noise floor with small scatter.
        let lambda = [
            100.0, 50.0, 20.0, 1.05, 1.0, 0.98, 0.97, 1.02, 0.99, 1.01, 0.96,
        ];
        assert_eq!(mdl(&lambda, 40, 10), 3);
        assert_eq!(aic(&lambda, 40, 10), 3);
        assert_eq!(mdl(&lambda, 40, 2), 2);
    }

    #[test]
    fn pure_noise_gives_order_zero() {
        let lambda = [1.03, 1.01, 1.0, 0.99, 0.98, 0.97];
        assert_eq!(mdl(&lambda, 100, 5), 0);
    }

    #[test]
    fn exact_zeros_do_not_produce_nan() {
        let lambda = [4.0, 1.0, 0.0, 0.0, 0.0];
        assert_eq!(mdl(&lambda, 10, 4), 2);
    }
}
