//! Cramér–Rao bounds for the positions of sources seen in many snapshots.
//!
//! Model `X = A(f) S + W`, `|K| × L`, `W` circular complex white noise with `E|w|² = σ²`, positions
//! shared by the snapshots and amplitudes `S` (`s × L`) unknown per snapshot. The deterministic
//! (conditional) bound of Stoica & Nehorai (1989, IEEE TASSP 37(5), 720–741, eq. (4.1)) is
//!
//! ```text
//!   CRB_det(f) = σ²/(2L) · { Re[ (Dᴴ Π⊥ D) ⊙ P̂ᵀ ] }⁻¹,   P̂ = S Sᴴ / L,
//! ```
//!
//! with `D = [∂a(f_1)/∂f_1, …]` and `Π⊥ = I − A(AᴴA)⁻¹Aᴴ`. For one source and `L = 1` it is the
//! single-tone bound `6σ²/((2π)²|a|²N(N² − 1))` (Rife & Boorstyn 1974, IEEE TIT 20(5)).
//!
//! The stochastic (unconditional) bound treats the amplitudes as circular Gaussian with covariance
//! `P` (`x_t ~ CN(0, R)`, `R = A P Aᴴ + σ² I`, `P` and `σ²` unknown) (Stoica & Nehorai 1990, IEEE
//! TASSP 38(10), 1783–1795, the concentrated bound of their section on the unconditional model;
//! equation number not recalled):
//!
//! ```text
//!   CRB_sto(f) = σ²/(2L) · { Re[ (Dᴴ Π⊥ D) ⊙ (P Aᴴ R⁻¹ A P)ᵀ ] }⁻¹  ⪰  CRB_det at P̂ = P,
//! ```
//!
//! which maximum likelihood attains as `L → ∞`. `Aᴴ R⁻¹ A` is formed without the `|K| × |K|`
//! inverse: `R A = A (P G + σ² I)` with `G = AᴴA`, so `Aᴴ R⁻¹ A = G (P G + σ² I)⁻¹` (an `s × s`
//! solve; `P G + σ² I` is invertible for `σ > 0` because the eigenvalues of `P G` are those of the
//! positive semidefinite `G^{1/2} P G^{1/2}`).
//!
//! Both are checked in `tests/array_bounds.rs` against a full Fisher-information (Slepian–Bangs)
//! evaluation in numpy (`tests/refdata/arrays/make_crb.py`) and the research notes' check values.

use crate::error::{Error, Result};
use crate::model::Snapshots;
use nalgebra::{Cholesky, DMatrix};
use num_complex::Complex64;
use std::f64::consts::PI;

/// The deterministic Cramér–Rao variances of the positions `positions` (cycles per sensor, squared)
/// for amplitudes `amplitudes` (`s × L`) and noise level `sigma`, on the index set of `data`.
///
/// # Errors
/// [`Error::LengthMismatch`] when `amplitudes` has not one row per position or one column per
/// snapshot; [`Error::Numerical`] when the Fisher matrix is singular (coincident positions, a source
/// of zero power).
pub fn conditional_crb(
    data: &Snapshots,
    positions: &[f64],
    amplitudes: &DMatrix<Complex64>,
    sigma: f64,
) -> Result<Vec<f64>> {
    let s = positions.len();
    if amplitudes.nrows() != s || amplitudes.ncols() != data.snapshot_count() {
        return Err(Error::LengthMismatch {
            what: "amplitude rows against positions",
            left: amplitudes.nrows(),
            right: s,
        });
    }
    if s == 0 {
        return Ok(Vec::new());
    }
    let l = data.snapshot_count() as f64;
    let (_, h) = projected_derivatives(data, positions)?;
    let p = (amplitudes * amplitudes.adjoint()).unscale(l);
    let fisher = DMatrix::from_fn(s, s, |i, j| (h[(i, j)] * p[(j, i)]).re * 2.0 * l);
    let inv = Cholesky::new(fisher)
        .ok_or_else(|| singular("the Fisher matrix"))?
        .inverse();
    Ok((0..s).map(|i| sigma * sigma * inv[(i, i)]).collect())
}

/// The stochastic Cramér–Rao variances of the positions `positions` (cycles per sensor, squared) for
/// the source covariance `source_covariance` (`P`, `s × s`, Hermitian positive semidefinite) and noise
/// level `sigma`, with the snapshot count and index set of `data` (module docs; Stoica & Nehorai
/// 1990, IEEE TASSP 38(10)).
///
/// # Errors
/// [`Error::LengthMismatch`] when `P` is not `s × s`; [`Error::InvalidSetting`] for a `sigma` that
/// is not finite and positive (the bound needs noise: with `σ = 0` and a singular `P` it does not
/// exist); [`Error::Numerical`] when the Fisher matrix is singular (coincident positions, a source
/// of zero power).
pub fn stochastic_crb(
    data: &Snapshots,
    positions: &[f64],
    source_covariance: &DMatrix<Complex64>,
    sigma: f64,
) -> Result<Vec<f64>> {
    let s = positions.len();
    if source_covariance.nrows() != s || source_covariance.ncols() != s {
        return Err(Error::LengthMismatch {
            what: "source covariance rows and columns against positions",
            left: source_covariance.nrows().max(source_covariance.ncols()),
            right: s,
        });
    }
    if !(sigma.is_finite() && sigma > 0.0) {
        return Err(Error::InvalidSetting {
            name: "sigma",
            value: sigma.to_string(),
            rule: "the stochastic Cramér–Rao bound needs a finite, positive noise level",
        });
    }
    if s == 0 {
        return Ok(Vec::new());
    }
    let l = data.snapshot_count() as f64;
    let (a, h) = projected_derivatives(data, positions)?;
    let p = source_covariance;
    let gram = a.adjoint() * &a;
    // Aᴴ R⁻¹ A = G (P G + σ² I)⁻¹, so B = P Aᴴ R⁻¹ A P = P G (P G + σ² I)⁻¹ P.
    let mut pg = p * &gram;
    for i in 0..s {
        pg[(i, i)] += Complex64::new(sigma * sigma, 0.0);
    }
    // (P G + σ²I)⁻¹ P: solve (P G + σ²I) Y = P.
    let y = pg.lu().solve(p).ok_or_else(|| singular("P G + σ² I"))?;
    let b = p * gram * y;
    let fisher = DMatrix::from_fn(s, s, |i, j| (h[(i, j)] * b[(j, i)]).re * 2.0 * l);
    // Symmetrise the rounding before the Cholesky factorisation.
    let fisher = (&fisher + fisher.transpose()).unscale(2.0);
    let inv = Cholesky::new(fisher)
        .ok_or_else(|| singular("the Fisher matrix"))?
        .inverse();
    Ok((0..s).map(|i| sigma * sigma * inv[(i, i)]).collect())
}

/// The steering matrix `A` and `H = Dᴴ Π⊥ D` of `positions` on the index set of `data`.
fn projected_derivatives(
    data: &Snapshots,
    positions: &[f64],
) -> Result<(DMatrix<Complex64>, DMatrix<Complex64>)> {
    let s = positions.len();
    let a = data.steering(positions);
    let idx = data.indices();
    // ∂/∂f of exp(−i2πkf) is −i2πk exp(−i2πkf).
    let d = DMatrix::from_fn(a.nrows(), s, |i, j| {
        a[(i, j)] * Complex64::new(0.0, -2.0 * PI * idx[i] as f64)
    });
    let gram = a.adjoint() * &a;
    let chol = Cholesky::new(gram).ok_or_else(|| singular("the steering matrix"))?;
    // Π⊥ D = D − A (AᴴA)⁻¹ Aᴴ D.
    let proj = &d - &a * chol.solve(&(a.adjoint() * &d));
    let h = d.adjoint() * proj;
    Ok((a, h))
}

fn singular(what: &str) -> Error {
    Error::Numerical {
        step: "multi-snapshot Cramér–Rao bound",
        detail: format!("{what} is singular (coincident positions or a source of zero power)"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_source_one_snapshot_is_the_single_tone_bound() {
        // Rife & Boorstyn 1974: var f ≥ 6σ²/((2π)²|a|²N(N²−1)).
        let n = 16usize;
        let x = DMatrix::from_element(n, 1, Complex64::new(1.0, 0.0));
        let data = Snapshots::from_sensors(&x).unwrap();
        let amp = DMatrix::from_element(1, 1, Complex64::new(0.0, 2.0));
        let v = conditional_crb(&data, &[0.2], &amp, 0.5).unwrap();
        let nf = n as f64;
        let want = 6.0 * 0.25 / ((2.0 * PI).powi(2) * 4.0 * nf * (nf * nf - 1.0));
        assert!((v[0] / want - 1.0).abs() < 1e-10, "{} vs {want}", v[0]);
    }

    /// `L` snapshots of unit-power sources with `P̂ = I` exactly: source `j` has amplitude
    /// `exp(i2π j t / L)` at snapshot `t` (orthogonal rows).
    fn unit_sources(n: usize, l: usize, s: usize) -> (Snapshots, DMatrix<Complex64>) {
        let x = DMatrix::from_element(n, l, Complex64::new(0.0, 0.0));
        let amp = DMatrix::from_fn(s, l, |j, t| {
            Complex64::from_polar(1.0, 2.0 * PI * (j * t) as f64 / l as f64)
        });
        (Snapshots::from_sensors(&x).unwrap(), amp)
    }

    #[test]
    fn check_values_of_the_research_notes() {
        // shared/notes/snapshots-and-real-signals.md §A(3) (computed there and checked against a full
        // Fisher-information evaluation): N = 8 sensors, L = 100, 0 dB, half-wavelength spacing.
        let (data, amp) = unit_sources(8, 100, 1);
        let f = 0.5 * 20f64.to_radians().sin();
        let v = conditional_crb(&data, &[f], &amp, 1.0).unwrap();
        assert!((v[0] / 3.0155e-6 - 1.0).abs() < 1e-4, "{}", v[0]);
        // Two sources at θ = 0° and 8°, P = I: var_det = 1.48896e−5 each.
        let (data, amp) = unit_sources(8, 100, 2);
        let f2 = 0.5 * 8f64.to_radians().sin();
        let v = conditional_crb(&data, &[0.0, f2], &amp, 1.0).unwrap();
        for vi in v {
            assert!((vi / 1.48896e-5 - 1.0).abs() < 1e-4, "{vi}");
        }
    }
}
