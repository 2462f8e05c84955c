//! The numerical-rank rule for singular values of a data matrix, and the exact-data test built on
//! it: the one place where "these singular values are rounding errors" is decided, for the noise-level
//! estimate ([`crate::noise`]) and the model order of the subspace methods ([`crate::subspace`]).

/// Default relative threshold of the numerical rank, `s_i > 1e-10 · s_1`.
///
/// Why this value: for exact data written in double precision, the singular values of the Hankel matrix
/// beyond the true rank are rounding errors, of order `ε · s_1` times a modest factor in `N` (the data's
/// own rounding plus the backward error of the SVD, `ε ≈ 2.2e-16`; at most 4.3e-15 · s_1 on the
/// noiseless reference cases of the test suite). A threshold of `1e-10` sits more than four orders of
/// magnitude above that floor and still counts signal singular values down to `1e-10 · s_1`, i.e.
/// spikes far closer than the Rayleigh length (four spikes `0.3/fc` apart give `s_4/s_1 ≈ 1e-3`).
pub const DEFAULT_RANK_TOLERANCE: f64 = 1e-10;

/// Numerical rank: the number of `singular_values` (non-increasing) above `rel_tol · s_1`, at most `kmax`.
pub fn numerical_rank(singular_values: &[f64], rel_tol: f64, kmax: usize) -> usize {
    let top = singular_values.first().copied().unwrap_or(0.0);
    if top <= 0.0 {
        return 0;
    }
    singular_values
        .iter()
        .take_while(|&&s| s > rel_tol * top)
        .count()
        .min(kmax)
}

/// True when the singular values `sv` (non-increasing) end at rounding level: the last one is at most
/// `DEFAULT_RANK_TOLERANCE · s_1` (or all are zero), i.e. the data are exact (see
/// [`DEFAULT_RANK_TOLERANCE`]).
pub(crate) fn looks_exact(sv: &[f64]) -> bool {
    match (sv.first(), sv.last()) {
        (Some(&top), Some(&last)) => top <= 0.0 || last <= DEFAULT_RANK_TOLERANCE * top,
        _ => true,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rank_and_exactness() {
        assert_eq!(numerical_rank(&[2.0, 1.0, 1e-17, 0.0], 1e-10, 3), 2);
        assert_eq!(numerical_rank(&[2.0, 1.0, 0.5], 1e-10, 2), 2);
        assert_eq!(numerical_rank(&[0.0, 0.0], 1e-10, 3), 0);
        assert!(looks_exact(&[1.0, 0.5, 1e-15]));
        assert!(!looks_exact(&[1.0, 0.5, 1e-6]));
        assert!(looks_exact(&[0.0, 0.0]));
        assert!(looks_exact(&[]));
    }
}
