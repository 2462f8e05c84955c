//! Numerical kernels shared by the estimators: the layer between the model and the methods. Nothing
//! here knows about a particular estimator; every estimator that needs one of these computations
//! calls it from here.
//!
//! - [`hankel`]: the Hankel matrix of a contiguous run of samples as an FFT-fast operator, and its
//!   signal subspace (dense below a size limit, randomized range finder with FFT products above).
//! - [`hankel_svd`]: singular values and vectors of the forward Hankel matrix, computed once per
//!   estimate and shared by the model order and the noise-level estimate; streamed for long records.
//! - [`rank`]: the numerical-rank rule and the exact-data test on singular values.
//! - [`budget`]: the memory and work limits every kernel checks before allocating.

pub(crate) mod budget;
pub(crate) mod hankel;
pub(crate) mod hankel_svd;
pub(crate) mod rank;
