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
//! - [`hankel`]: the Hankel matrix of a contiguous run of samples, its singular values and signal
//!   subspace (dense below a size limit, randomized range finder with FFT products above).

/// Relative residual `‖y − Fμ‖ ≤ EXACT_STOP·‖y‖` at which a fit to exact data counts as exact and the
/// greedy methods stop (`grid`, `greedy`): rounding of a well-conditioned fit is far below it.
pub(crate) const EXACT_STOP: f64 = 1e-10;

pub(crate) mod band;
pub(crate) mod hankel;
pub(crate) mod lstsq;
pub(crate) mod peaks;
pub(crate) mod refine;
pub(crate) mod slide;
