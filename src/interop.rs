//! Conversions between [`Measurements`] / [`Spikes`] and the vector types user code already holds:
//! `nalgebra::DVector`, plain slices of real samples or interleaved I/Q pairs, and (feature
//! `ndarray`, off by default) `ndarray::Array1`.
//!
//! Every conversion into [`Measurements`] goes through the crate's validating constructors, so the
//! same typed errors apply (non-finite values name the sample index, a wrong length names both
//! lengths). Complex numbers are [`num_complex::Complex64`], re-exported from the crate root as
//! [`crate::Complex64`]; nalgebra and ndarray use the same type.

use crate::error::{Error, Result};
use crate::model::{Measurements, Spikes};
use nalgebra::DVector;
use num_complex::Complex64;

/// All `2fc + 1` Fourier coefficients `y_{−fc}, …, y_{fc}` held in a `DVector`, in that order
/// ([`Measurements::full_band`]).
///
/// # Errors
/// As [`Measurements::full_band`]: [`Error::ZeroCutoff`], [`Error::LengthMismatch`] for a length other
/// than `2fc + 1`, [`Error::NonFinite`].
///
/// ```
/// use finespike::interop::fourier_band_from_dvector;
/// use finespike::Complex64;
/// use nalgebra::DVector;
/// let y = DVector::from_element(9, Complex64::new(1.0, 0.0)); // one spike at 0, fc = 4
/// let data = fourier_band_from_dvector(4, &y)?;
/// assert_eq!((data.kmin(), data.kmax()), (-4, 4));
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn fourier_band_from_dvector(fc: usize, y: &DVector<Complex64>) -> Result<Measurements> {
    Measurements::full_band(fc, y.as_slice())
}

/// Uniform time samples `x_0, …, x_{N−1}` of a sum of complex exponentials held in a `DVector`
/// ([`Measurements::from_time_samples`]; positions are then frequencies in cycles per sample).
///
/// # Errors
/// As [`Measurements::from_time_samples`].
///
/// ```
/// use finespike::interop::time_samples_from_dvector;
/// use finespike::{Complex64, Estimator, Esprit};
/// use nalgebra::DVector;
/// // An invented record: one line at 0.125 cycles per sample, amplitude 2.
/// let x = DVector::from_fn(16, |n, _| Complex64::from_polar(2.0, std::f64::consts::TAU * 0.125 * n as f64));
/// let data = time_samples_from_dvector(&x)?;
/// let estimate = Esprit::default().estimate(&data)?;
/// assert!((estimate.spikes.positions()[0] - 0.125).abs() < 1e-10);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn time_samples_from_dvector(x: &DVector<Complex64>) -> Result<Measurements> {
    Measurements::from_time_samples(x.as_slice())
}

/// Real-valued uniform time samples `x_0, …, x_{N−1}`, taken as complex samples with zero imaginary
/// part.
///
/// A real cosine `A cos(2πfn + φ)` is the pair `(A/2)e^{iφ}` at `f` and `(A/2)e^{−iφ}` at `1 − f`
/// (that is, `−f`) in the complex model: the estimators report both lines of each pair.
///
/// # Errors
/// As [`Measurements::from_time_samples`].
///
/// ```
/// use finespike::interop::real_time_samples;
/// use finespike::{Estimator, Esprit};
/// // An invented record: 3 cos(2π·0.2·n), 20 samples.
/// let x: Vec<f64> = (0..20).map(|n| 3.0 * (std::f64::consts::TAU * 0.2 * n as f64).cos()).collect();
/// let estimate = Esprit::default().estimate(&real_time_samples(&x)?)?;
/// let positions = estimate.spikes.positions();
/// assert_eq!(positions.len(), 2);
/// assert!((positions[0] - 0.2).abs() < 1e-9 && (positions[1] - 0.8).abs() < 1e-9);
/// assert!((estimate.spikes.amplitudes()[0].norm() - 1.5).abs() < 1e-9);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn real_time_samples(x: &[f64]) -> Result<Measurements> {
    let samples: Vec<Complex64> = x.iter().map(|&v| Complex64::new(v, 0.0)).collect();
    Measurements::from_time_samples(&samples)
}

/// Real-valued uniform time samples held in a `DVector<f64>`, as [`real_time_samples`].
///
/// # Errors
/// As [`Measurements::from_time_samples`].
///
/// ```
/// use finespike::interop::real_time_samples_from_dvector;
/// use nalgebra::DVector;
/// let x = DVector::from_vec(vec![1.0, 0.0, -1.0, 0.0]);
/// let data = real_time_samples_from_dvector(&x)?;
/// assert_eq!(data.len(), 4);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn real_time_samples_from_dvector(x: &DVector<f64>) -> Result<Measurements> {
    real_time_samples(x.as_slice())
}

/// Interleaved I/Q time samples `[I_0, Q_0, I_1, Q_1, …]`, sample `n` being `x_n = I_n + i·Q_n`.
///
/// # Errors
/// [`Error::LengthMismatch`] for an odd length (it gives the number of I values against the number
/// of Q values, so the length is `left + right`); otherwise as [`Measurements::from_time_samples`]
/// (a non-finite value names its sample index `n`, i.e. the pair, not the position in the slice).
///
/// ```
/// use finespike::interop::iq_time_samples;
/// use finespike::{Complex64, Error};
/// let data = iq_time_samples(&[1.0, 0.0, 0.0, 1.0, -1.0, 0.0])?;
/// assert_eq!(data.len(), 3);
/// // Stored with k = −n (see `Measurements::from_time_samples`): values run from x_2 down to x_0.
/// assert_eq!(data.values(), &[Complex64::new(-1.0, 0.0), Complex64::new(0.0, 1.0), Complex64::new(1.0, 0.0)]);
/// // An odd length is refused with both counts: 3 I values against 2 Q values.
/// let err = iq_time_samples(&[1.0, 0.0, 0.0, 1.0, -1.0]).unwrap_err();
/// assert!(matches!(err, Error::LengthMismatch { left: 3, right: 2, .. }));
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn iq_time_samples(iq: &[f64]) -> Result<Measurements> {
    if iq.len() % 2 != 0 {
        return Err(Error::LengthMismatch {
            what: "interleaved I/Q samples: I values against Q values (odd length)",
            left: iq.len().div_ceil(2),
            right: iq.len() / 2,
        });
    }
    let samples: Vec<Complex64> = iq
        .chunks_exact(2)
        .map(|p| Complex64::new(p[0], p[1]))
        .collect();
    Measurements::from_time_samples(&samples)
}

/// The positions of `spikes`, sorted, as a `DVector`.
///
/// ```
/// use finespike::interop::{amplitudes_dvector, positions_dvector};
/// use finespike::{Complex64, Spikes};
/// let spikes = Spikes::from_parts(&[0.7, 0.2], &[Complex64::new(1.0, 0.0), Complex64::new(0.0, 2.0)])?;
/// assert_eq!(positions_dvector(&spikes).as_slice(), &[0.2, 0.7]);
/// assert_eq!(amplitudes_dvector(&spikes)[0], Complex64::new(0.0, 2.0));
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn positions_dvector(spikes: &Spikes) -> DVector<f64> {
    DVector::from_vec(spikes.positions())
}

/// The amplitudes of `spikes`, in position order, as a `DVector`.
///
/// ```
/// use finespike::interop::amplitudes_dvector;
/// use finespike::{Complex64, Spikes};
/// let spikes = Spikes::from_parts(&[0.1], &[Complex64::new(3.0, -1.0)])?;
/// assert_eq!(amplitudes_dvector(&spikes).len(), 1);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn amplitudes_dvector(spikes: &Spikes) -> DVector<Complex64> {
    DVector::from_vec(spikes.amplitudes())
}

/// Positions and amplitudes as two plain vectors, in position order (the inverse of
/// [`Spikes::from_parts`]).
///
/// ```
/// use finespike::interop::to_parts;
/// use finespike::{Complex64, Spikes};
/// let a = [Complex64::new(1.0, 0.0), Complex64::new(-1.0, 0.5)];
/// let spikes = Spikes::from_parts(&[0.25, 0.75], &a)?;
/// let (positions, amplitudes) = to_parts(&spikes);
/// assert_eq!(positions, vec![0.25, 0.75]);
/// assert_eq!(amplitudes, a.to_vec());
/// assert_eq!(Spikes::from_parts(&positions, &amplitudes)?, spikes);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn to_parts(spikes: &Spikes) -> (Vec<f64>, Vec<Complex64>) {
    (spikes.positions(), spikes.amplitudes())
}

/// Conversions from and to `ndarray::Array1` (feature `ndarray`).
#[cfg(feature = "ndarray")]
mod with_ndarray {
    use super::*;
    use ndarray::Array1;

    /// All `2fc + 1` Fourier coefficients `y_{−fc}, …, y_{fc}` held in an `Array1`, in that order
    /// (any memory layout).
    ///
    /// # Errors
    /// As [`Measurements::full_band`].
    ///
    /// ```
    /// use finespike::interop::fourier_band_from_array;
    /// use finespike::Complex64;
    /// let y = ndarray::Array1::from_elem(7, Complex64::new(1.0, 0.0));
    /// assert_eq!(fourier_band_from_array(3, &y)?.len(), 7);
    /// # Ok::<(), finespike::Error>(())
    /// ```
    pub fn fourier_band_from_array(fc: usize, y: &Array1<Complex64>) -> Result<Measurements> {
        match y.as_slice() {
            Some(s) => Measurements::full_band(fc, s),
            None => Measurements::full_band(fc, &y.to_vec()),
        }
    }

    /// Uniform time samples `x_0, …, x_{N−1}` held in an `Array1` (any memory layout), as
    /// [`Measurements::from_time_samples`].
    ///
    /// # Errors
    /// As [`Measurements::from_time_samples`].
    ///
    /// ```
    /// use finespike::interop::time_samples_from_array;
    /// use finespike::{Complex64, Estimator, Esprit};
    /// // An invented record: one line at 0.3 cycles per sample.
    /// let x = ndarray::Array1::from_shape_fn(12, |n| {
    ///     Complex64::from_polar(1.0, std::f64::consts::TAU * 0.3 * n as f64)
    /// });
    /// let estimate = Esprit::default().estimate(&time_samples_from_array(&x)?)?;
    /// assert!((estimate.spikes.positions()[0] - 0.3).abs() < 1e-10);
    /// # Ok::<(), finespike::Error>(())
    /// ```
    pub fn time_samples_from_array(x: &Array1<Complex64>) -> Result<Measurements> {
        match x.as_slice() {
            Some(s) => Measurements::from_time_samples(s),
            None => Measurements::from_time_samples(&x.to_vec()),
        }
    }

    /// The positions of `spikes`, sorted, as an `Array1`.
    ///
    /// ```
    /// use finespike::interop::positions_array;
    /// use finespike::{Complex64, Spikes};
    /// let spikes = Spikes::from_parts(&[0.5], &[Complex64::new(1.0, 0.0)])?;
    /// assert_eq!(positions_array(&spikes)[0], 0.5);
    /// # Ok::<(), finespike::Error>(())
    /// ```
    pub fn positions_array(spikes: &Spikes) -> Array1<f64> {
        Array1::from_vec(spikes.positions())
    }

    /// The amplitudes of `spikes`, in position order, as an `Array1`.
    ///
    /// ```
    /// use finespike::interop::amplitudes_array;
    /// use finespike::{Complex64, Spikes};
    /// let spikes = Spikes::from_parts(&[0.5], &[Complex64::new(0.0, 1.0)])?;
    /// assert_eq!(amplitudes_array(&spikes)[0], Complex64::new(0.0, 1.0));
    /// # Ok::<(), finespike::Error>(())
    /// ```
    pub fn amplitudes_array(spikes: &Spikes) -> Array1<Complex64> {
        Array1::from_vec(spikes.amplitudes())
    }
}

#[cfg(feature = "ndarray")]
pub use with_ndarray::{
    amplitudes_array, fourier_band_from_array, positions_array, time_samples_from_array,
};
