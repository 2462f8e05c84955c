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
pub use crate::kernels::criteria::{aic, mdl};
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

#[cfg(test)]
mod tests {
    use super::*;

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
