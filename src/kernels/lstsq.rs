//! Least-squares amplitudes on a given support: `min_a ‖y − Φ(τ̂) a‖₂`, `Φ_kj = exp(−i2πkτ̂_j)`, in the
//! data's own frame ([`least_squares`], [`fit`]) and in the centred frame of a band model
//! ([`on_band`]).
//!
//! One solver for both: a column-pivoted QR factorisation (faer), which stays accurate when two
//! support points are close and `Φ` is ill-conditioned.
//!
//! Records with a trend are fitted jointly with it: `Φ` and `y` are projected onto the orthogonal
//! complement of the polynomials (variable projection; see [`crate::Trend`]), and [`fit`] leaves out
//! positions whose atom the polynomial fits almost entirely ([`MIN_TREND_VISIBILITY`]). For a real-valued
//! record, [`fit`] fits conjugate-symmetric pairs: every position `τ` stands for the line at
//! `f = min(τ, 1 − τ)`, positions whose lines lie closer than [`MIRROR_MERGE_FC`]`/fc` are one
//! line, and each line is fitted as the pair `±f` (a single atom at `f = 0` or `1/2`). The
//! least-squares amplitudes of a real record on a mirror-symmetric support are conjugate-symmetric
//! (the problem is invariant under `τ ↦ −τ`, `a ↦ ā`); the symmetry is imposed exactly at the end.

use crate::error::{Error, Result};
use crate::kernels::band::{dirichlet_sums, exp_sweep, Model};
use crate::kernels::cg::{solve_spd, ITERATIVE_FROM};
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

/// Supports from this many spikes on, on a contiguous band and separated by at least
/// [`NORMAL_EQUATIONS_SEPARATION`]`/|K|`, are fitted through the normal equations
/// ([`by_normal_equations`]).
const NORMAL_EQUATIONS_FROM: usize = ITERATIVE_FROM / 2;

/// Minimum wrap-around separation, in units of `1/|K|`, for the normal equations. For atoms on `|K|`
/// consecutive frequencies at separation `Δ > 1/(|K| − 1)`, the squared singular values of `Φ` lie in
/// `[|K| − 1/Δ − 1, |K| + 1/Δ − 1]` (Moitra 2015, STOC, Thm. 1.1, recalled), so at `Δ ≥ 2/|K|` the
/// Gram matrix `ΦᴴΦ` has condition number below about 3 and forming it loses nothing.
const NORMAL_EQUATIONS_SEPARATION: f64 = 2.0;

/// `argmin_a ‖y − Φa‖₂` with `Φ_kj = exp(−i2πk τ_j)` on the consecutive indices `ks`, through the
/// normal equations `ΦᴴΦ a = Φᴴy`: the Gram entries `D_0(τ_j − τ_l)` in closed form
/// ([`dirichlet_sums`], `O(s²)`), `Φᴴy` by `O(|K|s)` recurrences, the (real form of the) Hermitian
/// system by block-Jacobi preconditioned conjugate gradients ([`crate::kernels::cg`]), against the
/// `O(|K|s²)` of a QR factorisation. `None` — the caller then factorises — below
/// [`NORMAL_EQUATIONS_FROM`] spikes, for a band with gaps, for a support closer than
/// [`NORMAL_EQUATIONS_SEPARATION`]`/|K|` (an ill-conditioned `Φ`, which needs the QR), or when the
/// solve fails.
fn by_normal_equations(ks: &[i64], y: &[Complex64], tau: &[f64]) -> Option<Vec<Complex64>> {
    let (m, s) = (ks.len(), tau.len());
    if s < NORMAL_EQUATIONS_FROM || m == 0 || ks[m - 1] - ks[0] + 1 != m as i64 {
        return None;
    }
    let mut sorted: Vec<f64> = tau.iter().map(|&t| crate::model::wrap(t)).collect();
    sorted.sort_by(f64::total_cmp);
    let wrap_gap = sorted[0] + 1.0 - sorted[s - 1];
    let gap = sorted
        .windows(2)
        .map(|w| w[1] - w[0])
        .fold(wrap_gap, f64::min);
    if gap.is_nan() || gap * (m as f64) < NORMAL_EQUATIONS_SEPARATION {
        return None;
    }
    // Real form of the Hermitian system G a = b: [Re G, −Im G; Im G, Re G] [Re a; Im a] = [Re b; Im b],
    // G_jl = D_0(τ_j − τ_l) = Σ_k exp(i2πk(τ_j − τ_l)), b_j = Σ_k exp(i2πkτ_j) y_k.
    let n = 2 * s;
    let mut g = Mat::<f64>::zeros(n, n);
    for j in 0..s {
        for l in j..s {
            let d = dirichlet_sums(ks[0], ks[m - 1], tau[j] - tau[l])[0];
            for (jj, ll, v) in [(j, l, d), (l, j, d.conj())] {
                g[(jj, ll)] = v.re;
                g[(jj, s + ll)] = -v.im;
                g[(s + jj, ll)] = v.im;
                g[(s + jj, s + ll)] = v.re;
            }
        }
    }
    let mut rhs = vec![0.0; n];
    let mut col = vec![Complex64::new(0.0, 0.0); m];
    for (j, &t) in tau.iter().enumerate() {
        exp_sweep(ks, t, &mut col);
        let b: Complex64 = col.iter().zip(y).map(|(z, v)| z * v).sum();
        rhs[j] = b.re;
        rhs[s + j] = b.im;
    }
    let blocks: Vec<Vec<usize>> = (0..s).map(|j| vec![j, s + j]).collect();
    let x = solve_spd(g.as_ref(), &vec![0.0; n], &rhs, blocks, 1e-15, 200).ok()?;
    Some((0..s).map(|j| Complex64::new(x[j], x[s + j])).collect())
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
    if data.trend_basis().is_none() {
        if let Some(a) = by_normal_equations(k, data.values(), positions) {
            return Ok(a);
        }
    }
    let mut phi = Mat::<c64>::from_fn(m, s, |r, c| atom(k[r], positions[c]));
    if let Some(b) = data.trend_basis() {
        let mut col = vec![Complex64::new(0.0, 0.0); m];
        for c in 0..s {
            col.iter_mut()
                .enumerate()
                .for_each(|(r, x)| *x = phi[(r, c)]);
            b.project(&mut col);
            col.iter().enumerate().for_each(|(r, x)| phi[(r, c)] = *x);
        }
    }
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
    let mut support = if data.is_real() {
        mirror_support(positions, MIRROR_MERGE_FC / data.fc())
    } else {
        positions.to_vec()
    };
    if data.trend_basis().is_some() {
        // Judged on the folded position, so that both members of a mirror pair go or stay together.
        support.retain(|&p| trend_visibility(data, p.min(1.0 - p)) >= MIN_TREND_VISIBILITY);
    }
    let positions = &support[..];
    let mut amps = least_squares(data, positions)?;
    if data.is_real() {
        impose_conjugate_symmetry(positions, &mut amps);
    }
    Spikes::new(
        positions
            .iter()
            .zip(amps)
            .map(|(&p, a)| Spike::new(p, a))
            .collect(),
    )
}

/// The part of the atom at `position` that a record's trend cannot fit, `‖P⊥φ(τ)‖/‖φ(τ)‖` (1 without
/// a trend; near 0 for a line within a small fraction of a resolution cell of zero frequency).
pub(crate) fn trend_visibility(data: &Measurements, position: f64) -> f64 {
    let Some(basis) = data.trend_basis() else {
        return 1.0;
    };
    let mut a: Vec<Complex64> = data.indices().iter().map(|&k| atom(k, position)).collect();
    basis.project(&mut a);
    (a.iter().map(|z| z.norm_sqr()).sum::<f64>() / data.len() as f64).sqrt()
}

/// Positions whose atom the trend fits almost entirely ([`trend_visibility`] below this) carry no
/// identifiable line: the least squares leaves them out (their amplitude would be the trend's).
pub const MIN_TREND_VISIBILITY: f64 = 1e-3;

/// Lines of a real record whose folded frequencies lie closer than this many Rayleigh lengths are
/// one line (the default merge distance of the shared post-processing).
pub const MIRROR_MERGE_FC: f64 = 0.05;

/// The mirror-symmetric support of the lines at `positions` (module docs), sorted so that each
/// pair's members are `τ` and `1 − τ`.
pub(crate) fn mirror_support(positions: &[f64], merge: f64) -> Vec<f64> {
    let mut lines: Vec<f64> = positions
        .iter()
        .map(|&p| {
            let p = crate::model::wrap(p);
            p.min(1.0 - p)
        })
        .collect();
    lines.sort_by(f64::total_cmp);
    let mut merged: Vec<(f64, usize)> = Vec::new();
    for f in lines {
        match merged.last_mut() {
            Some((g, n)) if f - *g / *n as f64 <= merge => {
                *g += f;
                *n += 1;
            }
            _ => merged.push((f, 1)),
        }
    }
    let mut out = Vec::with_capacity(2 * merged.len());
    for (g, n) in merged {
        let f = g / n as f64;
        // A line at 0 or 1/2 is a single real atom.
        if f <= 1e-12 {
            out.push(0.0);
        } else if f >= 0.5 - 1e-12 {
            out.push(0.5);
        } else {
            out.push(f);
            out.push(1.0 - f);
        }
    }
    out
}

/// Make the amplitudes of mirror pairs `(τ, 1 − τ)` exactly conjugate (their mean), and those of
/// single atoms at 0 and 1/2 real.
fn impose_conjugate_symmetry(positions: &[f64], amps: &mut [Complex64]) {
    let mut j = 0;
    while j < positions.len() {
        let p = positions[j];
        if p == 0.0 || p == 0.5 {
            amps[j].im = 0.0;
            j += 1;
        } else if j + 1 < positions.len() && positions[j + 1] == 1.0 - p {
            let a = (amps[j] + amps[j + 1].conj()) / 2.0;
            amps[j] = a;
            amps[j + 1] = a.conj();
            j += 2;
        } else {
            // Not a pair as `mirror_support` lays them out (cannot happen for its output): leave it.
            j += 1;
        }
    }
}

/// Least-squares amplitudes `min_a ‖y − Φa‖₂` at the positions of `point`, in the band model's
/// centred frame (its amplitudes are replaced). Returns false when the fit is not finite (coincident
/// positions).
pub(crate) fn on_band(model: &Model, point: &mut Point) -> bool {
    if point.is_empty() {
        return true;
    }
    if let Some(amp) = by_normal_equations(&model.ks, &model.y, &point.tau) {
        point.amp = amp;
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

    /// An invented exact scene of 160 spikes at fc = 250 (at least 0.8/160 ≥ 2/|K| apart): large
    /// enough for the normal equations (2s ≥ ITERATIVE_FROM).
    fn large_scene() -> (Measurements, Spikes) {
        crate::kernels::spread_scene(160, 250)
    }

    /// The normal equations (closed-form Gram, conjugate gradients) against the generating amplitudes
    /// and against the QR solve, on a separated support of 160 spikes.
    #[test]
    fn normal_equations_match_qr_and_truth() {
        let (data, truth) = large_scene();
        let pos = truth.positions();
        let fast = by_normal_equations(data.indices(), data.values(), &pos).unwrap();
        let k = data.indices();
        let phi = Mat::<c64>::from_fn(k.len(), pos.len(), |r, c| atom(k[r], pos[c]));
        let qr = solve(phi, |r| data.values()[r]).unwrap();
        for ((a, b), t) in fast.iter().zip(&qr).zip(truth.amplitudes()) {
            assert!((a - b).norm() < 1e-12, "{a} vs {b}");
            assert!((a - t).norm() < 1e-12);
        }
        // Two positions closer than 2/|K|: left to the QR.
        let mut close = pos.clone();
        close[1] = close[0] + 0.5 / k.len() as f64;
        assert!(by_normal_equations(k, data.values(), &close).is_none());
    }

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
