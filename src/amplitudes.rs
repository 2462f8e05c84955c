//! Least-squares amplitudes on a given support: `min_a ‖y − Φ(τ̂) a‖₂`, `Φ_kj = exp(−i2πkτ̂_j)`.
//!
//! Solved by a column-pivoted QR factorisation (faer), which stays accurate when two support points are
//! close and `Φ` is ill-conditioned.

use crate::error::{Error, Result};
use crate::model::{atom, Measurements, Spike, Spikes};
use faer::linalg::solvers::SolveLstsqCore;
use faer::{c64, Conj, Mat};
use num_complex::Complex64;

/// Least-squares amplitudes of spikes at `positions` for the measurements `data`.
///
/// # Errors
/// [`Error::Underdetermined`] when there are more positions than measured coefficients (the system is
/// underdetermined and the amplitudes are not identifiable).
pub fn least_squares(data: &Measurements, positions: &[f64]) -> Result<Vec<Complex64>> {
    let m = data.len();
    let s = positions.len();
    if s == 0 {
        return Ok(Vec::new());
    }
    if s > m {
        return Err(Error::Underdetermined {
            what: "least-squares amplitudes",
            unknowns: 2 * s,
            equations: 2 * m,
            advice: "fewer spikes than measured coefficients are needed to identify the amplitudes",
        });
    }
    let k = data.indices();
    let phi = Mat::<c64>::from_fn(m, s, |r, c| to_faer(atom(k[r], positions[c])));
    let mut rhs = Mat::<c64>::from_fn(m, 1, |r, _| to_faer(data.values()[r]));
    phi.col_piv_qr()
        .solve_lstsq_in_place_with_conj(Conj::No, rhs.as_mut());
    let out: Vec<Complex64> = (0..s).map(|j| from_faer(rhs[(j, 0)])).collect();
    if out.iter().any(|a| !(a.re.is_finite() && a.im.is_finite())) {
        return Err(Error::Numerical {
            step: "least-squares amplitudes",
            detail: "the support is numerically rank deficient (two positions coincide?)".into(),
        });
    }
    Ok(out)
}

/// Spikes at `positions` with least-squares amplitudes.
///
/// # Errors
/// As [`least_squares`].
pub fn fit(data: &Measurements, positions: &[f64]) -> Result<Spikes> {
    let amps = least_squares(data, positions)?;
    Spikes::new(
        positions
            .iter()
            .zip(amps)
            .map(|(&p, a)| Spike::new(p, a))
            .collect(),
    )
}

#[inline]
pub(crate) fn to_faer(z: Complex64) -> c64 {
    c64::new(z.re, z.im)
}

#[inline]
pub(crate) fn from_faer(z: c64) -> Complex64 {
    Complex64::new(z.re, z.im)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{forward, Domain};

    #[test]
    fn recovers_amplitudes_of_exact_data() {
        let truth = Spikes::from_parts(
            &[0.1, 0.13, 0.6],
            &[
                Complex64::new(1.0, -0.5),
                Complex64::new(-0.3, 0.8),
                Complex64::new(2.0, 0.0),
            ],
        )
        .unwrap();
        let idx: Vec<i64> = (-10..=10).collect();
        let data =
            Measurements::in_band(-10, 10, &idx, &forward(&truth, &idx), Domain::Fourier).unwrap();
        let a = least_squares(&data, &truth.positions()).unwrap();
        for (x, y) in a.iter().zip(truth.amplitudes()) {
            assert!((x - y).norm() < 1e-12);
        }
    }

    #[test]
    fn too_many_positions_is_an_error() {
        let data = Measurements::fourier(1, &[0, 1], &[Complex64::new(1.0, 0.0); 2]).unwrap();
        assert!(matches!(
            least_squares(&data, &[0.1, 0.2, 0.3]),
            Err(Error::Underdetermined { .. })
        ));
    }
}
