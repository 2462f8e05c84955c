//! Numerical kernels shared by the estimators: the layer between the model and the methods. Nothing
//! here knows about a particular estimator; every estimator that needs one of these computations
//! calls it from here.
//!
//! - [`band`]: a band's measured set in a centred, normalised frame; atoms, forward and adjoint
//!   products, Gram matrices, evaluation of a polynomial and its FFT grid.
//! - [`peaks`]: the one peak type and peak polish, and the screened scan of `|q|` over the torus.
//! - [`lstsq`]: least-squares amplitudes at fixed positions (column-pivoted QR).
//! - [`slide`]: joint Newton steps on positions and amplitudes of the penalised least-squares
//!   objective in the band frame (Sliding Frank–Wolfe's slide; `greedy` uses it too).
//! - [`refine`]: the bounded Levenberg–Marquardt polish of a support on the exact model, in the data's
//!   own frame (the final step of every estimate, through [`crate::postprocess`]).
//! - [`hankel`]: the Hankel matrix of a contiguous run of samples as an FFT-fast operator, and its
//!   signal subspace (dense below a size limit, randomized range finder with FFT products above).
//! - [`hankel_svd`]: singular values and vectors of the forward Hankel matrix, computed once per
//!   estimate and shared by the model order and the noise-level estimate; streamed for long records.
//! - [`rank`]: the numerical-rank rule and the exact-data test on singular values.
//! - [`criteria`]: MDL and AIC model-order criteria on covariance eigenvalues (Wax & Kailath 1985).
//! - [`budget`]: the memory and work limits every kernel checks before allocating.
//! - [`spectrum`]: the noise spectrum of a record on its measured indices (tapered periodogram, robust
//!   floor, whole-band noise level with lines set aside, whiteness figure).

/// Relative residual `‖y − Fμ‖ ≤ EXACT_STOP·‖y‖` at which a fit to exact data counts as exact and the
/// greedy methods stop (`grid`, `greedy`): rounding of a well-conditioned fit is far below it.
pub(crate) const EXACT_STOP: f64 = 1e-10;

/// Radius `δ = σ √(m + 2√m)` of the data-fit ball for `m` complex measurements with noise of level
/// `σ`: the mean of `‖n‖²` plus two standard deviations, since `2‖n‖²/σ²` is χ² with `2m` degrees of
/// freedom (a χ² bound, common practice). The constrained TV problem and `greedy`'s stopping rule use
/// it.
pub(crate) fn noise_ball_radius(sigma: f64, m: usize) -> f64 {
    let m = m as f64;
    sigma * (m + 2.0 * m.sqrt()).sqrt()
}

/// The data-fit ball of the record `data` at noise level `σ`: [`noise_ball_radius`] for complex data;
/// for a real-valued record (real noise of variance `σ²`, so `‖n‖²/σ²` is χ² with `m` degrees of
/// freedom, standard deviation `√(2m)`) the same mean plus two standard deviations,
/// `δ = σ √(m + 2√(2m))`. The one entry point of the constrained TV problem and `greedy`.
pub(crate) fn noise_ball_for(data: &crate::model::Measurements, sigma: f64) -> f64 {
    let m = data.len() as f64;
    if data.is_real() {
        sigma * (m + 2.0 * (2.0 * m).sqrt()).sqrt()
    } else {
        noise_ball_radius(sigma, data.len())
    }
}

pub(crate) mod band;
pub(crate) mod budget;
pub(crate) mod cg;
pub(crate) mod criteria;
pub(crate) mod hankel;
pub(crate) mod hankel_svd;
pub(crate) mod lstsq;
pub(crate) mod peaks;
pub(crate) mod rank;
pub(crate) mod refine;
pub(crate) mod slide;
pub(crate) mod spectrum;

/// An invented exact scene for the large-support tests of the kernels: `s` spikes spread evenly over
/// the torus with a small irregular jitter (positions `(j + 0.1 sin j)/s + 0.01`, moduli in
/// `[0.5, 1.5]`, phases `2.1 j`), measured on the full band `−fc..=fc`.
#[cfg(test)]
pub(crate) fn spread_scene(
    s: usize,
    fc: i64,
) -> (crate::model::Measurements, crate::model::Spikes) {
    use crate::model::{forward, Domain, Measurements, Spikes};
    use num_complex::Complex64;
    let pos: Vec<f64> = (0..s)
        .map(|j| (j as f64 + 0.1 * (j as f64).sin()) / s as f64 + 0.01)
        .collect();
    let amp: Vec<Complex64> = (0..s)
        .map(|j| Complex64::from_polar(1.0 + 0.5 * (1.3 * j as f64).sin(), 2.1 * j as f64))
        .collect();
    let truth = Spikes::from_parts(&pos, &amp).expect("positions and amplitudes of one length");
    let idx: Vec<i64> = (-fc..=fc).collect();
    let data = Measurements::in_band(-fc, fc, &idx, &forward(&truth, &idx), Domain::Fourier)
        .expect("a valid full band");
    (data, truth)
}
