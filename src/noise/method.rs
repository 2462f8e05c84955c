//! How a noise level was estimated ([`SigmaMethod`]).

use serde::Serialize;

/// How a noise level was estimated.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum SigmaMethod {
    /// Noise-subspace singular values of a Hankel matrix of a contiguous run (module docs).
    HankelSubspace {
        /// First index `k0` of the run used.
        first_index: i64,
        /// Length `R` of the run.
        run_length: usize,
        /// Window (rows) `L` of the Hankel matrix.
        window: usize,
        /// Number of signal components `ŝ` set aside.
        order: usize,
        /// Complex noise degrees of freedom `LP − ŝ(L + P) + Re Σ_m u_m v_m` (module docs).
        noise_dof: f64,
    },
    /// Noise-subspace singular values of a Hankel matrix whose columns are the fully measured windows
    /// of a record with gaps (module docs, "Gaps").
    GappedHankel {
        /// Rows `L`: the number of lags of a window.
        rows: usize,
        /// Columns `P`: the fully measured windows used.
        windows: usize,
        /// Largest lag `α_{L−1}` (a window spans `α_{L−1} + 1` indices).
        span: usize,
        /// Number of signal components `ŝ` set aside.
        order: usize,
        /// Complex noise degrees of freedom (module docs).
        noise_dof: f64,
    },
    /// Whole-band level of the noise spectrum, lines set aside (module docs, "Coloured noise"): used
    /// when the noise floor is not flat.
    NoiseFloor {
        /// Lines removed before the level was taken.
        lines_removed: usize,
        /// Degrees of freedom `|K| − 3s/2` of the level.
        noise_dof: f64,
        /// The Hankel (sample-to-sample) estimate it replaces, for comparison.
        white_sigma: f64,
    },
    /// Noise eigenvalues of the sample covariance of a multi-snapshot record (Wax & Kailath 1985):
    /// the mean of the `|K| − ŝ` smallest, `ŝ` chosen by MDL.
    SampleCovariance {
        /// Snapshots `L` behind the covariance.
        snapshots: usize,
        /// Sources `ŝ` set aside (MDL).
        order: usize,
        /// Noise eigenvalues averaged.
        noise_eigenvalues: usize,
    },
    /// Too few snapshots for a sample covariance: the single-record estimate of every snapshot,
    /// pooled as the root mean square.
    PooledSnapshots {
        /// Snapshots pooled.
        snapshots: usize,
    },
}

impl std::fmt::Display for SigmaMethod {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            SigmaMethod::HankelSubspace { run_length, .. } => write!(
                f,
                "noise subspace of a Hankel matrix of {run_length} contiguous samples (white noise)"
            ),
            SigmaMethod::GappedHankel { windows, .. } => write!(
                f,
                "noise subspace of a Hankel matrix of {windows} fully measured windows (record with \
                 gaps)"
            ),
            SigmaMethod::NoiseFloor {
                lines_removed,
                white_sigma,
                ..
            } => write!(
                f,
                "whole-band level of the noise spectrum with {lines_removed} lines set aside, because \
                 the noise floor is not flat (the sample-to-sample level is {white_sigma:.4})"
            ),
            SigmaMethod::SampleCovariance {
                snapshots,
                order,
                noise_eigenvalues,
            } => write!(
                f,
                "mean of the {noise_eigenvalues} noise eigenvalues of the sample covariance of \
                 {snapshots} snapshots ({order} sources set aside by MDL)"
            ),
            SigmaMethod::PooledSnapshots { snapshots } => write!(
                f,
                "single-record estimates of {snapshots} snapshots, pooled (too few snapshots for a \
                 sample covariance)"
            ),
        }
    }
}
