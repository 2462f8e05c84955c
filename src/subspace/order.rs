//! Model-order selection: how many spikes (complex exponentials) the data hold.
//!
//! The order is either given, or read off the singular values `s_1 ≥ s_2 ≥ …` of the forward Hankel
//! data matrix `H_{p,q} = h_{p+q}` with `p` rows and `n = N − p + 1` columns. Its columns are the
//! (overlapping) snapshots of a `p`-sensor array, so `λ_i = s_i² / n` are the eigenvalues of the sample
//! covariance `H H^H / n`, and the information-theoretic criteria of Wax & Kailath (1985, IEEE TASSP
//! 33(2), 387–392) apply (the estimators use `p = ⌈N/3⌉` rows, so that `n ≈ 2p`; see
//! [`SubspaceSettings::order_window`](super::SubspaceSettings::order_window)):
//!
//! ```text
//!   L(k)    = n (p − k) log( a(k) / g(k) ),   a, g = arithmetic, geometric mean of λ_{k+1}, …, λ_p
//!   MDL(k)  = L(k) + ½ k (2p − k) log n
//!   AIC(k)  = 2 L(k) + 2 k (2p − k)
//! ```
//!
//! and the order is the `k` that minimises the criterion (`k(2p − k)` counts the free real parameters
//! of a rank-`k` complex covariance model; the formulas are written from memory of the paper). MDL is
//! consistent; AIC tends to overestimate the order at high SNR.
//!
//! For exact data the noise eigenvalues are rounding errors and the criteria have nothing to weigh:
//! use the numerical rank, the number of singular values above `rel_tol · s_1` (see
//! [`DEFAULT_RANK_TOLERANCE`] for the choice of `rel_tol`; the rule and the exact-data test live in
//! the kernel layer, shared with the noise-level estimate). The default [`OrderSelection::Auto`] does
//! so by itself when the singular values of the full-window Hankel matrix reach rounding level, and
//! uses MDL otherwise.
//!
//! Measured behaviour (example `subspace_montecarlo`: fc = 16, three lines 4/fc apart, 200 draws):
//! MDL finds the true order in 183 of 200 draws at every SNR from 10 to 40 dB and overestimates by
//! one otherwise; AIC in 145–146 of 200. The failures do not depend on the SNR: the snapshots of a
//! Hankel matrix overlap, so its noise eigenvalues spread more than the independent snapshots of the
//! criteria's derivation assume.

use crate::error::{Error, Result};
pub use crate::estimator::{ModelOrder, OrderMethod};
use crate::kernels::rank::DEFAULT_RANK_TOLERANCE;

/// How the model order is chosen (a setting of every subspace estimator).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum OrderSelection {
    /// The order is known: exactly this many spikes (for a real-valued record, this many lines, i.e.
    /// twice as many complex exponentials).
    Given(usize),
    /// The default: the numerical rank (with [`DEFAULT_RANK_TOLERANCE`]) when the data are exact to
    /// rounding — the Hankel singular values drop below `DEFAULT_RANK_TOLERANCE · s_1` — and MDL
    /// otherwise. The diagnostics report which of the two was used. (MDL on exact data weighs rounding
    /// errors against each other and picks an arbitrary order.)
    #[default]
    Auto,
    /// Minimum description length (Wax & Kailath 1985): consistent for noisy data.
    Mdl,
    /// Akaike's information criterion (Wax & Kailath 1985): tends to overestimate.
    Aic,
    /// Numerical rank for exact data: the number of singular values above `rel_tol · s_1`.
    NumericalRank {
        /// Relative threshold, in `(0, 1)` ([`DEFAULT_RANK_TOLERANCE`] is a good choice).
        rel_tol: f64,
    },
}

impl OrderSelection {
    /// Numerical rank with the [`DEFAULT_RANK_TOLERANCE`].
    pub fn numerical_rank() -> Self {
        OrderSelection::NumericalRank {
            rel_tol: DEFAULT_RANK_TOLERANCE,
        }
    }

    /// Check the selection's own parameters.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] for `Given(0)` or a rank tolerance outside `(0, 1)`.
    pub fn validated(self) -> Result<Self> {
        match self {
            OrderSelection::Given(0) => Err(Error::InvalidSetting {
                name: "order",
                value: "0".into(),
                rule: "a given model order must be at least 1",
            }),
            OrderSelection::NumericalRank { rel_tol } if !(rel_tol > 0.0 && rel_tol < 1.0) => {
                Err(Error::InvalidSetting {
                    name: "rel_tol",
                    value: rel_tol.to_string(),
                    rule: "the numerical-rank threshold must lie in (0, 1)",
                })
            }
            other => Ok(other),
        }
    }
}

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

    #[test]
    fn settings_are_checked() {
        assert!(OrderSelection::Given(0).validated().is_err());
        assert!(OrderSelection::NumericalRank { rel_tol: 1.5 }
            .validated()
            .is_err());
        assert!(OrderSelection::numerical_rank().validated().is_ok());
        assert_eq!(OrderMethod::NumericalRank.to_string(), "numerical rank");
    }
}
