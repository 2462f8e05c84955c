//! ESPRIT with total least squares (Roy & Kailath 1989, IEEE TASSP 37(7), 984–995), method name
//! `esprit`.
//!
//! The signal subspace `U_s` (`L × r`) of the Hankel data matrix equals `A_L T` for an invertible `T`
//! (see [`hankel`](super::hankel)), and the Vandermonde structure gives the rotational invariance
//! `A_↓ = A_↑ diag(z)` between the last and the first `L − 1` rows. Hence `U_↓ = U_↑ Ψ` with
//! `Ψ = T^{−1} diag(z) T`, whose eigenvalues are the `z_j = exp(−i2πτ_j)`. With noise the equation holds
//! only approximately and is solved in the total-least-squares sense: with the right singular vectors
//! `V = [[V_11, V_12], [V_21, V_22]]` (blocks `r × r`) of `[U_↑, U_↓]`,
//!
//! ```text
//!   Ψ_TLS = −V_12 V_22^{−1},    τ_j = −arg(z_j) / (2π)  (wrapped to [0, 1)),   z_j = eig(Ψ_TLS).
//! ```

use super::{run, Baseline, SubspaceSettings};
use crate::error::Result;
use crate::estimator::{ArrayEstimate, Estimate, Estimator};
use crate::kernels::hankel::numerical;
use crate::model::{Measurements, Snapshots};
use faer::linalg::solvers::Solve;
use faer::{c64, Mat, MatRef};

/// ESPRIT with total least squares (method name `esprit`; Roy & Kailath 1989, IEEE TASSP 37(7)).
///
/// Positions from the eigenvalues of the TLS rotation operator `Ψ = −V_12 V_22^{−1}` (module docs),
/// amplitudes by least squares on the exact model (column-pivoted QR). Exact data
/// with at least `2s` coefficients are recovered at any separation (Liao & Fannjiang 2016, ACHA 40(1)).
///
/// # Examples
/// ```
/// use finespike::subspace::{Esprit, OrderSelection, SubspaceSettings};
/// use finespike::{Domain, Estimator, Measurements, Spikes};
/// use num_complex::Complex64;
/// // An invented scene: two lines 0.3/fc apart, exact data, 17 coefficients.
/// let truth = Spikes::from_parts(&[0.4, 0.4 + 0.3 / 8.0], &[Complex64::new(1.0, 0.0), Complex64::new(0.0, 1.0)])?;
/// let idx: Vec<i64> = (-8..=8).collect();
/// let data = Measurements::synthesize(&truth, -8, 8, &idx, Domain::Fourier)?;
/// let settings = SubspaceSettings::default().with_order(OrderSelection::Given(2))?;
/// let est = Esprit::new(settings).estimate(&data)?;
/// assert!((est.spikes.positions()[1] - truth.positions()[1]).abs() < 1e-10);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct Esprit {
    /// Window, forward–backward averaging, model order, decomposition, refinement.
    pub settings: SubspaceSettings,
}

impl Esprit {
    /// With the given settings.
    pub fn new(settings: SubspaceSettings) -> Self {
        Esprit { settings }
    }
}

impl Estimator for Esprit {
    fn name(&self) -> &'static str {
        "esprit"
    }

    /// # Errors
    /// [`crate::Error::NeedsContiguous`] for a measured set with gaps, [`crate::Error::RunTooShort`] for fewer than two coefficients;
    /// [`crate::Error::InvalidSetting`] for a window or given order the data cannot support;
    /// [`crate::Error::Numerical`] if a decomposition fails.
    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        run(Baseline::Esprit, &self.settings, data)
    }

    /// Many snapshots of a full uniform array: the method on the forward–backward averaged,
    /// spatially smoothed sample covariance (module docs of `subspace::snapshots`); one snapshot:
    /// [`Estimator::estimate`] on it.
    ///
    /// # Errors
    /// [`crate::Error::NeedsContiguous`] for missing sensors (naming `sdp`),
    /// [`crate::Error::InvalidSetting`] for a subarray or given order the array cannot support,
    /// [`crate::Error::TooLarge`] past the memory and work limits.
    fn estimate_snapshots(&self, data: &Snapshots) -> Result<ArrayEstimate> {
        super::snapshots::run(Baseline::Esprit, &self.settings, data)
    }
}

/// The eigenvalues `z_j` of the TLS-ESPRIT rotation operator of an orthonormal signal basis `u`
/// (`L × r`, `L ≥ r + 1`): see the module docs.
pub(crate) fn tls_esprit(u: MatRef<'_, c64>) -> Result<Vec<c64>> {
    let (l, r) = (u.nrows(), u.ncols());
    // C = [U_↑, U_↓], (L − 1) × 2r.
    let c = Mat::<c64>::from_fn(l - 1, 2 * r, |i, j| {
        if j < r {
            u[(i, j)]
        } else {
            u[(i + 1, j - r)]
        }
    });
    // The right singular vectors of C are those of its triangular factor R (C^H C = R^H R); a full
    // SVD of the small 2r × 2r factor gives all of V without forming the (L − 1)² factor U.
    let mut small = Mat::<c64>::zeros(2 * r, 2 * r);
    if l > 2 * r {
        let qr = c.qr();
        let rf = qr.thin_R();
        for i in 0..2 * r {
            for j in i..2 * r {
                small[(i, j)] = rf[(i, j)];
            }
        }
    } else {
        for i in 0..l - 1 {
            for j in 0..2 * r {
                small[(i, j)] = c[(i, j)];
            }
        }
    }
    let svd = small
        .svd()
        .map_err(|e| numerical("TLS-ESPRIT singular value decomposition", e))?;
    let v = svd.V();
    let v12 = v.get(..r, r..).to_owned();
    let v22 = v.get(r.., r..).to_owned();
    // eig(−V_12 V_22^{−1}) = eig(−V_22^{−1} V_12) (similar matrices); full pivoting for safety.
    let x = v22.full_piv_lu().solve(&v12);
    let psi = Mat::<c64>::from_fn(r, r, |i, j| -x[(i, j)]);
    psi.eigenvalues()
        .map_err(|e| numerical("TLS-ESPRIT eigenvalues", e))
}
