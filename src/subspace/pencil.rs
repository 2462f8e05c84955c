//! Matrix pencil (Hua & Sarkar 1990, IEEE TASSP 38(5), 814–824), method name `pencil`.
//!
//! Hua & Sarkar stack the data in `Y` (`(N − P) × (P + 1)`, pencil parameter `P`), take the `r`
//! dominant right singular vectors `V'`, and find the `z_j` as the non-zero eigenvalues of the pencil
//! `Y_2 − z Y_1` reduced to `(V_1'^H)^+ V_2'^H`, where `V_1'` (`V_2'`) is `V'` without its last (first)
//! row. `Y^T` is the Hankel matrix with `L = P + 1` rows, whose left singular vectors are `W = conj(V')`,
//! so the same eigenvalues are those of the least-squares solution of the shift equation
//!
//! ```text
//!   W_↑ Φ ≈ W_↓,   Φ = W_↑^+ W_↓,   z_j = eig(Φ),   τ_j = −arg(z_j)/(2π)  (wrapped to [0, 1)),
//! ```
//!
//! (`eig(V_2'^H (V_1'^H)^+) = eig((W_↑^+ W_↓)^T)`). This is what is computed, with the window `L` of
//! [`SubspaceSettings`](super::SubspaceSettings) (Hua & Sarkar's pencil parameter is `L − 1`). It
//! differs from [`Esprit`](super::Esprit) only in solving the shift equation by least squares rather
//! than total least squares.

use super::{run, Baseline, SubspaceSettings};
use crate::error::Result;
use crate::estimator::{ArrayEstimate, Estimate, Estimator};
use crate::kernels::hankel::numerical;
use crate::model::{Measurements, Snapshots};
use faer::linalg::solvers::SolveLstsqCore;
use faer::{c64, Conj, Mat, MatRef};

/// Matrix pencil (method name `pencil`; Hua & Sarkar 1990, IEEE TASSP 38(5)).
///
/// Positions from the eigenvalues of `Φ = W_↑^+ W_↓` on the dominant singular subspace (module docs),
/// amplitudes by least squares on the exact model.
///
/// # Examples
/// ```
/// use finespike::subspace::{MatrixPencil, OrderSelection, SubspaceSettings};
/// use finespike::{Estimator, Measurements};
/// use num_complex::Complex64;
/// // An invented record: 16 time samples of two lines at 0.1 and 0.3 cycles/sample.
/// let x: Vec<Complex64> = (0..16)
///     .map(|n| {
///         let t = 2.0 * std::f64::consts::PI * n as f64;
///         Complex64::from_polar(1.0, 0.1 * t) + Complex64::from_polar(0.5, 0.3 * t)
///     })
///     .collect();
/// let data = Measurements::from_time_samples(&x)?;
/// let settings = SubspaceSettings::default().with_order(OrderSelection::numerical_rank())?;
/// let est = MatrixPencil::new(settings).estimate(&data)?;
/// assert_eq!(est.spikes.len(), 2);
/// assert!((est.spikes.positions()[0] - 0.1).abs() < 1e-12);
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, Default)]
pub struct MatrixPencil {
    /// Window, forward–backward averaging, model order, decomposition, refinement.
    pub settings: SubspaceSettings,
}

impl MatrixPencil {
    /// With the given settings.
    pub fn new(settings: SubspaceSettings) -> Self {
        MatrixPencil { settings }
    }
}

impl Estimator for MatrixPencil {
    fn name(&self) -> &'static str {
        "pencil"
    }

    /// # Errors
    /// As [`Esprit`](super::Esprit).
    fn estimate(&self, data: &Measurements) -> Result<Estimate> {
        run(Baseline::Pencil, &self.settings, data)
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
        super::snapshots::run(Baseline::Pencil, &self.settings, data)
    }
}

/// The eigenvalues of the least-squares shift operator `Φ = W_↑^+ W_↓` of an orthonormal signal basis
/// `w` (`L × r`, `L ≥ r + 1`).
pub(crate) fn pencil_eigenvalues(w: MatRef<'_, c64>) -> Result<Vec<c64>> {
    let (l, r) = (w.nrows(), w.ncols());
    let up = w.get(..l - 1, ..).to_owned();
    let mut rhs = w.get(1.., ..).to_owned();
    up.col_piv_qr()
        .solve_lstsq_in_place_with_conj(Conj::No, rhs.as_mut());
    let phi = Mat::<c64>::from_fn(r, r, |i, j| rhs[(i, j)]);
    phi.eigenvalues()
        .map_err(|e| numerical("matrix-pencil eigenvalues", e))
}
