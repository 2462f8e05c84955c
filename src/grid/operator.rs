//! The grid operators `A` (grid amplitudes → measured coefficients) and `A*`, by FFT (module docs of
//! [`crate::grid`]: "The operators").

use crate::error::{Error, Result};
use crate::kernels::band::MAX_GRID;
use crate::model::Measurements;
use num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::fmt;
use std::sync::Arc;

const ZERO: Complex64 = Complex64::new(0.0, 0.0);

/// The grid operator `A: C^M → C^K`, `(Ax)_k = Σ_m x_m exp(−i2πkm/M)`, and its adjoint, by FFTs of
/// length `M` (module docs).
#[derive(Clone)]
pub struct GridOperator {
    pub(super) grid_len: usize,
    pub(super) bins: Vec<usize>,
    pub(super) forward: Arc<dyn Fft<f64>>,
    pub(super) inverse: Arc<dyn Fft<f64>>,
    pub(super) scratch_len: usize,
}

impl fmt::Debug for GridOperator {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.debug_struct("GridOperator")
            .field("grid_len", &self.grid_len)
            .field("measured", &self.bins.len())
            .finish()
    }
}

impl GridOperator {
    /// The operator for the measured indices of `data` on a grid of `grid_len` points.
    ///
    /// # Errors
    /// [`Error::InvalidSetting`] when `grid_len` is below the band length `N` (the indices would alias)
    /// or above 2^26 points (1 GiB per vector).
    pub fn new(data: &Measurements, grid_len: usize) -> Result<Self> {
        if grid_len < data.band_len() || grid_len > MAX_GRID {
            return Err(Error::invalid(
                "grid_len",
                grid_len,
                "the grid needs at least as many points as the band has coefficients, and at most 2^26",
            ));
        }
        let m = grid_len as i64;
        let bins = data
            .indices()
            .iter()
            .map(|&k| k.rem_euclid(m) as usize)
            .collect();
        let mut planner = FftPlanner::new();
        let forward = planner.plan_fft_forward(grid_len);
        let inverse = planner.plan_fft_inverse(grid_len);
        let scratch_len = forward
            .get_inplace_scratch_len()
            .max(inverse.get_inplace_scratch_len());
        Ok(GridOperator {
            grid_len,
            bins,
            forward,
            inverse,
            scratch_len,
        })
    }

    /// Number of grid points `M`.
    pub fn grid_len(&self) -> usize {
        self.grid_len
    }

    /// Number of measured coefficients `|K|`.
    pub fn measured(&self) -> usize {
        self.bins.len()
    }

    /// `‖A‖² = M`, the Lipschitz constant of the gradient of `½‖y − Ax‖²` (module docs: `AA* = M·I`).
    pub fn lipschitz(&self) -> f64 {
        self.grid_len as f64
    }

    /// Position `m/M` of grid point `m`.
    pub fn position(&self, m: usize) -> f64 {
        m as f64 / self.grid_len as f64
    }

    pub(super) fn check(&self, what: &'static str, len: usize, expected: usize) -> Result<()> {
        if len == expected {
            Ok(())
        } else {
            Err(Error::LengthMismatch {
                what,
                left: len,
                right: expected,
            })
        }
    }

    /// `Ax`: the values at the measured indices, in the order of [`Measurements::indices`].
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] unless `x` has `M` entries.
    pub fn apply(&self, x: &[Complex64]) -> Result<Vec<Complex64>> {
        self.check("grid amplitudes against the grid", x.len(), self.grid_len)?;
        let mut buf = x.to_vec();
        let mut scratch = vec![ZERO; self.scratch_len];
        let mut out = vec![ZERO; self.bins.len()];
        self.apply_into(&mut buf, &mut scratch, &mut out);
        Ok(out)
    }

    /// `A*r = (Σ_k r_k exp(i2πkm/M))_m`, for `r` in the order of [`Measurements::indices`].
    ///
    /// # Errors
    /// [`Error::LengthMismatch`] unless `r` has `|K|` entries.
    pub fn adjoint(&self, r: &[Complex64]) -> Result<Vec<Complex64>> {
        self.check("values against the measured set", r.len(), self.bins.len())?;
        let mut buf = vec![ZERO; self.grid_len];
        let mut scratch = vec![ZERO; self.scratch_len];
        self.adjoint_into(r, &mut buf, &mut scratch);
        Ok(buf)
    }

    /// `out = Ax`; `buf` holds `x` on entry and is overwritten.
    pub(super) fn apply_into(
        &self,
        buf: &mut [Complex64],
        scratch: &mut [Complex64],
        out: &mut [Complex64],
    ) {
        // rustfft's forward transform is X_j = Σ_m x_m exp(−i2πjm/M).
        self.forward.process_with_scratch(buf, scratch);
        for (o, &b) in out.iter_mut().zip(&self.bins) {
            *o = buf[b];
        }
    }

    /// `buf = A*r`.
    pub(super) fn adjoint_into(
        &self,
        r: &[Complex64],
        buf: &mut [Complex64],
        scratch: &mut [Complex64],
    ) {
        buf.fill(ZERO);
        for (&v, &b) in r.iter().zip(&self.bins) {
            buf[b] = v;
        }
        // rustfft's inverse transform is the unnormalised Σ_j X_j exp(+i2πjm/M).
        self.inverse.process_with_scratch(buf, scratch);
    }
}

/// The operator on the grid of `oversample · N` points.
pub(crate) fn operator(data: &Measurements, oversample: usize) -> Result<GridOperator> {
    let grid_len = data
        .band_len()
        .checked_mul(oversample)
        .filter(|&g| g <= MAX_GRID)
        .ok_or_else(|| Error::TooLarge {
            method: "grid",
            what: format!(
                "a band of {} coefficients at {oversample} grid points per coefficient",
                data.band_len()
            ),
            needed: "a grid above 2^26 points".into(),
            limit: "2^26 points".into(),
            advice:
                "lower the oversampling, split the record, or use 'esprit', which needs no grid"
                    .into(),
        })?;
    GridOperator::new(data, grid_len)
}
