//! Shared plumbing: the scalar trait, option-character decoding, strided
//! faer views over raw column-major storage, and the guards that keep panics
//! from crossing the `extern "C"` boundary.

use core::ffi::{c_char, c_int};
use std::io::Write;
use std::panic::{catch_unwind, AssertUnwindSafe};

use faer::{ColMut, ColRef, MatMut, MatRef};

/// `info` value written by the LAPACK entry points when the implementation
/// failed internally (a caught panic or a failed workspace allocation).
///
/// Reference LAPACK never produces this value: its negative `info` codes are
/// argument positions, which are at most 21 for the routines provided here.
pub const INFO_INTERNAL_ERROR: c_int = -1000;

/// Real scalar types (`f32`, `f64`) the routines are generic over.
pub(crate) trait Real: faer_traits::RealField + Copy + 'static {
    /// Additive identity.
    const ZERO: Self;
    /// Multiplicative identity.
    const ONE: Self;
    /// Converts a workspace size for the `work[0]` answer of a query.
    fn from_usize(n: usize) -> Self;
}

impl Real for f32 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    fn from_usize(n: usize) -> Self {
        n as f32
    }
}

impl Real for f64 {
    const ZERO: Self = 0.0;
    const ONE: Self = 1.0;
    fn from_usize(n: usize) -> Self {
        n as f64
    }
}

/// Reads an option character and upper-cases it, matching the
/// case-insensitive comparison of the reference `LSAME` function.
///
/// # Safety
/// `c` must point to a readable `c_char`.
pub(crate) unsafe fn opt(c: *const c_char) -> u8 {
    (*c as u8).to_ascii_uppercase()
}

/// `max(1, x)`, the lower bound reference BLAS/LAPACK put on leading
/// dimensions.
pub(crate) fn max1(x: i32) -> i32 {
    x.max(1)
}

/// Read-only view of an `nrows × ncols` matrix stored column-major with
/// leading dimension `ld`; with `trans` the view is the transpose of the
/// stored `ncols × nrows` matrix.
///
/// # Safety
/// The addressed region must be valid for reads for the lifetime `'a` and not
/// be written through any other pointer meanwhile. `nrows`, `ncols` must be > 0.
pub(crate) unsafe fn mat_ref<'a, T>(
    ptr: *const T,
    nrows: usize,
    ncols: usize,
    ld: usize,
    trans: bool,
) -> MatRef<'a, T> {
    if trans {
        MatRef::from_raw_parts(ptr, nrows, ncols, ld as isize, 1)
    } else {
        MatRef::from_raw_parts(ptr, nrows, ncols, 1, ld as isize)
    }
}

/// Mutable counterpart of [`mat_ref`].
///
/// # Safety
/// As for [`mat_ref`], with exclusive write access.
pub(crate) unsafe fn mat_mut<'a, T>(
    ptr: *mut T,
    nrows: usize,
    ncols: usize,
    ld: usize,
    trans: bool,
) -> MatMut<'a, T> {
    if trans {
        MatMut::from_raw_parts_mut(ptr, nrows, ncols, ld as isize, 1)
    } else {
        MatMut::from_raw_parts_mut(ptr, nrows, ncols, 1, ld as isize)
    }
}

/// Address of logical element 0 of a BLAS vector of length `len` with
/// increment `inc`: for a negative increment the vector is stored backwards,
/// starting at `x[(len - 1) * |inc|]` (reference BLAS convention).
fn vec_start_offset(len: usize, inc: i32) -> isize {
    if inc < 0 {
        (len as isize - 1) * (-(inc as isize))
    } else {
        0
    }
}

/// Read-only view of a BLAS vector (`len > 0`, `inc != 0`).
///
/// # Safety
/// Every addressed element must be valid for reads during `'a`.
pub(crate) unsafe fn vec_ref<'a, T>(ptr: *const T, len: usize, inc: i32) -> ColRef<'a, T> {
    ColRef::from_raw_parts(ptr.offset(vec_start_offset(len, inc)), len, inc as isize)
}

/// Mutable view of a BLAS vector (`len > 0`, `inc != 0`).
///
/// # Safety
/// Every addressed element must be valid for writes during `'a`.
pub(crate) unsafe fn vec_mut<'a, T>(ptr: *mut T, len: usize, inc: i32) -> ColMut<'a, T> {
    ColMut::from_raw_parts_mut(ptr.offset(vec_start_offset(len, inc)), len, inc as isize)
}

/// Scales every element of a strided view by `beta`; `beta == 0` stores exact
/// zeros without reading (the BLAS rule that makes NaN/garbage inputs
/// harmless).
pub(crate) fn scale_mat<T: Real>(mut c: MatMut<'_, T>, beta: T) {
    if beta == T::ONE {
        return;
    }
    for j in 0..c.ncols() {
        for i in 0..c.nrows() {
            let v = if beta == T::ZERO {
                T::ZERO
            } else {
                beta * c[(i, j)]
            };
            c[(i, j)] = v;
        }
    }
}

/// Like [`scale_mat`] but only on the upper (`upper`) or lower triangle,
/// diagonal included, of a square view.
pub(crate) fn scale_triangle<T: Real>(mut c: MatMut<'_, T>, upper: bool, beta: T) {
    if beta == T::ONE {
        return;
    }
    let n = c.ncols();
    for j in 0..n {
        let rows = if upper { 0..j + 1 } else { j..n };
        for i in rows {
            let v = if beta == T::ZERO {
                T::ZERO
            } else {
                beta * c[(i, j)]
            };
            c[(i, j)] = v;
        }
    }
}

/// Runs the body of a BLAS routine. BLAS has no error channel: an illegal
/// argument (`Err(position)`) is reported on stderr in the wording of the
/// reference `XERBLA` and the routine returns without touching its outputs
/// (the reference `XERBLA` would stop the program; OpenBLAS also returns). A
/// panic (an internal bug) aborts the process rather than unwinding into
/// foreign code or returning silently wrong numbers.
pub(crate) fn blas_call(name: &str, body: impl FnOnce() -> Result<(), c_int>) {
    match catch_unwind(AssertUnwindSafe(body)) {
        Ok(Ok(())) => {}
        Ok(Err(param)) => {
            let _ = writeln!(
                std::io::stderr(),
                " ** On entry to {name} parameter number {param} had an illegal value"
            );
        }
        Err(_) => {
            let _ = writeln!(
                std::io::stderr(),
                "finespike-lapack: internal error in {name}; aborting"
            );
            std::process::abort();
        }
    }
}

/// Runs the body of a LAPACK routine and stores its `info` result; a caught
/// panic is reported as [`INFO_INTERNAL_ERROR`].
///
/// # Safety
/// `info` must be null or valid for writes.
pub(crate) unsafe fn lapack_call(info: *mut c_int, body: impl FnOnce() -> c_int) {
    let code = catch_unwind(AssertUnwindSafe(body)).unwrap_or(INFO_INTERNAL_ERROR);
    if !info.is_null() {
        *info = code;
    }
}
