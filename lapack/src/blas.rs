//! Level-2/3 BLAS: `?gemm`, `?gemv`, `?symv`, `?syrk`, `?syr2k`.
//!
//! Argument checks and quick returns follow the reference BLAS sources
//! (`BLAS/SRC/dgemm.f` etc. of reference LAPACK 3.9.1, vendored in the
//! `lapack-sys` 0.14 crate); the arithmetic is done by faer's (triangular)
//! matrix multiplication.

use core::ffi::{c_char, c_int};

use faer::linalg::matmul::matmul;
use faer::linalg::matmul::triangular::{matmul as tri_matmul, BlockStructure};
use faer::{Accum, MatMut, Par};

use crate::common::{
    blas_call, mat_mut, mat_ref, max1, opt, scale_mat, scale_triangle, vec_mut, vec_ref, Real,
};

/// Applies `beta` to the output ahead of an accumulating product and says how
/// the product must then be accumulated: `beta == 0` means "overwrite without
/// reading" (C may hold NaN), otherwise the output is pre-scaled and added to.
fn prepare_output<T: Real>(c: MatMut<'_, T>, beta: T) -> Accum {
    if beta == T::ZERO {
        Accum::Replace
    } else {
        scale_mat(c, beta);
        Accum::Add
    }
}

/// Triangle-restricted version of [`prepare_output`].
fn prepare_triangle<T: Real>(c: MatMut<'_, T>, upper: bool, beta: T) -> Accum {
    if beta == T::ZERO {
        Accum::Replace
    } else {
        scale_triangle(c, upper, beta);
        Accum::Add
    }
}

/// Decodes a `trans` option: `Some(false)` for `'N'`, `Some(true)` for
/// `'T'`/`'C'` (identical for real data).
fn decode_trans(t: u8) -> Option<bool> {
    match t {
        b'N' => Some(false),
        b'T' | b'C' => Some(true),
        _ => None,
    }
}

/// Decodes a `uplo` option: `Some(true)` for `'U'`, `Some(false)` for `'L'`.
fn decode_uplo(u: u8) -> Option<bool> {
    match u {
        b'U' => Some(true),
        b'L' => Some(false),
        _ => None,
    }
}

/// `C := alpha * op(A) * op(B) + beta * C`.
#[allow(clippy::too_many_arguments)]
unsafe fn gemm<T: Real>(
    transa: u8,
    transb: u8,
    m: i32,
    n: i32,
    k: i32,
    alpha: T,
    a: *const T,
    lda: i32,
    b: *const T,
    ldb: i32,
    beta: T,
    c: *mut T,
    ldc: i32,
) -> Result<(), c_int> {
    let ta = decode_trans(transa).ok_or(1)?;
    let tb = decode_trans(transb).ok_or(2)?;
    let nrowa = if ta { k } else { m };
    let nrowb = if tb { n } else { k };
    if m < 0 {
        return Err(3);
    }
    if n < 0 {
        return Err(4);
    }
    if k < 0 {
        return Err(5);
    }
    if lda < max1(nrowa) {
        return Err(8);
    }
    if ldb < max1(nrowb) {
        return Err(10);
    }
    if ldc < max1(m) {
        return Err(13);
    }
    let (m, n, k) = (m as usize, n as usize, k as usize);
    if m == 0 || n == 0 || ((alpha == T::ZERO || k == 0) && beta == T::ONE) {
        return Ok(());
    }
    let cv = mat_mut(c, m, n, ldc as usize, false);
    if alpha == T::ZERO || k == 0 {
        // A and B are not referenced (reference BLAS).
        scale_mat(cv, beta);
        return Ok(());
    }
    let av = mat_ref(a, m, k, lda as usize, ta);
    let bv = mat_ref(b, k, n, ldb as usize, tb);
    let mut cv = cv;
    let accum = prepare_output(cv.as_mut(), beta);
    matmul(cv, accum, av, bv, alpha, Par::Seq);
    Ok(())
}

/// `y := alpha * op(A) * x + beta * y`.
#[allow(clippy::too_many_arguments)]
unsafe fn gemv<T: Real>(
    trans: u8,
    m: i32,
    n: i32,
    alpha: T,
    a: *const T,
    lda: i32,
    x: *const T,
    incx: i32,
    beta: T,
    y: *mut T,
    incy: i32,
) -> Result<(), c_int> {
    let t = decode_trans(trans).ok_or(1)?;
    if m < 0 {
        return Err(2);
    }
    if n < 0 {
        return Err(3);
    }
    if lda < max1(m) {
        return Err(6);
    }
    if incx == 0 {
        return Err(8);
    }
    if incy == 0 {
        return Err(11);
    }
    let (m, n) = (m as usize, n as usize);
    if m == 0 || n == 0 || (alpha == T::ZERO && beta == T::ONE) {
        return Ok(());
    }
    let (lenx, leny) = if t { (m, n) } else { (n, m) };
    let mut yv = vec_mut(y, leny, incy).as_mat_mut();
    if alpha == T::ZERO {
        scale_mat(yv, beta);
        return Ok(());
    }
    let av = mat_ref(a, leny, lenx, lda as usize, t);
    let xv = vec_ref(x, lenx, incx).as_mat();
    let accum = prepare_output(yv.as_mut(), beta);
    matmul(yv, accum, av, xv, alpha, Par::Seq);
    Ok(())
}

/// `y := alpha * A * x + beta * y` with `A` symmetric, only its `uplo`
/// triangle referenced.
#[allow(clippy::too_many_arguments)]
unsafe fn symv<T: Real>(
    uplo: u8,
    n: i32,
    alpha: T,
    a: *const T,
    lda: i32,
    x: *const T,
    incx: i32,
    beta: T,
    y: *mut T,
    incy: i32,
) -> Result<(), c_int> {
    let upper = decode_uplo(uplo).ok_or(1)?;
    if n < 0 {
        return Err(2);
    }
    if lda < max1(n) {
        return Err(5);
    }
    if incx == 0 {
        return Err(7);
    }
    if incy == 0 {
        return Err(10);
    }
    let n = n as usize;
    if n == 0 || (alpha == T::ZERO && beta == T::ONE) {
        return Ok(());
    }
    let mut yv = vec_mut(y, n, incy).as_mat_mut();
    if alpha == T::ZERO {
        scale_mat(yv, beta);
        return Ok(());
    }
    // `low` is a view whose lower triangle is the referenced triangle of A
    // (for 'U' it is the transposed view). A = tril(low) + strict_triu(lowᵀ).
    let low = mat_ref(a, n, n, lda as usize, upper);
    let xv = vec_ref(x, n, incx).as_mat();
    let accum = prepare_output(yv.as_mut(), beta);
    tri_matmul(
        yv.as_mut(),
        BlockStructure::Rectangular,
        accum,
        low,
        BlockStructure::TriangularLower,
        xv,
        BlockStructure::Rectangular,
        alpha,
        Par::Seq,
    );
    tri_matmul(
        yv,
        BlockStructure::Rectangular,
        Accum::Add,
        low.transpose(),
        BlockStructure::StrictTriangularUpper,
        xv,
        BlockStructure::Rectangular,
        alpha,
        Par::Seq,
    );
    Ok(())
}

/// `C := alpha * op(A) * op(A)ᵀ + beta * C` on the `uplo` triangle of C, where
/// `op(A)` is `A` (n × k) for `'N'` and `Aᵀ` (A is k × n) for `'T'`/`'C'`.
#[allow(clippy::too_many_arguments)]
unsafe fn syrk<T: Real>(
    uplo: u8,
    trans: u8,
    n: i32,
    k: i32,
    alpha: T,
    a: *const T,
    lda: i32,
    beta: T,
    c: *mut T,
    ldc: i32,
) -> Result<(), c_int> {
    let upper = decode_uplo(uplo).ok_or(1)?;
    let t = decode_trans(trans).ok_or(2)?;
    if n < 0 {
        return Err(3);
    }
    if k < 0 {
        return Err(4);
    }
    let nrowa = if t { k } else { n };
    if lda < max1(nrowa) {
        return Err(7);
    }
    if ldc < max1(n) {
        return Err(10);
    }
    let (n, k) = (n as usize, k as usize);
    if n == 0 || ((alpha == T::ZERO || k == 0) && beta == T::ONE) {
        return Ok(());
    }
    let mut cv = mat_mut(c, n, n, ldc as usize, false);
    if alpha == T::ZERO || k == 0 {
        scale_triangle(cv, upper, beta);
        return Ok(());
    }
    let av = mat_ref(a, n, k, lda as usize, t);
    let structure = if upper {
        BlockStructure::TriangularUpper
    } else {
        BlockStructure::TriangularLower
    };
    let accum = prepare_triangle(cv.as_mut(), upper, beta);
    tri_matmul(
        cv,
        structure,
        accum,
        av,
        BlockStructure::Rectangular,
        av.transpose(),
        BlockStructure::Rectangular,
        alpha,
        Par::Seq,
    );
    Ok(())
}

/// `C := alpha * (op(A) op(B)ᵀ + op(B) op(A)ᵀ) + beta * C` on the `uplo`
/// triangle of C (`op` as in [`syrk`]).
#[allow(clippy::too_many_arguments)]
unsafe fn syr2k<T: Real>(
    uplo: u8,
    trans: u8,
    n: i32,
    k: i32,
    alpha: T,
    a: *const T,
    lda: i32,
    b: *const T,
    ldb: i32,
    beta: T,
    c: *mut T,
    ldc: i32,
) -> Result<(), c_int> {
    let upper = decode_uplo(uplo).ok_or(1)?;
    let t = decode_trans(trans).ok_or(2)?;
    if n < 0 {
        return Err(3);
    }
    if k < 0 {
        return Err(4);
    }
    let nrowa = if t { k } else { n };
    if lda < max1(nrowa) {
        return Err(7);
    }
    if ldb < max1(nrowa) {
        return Err(9);
    }
    if ldc < max1(n) {
        return Err(12);
    }
    let (n, k) = (n as usize, k as usize);
    if n == 0 || ((alpha == T::ZERO || k == 0) && beta == T::ONE) {
        return Ok(());
    }
    let mut cv = mat_mut(c, n, n, ldc as usize, false);
    if alpha == T::ZERO || k == 0 {
        scale_triangle(cv, upper, beta);
        return Ok(());
    }
    let av = mat_ref(a, n, k, lda as usize, t);
    let bv = mat_ref(b, n, k, ldb as usize, t);
    let structure = if upper {
        BlockStructure::TriangularUpper
    } else {
        BlockStructure::TriangularLower
    };
    let accum = prepare_triangle(cv.as_mut(), upper, beta);
    tri_matmul(
        cv.as_mut(),
        structure,
        accum,
        av,
        BlockStructure::Rectangular,
        bv.transpose(),
        BlockStructure::Rectangular,
        alpha,
        Par::Seq,
    );
    tri_matmul(
        cv,
        structure,
        Accum::Add,
        bv,
        BlockStructure::Rectangular,
        av.transpose(),
        BlockStructure::Rectangular,
        alpha,
        Par::Seq,
    );
    Ok(())
}

/// Shared `# Safety` text of the BLAS entry points.
macro_rules! blas_safety {
    () => {
        concat!(
            "# Safety\n\n",
            "Fortran calling convention: every argument is passed by pointer and ",
            "must satisfy the reference BLAS contract for this routine: scalar ",
            "pointers are readable, matrices are column-major with the given leading ",
            "dimensions and large enough for the given sizes, vectors hold ",
            "`1 + (len - 1) * |inc|` elements, and outputs do not alias inputs. ",
            "No hidden character-length arguments are read."
        )
    };
}

macro_rules! gemm_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference BLAS signature).")]
        ///
        /// General matrix–matrix product `C := alpha*op(A)*op(B) + beta*C`.
        ///
        /// `transa`, `transb` ∈ {N, T, C} (case-insensitive). With `beta = 0` C is not
        /// read (it may hold NaN); with `alpha = 0` A and B are not read.
        ///
        #[doc = blas_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            transa: *const c_char,
            transb: *const c_char,
            m: *const c_int,
            n: *const c_int,
            k: *const c_int,
            alpha: *const $t,
            a: *const $t,
            lda: *const c_int,
            b: *const $t,
            ldb: *const c_int,
            beta: *const $t,
            c: *mut $t,
            ldc: *const c_int,
        ) {
            blas_call($upper, || {
                gemm::<$t>(
                    opt(transa),
                    opt(transb),
                    *m,
                    *n,
                    *k,
                    *alpha,
                    a,
                    *lda,
                    b,
                    *ldb,
                    *beta,
                    c,
                    *ldc,
                )
            })
        }
    };
}

macro_rules! gemv_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference BLAS signature).")]
        ///
        /// General matrix–vector product `y := alpha*op(A)*x + beta*y`.
        ///
        /// `trans` ∈ {N, T, C}; any nonzero `incx`/`incy` (negative increments traverse
        /// the vector backwards). With `beta = 0` y is not read.
        ///
        #[doc = blas_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            trans: *const c_char,
            m: *const c_int,
            n: *const c_int,
            alpha: *const $t,
            a: *const $t,
            lda: *const c_int,
            x: *const $t,
            incx: *const c_int,
            beta: *const $t,
            y: *mut $t,
            incy: *const c_int,
        ) {
            blas_call($upper, || {
                gemv::<$t>(
                    opt(trans),
                    *m,
                    *n,
                    *alpha,
                    a,
                    *lda,
                    x,
                    *incx,
                    *beta,
                    y,
                    *incy,
                )
            })
        }
    };
}

macro_rules! symv_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference BLAS signature).")]
        ///
        /// Symmetric matrix–vector product `y := alpha*A*x + beta*y`.
        ///
        /// `uplo` ∈ {U, L}: only that triangle of A is read. Any nonzero `incx`/`incy`.
        /// With `beta = 0` y is not read.
        ///
        #[doc = blas_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            uplo: *const c_char,
            n: *const c_int,
            alpha: *const $t,
            a: *const $t,
            lda: *const c_int,
            x: *const $t,
            incx: *const c_int,
            beta: *const $t,
            y: *mut $t,
            incy: *const c_int,
        ) {
            blas_call($upper, || {
                symv::<$t>(opt(uplo), *n, *alpha, a, *lda, x, *incx, *beta, y, *incy)
            })
        }
    };
}

macro_rules! syrk_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference BLAS signature).")]
        ///
        /// Symmetric rank-k update `C := alpha*A*Aᵀ + beta*C` (`trans = N`) or
        /// `C := alpha*Aᵀ*A + beta*C` (`trans = T`/`C`).
        ///
        /// Only the `uplo` ∈ {U, L} triangle of C is read and written. With `beta = 0` C
        /// is not read.
        ///
        #[doc = blas_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            uplo: *const c_char,
            trans: *const c_char,
            n: *const c_int,
            k: *const c_int,
            alpha: *const $t,
            a: *const $t,
            lda: *const c_int,
            beta: *const $t,
            c: *mut $t,
            ldc: *const c_int,
        ) {
            blas_call($upper, || {
                syrk::<$t>(
                    opt(uplo),
                    opt(trans),
                    *n,
                    *k,
                    *alpha,
                    a,
                    *lda,
                    *beta,
                    c,
                    *ldc,
                )
            })
        }
    };
}

macro_rules! syr2k_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference BLAS signature).")]
        ///
        /// Symmetric rank-2k update `C := alpha*(A*Bᵀ + B*Aᵀ) + beta*C` (`trans = N`)
        /// or `C := alpha*(Aᵀ*B + Bᵀ*A) + beta*C` (`trans = T`/`C`).
        ///
        /// Only the `uplo` ∈ {U, L} triangle of C is read and written. With `beta = 0` C
        /// is not read.
        ///
        #[doc = blas_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            uplo: *const c_char,
            trans: *const c_char,
            n: *const c_int,
            k: *const c_int,
            alpha: *const $t,
            a: *const $t,
            lda: *const c_int,
            b: *const $t,
            ldb: *const c_int,
            beta: *const $t,
            c: *mut $t,
            ldc: *const c_int,
        ) {
            blas_call($upper, || {
                syr2k::<$t>(
                    opt(uplo),
                    opt(trans),
                    *n,
                    *k,
                    *alpha,
                    a,
                    *lda,
                    b,
                    *ldb,
                    *beta,
                    c,
                    *ldc,
                )
            })
        }
    };
}

gemm_entry!(sgemm_, f32, "SGEMM");
gemm_entry!(dgemm_, f64, "DGEMM");
gemv_entry!(sgemv_, f32, "SGEMV");
gemv_entry!(dgemv_, f64, "DGEMV");
symv_entry!(ssymv_, f32, "SSYMV");
symv_entry!(dsymv_, f64, "DSYMV");
syrk_entry!(ssyrk_, f32, "SSYRK");
syrk_entry!(dsyrk_, f64, "DSYRK");
syr2k_entry!(ssyr2k_, f32, "SSYR2K");
syr2k_entry!(dsyr2k_, f64, "DSYR2K");
