//! Multi-snapshot records: L snapshots over one index set, sharing the line positions.
//!
//! A uniform line array of `M` sensors gives at each snapshot `t`
//! `x_t[m] = Σ_j s_j(t) exp(i2π f_j m) + n_t[m]`, `m = 0..M−1`: the time-record model of
//! [`Measurements::from_time_samples`] with the sensor index in the place of the sample index, one
//! column per snapshot. The positions `f_j` (spatial frequencies, cycles per sensor) are shared by all
//! snapshots; the amplitudes `s_j(t)` change from one to the next. With the element spacing `d` in
//! wavelengths, `f = d·sin θ` (mod 1), `θ` from broadside.
//!
//! Missing sensors (a thinned array) are allowed: the measured rows are then a subset of the span
//! `first..=last`, as for a time record with gaps. Fourier-domain snapshots (`k,snapshot,re,im`) use
//! [`Snapshots::fourier`].

use super::{Domain, Measurements};
use crate::error::{Error, Result};
use nalgebra::DMatrix;
use num_complex::Complex64;

/// Validated multi-snapshot data: the values at the measured indices, one column per snapshot.
///
/// Row `i` of [`Snapshots::values`] belongs to `layout().indices()[i]` (the crate's internal index
/// `k`; for sensor data `k = −m`, see [`Domain::user_index`]).
///
/// ```
/// use finespike::{Complex64, Snapshots};
/// use nalgebra::DMatrix;
/// // 4 sensors, 3 snapshots of one source at f = 0.1 with changing amplitudes
/// let x = DMatrix::from_fn(4, 3, |m, t| {
///     Complex64::from_polar(1.0 + t as f64, 2.0 * std::f64::consts::PI * 0.1 * m as f64)
/// });
/// let data = Snapshots::from_sensors(&x)?;
/// assert_eq!((data.len(), data.snapshot_count()), (4, 3));
/// # Ok::<(), finespike::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Snapshots {
    /// The index set, band and domain (its values are the first snapshot's).
    layout: Measurements,
    /// `|K| × L`, rows in the order of `layout.indices()`.
    values: DMatrix<Complex64>,
    /// Element spacing in wavelengths, when given.
    spacing: Option<f64>,
}

impl Snapshots {
    /// Snapshots of a full uniform line array: `x` is `M × L` (sensor `m = 0..M−1` by row, snapshot
    /// by column).
    ///
    /// # Errors
    /// [`Error::Empty`] for no snapshot or no sensor, [`Error::SingleSample`] for one sensor,
    /// [`Error::NonFiniteSnapshot`] naming the sensor and snapshot.
    pub fn from_sensors(x: &DMatrix<Complex64>) -> Result<Self> {
        let sensors: Vec<i64> = (0..x.nrows() as i64).collect();
        Self::from_sensor_subset(&sensors, x)
    }

    /// Snapshots of the sensors numbered `sensors` (any origin, any order, missing sensors allowed):
    /// row `i` of `x` holds sensor `sensors[i]`, one column per snapshot.
    ///
    /// # Errors
    /// As [`Snapshots::from_sensors`], plus [`Error::LengthMismatch`] when `x` has not one row per
    /// sensor and [`Error::DuplicateIndex`].
    pub fn from_sensor_subset(sensors: &[i64], x: &DMatrix<Complex64>) -> Result<Self> {
        check_values(sensors, SENSOR_WORDS, x)?;
        let first: Vec<Complex64> = x.column(0).iter().copied().collect();
        let layout = Measurements::from_time_subset(sensors, &first).map_err(sensor_terms)?;
        Self::arrange(layout, sensors.iter().map(|&m| -m), x)
    }

    /// Fourier-domain snapshots: row `i` of `x` holds coefficient `indices[i]`, `|k| ≤ fc`.
    ///
    /// # Errors
    /// As [`Measurements::fourier`], plus [`Error::LengthMismatch`] when `x` has not one row per
    /// index and [`Error::Empty`] for no snapshot.
    pub fn fourier(fc: usize, indices: &[i64], x: &DMatrix<Complex64>) -> Result<Self> {
        check_values(indices, Domain::Fourier.index_words(), x)?;
        let first: Vec<Complex64> = x.column(0).iter().copied().collect();
        let layout = Measurements::fourier(fc, indices, &first)?;
        Self::arrange(layout, indices.iter().copied(), x)
    }

    /// Store the rows of `x` (given for the internal indices `keys`, in the caller's order) in the
    /// layout's sorted order.
    fn arrange(
        layout: Measurements,
        keys: impl Iterator<Item = i64>,
        x: &DMatrix<Complex64>,
    ) -> Result<Self> {
        let mut order: Vec<(i64, usize)> = keys.enumerate().map(|(i, k)| (k, i)).collect();
        order.sort_unstable();
        let values = DMatrix::from_fn(x.nrows(), x.ncols(), |i, t| x[(order[i].1, t)]);
        Ok(Snapshots {
            layout,
            values,
            spacing: None,
        })
    }

    /// The same snapshots with the element spacing `d` in wavelengths, so that every source carries
    /// its angle (`f = d·sin θ`).
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] unless `d` is finite and positive.
    pub fn with_spacing(mut self, d: f64) -> Result<Self> {
        if !(d.is_finite() && d > 0.0) {
            return Err(Error::InvalidSetting {
                name: "spacing",
                value: d.to_string(),
                rule: "the element spacing in wavelengths must be finite and positive (0.5 for a \
                       half-wavelength array)",
            });
        }
        self.spacing = Some(d);
        Ok(self)
    }

    /// The element spacing in wavelengths, when given.
    pub fn spacing(&self) -> Option<f64> {
        self.spacing
    }

    /// The index set, band and domain, as a single-snapshot record holding the first snapshot.
    pub fn layout(&self) -> &Measurements {
        &self.layout
    }

    /// The values, `|K| × L`, row `i` for `layout().indices()[i]`.
    pub fn values(&self) -> &DMatrix<Complex64> {
        &self.values
    }

    /// The internal indices `k` of the measured rows (sorted; `k = −m` for sensors).
    pub fn indices(&self) -> &[i64] {
        self.layout.indices()
    }

    /// The number of measured sensors (or coefficients), `|K|`.
    pub fn len(&self) -> usize {
        self.values.nrows()
    }

    /// Never true: a record holds at least two sensors and one snapshot.
    pub fn is_empty(&self) -> bool {
        self.values.is_empty()
    }

    /// The number of snapshots `L`.
    pub fn snapshot_count(&self) -> usize {
        self.values.ncols()
    }

    /// The span of the index set (`M` for a full array, `last − first + 1` with missing sensors): the
    /// resolution is `1/M`.
    pub fn band_len(&self) -> usize {
        self.layout.band_len()
    }

    /// Sensor data or Fourier coefficients.
    pub fn domain(&self) -> Domain {
        self.layout.domain()
    }

    /// Whether every index of the span is measured (no missing sensor).
    pub fn is_contiguous(&self) -> bool {
        self.layout.is_contiguous()
    }

    /// Snapshot `t` as a single record.
    ///
    /// # Errors
    /// [`Error::IndexOutOfBand`] for `t ≥ L`.
    pub fn snapshot(&self, t: usize) -> Result<Measurements> {
        if t >= self.snapshot_count() {
            return Err(Error::IndexOutOfBand {
                what: "snapshot",
                index: t as i64,
                range: format!("0..{}", self.snapshot_count()),
                advice: "snapshots are numbered from 0",
            });
        }
        let col: Vec<Complex64> = self.values.column(t).iter().copied().collect();
        self.layout.with_values(&col)
    }

    /// Frobenius norm of the data.
    pub fn norm(&self) -> f64 {
        self.values.norm()
    }

    /// The steering matrix `A` (`|K| × s`): `A_{ij} = exp(−i2π k_i τ_j)` at the measured indices, so
    /// that noiseless data are `A S` with `S` the `s × L` amplitudes.
    pub fn steering(&self, positions: &[f64]) -> DMatrix<Complex64> {
        let idx = self.indices();
        DMatrix::from_fn(idx.len(), positions.len(), |i, j| {
            super::atom(idx[i], positions[j])
        })
    }

    /// The sample covariance `R̂ = X Xᴴ / L` of the measured rows (`|K| × |K|`).
    pub fn sample_covariance(&self) -> DMatrix<Complex64> {
        let l = self.snapshot_count() as f64;
        (&self.values * self.values.adjoint()).unscale(l)
    }
}

/// How errors name a sensor.
pub const SENSOR_WORDS: &str = "sensor m =";

/// A sample-index error of the single-record constructor, reworded for sensors.
fn sensor_terms(e: Error) -> Error {
    match e {
        Error::DuplicateIndex { index, .. } => Error::DuplicateIndex {
            what: SENSOR_WORDS,
            index,
        },
        Error::IndexOutOfBand {
            index,
            range,
            advice,
            ..
        } => Error::IndexOutOfBand {
            what: SENSOR_WORDS,
            index,
            range,
            advice,
        },
        other => other,
    }
}

/// Shape and finiteness, reported with the user's own indices (`user[i]` numbers row `i`).
fn check_values(user: &[i64], words: &'static str, x: &DMatrix<Complex64>) -> Result<()> {
    let rows = user.len();
    if x.ncols() == 0 {
        return Err(Error::Empty { what: "snapshots" });
    }
    if x.nrows() == 0 {
        return Err(Error::Empty { what: "sensors" });
    }
    if x.nrows() != rows {
        return Err(Error::LengthMismatch {
            what: "rows of the snapshot matrix against the sensor indices",
            left: x.nrows(),
            right: rows,
        });
    }
    for (t, col) in x.column_iter().enumerate() {
        if let Some((r, v)) = col
            .iter()
            .enumerate()
            .find(|(_, v)| !(v.re.is_finite() && v.im.is_finite()))
        {
            return Err(Error::NonFiniteSnapshot {
                what: words,
                index: user[r],
                snapshot: t,
                value: v.to_string(),
            });
        }
    }
    Ok(())
}
