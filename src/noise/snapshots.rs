//! The noise level of a multi-snapshot record ([`estimate_snapshot_sigma`]).
//!
//! With enough snapshots the sample covariance `R̂ = X Xᴴ / L` of the `p = |K|` measured sensors has
//! `p − s` eigenvalues that estimate `σ²` (the noise subspace; Wax & Kailath 1985, IEEE TASSP 33(2)),
//! with `s` the number of sources, chosen here by MDL. Fully coherent sources lower the covariance's
//! rank below `s`, which only adds eigenvalues to the noise set: the level is still `σ²`.
//!
//! Why at least `2p` snapshots: below `p` the covariance is singular (rank `L`), and near `p` its
//! smallest noise eigenvalues spread far below `σ²` (Marchenko–Pastur: the noise eigenvalues of a
//! `p × L` white matrix fill `σ²(1 ± √(p/L))²`, so the MDL split point moves); with `L ≥ 2p` the
//! mean of the noise eigenvalues stays unbiased but for the share the `s` signal eigenvalues absorb.
//! The threshold `2p` is common practice, not a cited value. With fewer snapshots, each snapshot's
//! single-record estimate ([`crate::estimate_sigma`]) is pooled as the root mean square.

use super::{estimate_sigma, SigmaEstimate, SigmaMethod};
use crate::error::{Error, Result};
use crate::kernels::budget::MEMORY_LIMIT_BYTES;
use crate::kernels::criteria::mdl;
use crate::kernels::rank::looks_exact;
use crate::model::Snapshots;
use nalgebra::SymmetricEigen;

/// Largest number of measured sensors whose sample covariance is decomposed: 4096 (a 4096 × 4096
/// complex matrix is 268 MB, and its eigen-decomposition some 10¹¹ operations).
pub const MAX_COVARIANCE_SENSORS: usize = 4096;

/// Estimate `σ` (`E|n|² = σ²` per sensor and snapshot) of a multi-snapshot record (module docs).
///
/// Exact data (noise eigenvalues at rounding level) give `σ = 0`.
///
/// # Errors
/// [`Error::TooLarge`] beyond [`MAX_COVARIANCE_SENSORS`] measured sensors with at least `2|K|`
/// snapshots; otherwise the errors of [`crate::estimate_sigma`] for a snapshot (e.g. a record too
/// short for the single-record estimate).
pub fn estimate_snapshot_sigma(data: &Snapshots) -> Result<SigmaEstimate> {
    let p = data.len();
    let l = data.snapshot_count();
    if l < 2 * p {
        return pooled(data);
    }
    if p > MAX_COVARIANCE_SENSORS || (p * p) as f64 * 16.0 > MEMORY_LIMIT_BYTES {
        return Err(Error::TooLarge {
            method: "noise level",
            what: "the sample covariance".into(),
            needed: format!("{p} × {p} entries"),
            limit: format!("{MAX_COVARIANCE_SENSORS} sensors"),
            advice: "give the noise level σ".into(),
        });
    }
    let eig = SymmetricEigen::new(data.sample_covariance());
    let mut lambda: Vec<f64> = eig.eigenvalues.iter().map(|&x| x.max(0.0)).collect();
    lambda.sort_by(|a, b| b.total_cmp(a));
    // The rank rule on the eigenvalues themselves: the covariance's rounding is ε relative to λ_1
    // (√ε in singular-value terms, above the rule's 1e-10), so exact data are judged on λ.
    let exact = looks_exact(&lambda);
    let order = if exact {
        crate::kernels::rank::numerical_rank(
            &lambda,
            crate::kernels::rank::DEFAULT_RANK_TOLERANCE,
            p - 1,
        )
    } else {
        mdl(&lambda, l, p - 1)
    };
    let noise = &lambda[order..];
    let sigma = if exact {
        0.0
    } else {
        (noise.iter().sum::<f64>() / noise.len() as f64).sqrt()
    };
    Ok(SigmaEstimate {
        sigma,
        method: SigmaMethod::SampleCovariance {
            snapshots: l,
            order,
            noise_eigenvalues: noise.len(),
        },
        colour: None,
    })
}

/// The root mean square of the snapshots' single-record estimates.
fn pooled(data: &Snapshots) -> Result<SigmaEstimate> {
    let l = data.snapshot_count();
    let mut sum = 0.0;
    for t in 0..l {
        let s = estimate_sigma(&data.snapshot(t)?)?.sigma;
        sum += s * s;
    }
    Ok(SigmaEstimate {
        sigma: (sum / l as f64).sqrt(),
        method: SigmaMethod::PooledSnapshots { snapshots: l },
        colour: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DMatrix;
    use num_complex::Complex64;
    use rand::{rngs::StdRng, Rng, SeedableRng};
    use rand_distr::StandardNormal;

    /// Two sources on 8 sensors, `L` snapshots, complex white noise of level `sigma`.
    fn record(l: usize, sigma: f64, seed: u64) -> Snapshots {
        let mut rng = StdRng::seed_from_u64(seed);
        let f = [0.1, 0.37];
        let mut unit = move || {
            let re: f64 = rng.sample(StandardNormal);
            let im: f64 = rng.sample(StandardNormal);
            Complex64::new(re, im) / 2f64.sqrt()
        };
        let amps: Vec<Complex64> = (0..2 * l).map(|_| unit()).collect();
        let mut noise = || unit() * sigma;
        let x = DMatrix::from_fn(8, l, |m, t| {
            let signal: Complex64 = (0..2)
                .map(|j| {
                    amps[2 * t + j]
                        * Complex64::from_polar(1.0, 2.0 * std::f64::consts::PI * f[j] * m as f64)
                })
                .sum();
            signal + noise()
        });
        Snapshots::from_sensors(&x).unwrap()
    }

    #[test]
    fn covariance_level_matches_the_noise() {
        // 8 sensors × 400 snapshots: 6 noise eigenvalues of 400 snapshots each, so the estimate of σ²
        // has a relative standard deviation near 1/√(6·400) ≈ 2 %; 10 % is five of those.
        let est = estimate_snapshot_sigma(&record(400, 0.3, 1)).unwrap();
        assert!((est.sigma / 0.3 - 1.0).abs() < 0.1, "{est:?}");
        assert!(matches!(
            est.method,
            SigmaMethod::SampleCovariance { order: 2, .. }
        ));
    }

    #[test]
    fn few_snapshots_are_pooled() {
        let est = estimate_snapshot_sigma(&record(4, 0.3, 2)).unwrap();
        assert!(matches!(
            est.method,
            SigmaMethod::PooledSnapshots { snapshots: 4 }
        ));
        assert!(est.sigma > 0.0);
    }

    #[test]
    fn exact_snapshots_give_zero() {
        let est = estimate_snapshot_sigma(&record(40, 0.0, 3)).unwrap();
        assert_eq!(est.sigma, 0.0);
    }
}
