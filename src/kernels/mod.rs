//! Numerical kernels shared by the estimators: the layer between the model and the methods. Nothing
//! here knows about a particular estimator; every estimator that needs one of these computations
//! calls it from here.
//!
//! - [`hankel`]: the Hankel matrix of a contiguous run of samples, its singular values and signal
//!   subspace (dense below a size limit, randomized range finder with FFT products above).

pub(crate) mod hankel;
