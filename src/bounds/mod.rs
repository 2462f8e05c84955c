//! Cramér–Rao bounds for the positions and amplitudes of several spikes, and the separation thresholds.
//!
//! # The model and its Fisher information
//!
//! The data are `y_k = μ_k(θ) + n_k`, `k ∈ K`, with `μ_k(θ) = Σ_j a_j exp(−i2πkτ_j)` and circular complex
//! white Gaussian noise, `E[n nᴴ] = σ² I`, `E[n nᵀ] = 0`. The real parameter vector holds three entries
//! per spike, `θ = (τ_1, Re a_1, Im a_1, …, τ_s, Re a_s, Im a_s)`. The log-likelihood is
//!
//! ```text
//! ℓ(θ) = −|K| log(πσ²) − ‖y − μ(θ)‖² / σ²,
//! ∂ℓ/∂θ_p = (2/σ²) Re(j_pᴴ n),        j_p = ∂μ/∂θ_p (column p of the Jacobian J ∈ C^{|K|×3s}).
//! ```
//!
//! For circular noise `E[Re(uᴴn) Re(vᴴn)] = ½ Re(uᴴ E[nnᴴ] v) + ½ Re(uᴴ E[nnᵀ] v̄) = (σ²/2) Re(uᴴv)`, so the
//! Fisher information `F_pq = E[∂_pℓ ∂_qℓ]` is
//!
//! ```text
//! F = (2/σ²) Re(Jᴴ J),
//! ∂μ_k/∂τ_j = −i2πk a_j e^{−i2πkτ_j},   ∂μ_k/∂Re a_j = e^{−i2πkτ_j},   ∂μ_k/∂Im a_j = i e^{−i2πkτ_j}
//! ```
//!
//! (the Slepian–Bangs formula for a deterministic signal in complex Gaussian noise, as used by Stoica &
//! Nehorai 1989, IEEE TASSP 37(5); also Kay 1993, *Fundamentals of Statistical Signal Processing:
//! Estimation Theory*, ch. 15 — chapter recalled from memory). Any unbiased estimator has
//! `cov(θ̂) ⪰ F⁻¹` (Cramér–Rao). The bound on a function `g(θ)` is `∇gᵀ F⁻¹ ∇g`; this module reports it
//! for `|a_j|` (gradient `(Re a, Im a)/|a|`) and `arg a_j` (gradient `(−Im a, Re a)/|a|²`).
//!
//! The amplitudes are those of the model, i.e. referred to index `k = 0`. For time samples
//! (`k = −n`, band `−(N−1)..=0`) that is the value at the first sample `n = 0`; the position bound does not
//! depend on this reference, the amplitude and phase bounds do (they are smallest for a centred band).
//!
//! For one spike on a contiguous band of `N` indices, eliminating the amplitude leaves
//! `F_ττ = (2/σ²)(2π)²|a|² Σ_k (k − k̄)² = (2/σ²)(2π)²|a|² N(N² − 1)/12`, hence the closed form of
//! [`single_tone_position_variance`] (Rife & Boorstyn 1974, IEEE TIT 20(5)); the derivation above
//! reproduces it.
//!
//! ## References
//! - P. Stoica, A. Nehorai, "MUSIC, maximum likelihood, and Cramér–Rao bound", IEEE Trans. ASSP 37(5),
//!   720–741, 1989. doi:10.1109/29.17564
//! - D. C. Rife, R. R. Boorstyn, "Single-tone parameter estimation from discrete-time observations",
//!   IEEE Trans. Inf. Theory 20(5), 591–598, 1974. doi:10.1109/TIT.1974.1055282
//!
//! (Page numbers and DOIs recalled from memory.)

mod snapshots;
pub use snapshots::{conditional_crb, stochastic_crb};

use crate::error::{Error, Result};
use crate::model::{atom, Domain, Measurements, Spike, Spikes};
use faer::{Mat, Side};
use num_complex::Complex64;
use serde::Serialize;
use std::f64::consts::PI;
use std::ops::RangeInclusive;

/// Largest accepted condition number of the Jacobi-scaled Fisher matrix `D^{−1/2} F D^{−1/2}`
/// (`D = diag F`). The inverse computed through a Cholesky factorisation carries a relative error of
/// about `κ·ε` (the standard perturbation bound for Cholesky solves, Higham 2002, *Accuracy and
/// Stability of Numerical Algorithms*, ch. 10); at `κ = 10¹²` that is `≈ 2·10⁻⁴`, still a usable
/// bound. Beyond it the spikes are, to working precision, not separately identifiable (coincident
/// positions, a vanishing amplitude). The scaled condition grows like `Δ⁻⁶` as two spikes approach:
/// for two equal spikes on the band `−8..=8` it is `2.4` at `Δ = 1/fc`, `3·10⁵` at `0.1/fc` and
/// `3·10¹¹` at `0.01/fc`, so the limit falls near `Δ ≈ 0.01/fc`.
pub const MAX_SCALED_FISHER_CONDITION: f64 = 1e12;

/// Cramér–Rao bound of one spike: the smallest standard deviation any unbiased estimator can reach.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SpikeBound {
    /// The spike's position `τ_j` (copied from the input).
    pub position: f64,
    /// The spike's amplitude `a_j` (copied from the input), serialised as `[re, im]`.
    #[serde(with = "crate::model::complex_pair")]
    pub amplitude: Complex64,
    /// `√CRB(τ_j)`, in the units of position (cycles per sample for time-domain data).
    pub std_position: f64,
    /// `√CRB(τ_j) · fc`: the position bound in Rayleigh units, `fc = (kmax − kmin)/2` of the band.
    pub std_position_fc: f64,
    /// `√CRB(|a_j|)`.
    pub std_abs_amplitude: f64,
    /// `√CRB(arg a_j)`, in radians.
    pub std_phase: f64,
    /// `√(CRB(Re a_j) + CRB(Im a_j))`: the bound on the RMS error `√E|â_j − a_j|²`.
    pub std_complex_amplitude: f64,
}

/// Cramér–Rao bounds of a spike train on a measured set `K` (see the module docs for the formula).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Crb {
    /// One bound per spike, in the (position-sorted) order of the input [`Spikes`].
    pub per_spike: Vec<SpikeBound>,
    /// The cutoff `fc = (kmax − kmin)/2` of the band, used for the Rayleigh units.
    pub fc: f64,
    /// 2-norm condition number `λ_max/λ_min` of the Fisher matrix in the parameters
    /// `(τ_j, Re a_j, Im a_j)` (independent of σ). Large values mean strongly coupled parameters.
    pub fisher_condition: f64,
}

impl Crb {
    /// The largest position bound in Rayleigh units, `max_j √CRB(τ_j)·fc`.
    pub fn max_std_position_fc(&self) -> f64 {
        self.per_spike
            .iter()
            .map(|b| b.std_position_fc)
            .fold(0.0, f64::max)
    }
}

/// Cramér–Rao bounds of `spikes` measured at `indices` inside `band` with noise level `sigma`
/// (`E|n_k|² = σ²`).
///
/// The Fisher matrix `F = (2/σ²) Re(JᴴJ)` (module docs; Stoica & Nehorai 1989) is scaled to unit
/// diagonal, factored by Cholesky (faer) and inverted. `band` only sets `fc = (kmax − kmin)/2` for the
/// Rayleigh units and checks the indices; `K` may have gaps.
///
/// # Errors
/// - [`Error::InvalidSetting`] for `σ` not finite and positive, or a spike of zero amplitude;
/// - [`Error::Empty`] for no spikes or no indices; [`Error::DuplicateIndex`], [`Error::IndexOutOfBand`],
///   [`Error::ZeroCutoff`] for a bad index set or band;
/// - [`Error::Underdetermined`] when `3s > 2|K|` (more real parameters than real data);
/// - [`Error::Numerical`] when the Fisher matrix is singular to working precision (coincident spikes),
///   i.e. its scaled condition number exceeds `MAX_SCALED_FISHER_CONDITION` (10¹²).
///
/// # Examples
/// ```
/// use finespike::{crb, single_tone_position_variance};
/// use finespike::Spikes;
/// use num_complex::Complex64;
/// // One tone observed through 64 time samples (k = −63..=0).
/// let spikes = Spikes::from_parts(&[0.2], &[Complex64::new(1.0, 0.0)])?;
/// let k: Vec<i64> = (-63..=0).collect();
/// let bound = crb(&k, -63..=0, &spikes, 0.1)?;
/// let closed = single_tone_position_variance(64, 1.0, 0.1)?;
/// assert!((bound.per_spike[0].std_position.powi(2) / closed - 1.0).abs() < 1e-12);
/// # Ok::<(), finespike::Error>(())
/// ```
pub fn crb(indices: &[i64], band: RangeInclusive<i64>, spikes: &Spikes, sigma: f64) -> Result<Crb> {
    let (kmin, kmax) = band.into_inner();
    // Reuse the validation of measurements for the index set (distinct, inside a non-trivial band).
    let zeros = vec![Complex64::new(0.0, 0.0); indices.len()];
    let checked = Measurements::in_band(kmin, kmax, indices, &zeros, Domain::Fourier)?;
    crb_checked(checked.indices(), checked.fc(), spikes, sigma)
}

/// Cramér–Rao bounds of `spikes` for the index set and band of `data` (the values are not used).
///
/// # Errors
/// As [`crb`].
pub fn crb_for(data: &Measurements, spikes: &Spikes, sigma: f64) -> Result<Crb> {
    crb_checked(data.indices(), data.fc(), spikes, sigma)
}

/// Single-tone Cramér–Rao bound on the frequency (position) of one complex exponential of modulus
/// `amplitude_abs` in `n` contiguous samples with noise `E|n_k|² = σ²`:
///
/// ```text
/// var(f̂) ≥ 6σ² / ((2π)² |a|² N(N² − 1))      (cycles per sample)²
/// ```
///
/// (Rife & Boorstyn 1974, IEEE TIT 20(5), written with `E|n|² = σ²`; it is also what [`crb`] gives for
/// one spike on a contiguous band.)
///
/// # Errors
/// [`Error::InvalidSetting`] for `n < 2`, or `amplitude_abs` or `sigma` not finite and positive.
pub fn single_tone_position_variance(n: usize, amplitude_abs: f64, sigma: f64) -> Result<f64> {
    if n < 2 {
        return Err(Error::InvalidSetting {
            name: "n",
            value: n.to_string(),
            rule: "at least two samples are needed to bound a frequency",
        });
    }
    check_sigma(sigma)?;
    if !(amplitude_abs.is_finite() && amplitude_abs > 0.0) {
        return Err(Error::InvalidSetting {
            name: "amplitude_abs",
            value: amplitude_abs.to_string(),
            rule: "must be finite and positive",
        });
    }
    let nf = n as f64;
    Ok(6.0 * sigma * sigma
        / ((2.0 * PI).powi(2) * amplitude_abs * amplitude_abs * nf * (nf * nf - 1.0)))
}

fn check_sigma(sigma: f64) -> Result<()> {
    if sigma.is_finite() && sigma > 0.0 {
        Ok(())
    } else {
        Err(Error::InvalidSetting {
            name: "sigma",
            value: sigma.to_string(),
            rule: "the noise level must be finite and positive",
        })
    }
}

/// The unit-noise Fisher matrix `2 Re(JᴴJ)` (σ = 1), parameters ordered `(τ_j, Re a_j, Im a_j)` per spike.
pub(crate) fn unit_fisher(indices: &[i64], spikes: &Spikes) -> Mat<f64> {
    let s = spikes.len();
    let p = 3 * s;
    // Jacobian, one column per real parameter.
    let mut jac: Vec<Vec<Complex64>> = Vec::with_capacity(p);
    for sp in spikes {
        let e: Vec<Complex64> = indices.iter().map(|&k| atom(k, sp.position)).collect();
        let minus_i2pi_a = Complex64::new(0.0, -2.0 * PI) * sp.amplitude;
        jac.push(
            indices
                .iter()
                .zip(&e)
                .map(|(&k, &ek)| minus_i2pi_a * (k as f64) * ek)
                .collect(),
        );
        jac.push(e.clone());
        jac.push(e.iter().map(|&ek| Complex64::new(0.0, 1.0) * ek).collect());
    }
    let mut f = Mat::<f64>::zeros(p, p);
    for a in 0..p {
        for b in a..p {
            let re: f64 = jac[a]
                .iter()
                .zip(&jac[b])
                .map(|(u, v)| u.re * v.re + u.im * v.im)
                .sum();
            f[(a, b)] = 2.0 * re;
            f[(b, a)] = 2.0 * re;
        }
    }
    f
}

/// The inverse of a Fisher matrix `F` through Jacobi scaling: `S = D^{-1/2} F D^{-1/2}` has a unit
/// diagonal, its condition number measures how far the parameters are from identifiable independently
/// of their units, and `F⁻¹ = D^{-1/2} S⁻¹ D^{-1/2}` (Cholesky, relative error about `κ(S)·ε`, Higham
/// 2002, *Accuracy and Stability of Numerical Algorithms*, §10.1). The one inversion behind every
/// Cramér–Rao bound of the crate (here and in [`crate::lines`]).
pub(crate) struct ScaledInverse {
    inv: Mat<f64>,
    d: Vec<f64>,
}

impl ScaledInverse {
    /// Invert `f`; `Err` with the reason when it is singular to working precision (scaled condition
    /// above [`MAX_SCALED_FISHER_CONDITION`]) or not positive definite.
    pub(crate) fn new(f: &Mat<f64>) -> std::result::Result<Self, String> {
        let p = f.nrows();
        let d: Vec<f64> = (0..p).map(|i| f[(i, i)].sqrt()).collect();
        if d.iter().any(|x| !(*x > 0.0 && x.is_finite())) {
            return Err(
                "a parameter has no information (zero diagonal of the Fisher matrix)".into(),
            );
        }
        let scaled = Mat::<f64>::from_fn(p, p, |a, b| f[(a, b)] / (d[a] * d[b]));
        let eig = scaled
            .self_adjoint_eigenvalues(Side::Lower)
            .map_err(|e| format!("eigenvalues of the scaled Fisher matrix failed: {e:?}"))?;
        // Eigenvalues come sorted ascending (faer contract); use min/max anyway to not depend on it.
        let lmin = eig.iter().copied().fold(f64::INFINITY, f64::min);
        let lmax = eig.iter().copied().fold(0.0, f64::max);
        if !(lmin > 0.0 && lmax / lmin <= MAX_SCALED_FISHER_CONDITION) {
            return Err(format!(
                "the Fisher matrix is singular to working precision (smallest/largest eigenvalue of \
                 the scaled matrix {:.3e}, limit {:.0e})",
                lmin / lmax,
                1.0 / MAX_SCALED_FISHER_CONDITION
            ));
        }
        let chol = scaled
            .llt(Side::Lower)
            .map_err(|e| format!("Cholesky factorisation failed: {e:?}"))?;
        let inv = faer::linalg::solvers::DenseSolveCore::inverse(&chol);
        Ok(ScaledInverse { inv, d })
    }

    /// Entry `(a, b)` of `F⁻¹`.
    pub(crate) fn cov(&self, a: usize, b: usize) -> f64 {
        self.inv[(a, b)] / (self.d[a] * self.d[b])
    }
}

fn crb_checked(indices: &[i64], fc: f64, spikes: &Spikes, sigma: f64) -> Result<Crb> {
    check_sigma(sigma)?;
    if spikes.is_empty() {
        return Err(Error::Empty { what: "spikes" });
    }
    for sp in spikes {
        if sp.amplitude.norm() == 0.0 {
            return Err(Error::InvalidSetting {
                name: "spike amplitude",
                value: sp.amplitude.to_string(),
                rule: "must be nonzero: a spike of zero amplitude has no identifiable position",
            });
        }
    }
    let s = spikes.len();
    let p = 3 * s;
    if p > 2 * indices.len() {
        return Err(Error::Underdetermined {
            what: "Cramér–Rao bound (the Fisher matrix is singular)",
            unknowns: p,
            equations: 2 * indices.len(),
            advice: "measure more coefficients or bound fewer spikes",
        });
    }
    // The bound is homogeneous: amplitudes and σ scaled by c scale the amplitude bounds by c and leave
    // the position bounds unchanged. Work with amplitudes of peak modulus 1 so that the squared entries
    // of the Fisher matrix can neither overflow nor underflow.
    let amax = spikes
        .iter()
        .map(|sp| sp.amplitude.norm())
        .fold(0.0, f64::max);
    let normalised = Spikes::new(
        spikes
            .iter()
            .map(|sp| Spike::new(sp.position, sp.amplitude / amax))
            .collect(),
    )?;
    let f = unit_fisher(indices, &normalised);
    let singular = |detail: String| Error::Numerical {
        step: "Cramér–Rao bound (Fisher matrix inversion)",
        detail,
    };
    let inverse = ScaledInverse::new(&f).map_err(|detail| {
        singular(format!(
            "{detail}: spikes coincide or are too close to be told apart ({} spikes, minimum \
             separation {:.3e}·(1/fc))",
            s,
            spikes.min_separation() * fc
        ))
    })?;
    let cov = |a: usize, b: usize| inverse.cov(a, b);

    let fisher_eig = f
        .self_adjoint_eigenvalues(Side::Lower)
        .map_err(|e| singular(format!("eigenvalues of the Fisher matrix failed: {e:?}")))?;
    let fmin = fisher_eig.iter().copied().fold(f64::INFINITY, f64::min);
    let fmax = fisher_eig.iter().copied().fold(0.0, f64::max);

    // σ' = σ/amax is the noise level of the normalised problem.
    let sigma_n = sigma / amax;
    let per_spike = normalised
        .iter()
        .zip(spikes)
        .enumerate()
        .map(|(j, (nsp, sp))| {
            let (t, x, y) = (3 * j, 3 * j + 1, 3 * j + 2);
            let b = nsp.amplitude;
            let r = b.norm();
            let (c, s) = (b.re / r, b.im / r);
            let (cxx, cxy, cyy) = (cov(x, x), cov(x, y), cov(y, y));
            // Quadratic forms ∇gᵀ C ∇g: g = |a| has gradient (c, s), g = arg a has (−s, c)/|a|.
            let q_abs = c * c * cxx + 2.0 * c * s * cxy + s * s * cyy;
            let q_phase = s * s * cxx - 2.0 * c * s * cxy + c * c * cyy;
            let std_position = sigma_n * cov(t, t).sqrt();
            SpikeBound {
                position: sp.position,
                amplitude: sp.amplitude,
                std_position,
                std_position_fc: std_position * fc,
                // std(a) = amax·std(b) = σ·√q.
                std_abs_amplitude: sigma * q_abs.max(0.0).sqrt(),
                std_phase: sigma_n * q_phase.max(0.0).sqrt() / r,
                std_complex_amplitude: sigma * (cxx + cyy).sqrt(),
            }
        })
        .collect();
    Ok(Crb {
        per_spike,
        fc,
        fisher_condition: fmax / fmin,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use faer::c64;

    fn one() -> Complex64 {
        Complex64::new(1.0, 0.0)
    }

    #[test]
    fn closed_form_values() {
        // source: 6σ²/((2π)²|a|²N(N²−1)) (Rife & Boorstyn 1974), evaluated with numpy (task brief):
        // N = 64, |a| = 1, σ² = 0.01 → 5.79906e-9; N = 16, |a| = 2, σ² = 0.01 → 9.31261e-8.
        // The reference values carry 6 significant digits, hence the 1e-5 relative tolerance.
        let v = single_tone_position_variance(64, 1.0, 0.1).unwrap();
        assert!((v / 5.79906e-9 - 1.0).abs() < 1e-5, "{v}");
        let v = single_tone_position_variance(16, 2.0, 0.1).unwrap();
        assert!((v / 9.31261e-8 - 1.0).abs() < 1e-5, "{v}");
    }

    #[test]
    fn fisher_bound_equals_closed_form_for_one_tone() {
        // A single tone on a full band: the Fisher-matrix bound must reproduce the closed form. The
        // 3×3 scaled Fisher matrix has condition ≈ 4 (centred band) to ≈ 30 (one-sided band), so the
        // inverse is accurate to ~1e-14; 1e-12 leaves room for the O(N) summation error.
        for (n, tau, a, band) in [
            (64usize, 0.2, Complex64::new(1.0, 0.0), (-63i64, 0i64)),
            (64, 0.731, Complex64::new(-0.3, 0.4), (-31, 32)),
            (17, 0.05, Complex64::new(0.0, 2.0), (-8, 8)),
            (1000, 0.4999, Complex64::new(0.7, -0.1), (-999, 0)),
        ] {
            let spikes = Spikes::from_parts(&[tau], &[a]).unwrap();
            let k: Vec<i64> = (band.0..=band.1).collect();
            let b = crb(&k, band.0..=band.1, &spikes, 0.3).unwrap();
            let closed = single_tone_position_variance(n, a.norm(), 0.3).unwrap();
            let rel = (b.per_spike[0].std_position.powi(2) / closed - 1.0).abs();
            assert!(rel < 1e-12, "n = {n}: relative difference {rel:e}");
            let fc = (band.1 - band.0) as f64 / 2.0;
            assert!(
                (b.per_spike[0].std_position_fc / b.per_spike[0].std_position - fc).abs() < 1e-12
            );
        }
    }

    #[test]
    fn centred_single_tone_amplitude_bounds() {
        // On a centred band the amplitude decouples from the position: F_{Re a} = F_{Im a} = 2N/σ², so
        // std |a| = σ/√(2N) and std arg a = σ/(|a|√(2N)) (follows from the Fisher matrix in the module
        // docs: the cross terms Σ_k k vanish on a centred band).
        let a = Complex64::from_polar(2.0, 0.7);
        let spikes = Spikes::from_parts(&[0.3], &[a]).unwrap();
        let k: Vec<i64> = (-16..=16).collect();
        let b = crb(&k, -16..=16, &spikes, 0.5).unwrap().per_spike[0];
        let want = 0.5 / (2.0 * 33.0f64).sqrt();
        assert!((b.std_abs_amplitude / want - 1.0).abs() < 1e-12);
        assert!((b.std_phase / (want / 2.0) - 1.0).abs() < 1e-12);
        assert!((b.std_complex_amplitude / (want * 2f64.sqrt()) - 1.0).abs() < 1e-12);
    }

    /// The position block by the concentrated (projected) formula of Stoica & Nehorai (1989), single
    /// snapshot: CRB(τ) = (σ²/2) [Re(X̄ Dᴴ Π⊥_A D X)]⁻¹ with A = [e(τ_j)], D = [∂e(τ_j)/∂τ_j], X = diag(a),
    /// Π⊥_A = I − A(AᴴA)⁻¹Aᴴ (formula recalled from memory; an independent route to the same numbers).
    fn stoica_nehorai_positions(indices: &[i64], spikes: &Spikes, sigma: f64) -> Vec<f64> {
        use faer::linalg::solvers::DenseSolveCore;
        let m = indices.len();
        let s = spikes.len();
        let to = |z: Complex64| c64::new(z.re, z.im);
        let pos = spikes.positions();
        let amp = spikes.amplitudes();
        let a = Mat::<c64>::from_fn(m, s, |r, c| to(atom(indices[r], pos[c])));
        let d = Mat::<c64>::from_fn(m, s, |r, c| {
            to(Complex64::new(0.0, -2.0 * PI * indices[r] as f64) * atom(indices[r], pos[c]))
        });
        let gram = a.adjoint() * &a;
        let gram_inv = gram.llt(Side::Lower).unwrap().inverse();
        let proj = Mat::<c64>::identity(m, m) - &a * &gram_inv * a.adjoint();
        let h = d.adjoint() * &proj * &d;
        let g = Mat::<f64>::from_fn(s, s, |i, j| (to(amp[i].conj()) * h[(i, j)] * to(amp[j])).re);
        let ginv = g.llt(Side::Lower).unwrap().inverse();
        (0..s)
            .map(|i| (sigma * sigma / 2.0 * ginv[(i, i)]).sqrt())
            .collect()
    }

    #[test]
    fn full_fisher_matches_concentrated_formula_with_gaps() {
        // Three spikes, an irregular K with gaps: the position bounds from the full Fisher matrix must
        // equal the projected formula. Scaled Fisher condition here is ~1e3, so agreement to ~1e-12.
        let spikes = Spikes::from_parts(
            &[0.1, 0.16, 0.7],
            &[
                Complex64::new(1.0, 0.2),
                Complex64::new(-0.5, 0.5),
                Complex64::new(0.0, 1.5),
            ],
        )
        .unwrap();
        let k: Vec<i64> = vec![
            -20, -17, -13, -12, -8, -5, -3, 0, 1, 4, 6, 7, 11, 15, 18, 20,
        ];
        let b = crb(&k, -20..=20, &spikes, 0.2).unwrap();
        let sn = stoica_nehorai_positions(&k, &spikes, 0.2);
        for (x, y) in b.per_spike.iter().zip(&sn) {
            assert!(
                (x.std_position / y - 1.0).abs() < 1e-10,
                "{} vs {y}",
                x.std_position
            );
        }
    }

    #[test]
    fn bound_scales_linearly_with_sigma() {
        let spikes = Spikes::from_parts(&[0.1, 0.3], &[one(), Complex64::new(0.0, 2.0)]).unwrap();
        let k: Vec<i64> = (-8..=8).collect();
        let b1 = crb(&k, -8..=8, &spikes, 1e-3).unwrap();
        let b2 = crb(&k, -8..=8, &spikes, 1e-1).unwrap();
        for (x, y) in b1.per_spike.iter().zip(&b2.per_spike) {
            assert!((y.std_position / x.std_position / 100.0 - 1.0).abs() < 1e-13);
            assert!((y.std_phase / x.std_phase / 100.0 - 1.0).abs() < 1e-13);
        }
        assert!((b1.fisher_condition / b2.fisher_condition - 1.0).abs() < 1e-10);
    }

    #[test]
    fn extreme_scales_stay_finite() {
        // Homogeneity: amplitudes and σ scaled by 1e±150 give the same position bounds and scaled
        // amplitude bounds (module docs); no overflow or underflow on the way.
        let k: Vec<i64> = (-8..=8).collect();
        let base = Spikes::from_parts(&[0.1, 0.4], &[one(), Complex64::new(0.3, -0.2)]).unwrap();
        let b0 = crb(&k, -8..=8, &base, 0.05).unwrap();
        for c in [1e-150, 1e150] {
            let scaled = Spikes::from_parts(
                &base.positions(),
                &base.amplitudes().iter().map(|a| a * c).collect::<Vec<_>>(),
            )
            .unwrap();
            let b = crb(&k, -8..=8, &scaled, 0.05 * c).unwrap();
            for (x, y) in b.per_spike.iter().zip(&b0.per_spike) {
                assert!((x.std_position / y.std_position - 1.0).abs() < 1e-12);
                assert!((x.std_phase / y.std_phase - 1.0).abs() < 1e-12);
                assert!((x.std_abs_amplitude / (c * y.std_abs_amplitude) - 1.0).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn close_but_distinct_spikes_still_get_a_bound() {
        // 0.02/fc apart: far below the Rayleigh limit, yet identifiable in principle; the bound is huge
        // but finite (scaled Fisher condition ≈ 5e9, below the 1e12 limit).
        let k: Vec<i64> = (-8..=8).collect();
        let spikes = Spikes::from_parts(&[0.3, 0.3 + 0.02 / 8.0], &[one(), one()]).unwrap();
        let b = crb(&k, -8..=8, &spikes, 0.01).unwrap();
        let single = single_tone_position_variance(17, 1.0, 0.01).unwrap().sqrt() * 8.0;
        assert!(b.per_spike[0].std_position_fc > 100.0 * single);
        assert!(b.per_spike[0].std_position_fc.is_finite());
    }

    #[test]
    fn bad_inputs_are_errors() {
        let spikes = Spikes::from_parts(&[0.1], &[one()]).unwrap();
        let k: Vec<i64> = (-4..=4).collect();
        for sigma in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(
                crb(&k, -4..=4, &spikes, sigma),
                Err(Error::InvalidSetting { name: "sigma", .. })
            ));
        }
        assert!(matches!(
            crb(&k, -4..=4, &Spikes::empty(), 0.1),
            Err(Error::Empty { .. })
        ));
        assert!(matches!(
            crb(&[], -4..=4, &spikes, 0.1),
            Err(Error::Empty { .. })
        ));
        assert!(matches!(
            crb(&[0, 0], -4..=4, &spikes, 0.1),
            Err(Error::DuplicateIndex { index: 0, .. })
        ));
        assert!(matches!(
            crb(&[5], -4..=4, &spikes, 0.1),
            Err(Error::IndexOutOfBand { .. })
        ));
        assert!(matches!(
            crb(&[0], 0..=0, &spikes, 0.1),
            Err(Error::ZeroCutoff)
        ));
        let zero = Spikes::from_parts(&[0.1], &[Complex64::new(0.0, 0.0)]).unwrap();
        assert!(matches!(
            crb(&k, -4..=4, &zero, 0.1),
            Err(Error::InvalidSetting { .. })
        ));
        // Seven spikes (21 real parameters) from nine coefficients (18 real values).
        let many = Spikes::from_parts(&[0.0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6], &[one(); 7]).unwrap();
        assert!(matches!(
            crb(&k, -4..=4, &many, 0.1),
            Err(Error::Underdetermined { .. })
        ));
        for (n, a, s) in [
            (1usize, 1.0, 0.1),
            (8, 0.0, 0.1),
            (8, f64::NAN, 0.1),
            (8, 1.0, 0.0),
        ] {
            assert!(single_tone_position_variance(n, a, s).is_err());
        }
    }

    #[test]
    fn coincident_spikes_are_a_numerical_error() {
        let k: Vec<i64> = (-8..=8).collect();
        for gap in [0.0, 1e-9] {
            let spikes = Spikes::from_parts(&[0.3, 0.3 + gap], &[one(), one()]).unwrap();
            let r = crb(&k, -8..=8, &spikes, 0.1);
            assert!(
                matches!(r, Err(Error::Numerical { .. })),
                "gap {gap}: {r:?}"
            );
        }
    }
}
