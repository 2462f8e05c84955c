//! Pure-Rust provider of the BLAS/LAPACK symbols that `clarabel`'s `sdp`
//! feature (its positive semidefinite cone) links against, so that a crate
//! using clarabel's PSD cone builds with cargo alone: no system BLAS, LAPACK
//! or Fortran runtime.
//!
//! Every routine is an `extern "C"` function with the Fortran calling
//! convention used by the `blas-sys` 0.7 / `lapack-sys` 0.14 declarations
//! (lower-case name with a trailing underscore, every argument by pointer, no
//! hidden character-length arguments), exported under its unmangled name. The
//! numerical kernels are faer 0.21's (matrix multiplication, Cholesky,
//! self-adjoint eigendecomposition, SVD, LU with partial pivoting); this crate
//! only translates the BLAS/LAPACK argument conventions (column-major storage,
//! leading dimensions, increments, option characters, workspace queries,
//! `info` codes) onto faer's strided views.
//!
//! # Routines (single and double precision)
//!
//! | routine | options supported |
//! |---|---|
//! | `sgemm_`/`dgemm_` | `transa`, `transb` ∈ {N, T, C}; `beta = 0` does not read C |
//! | `sgemv_`/`dgemv_` | `trans` ∈ {N, T, C}; any nonzero `incx`, `incy` |
//! | `ssymv_`/`dsymv_` | `uplo` ∈ {U, L}; any nonzero `incx`, `incy` |
//! | `ssyrk_`/`dsyrk_` | `uplo` ∈ {U, L}, `trans` ∈ {N, T, C} |
//! | `ssyr2k_`/`dsyr2k_` | `uplo` ∈ {U, L}, `trans` ∈ {N, T, C} |
//! | `spotrf_`/`dpotrf_` | `uplo` ∈ {U, L}; `info > 0` if not positive definite |
//! | `spotrs_`/`dpotrs_` | `uplo` ∈ {U, L} |
//! | `ssyevr_`/`dsyevr_` | `jobz` ∈ {N, V}, `range` ∈ {A, V, I}, `uplo` ∈ {U, L}; workspace query |
//! | `sgesdd_`/`dgesdd_` | `jobz` ∈ {N, S, A, O}; workspace query |
//! | `sgesvd_`/`dgesvd_` | `jobu`, `jobvt` ∈ {A, S, O, N} (not both O); workspace query |
//! | `sgesv_`/`dgesv_` | any `nrhs`; LAPACK-style `ipiv` |
//!
//! Option characters are case-insensitive. Argument checking follows the
//! reference implementations (reference LAPACK 3.9.1): a LAPACK routine
//! reports an illegal argument as `info = -position`; a BLAS routine, which
//! has no error channel, prints the reference `XERBLA` message to stderr and
//! returns without touching its outputs. Only the referenced triangle of a
//! symmetric input or output is read or written.
//!
//! clarabel 0.11 calls these with the following patterns, all covered by the
//! tests: `gemm` with any transposes and `beta = 0` on uninitialised output;
//! `syrk`/`syr2k` with `uplo = U`, `trans = N`; `potrf`/`potrs` with
//! `uplo = L` (the `info > 0` result is its positive-definiteness test);
//! `syevr` with `jobz` ∈ {N, V}, `range = A`, `uplo = U`, preceded by a
//! workspace query; `gesdd`/`gesvd` with `jobz = jobu = jobvt = S`.
//!
//! # Workspaces
//!
//! faer allocates its own scratch memory, so `work`/`iwork` arguments are
//! never used as workspace. Workspace queries (`lwork = -1`) are answered with
//! the minimum sizes documented by reference LAPACK, and on return `work[0]`
//! holds that size as LAPACK's does.
//!
//! # Panics
//!
//! No panic crosses the FFI boundary: LAPACK entry points convert one into
//! `info =` [`INFO_INTERNAL_ERROR`]; BLAS entry points, which cannot report
//! errors, abort the process.
//!
//! # Linking
//!
//! The symbols live in this crate's rlib. A crate that depends on this one
//! must reference it (e.g. `extern crate finespike_lapack;`) so that rustc
//! passes the rlib to the linker even though no Rust item is used.

mod blas;
mod common;
mod lapack;

pub use blas::{dgemm_, dgemv_, dsymv_, dsyr2k_, dsyrk_, sgemm_, sgemv_, ssymv_, ssyr2k_, ssyrk_};
pub use common::INFO_INTERNAL_ERROR;
pub use lapack::{
    dgesdd_, dgesv_, dgesvd_, dpotrf_, dpotrs_, dsyevr_, sgesdd_, sgesv_, sgesvd_, spotrf_,
    spotrs_, ssyevr_,
};
