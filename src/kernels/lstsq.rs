//! Least-squares amplitudes on a given support: `min_a ‖y − Φ(τ̂) a‖₂`, `Φ_kj = exp(−i2πkτ̂_j)`, in the
//! data's own frame ([`least_squares`], [`fit`]) and in the centred frame of a band model
//! ([`on_band`]).
//!
//! One solver for both: a column-pivoted QR factorisation (faer), which stays accurate when two
//! support points are close and `Φ` is ill-conditioned.

use crate::error::{Error, Result};
use crate::kernels::band::Model;
use crate::kernels::slide::Point;
use crate::model::{atom, Measurements, Spike, Spikes};
use faer::linalg::solvers::SolveLstsqCore;
use faer::{c64, Conj, Mat};
use num_complex::Complex64;

/// `argmin_a ‖rhs − Φ a‖₂` by column-pivoted QR; `None` when the solution is not finite (a
/// numerically rank-deficient `Φ`: coincident positions).
fn solve(phi: Mat<c64>, rhs: impl Fn(usize) -> Complex64) -> Option<Vec<Complex64>> {
    let (m, s) = (phi.nrows(), phi.ncols());
    let mut rhs = Mat::<c64>::from_fn(m, 1, |r, _| rhs(r));
    phi.col_piv_qr()
        .solve_lstsq_in_place_with_conj(Conj::No, rhs.as_mut());
    let out: Vec<Complex64> = (0..s).map(|j| rhs[(j, 0)]).collect();
    out.iter()
        .all(|a| a.re.is_finite() && a.im.is_finite())
        .then_some(out)
}

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
    let phi = Mat::<c64>::from_fn(m, s, |r, c| atom(k[r], positions[c]));
    solve(phi, |r| data.values()[r]).ok_or_else(|| Error::Numerical {
        step: "least-squares amplitudes",
        detail: "the support is numerically rank deficient (two positions coincide?)".into(),
    })
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

/// Least-squares amplitudes `min_a ‖y − Φa‖₂` at the positions of `point`, in the band model's
/// centred frame (its amplitudes are replaced). Returns false when the fit is not finite (coincident
/// positions).
pub(crate) fn on_band(model: &Model, point: &mut Point) -> bool {
    if point.is_empty() {
        return true;
    }
    let e = model.atoms(&point.tau);
    let phi = Mat::<c64>::from_fn(model.len(), point.len(), |i, j| e[(i, j)].conj());
    match solve(phi, |i| model.y[i]) {
        Some(amp) => {
            point.amp = amp;
            true
        }
        None => false,
    }
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
