//! Checks every exported routine, through its `extern "C"` symbol exactly as
//! clarabel calls it, against independent dense results: naive triple-loop
//! products for the BLAS routines, and residual/orthogonality/closed-form
//! checks for the factorizations.
//!
//! Tolerances. Rounding-error bounds are of the form `γ_k · (scale)` with
//! `γ_k = k·u/(1 − k·u)` and `u` the unit roundoff: for a length-k dot product
//! `|fl(xᵀy) − xᵀy| ≤ γ_k |x|ᵀ|y|` (Higham 2002, *Accuracy and Stability of
//! Numerical Algorithms*, 2nd ed., §3.1), and the backward errors of Cholesky
//! (Higham 2002, Thm 10.3), LU with partial pivoting (Thm 9.4, for the small
//! growth factors of random matrices) and of the orthogonal eigen/singular
//! value algorithms are bounded by a modest multiple of `n·u·‖A‖` (section
//! references recalled from memory). The tests use `SAFETY · k · ε · scale`
//! with `ε = 2u` (machine epsilon) and a safety factor of 10, which is far
//! below any error a wrong index, transpose or triangle would produce.

use core::ffi::{c_char, c_int};
use std::fmt::Debug;

use finespike_lapack as fl;

/// Safety factor on top of the textbook `k·ε` error bounds (see module docs).
const SAFETY: f64 = 10.0;

/// Sentinel stored in the padding rows (`i >= nrows`, `i < ld`) of every
/// matrix and in unreferenced triangles; routines must leave it untouched.
const PAD: f64 = 777.0;

/// Typed access to the single- and double-precision symbols.
#[allow(clippy::too_many_arguments)]
trait Scalar: Copy + Debug + PartialEq + 'static {
    /// Machine epsilon.
    const EPS: f64;
    fn of(x: f64) -> Self;
    fn f(self) -> f64;
    fn gemm(
        ta: u8,
        tb: u8,
        m: i32,
        n: i32,
        k: i32,
        alpha: f64,
        a: &[Self],
        lda: i32,
        b: &[Self],
        ldb: i32,
        beta: f64,
        c: &mut [Self],
        ldc: i32,
    );
    fn gemv(
        t: u8,
        m: i32,
        n: i32,
        alpha: f64,
        a: &[Self],
        lda: i32,
        x: &[Self],
        incx: i32,
        beta: f64,
        y: &mut [Self],
        incy: i32,
    );
    fn symv(
        uplo: u8,
        n: i32,
        alpha: f64,
        a: &[Self],
        lda: i32,
        x: &[Self],
        incx: i32,
        beta: f64,
        y: &mut [Self],
        incy: i32,
    );
    fn syrk(
        uplo: u8,
        t: u8,
        n: i32,
        k: i32,
        alpha: f64,
        a: &[Self],
        lda: i32,
        beta: f64,
        c: &mut [Self],
        ldc: i32,
    );
    fn syr2k(
        uplo: u8,
        t: u8,
        n: i32,
        k: i32,
        alpha: f64,
        a: &[Self],
        lda: i32,
        b: &[Self],
        ldb: i32,
        beta: f64,
        c: &mut [Self],
        ldc: i32,
    );
    fn potrf(uplo: u8, n: i32, a: &mut [Self], lda: i32) -> i32;
    fn potrs(uplo: u8, n: i32, nrhs: i32, a: &[Self], lda: i32, b: &mut [Self], ldb: i32) -> i32;
    fn syevr(
        jobz: u8,
        range: u8,
        uplo: u8,
        n: i32,
        a: &mut [Self],
        lda: i32,
        vl: f64,
        vu: f64,
        il: i32,
        iu: i32,
        m: &mut i32,
        w: &mut [Self],
        z: &mut [Self],
        ldz: i32,
        isuppz: &mut [i32],
        work: &mut [Self],
        lwork: i32,
        iwork: &mut [i32],
        liwork: i32,
    ) -> i32;
    fn gesdd(
        jobz: u8,
        m: i32,
        n: i32,
        a: &mut [Self],
        lda: i32,
        s: &mut [Self],
        u: &mut [Self],
        ldu: i32,
        vt: &mut [Self],
        ldvt: i32,
        work: &mut [Self],
        lwork: i32,
        iwork: &mut [i32],
    ) -> i32;
    fn gesvd(
        jobu: u8,
        jobvt: u8,
        m: i32,
        n: i32,
        a: &mut [Self],
        lda: i32,
        s: &mut [Self],
        u: &mut [Self],
        ldu: i32,
        vt: &mut [Self],
        ldvt: i32,
        work: &mut [Self],
        lwork: i32,
    ) -> i32;
    fn gesv(
        n: i32,
        nrhs: i32,
        a: &mut [Self],
        lda: i32,
        ipiv: &mut [i32],
        b: &mut [Self],
        ldb: i32,
    ) -> i32;
}

macro_rules! impl_scalar {
    ($t:ty, $eps:expr, $gemm:path, $gemv:path, $symv:path, $syrk:path, $syr2k:path,
     $potrf:path, $potrs:path, $syevr:path, $gesdd:path, $gesvd:path, $gesv:path) => {
        impl Scalar for $t {
            const EPS: f64 = $eps;
            fn of(x: f64) -> Self {
                x as $t
            }
            fn f(self) -> f64 {
                self as f64
            }
            fn gemm(
                ta: u8,
                tb: u8,
                m: i32,
                n: i32,
                k: i32,
                alpha: f64,
                a: &[Self],
                lda: i32,
                b: &[Self],
                ldb: i32,
                beta: f64,
                c: &mut [Self],
                ldc: i32,
            ) {
                let (alpha, beta) = (alpha as $t, beta as $t);
                unsafe {
                    $gemm(
                        &(ta as c_char),
                        &(tb as c_char),
                        &m,
                        &n,
                        &k,
                        &alpha,
                        a.as_ptr(),
                        &lda,
                        b.as_ptr(),
                        &ldb,
                        &beta,
                        c.as_mut_ptr(),
                        &ldc,
                    )
                }
            }
            fn gemv(
                t: u8,
                m: i32,
                n: i32,
                alpha: f64,
                a: &[Self],
                lda: i32,
                x: &[Self],
                incx: i32,
                beta: f64,
                y: &mut [Self],
                incy: i32,
            ) {
                let (alpha, beta) = (alpha as $t, beta as $t);
                unsafe {
                    $gemv(
                        &(t as c_char),
                        &m,
                        &n,
                        &alpha,
                        a.as_ptr(),
                        &lda,
                        x.as_ptr(),
                        &incx,
                        &beta,
                        y.as_mut_ptr(),
                        &incy,
                    )
                }
            }
            fn symv(
                uplo: u8,
                n: i32,
                alpha: f64,
                a: &[Self],
                lda: i32,
                x: &[Self],
                incx: i32,
                beta: f64,
                y: &mut [Self],
                incy: i32,
            ) {
                let (alpha, beta) = (alpha as $t, beta as $t);
                unsafe {
                    $symv(
                        &(uplo as c_char),
                        &n,
                        &alpha,
                        a.as_ptr(),
                        &lda,
                        x.as_ptr(),
                        &incx,
                        &beta,
                        y.as_mut_ptr(),
                        &incy,
                    )
                }
            }
            fn syrk(
                uplo: u8,
                t: u8,
                n: i32,
                k: i32,
                alpha: f64,
                a: &[Self],
                lda: i32,
                beta: f64,
                c: &mut [Self],
                ldc: i32,
            ) {
                let (alpha, beta) = (alpha as $t, beta as $t);
                unsafe {
                    $syrk(
                        &(uplo as c_char),
                        &(t as c_char),
                        &n,
                        &k,
                        &alpha,
                        a.as_ptr(),
                        &lda,
                        &beta,
                        c.as_mut_ptr(),
                        &ldc,
                    )
                }
            }
            fn syr2k(
                uplo: u8,
                t: u8,
                n: i32,
                k: i32,
                alpha: f64,
                a: &[Self],
                lda: i32,
                b: &[Self],
                ldb: i32,
                beta: f64,
                c: &mut [Self],
                ldc: i32,
            ) {
                let (alpha, beta) = (alpha as $t, beta as $t);
                unsafe {
                    $syr2k(
                        &(uplo as c_char),
                        &(t as c_char),
                        &n,
                        &k,
                        &alpha,
                        a.as_ptr(),
                        &lda,
                        b.as_ptr(),
                        &ldb,
                        &beta,
                        c.as_mut_ptr(),
                        &ldc,
                    )
                }
            }
            fn potrf(uplo: u8, n: i32, a: &mut [Self], lda: i32) -> i32 {
                let mut info: c_int = 12345;
                unsafe { $potrf(&(uplo as c_char), &n, a.as_mut_ptr(), &lda, &mut info) };
                info
            }
            fn potrs(
                uplo: u8,
                n: i32,
                nrhs: i32,
                a: &[Self],
                lda: i32,
                b: &mut [Self],
                ldb: i32,
            ) -> i32 {
                let mut info: c_int = 12345;
                unsafe {
                    $potrs(
                        &(uplo as c_char),
                        &n,
                        &nrhs,
                        a.as_ptr(),
                        &lda,
                        b.as_mut_ptr(),
                        &ldb,
                        &mut info,
                    )
                };
                info
            }
            fn syevr(
                jobz: u8,
                range: u8,
                uplo: u8,
                n: i32,
                a: &mut [Self],
                lda: i32,
                vl: f64,
                vu: f64,
                il: i32,
                iu: i32,
                m: &mut i32,
                w: &mut [Self],
                z: &mut [Self],
                ldz: i32,
                isuppz: &mut [i32],
                work: &mut [Self],
                lwork: i32,
                iwork: &mut [i32],
                liwork: i32,
            ) -> i32 {
                let mut info: c_int = 12345;
                let (vl, vu, abstol) = (vl as $t, vu as $t, -1.0 as $t);
                unsafe {
                    $syevr(
                        &(jobz as c_char),
                        &(range as c_char),
                        &(uplo as c_char),
                        &n,
                        a.as_mut_ptr(),
                        &lda,
                        &vl,
                        &vu,
                        &il,
                        &iu,
                        &abstol,
                        m,
                        w.as_mut_ptr(),
                        z.as_mut_ptr(),
                        &ldz,
                        isuppz.as_mut_ptr(),
                        work.as_mut_ptr(),
                        &lwork,
                        iwork.as_mut_ptr(),
                        &liwork,
                        &mut info,
                    )
                };
                info
            }
            fn gesdd(
                jobz: u8,
                m: i32,
                n: i32,
                a: &mut [Self],
                lda: i32,
                s: &mut [Self],
                u: &mut [Self],
                ldu: i32,
                vt: &mut [Self],
                ldvt: i32,
                work: &mut [Self],
                lwork: i32,
                iwork: &mut [i32],
            ) -> i32 {
                let mut info: c_int = 12345;
                unsafe {
                    $gesdd(
                        &(jobz as c_char),
                        &m,
                        &n,
                        a.as_mut_ptr(),
                        &lda,
                        s.as_mut_ptr(),
                        u.as_mut_ptr(),
                        &ldu,
                        vt.as_mut_ptr(),
                        &ldvt,
                        work.as_mut_ptr(),
                        &lwork,
                        iwork.as_mut_ptr(),
                        &mut info,
                    )
                };
                info
            }
            fn gesvd(
                jobu: u8,
                jobvt: u8,
                m: i32,
                n: i32,
                a: &mut [Self],
                lda: i32,
                s: &mut [Self],
                u: &mut [Self],
                ldu: i32,
                vt: &mut [Self],
                ldvt: i32,
                work: &mut [Self],
                lwork: i32,
            ) -> i32 {
                let mut info: c_int = 12345;
                unsafe {
                    $gesvd(
                        &(jobu as c_char),
                        &(jobvt as c_char),
                        &m,
                        &n,
                        a.as_mut_ptr(),
                        &lda,
                        s.as_mut_ptr(),
                        u.as_mut_ptr(),
                        &ldu,
                        vt.as_mut_ptr(),
                        &ldvt,
                        work.as_mut_ptr(),
                        &lwork,
                        &mut info,
                    )
                };
                info
            }
            fn gesv(
                n: i32,
                nrhs: i32,
                a: &mut [Self],
                lda: i32,
                ipiv: &mut [i32],
                b: &mut [Self],
                ldb: i32,
            ) -> i32 {
                let mut info: c_int = 12345;
                unsafe {
                    $gesv(
                        &n,
                        &nrhs,
                        a.as_mut_ptr(),
                        &lda,
                        ipiv.as_mut_ptr(),
                        b.as_mut_ptr(),
                        &ldb,
                        &mut info,
                    )
                };
                info
            }
        }
    };
}

impl_scalar!(
    f32,
    f32::EPSILON as f64,
    fl::sgemm_,
    fl::sgemv_,
    fl::ssymv_,
    fl::ssyrk_,
    fl::ssyr2k_,
    fl::spotrf_,
    fl::spotrs_,
    fl::ssyevr_,
    fl::sgesdd_,
    fl::sgesvd_,
    fl::sgesv_
);
impl_scalar!(
    f64,
    f64::EPSILON,
    fl::dgemm_,
    fl::dgemv_,
    fl::dsymv_,
    fl::dsyrk_,
    fl::dsyr2k_,
    fl::dpotrf_,
    fl::dpotrs_,
    fl::dsyevr_,
    fl::dgesdd_,
    fl::dgesvd_,
    fl::dgesv_
);

/// SplitMix64 generator (Steele, Lea & Flood 2014, "Fast splittable
/// pseudorandom number generators"; constants recalled from memory). Any
/// deterministic source of varied entries would do.
struct Rng(u64);

impl Rng {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [-1, 1).
    fn unif(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 52) as f64 - 1.0
    }
}

/// Column-major matrix with leading dimension `ld >= rows`; the padding rows
/// hold [`PAD`].
#[derive(Clone, Debug)]
struct M<T> {
    rows: usize,
    cols: usize,
    ld: usize,
    d: Vec<T>,
}

impl<T: Scalar> M<T> {
    fn new(rows: usize, cols: usize, pad: usize, mut f: impl FnMut(usize, usize) -> f64) -> Self {
        let ld = rows.max(1) + pad;
        let mut d = vec![T::of(PAD); ld * cols.max(1)];
        for j in 0..cols {
            for i in 0..rows {
                d[i + j * ld] = T::of(f(i, j));
            }
        }
        M { rows, cols, ld, d }
    }
    fn random(rows: usize, cols: usize, pad: usize, rng: &mut Rng) -> Self {
        Self::new(rows, cols, pad, |_, _| rng.unif())
    }
    fn at(&self, i: usize, j: usize) -> f64 {
        self.d[i + j * self.ld].f()
    }
    fn set(&mut self, i: usize, j: usize, v: f64) {
        self.d[i + j * self.ld] = T::of(v);
    }
    fn ldi(&self) -> i32 {
        self.ld as i32
    }
    fn padding_intact(&self) -> bool {
        (0..self.cols).all(|j| (self.rows..self.ld).all(|i| self.d[i + j * self.ld].f() == PAD))
    }
    fn max_abs(&self) -> f64 {
        let mut m = 0.0f64;
        for j in 0..self.cols {
            for i in 0..self.rows {
                m = m.max(self.at(i, j).abs());
            }
        }
        m
    }
    fn fro(&self) -> f64 {
        let mut s = 0.0;
        for j in 0..self.cols {
            for i in 0..self.rows {
                s += self.at(i, j).powi(2);
            }
        }
        s.sqrt()
    }
}

/// Error bound `SAFETY · k · ε · scale` (see module docs).
fn tol<T: Scalar>(k: usize, scale: f64) -> f64 {
    SAFETY * k.max(1) as f64 * T::EPS * scale
}

/// Element (i, j) of op(X): X itself or its transpose.
fn op<T: Scalar>(x: &M<T>, trans: bool, i: usize, j: usize) -> f64 {
    if trans {
        x.at(j, i)
    } else {
        x.at(i, j)
    }
}

fn is_trans(t: u8) -> bool {
    matches!(t, b'T' | b't' | b'C' | b'c')
}

// ---------------------------------------------------------------- gemm ----

fn check_gemm<T: Scalar>(m: usize, n: usize, k: usize, seed: u64) {
    let mut rng = Rng(seed);
    for &ta in b"NtC" {
        for &tb in b"nTc" {
            for &beta in &[0.0, 1.0, -0.75] {
                let (at, bt) = (is_trans(ta), is_trans(tb));
                let a = if at {
                    M::<T>::random(k, m, 2, &mut rng)
                } else {
                    M::<T>::random(m, k, 3, &mut rng)
                };
                let b = if bt {
                    M::<T>::random(n, k, 1, &mut rng)
                } else {
                    M::<T>::random(k, n, 2, &mut rng)
                };
                let c0 = if beta == 0.0 {
                    // beta = 0: C must not be read.
                    M::<T>::new(m, n, 2, |_, _| f64::NAN)
                } else {
                    M::<T>::random(m, n, 2, &mut rng)
                };
                let alpha = 1.5;
                let mut c = c0.clone();
                T::gemm(
                    ta,
                    tb,
                    m as i32,
                    n as i32,
                    k as i32,
                    alpha,
                    &a.d,
                    a.ldi(),
                    &b.d,
                    b.ldi(),
                    beta,
                    &mut c.d,
                    c.ld as i32,
                );
                assert!(c.padding_intact());
                for i in 0..m {
                    for j in 0..n {
                        let (mut s, mut mag) = (0.0, 0.0);
                        for l in 0..k {
                            let p = op(&a, at, i, l) * op(&b, bt, l, j);
                            s += p;
                            mag += p.abs();
                        }
                        let c0ij = if beta == 0.0 { 0.0 } else { c0.at(i, j) };
                        let want = alpha * s + beta * c0ij;
                        let scale = alpha.abs() * mag + (beta * c0ij).abs();
                        let got = c.at(i, j);
                        assert!(
                            (got - want).abs() <= tol::<T>(k + 2, scale),
                            "gemm {} {} beta={beta} ({i},{j}): {got} vs {want}",
                            ta as char,
                            tb as char
                        );
                    }
                }
            }
        }
    }
}

fn gemm_special_cases<T: Scalar>() {
    let mut rng = Rng(7);
    let (m, n, k) = (4, 3, 5);
    // alpha = 0: A and B are not referenced (they hold NaN), C := beta*C.
    let a = M::<T>::new(m, k, 1, |_, _| f64::NAN);
    let b = M::<T>::new(k, n, 1, |_, _| f64::NAN);
    let c0 = M::<T>::random(m, n, 1, &mut rng);
    let mut c = c0.clone();
    T::gemm(
        b'N',
        b'N',
        4,
        3,
        5,
        0.0,
        &a.d,
        a.ldi(),
        &b.d,
        b.ldi(),
        -2.0,
        &mut c.d,
        c.ld as i32,
    );
    for i in 0..m {
        for j in 0..n {
            assert_eq!(c.at(i, j), -2.0 * c0.at(i, j));
        }
    }
    // k = 0 with beta = 0 on NaN input: C := 0.
    let mut c = M::<T>::new(m, n, 1, |_, _| f64::NAN);
    T::gemm(
        b'N',
        b'N',
        4,
        3,
        0,
        1.0,
        &a.d,
        4,
        &b.d,
        1,
        0.0,
        &mut c.d,
        c.ld as i32,
    );
    assert!((0..m).all(|i| (0..n).all(|j| c.at(i, j) == 0.0)));
    // Illegal transa: reported, C untouched.
    let mut c = c0.clone();
    T::gemm(
        b'X',
        b'N',
        4,
        3,
        5,
        1.0,
        &a.d,
        a.ldi(),
        &b.d,
        b.ldi(),
        0.0,
        &mut c.d,
        c.ld as i32,
    );
    assert_eq!(c.d, c0.d);
}

#[test]
fn gemm_f64() {
    check_gemm::<f64>(5, 4, 3, 1);
    check_gemm::<f64>(33, 17, 29, 2);
    gemm_special_cases::<f64>();
}

#[test]
fn gemm_f32() {
    check_gemm::<f32>(5, 4, 3, 3);
    check_gemm::<f32>(33, 17, 29, 4);
    gemm_special_cases::<f32>();
}

// ------------------------------------------------------ gemv and symv ----

/// Strided vector storage for increment `inc` (negative: stored backwards).
fn strided<T: Scalar>(v: &[f64], inc: i32) -> Vec<T> {
    let step = inc.unsigned_abs() as usize;
    let mut out = vec![T::of(PAD); 1 + (v.len() - 1) * step];
    for (i, &x) in v.iter().enumerate() {
        let pos = if inc > 0 {
            i * step
        } else {
            (v.len() - 1 - i) * step
        };
        out[pos] = T::of(x);
    }
    out
}

/// Inverse of [`strided`], also checking that the gaps are untouched.
fn unstrided<T: Scalar>(s: &[T], len: usize, inc: i32) -> Vec<f64> {
    let step = inc.unsigned_abs() as usize;
    for (p, x) in s.iter().enumerate() {
        if p % step != 0 {
            assert_eq!(x.f(), PAD, "vector gap overwritten");
        }
    }
    (0..len)
        .map(|i| {
            let pos = if inc > 0 {
                i * step
            } else {
                (len - 1 - i) * step
            };
            s[pos].f()
        })
        .collect()
}

fn check_gemv<T: Scalar>() {
    let mut rng = Rng(11);
    let (m, n) = (7, 5);
    for &t in b"NTc" {
        let tr = is_trans(t);
        let (lenx, leny) = if tr { (m, n) } else { (n, m) };
        for &(incx, incy) in &[(1, 1), (2, -1), (-3, 2), (-1, -2)] {
            for &beta in &[0.0, 1.0, 0.5] {
                let a = M::<T>::random(m, n, 3, &mut rng);
                let x: Vec<f64> = (0..lenx).map(|_| rng.unif()).collect();
                let y0: Vec<f64> = (0..leny)
                    .map(|_| if beta == 0.0 { f64::NAN } else { rng.unif() })
                    .collect();
                let xs = strided::<T>(&x, incx);
                let mut ys = strided::<T>(&y0, incy);
                let alpha = -1.25;
                T::gemv(
                    t,
                    m as i32,
                    n as i32,
                    alpha,
                    &a.d,
                    a.ldi(),
                    &xs,
                    incx,
                    beta,
                    &mut ys,
                    incy,
                );
                let y = unstrided(&ys, leny, incy);
                let xr = unstrided(&xs, lenx, incx);
                for i in 0..leny {
                    let (mut s, mut mag) = (0.0, 0.0);
                    for (l, &xl) in xr.iter().enumerate() {
                        let p = op(&a, tr, i, l) * xl;
                        s += p;
                        mag += p.abs();
                    }
                    let y0i = if beta == 0.0 { 0.0 } else { y0[i] };
                    let want = alpha * s + beta * y0i;
                    let scale = alpha.abs() * mag + (beta * y0i).abs();
                    assert!(
                        (y[i] - want).abs() <= tol::<T>(lenx + 2, scale),
                        "gemv {} incx={incx} incy={incy} beta={beta}: {} vs {want}",
                        t as char,
                        y[i]
                    );
                }
            }
        }
    }
}

fn check_symv<T: Scalar>() {
    let mut rng = Rng(12);
    let n = 6;
    let full = {
        let r = M::<f64>::random(n, n, 0, &mut rng);
        M::<f64>::new(n, n, 0, |i, j| r.at(i, j) + r.at(j, i))
    };
    for &uplo in b"ULl" {
        let upper = uplo == b'U';
        // Unreferenced triangle holds NaN.
        let a = M::<T>::new(n, n, 2, |i, j| {
            if (upper && i <= j) || (!upper && i >= j) {
                full.at(i, j)
            } else {
                f64::NAN
            }
        });
        for &(incx, incy) in &[(1, 1), (-2, 3), (2, -1)] {
            for &beta in &[0.0, 1.0, -3.0] {
                let x: Vec<f64> = (0..n).map(|_| rng.unif()).collect();
                let y0: Vec<f64> = (0..n)
                    .map(|_| if beta == 0.0 { f64::NAN } else { rng.unif() })
                    .collect();
                let xs = strided::<T>(&x, incx);
                let mut ys = strided::<T>(&y0, incy);
                let alpha = 0.5;
                T::symv(
                    uplo,
                    n as i32,
                    alpha,
                    &a.d,
                    a.ldi(),
                    &xs,
                    incx,
                    beta,
                    &mut ys,
                    incy,
                );
                let y = unstrided(&ys, n, incy);
                let xr = unstrided(&xs, n, incx);
                for i in 0..n {
                    let (mut s, mut mag) = (0.0, 0.0);
                    for (l, &xl) in xr.iter().enumerate() {
                        let p = T::of(full.at(i, l)).f() * xl;
                        s += p;
                        mag += p.abs();
                    }
                    let y0i = if beta == 0.0 { 0.0 } else { y0[i] };
                    let want = alpha * s + beta * y0i;
                    let scale = alpha.abs() * mag + (beta * y0i).abs();
                    assert!(
                        (y[i] - want).abs() <= tol::<T>(n + 2, scale),
                        "symv {} beta={beta}: {} vs {want}",
                        uplo as char,
                        y[i]
                    );
                }
            }
        }
    }
}

#[test]
fn gemv_symv_f64() {
    check_gemv::<f64>();
    check_symv::<f64>();
}

#[test]
fn gemv_symv_f32() {
    check_gemv::<f32>();
    check_symv::<f32>();
}

// ----------------------------------------------------- syrk and syr2k ----

fn in_triangle(upper: bool, i: usize, j: usize) -> bool {
    if upper {
        i <= j
    } else {
        i >= j
    }
}

fn check_syrk_like<T: Scalar>(two: bool, n: usize, k: usize, seed: u64) {
    let mut rng = Rng(seed);
    for &uplo in b"UuL" {
        let upper = uplo.eq_ignore_ascii_case(&b'U');
        for &t in b"NTc" {
            let tr = is_trans(t);
            for &beta in &[0.0, 1.0, -0.5] {
                let (ar, ac) = if tr { (k, n) } else { (n, k) };
                let a = M::<T>::random(ar, ac, 2, &mut rng);
                let b = M::<T>::random(ar, ac, 1, &mut rng);
                // Referenced triangle: random (NaN if beta = 0, must not be
                // read); other triangle: sentinel, must stay untouched.
                let c0 = M::<T>::new(n, n, 3, |i, j| {
                    if !in_triangle(upper, i, j) {
                        PAD
                    } else if beta == 0.0 {
                        f64::NAN
                    } else {
                        rng.unif()
                    }
                });
                let alpha = 0.75;
                let mut c = c0.clone();
                if two {
                    T::syr2k(
                        uplo,
                        t,
                        n as i32,
                        k as i32,
                        alpha,
                        &a.d,
                        a.ldi(),
                        &b.d,
                        b.ldi(),
                        beta,
                        &mut c.d,
                        c.ld as i32,
                    );
                } else {
                    T::syrk(
                        uplo,
                        t,
                        n as i32,
                        k as i32,
                        alpha,
                        &a.d,
                        a.ldi(),
                        beta,
                        &mut c.d,
                        c.ld as i32,
                    );
                }
                assert!(c.padding_intact());
                // op(A) is n × k: A for 'N', Aᵀ for 'T'.
                let oa = |i: usize, l: usize| op(&a, tr, i, l);
                let ob = |i: usize, l: usize| op(&b, tr, i, l);
                for j in 0..n {
                    for i in 0..n {
                        if !in_triangle(upper, i, j) {
                            assert_eq!(c.at(i, j), PAD, "other triangle written");
                            continue;
                        }
                        let (mut s, mut mag) = (0.0, 0.0);
                        for l in 0..k {
                            let p = if two {
                                oa(i, l) * ob(j, l) + ob(i, l) * oa(j, l)
                            } else {
                                oa(i, l) * oa(j, l)
                            };
                            s += p;
                            mag += if two {
                                (oa(i, l) * ob(j, l)).abs() + (ob(i, l) * oa(j, l)).abs()
                            } else {
                                p.abs()
                            };
                        }
                        let c0ij = if beta == 0.0 { 0.0 } else { c0.at(i, j) };
                        let want = alpha * s + beta * c0ij;
                        let scale = alpha.abs() * mag + (beta * c0ij).abs();
                        assert!(
                            (c.at(i, j) - want).abs() <= tol::<T>(2 * k + 2, scale),
                            "syr{}k {} {} beta={beta} ({i},{j}): {} vs {want}",
                            if two { "2" } else { "" },
                            uplo as char,
                            t as char,
                            c.at(i, j)
                        );
                    }
                }
            }
        }
    }
}

#[test]
fn syrk_syr2k_f64() {
    check_syrk_like::<f64>(false, 6, 4, 21);
    check_syrk_like::<f64>(true, 6, 4, 22);
    check_syrk_like::<f64>(false, 40, 25, 23);
    check_syrk_like::<f64>(true, 40, 25, 24);
}

#[test]
fn syrk_syr2k_f32() {
    check_syrk_like::<f32>(false, 6, 4, 25);
    check_syrk_like::<f32>(true, 6, 4, 26);
    check_syrk_like::<f32>(false, 40, 25, 27);
    check_syrk_like::<f32>(true, 40, 25, 28);
}

// ------------------------------------------------- potrf and potrs ----

/// Symmetric positive definite test matrix `R Rᵀ + n I` (full storage).
fn spd(n: usize, rng: &mut Rng) -> M<f64> {
    let r = M::<f64>::random(n, n, 0, rng);
    M::<f64>::new(n, n, 0, |i, j| {
        (0..n).map(|l| r.at(i, l) * r.at(j, l)).sum::<f64>() + if i == j { n as f64 } else { 0.0 }
    })
}

fn check_potrf_potrs<T: Scalar>(n: usize, seed: u64) {
    let mut rng = Rng(seed);
    let full = spd(n, &mut rng);
    // The unreferenced triangle holds NaN (it must not be read: the factor
    // would turn NaN) or the finite sentinel PAD (it must not be written:
    // read-modify-write scratch use would change it, which NaN cannot show).
    for (&uplo, other) in b"LUuLU"
        .iter()
        .zip([f64::NAN, f64::NAN, f64::NAN, PAD, PAD])
    {
        let upper = uplo.eq_ignore_ascii_case(&b'U');
        let a0 = M::<T>::new(n, n, 3, |i, j| {
            if in_triangle(upper, i, j) {
                full.at(i, j)
            } else {
                other
            }
        });
        let mut f = a0.clone();
        assert_eq!(T::potrf(uplo, n as i32, &mut f.d, f.ld as i32), 0);
        assert!(f.padding_intact());
        // Factor G with A = G Gᵀ: G = L ('L') or G = Uᵀ ('U').
        let g = |i: usize, j: usize| -> f64 {
            if upper {
                if j <= i {
                    f.at(j, i)
                } else {
                    0.0
                }
            } else if j <= i {
                f.at(i, j)
            } else {
                0.0
            }
        };
        let amax = full.max_abs();
        for j in 0..n {
            for i in 0..n {
                if !in_triangle(upper, i, j) {
                    let v = f.at(i, j);
                    assert!(
                        v.to_bits() == other.to_bits() || (v.is_nan() && other.is_nan()),
                        "potrf {}: unreferenced triangle changed at ({i},{j}): {v}",
                        uplo as char
                    );
                    continue;
                }
                let rec: f64 = (0..n).map(|l| g(i, l) * g(j, l)).sum();
                assert!(
                    (rec - a0.at(i, j)).abs() <= tol::<T>(n + 1, amax),
                    "potrf {} ({i},{j}): {rec} vs {}",
                    uplo as char,
                    a0.at(i, j)
                );
            }
        }
        // potrs: residual of A X = B for 3 right-hand sides.
        let nrhs = 3;
        let b0 = M::<T>::random(n, nrhs, 2, &mut rng);
        let mut x = b0.clone();
        assert_eq!(
            T::potrs(
                uplo,
                n as i32,
                nrhs as i32,
                &f.d,
                f.ldi(),
                &mut x.d,
                x.ld as i32
            ),
            0
        );
        assert!(x.padding_intact());
        for c in 0..nrhs {
            for i in 0..n {
                let (mut s, mut mag) = (0.0, 0.0);
                for l in 0..n {
                    let p = T::of(full.at(i, l)).f() * x.at(l, c);
                    s += p;
                    mag += p.abs();
                }
                // Backward-stable solve: residual ≲ n ε (|A||x|) times the
                // condition-free constant of the two triangular solves.
                assert!(
                    (s - b0.at(i, c)).abs() <= tol::<T>(3 * n + 1, mag + b0.at(i, c).abs()),
                    "potrs {} residual row {i}: {}",
                    uplo as char,
                    s - b0.at(i, c)
                );
            }
        }
    }
}

fn check_not_pd<T: Scalar>() {
    // [[1, 2], [2, 1]] has eigenvalues 3 and -1: the order-2 minor fails.
    let mut a = M::<T>::new(2, 2, 0, |i, j| if i == j { 1.0 } else { 2.0 });
    assert_eq!(T::potrf(b'L', 2, &mut a.d, 2), 2);
    // diag(4, 1, -1, 2): leading minors of order 1, 2 positive, 3 negative.
    let mut a = M::<T>::new(4, 4, 1, |i, j| {
        if i == j {
            [4.0, 1.0, -1.0, 2.0][i]
        } else {
            0.0
        }
    });
    assert_eq!(T::potrf(b'L', 4, &mut a.d, a.ld as i32), 3);
    let mut a = M::<T>::new(4, 4, 1, |i, j| {
        if i == j {
            [4.0, 1.0, -1.0, 2.0][i]
        } else {
            0.0
        }
    });
    assert_eq!(T::potrf(b'U', 4, &mut a.d, a.ld as i32), 3);
    // Zero and NaN pivots.
    let mut a = M::<T>::new(1, 1, 0, |_, _| 0.0);
    assert_eq!(T::potrf(b'L', 1, &mut a.d, 1), 1);
    let mut a = M::<T>::new(1, 1, 0, |_, _| f64::NAN);
    assert_eq!(T::potrf(b'L', 1, &mut a.d, 1), 1);
    // Larger indefinite matrix (blocked path): a negative pivot at row 80.
    let n = 100;
    let mut a = M::<T>::new(n, n, 0, |i, j| {
        if i == j {
            if i == 79 {
                -1.0
            } else {
                2.0
            }
        } else {
            0.0
        }
    });
    assert_eq!(T::potrf(b'L', n as i32, &mut a.d, n as i32), 80);
    // Illegal arguments.
    let mut a = M::<T>::new(2, 2, 0, |i, j| if i == j { 1.0 } else { 0.0 });
    assert_eq!(T::potrf(b'X', 2, &mut a.d, 2), -1);
    assert_eq!(T::potrf(b'L', -1, &mut a.d, 2), -2);
    assert_eq!(T::potrf(b'L', 2, &mut a.d, 1), -4);
    let mut b = vec![T::of(1.0); 2];
    assert_eq!(T::potrs(b'L', 2, 1, &a.d, 2, &mut b, 1), -7);
}

#[test]
fn potrf_potrs_f64() {
    check_potrf_potrs::<f64>(1, 31);
    check_potrf_potrs::<f64>(7, 32);
    check_potrf_potrs::<f64>(100, 33);
    check_not_pd::<f64>();
}

#[test]
fn potrf_potrs_f32() {
    check_potrf_potrs::<f32>(1, 34);
    check_potrf_potrs::<f32>(7, 35);
    check_potrf_potrs::<f32>(100, 36);
    check_not_pd::<f32>();
}

// -------------------------------------------------------------- syevr ----

/// Everything returned by one `?syevr` call.
struct Eig<T> {
    info: i32,
    m: usize,
    w: Vec<f64>,
    z: M<T>,
    isuppz: Vec<i32>,
}

/// Calls `?syevr` the way clarabel does: workspace query, resize, call.
#[allow(clippy::too_many_arguments)]
fn syevr_call<T: Scalar>(
    jobz: u8,
    range: u8,
    uplo: u8,
    a: &M<T>,
    vl: f64,
    vu: f64,
    il: i32,
    iu: i32,
) -> Eig<T> {
    let n = a.rows;
    let a_in = a;
    let mut a = a.clone();
    let mut z = M::<T>::new(n, n, 2, |_, _| 0.0);
    let mut w = vec![T::of(0.0); n.max(1)];
    let mut isuppz = vec![0; 2 * n.max(1)];
    let mut work = vec![T::of(0.0)];
    let mut iwork = vec![0];
    let mut m = -1;
    let (lda, ldz) = (a.ldi(), z.ldi());
    let info = T::syevr(
        jobz,
        range,
        uplo,
        n as i32,
        &mut a.d,
        lda,
        vl,
        vu,
        il,
        iu,
        &mut m,
        &mut w,
        &mut z.d,
        ldz,
        &mut isuppz,
        &mut work,
        -1,
        &mut iwork,
        -1,
    );
    if info != 0 {
        // Illegal arguments are reported by the query already.
        return Eig {
            info,
            m: 0,
            w: Vec::new(),
            z,
            isuppz,
        };
    }
    let lwork = work[0].f() as usize;
    let liwork = iwork[0] as usize;
    assert_eq!(lwork, (26 * n).max(1));
    assert_eq!(liwork, (10 * n).max(1));
    work.resize(lwork, T::of(0.0));
    iwork.resize(liwork, 0);
    let info = T::syevr(
        jobz,
        range,
        uplo,
        n as i32,
        &mut a.d,
        lda,
        vl,
        vu,
        il,
        iu,
        &mut m,
        &mut w,
        &mut z.d,
        ldz,
        &mut isuppz,
        &mut work,
        lwork as i32,
        &mut iwork,
        liwork as i32,
    );
    assert!(z.padding_intact());
    // ?syevr here promises to leave A unmodified (both triangles, padding).
    assert!(a
        .d
        .iter()
        .zip(&a_in.d)
        .all(|(x, y)| x.f().to_bits() == y.f().to_bits()));
    Eig {
        info,
        m: m.max(0) as usize,
        w: w.iter().map(|x| x.f()).collect(),
        z,
        isuppz,
    }
}

/// `A V = V Λ` and `Vᵀ V = I` for the first `e.m` pairs; `full` is A.
fn check_eigenpairs<T: Scalar>(full: &M<f64>, e: &Eig<T>) {
    let n = full.rows;
    let anorm = full.fro();
    for j in 0..e.m {
        for i in 0..n {
            let av: f64 = (0..n)
                .map(|l| T::of(full.at(i, l)).f() * e.z.at(l, j))
                .sum();
            let r = av - e.w[j] * e.z.at(i, j);
            assert!(r.abs() <= tol::<T>(n, anorm), "A v = λ v residual {r}");
        }
        for k in 0..e.m {
            let d: f64 = (0..n).map(|l| e.z.at(l, j) * e.z.at(l, k)).sum();
            let want = if j == k { 1.0 } else { 0.0 };
            assert!(
                (d - want).abs() <= tol::<T>(n, 1.0),
                "VᵀV - I = {}",
                d - want
            );
        }
        // Support indices are 1-based and bracket the nonzeros.
        let (lo, hi) = (e.isuppz[2 * j], e.isuppz[2 * j + 1]);
        assert!(1 <= lo && lo <= hi && hi as usize <= n);
    }
}

/// The (2, −1) tridiagonal matrix of order n has eigenvalues
/// `2 − 2 cos(kπ/(n+1))`, k = 1..n (textbook formula for the second-difference
/// matrix).
fn check_syevr_tridiagonal<T: Scalar>(n: usize) {
    let full = M::<f64>::new(n, n, 0, |i, j| {
        if i == j {
            2.0
        } else if i.abs_diff(j) == 1 {
            -1.0
        } else {
            0.0
        }
    });
    // clarabel's pattern: uplo 'U', lower triangle irrelevant (garbage).
    let a = M::<T>::new(
        n,
        n,
        1,
        |i, j| if i <= j { full.at(i, j) } else { f64::NAN },
    );
    let e = syevr_call(b'V', b'A', b'U', &a, 0.0, 0.0, 0, 0);
    assert_eq!(e.info, 0);
    assert_eq!(e.m, n);
    for k in 1..=n {
        let exact = 2.0 - 2.0 * (k as f64 * std::f64::consts::PI / (n as f64 + 1.0)).cos();
        assert!(
            (e.w[k - 1] - exact).abs() <= tol::<T>(n, 4.0),
            "λ_{k} = {} vs {exact}",
            e.w[k - 1]
        );
    }
    check_eigenpairs(&full, &e);
    // Eigenvalues only: same values.
    let en = syevr_call(b'N', b'A', b'U', &a, 0.0, 0.0, 0, 0);
    assert_eq!(en.info, 0);
    assert_eq!(en.m, n);
    for k in 0..n {
        assert!((en.w[k] - e.w[k]).abs() <= tol::<T>(n, 4.0));
    }
}

fn check_syevr_random<T: Scalar>() {
    let n = 9;
    let mut rng = Rng(41);
    let r = M::<f64>::random(n, n, 0, &mut rng);
    let full = M::<f64>::new(n, n, 0, |i, j| r.at(i, j) + r.at(j, i));
    for &uplo in b"LUl" {
        let upper = uplo == b'U';
        let a = M::<T>::new(n, n, 2, |i, j| {
            if in_triangle(upper, i, j) {
                full.at(i, j)
            } else {
                f64::NAN
            }
        });
        let e = syevr_call(b'v', b'a', uplo, &a, 0.0, 0.0, 0, 0);
        assert_eq!(e.info, 0);
        assert_eq!(e.m, n);
        assert!(e.w[..n].windows(2).all(|p| p[0] <= p[1]), "ascending");
        check_eigenpairs(&full, &e);
        // range 'I': eigenvalues 3..6 (1-based) and their vectors.
        let ei = syevr_call(b'V', b'I', uplo, &a, 0.0, 0.0, 3, 6);
        assert_eq!((ei.info, ei.m), (0, 4));
        for j in 0..4 {
            assert!((ei.w[j] - e.w[j + 2]).abs() <= tol::<T>(n, full.fro()));
        }
        check_eigenpairs(&full, &ei);
        // range 'V': the eigenvalues in (vl, vu], vl/vu midway between
        // neighbours of the full spectrum.
        let vl = 0.5 * (e.w[1] + e.w[2]);
        let vu = 0.5 * (e.w[6] + e.w[7]);
        let ev = syevr_call(b'V', b'V', uplo, &a, vl, vu, 0, 0);
        assert_eq!((ev.info, ev.m), (0, 5));
        for j in 0..5 {
            assert!((ev.w[j] - e.w[j + 2]).abs() <= tol::<T>(n, full.fro()));
        }
        check_eigenpairs(&full, &ev);
        let evn = syevr_call(b'N', b'V', uplo, &a, vl, vu, 0, 0);
        assert_eq!((evn.info, evn.m), (0, 5));
    }
    // Illegal arguments (info = -position, reference dsyevr.f numbering).
    let a = M::<T>::new(n, n, 0, |i, j| full.at(i, j));
    assert_eq!(syevr_call(b'X', b'A', b'U', &a, 0.0, 0.0, 0, 0).info, -1);
    assert_eq!(syevr_call(b'V', b'X', b'U', &a, 0.0, 0.0, 0, 0).info, -2);
    assert_eq!(syevr_call(b'V', b'A', b'X', &a, 0.0, 0.0, 0, 0).info, -3);
    assert_eq!(syevr_call(b'V', b'V', b'U', &a, 1.0, 0.0, 0, 0).info, -8);
    assert_eq!(syevr_call(b'V', b'I', b'U', &a, 0.0, 0.0, 0, 1).info, -9);
    assert_eq!(syevr_call(b'V', b'I', b'U', &a, 0.0, 0.0, 2, 1).info, -10);
    // Too-small workspace (not a query) is rejected.
    let (mut ac, mut m) = (a.clone(), 0);
    let (mut w, mut z) = (vec![T::of(0.0); n], vec![T::of(0.0); n * n]);
    let (mut isuppz, mut work, mut iwork) = (vec![0; 2 * n], vec![T::of(0.0); 5], vec![0; 10 * n]);
    let info = T::syevr(
        b'V',
        b'A',
        b'U',
        n as i32,
        &mut ac.d,
        n as i32,
        0.0,
        0.0,
        0,
        0,
        &mut m,
        &mut w,
        &mut z,
        n as i32,
        &mut isuppz,
        &mut work,
        5,
        &mut iwork,
        10 * n as i32,
    );
    assert_eq!(info, -18);
}

#[test]
fn syevr_f64() {
    check_syevr_tridiagonal::<f64>(10);
    // n above faer's divide-and-conquer threshold (128).
    check_syevr_tridiagonal::<f64>(150);
    check_syevr_random::<f64>();
}

#[test]
fn syevr_f32() {
    check_syevr_tridiagonal::<f32>(10);
    check_syevr_tridiagonal::<f32>(150);
    check_syevr_random::<f32>();
}

// ----------------------------------------------------- gesdd, gesvd ----

/// One SVD result: singular values, U (m × ku) and Vᵀ (kv × n) as dense
/// column-major f64 (empty when not computed).
struct Svd {
    s: Vec<f64>,
    u: Option<M<f64>>,
    vt: Option<M<f64>>,
}

fn to_f64<T: Scalar>(x: &M<T>, rows: usize, cols: usize) -> M<f64> {
    M::<f64>::new(rows, cols, 0, |i, j| x.at(i, j))
}

/// `?gesdd` with the query-then-call pattern of clarabel.
fn gesdd_call<T: Scalar>(jobz: u8, a: &M<T>) -> (i32, Svd, M<T>) {
    let (m, n) = (a.rows, a.cols);
    let k = m.min(n);
    let mut a = a.clone();
    let (ucols, vtrows) = match jobz {
        b'A' => (m, n),
        b'S' => (k, k),
        b'O' if m >= n => (0, n),
        b'O' => (m, 0),
        _ => (0, 0),
    };
    let mut u = M::<T>::new(m, ucols.max(1), 2, |_, _| f64::NAN);
    let mut vt = M::<T>::new(vtrows.max(1), n, 1, |_, _| f64::NAN);
    let mut s = vec![T::of(f64::NAN); k.max(1)];
    let mut iwork = vec![0; 8 * k.max(1)];
    let mut work = vec![T::of(0.0)];
    let (lda, ldu, ldvt) = (a.ldi(), u.ldi(), vt.ldi());
    let q = T::gesdd(
        jobz, m as i32, n as i32, &mut a.d, lda, &mut s, &mut u.d, ldu, &mut vt.d, ldvt, &mut work,
        -1, &mut iwork,
    );
    assert_eq!(q, 0);
    let lwork = work[0].f() as usize;
    assert!(lwork >= 1);
    work.resize(lwork, T::of(0.0));
    let info = T::gesdd(
        jobz,
        m as i32,
        n as i32,
        &mut a.d,
        lda,
        &mut s,
        &mut u.d,
        ldu,
        &mut vt.d,
        ldvt,
        &mut work,
        lwork as i32,
        &mut iwork,
    );
    assert!(a.padding_intact() && u.padding_intact() && vt.padding_intact());
    let sv: Vec<f64> = s[..k].iter().map(|x| x.f()).collect();
    let (uo, vo) = match jobz {
        b'A' | b'S' => (Some(to_f64(&u, m, ucols)), Some(to_f64(&vt, vtrows, n))),
        b'O' if m >= n => (Some(to_f64(&a, m, n)), Some(to_f64(&vt, n, n))),
        b'O' => (Some(to_f64(&u, m, m)), Some(to_f64(&a, m, n))),
        _ => (None, None),
    };
    (
        info,
        Svd {
            s: sv,
            u: uo,
            vt: vo,
        },
        a,
    )
}

/// `?gesvd` with a workspace query first. `U`/`Vᵀ` for job `O` are read from
/// the overwritten A.
fn gesvd_call<T: Scalar>(jobu: u8, jobvt: u8, a: &M<T>) -> (i32, Svd) {
    let (m, n) = (a.rows, a.cols);
    let k = m.min(n);
    let mut a = a.clone();
    let ucols = match jobu {
        b'A' => m,
        b'S' => k,
        _ => 1,
    };
    let vtrows = match jobvt {
        b'A' => n,
        b'S' => k,
        _ => 1,
    };
    let mut u = M::<T>::new(m, ucols, 1, |_, _| f64::NAN);
    let mut vt = M::<T>::new(vtrows, n, 2, |_, _| f64::NAN);
    let mut s = vec![T::of(f64::NAN); k.max(1)];
    let mut work = vec![T::of(0.0)];
    let (lda, ldu, ldvt) = (a.ldi(), u.ldi(), vt.ldi());
    let q = T::gesvd(
        jobu, jobvt, m as i32, n as i32, &mut a.d, lda, &mut s, &mut u.d, ldu, &mut vt.d, ldvt,
        &mut work, -1,
    );
    assert_eq!(q, 0);
    let lwork = work[0].f() as usize;
    assert_eq!(lwork, (3 * k + m.max(n)).max(5 * k).max(1));
    work.resize(lwork, T::of(0.0));
    let info = T::gesvd(
        jobu,
        jobvt,
        m as i32,
        n as i32,
        &mut a.d,
        lda,
        &mut s,
        &mut u.d,
        ldu,
        &mut vt.d,
        ldvt,
        &mut work,
        lwork as i32,
    );
    assert!(a.padding_intact() && u.padding_intact() && vt.padding_intact());
    let uo = match jobu {
        b'A' | b'S' => Some(to_f64(&u, m, ucols)),
        b'O' => Some(to_f64(&a, m, k)),
        _ => None,
    };
    let vo = match jobvt {
        b'A' | b'S' => Some(to_f64(&vt, vtrows, n)),
        b'O' => Some(to_f64(&a, k, n)),
        _ => None,
    };
    (
        info,
        Svd {
            s: s[..k].iter().map(|x| x.f()).collect(),
            u: uo,
            vt: vo,
        },
    )
}

/// Checks descending order, agreement with `s_ref`, orthonormal columns of U
/// and rows of Vᵀ, and `A = U Σ Vᵀ` (first min(m, n) terms).
fn check_svd<T: Scalar>(a: &M<T>, r: &Svd, s_ref: &[f64], label: &str) {
    let (m, n) = (a.rows, a.cols);
    let k = m.min(n);
    let scale = a.fro();
    let big = m.max(n);
    assert!(r.s.windows(2).all(|p| p[0] >= p[1]), "{label}: descending");
    assert!(r.s.iter().all(|&x| x >= 0.0), "{label}: nonnegative");
    for (x, y) in r.s.iter().zip(s_ref) {
        assert!(
            (x - y).abs() <= tol::<T>(big, scale),
            "{label}: σ {x} vs {y}"
        );
    }
    if let Some(u) = &r.u {
        for p in 0..u.cols {
            for q in 0..u.cols {
                let d: f64 = (0..m).map(|i| u.at(i, p) * u.at(i, q)).sum();
                let want = if p == q { 1.0 } else { 0.0 };
                assert!((d - want).abs() <= tol::<T>(big, 1.0), "{label}: UᵀU");
            }
        }
    }
    if let Some(vt) = &r.vt {
        for p in 0..vt.rows {
            for q in 0..vt.rows {
                let d: f64 = (0..n).map(|j| vt.at(p, j) * vt.at(q, j)).sum();
                let want = if p == q { 1.0 } else { 0.0 };
                assert!((d - want).abs() <= tol::<T>(big, 1.0), "{label}: VᵀV");
            }
        }
    }
    if let (Some(u), Some(vt)) = (&r.u, &r.vt) {
        for i in 0..m {
            for j in 0..n {
                let rec: f64 = (0..k).map(|l| u.at(i, l) * r.s[l] * vt.at(l, j)).sum();
                assert!(
                    (rec - a.at(i, j)).abs() <= tol::<T>(big, scale),
                    "{label}: UΣVᵀ ({i},{j}) {rec} vs {}",
                    a.at(i, j)
                );
            }
        }
    }
}

fn check_svds<T: Scalar>() {
    let mut rng = Rng(51);
    for &(m, n) in &[(6, 4), (4, 6), (5, 5), (1, 3), (40, 9)] {
        let a = M::<T>::random(m, n, 2, &mut rng);
        let (info, base, _) = gesdd_call(b'N', &a);
        assert_eq!(info, 0);
        let s_ref = base.s.clone();
        check_svd(&a, &base, &s_ref, "gesdd N");
        for &jobz in b"SAO" {
            let (info, r, _) = gesdd_call(jobz, &a);
            assert_eq!(info, 0);
            check_svd(&a, &r, &s_ref, &format!("gesdd {} {m}x{n}", jobz as char));
        }
        for &(ju, jv) in &[
            (b'S', b'S'),
            (b'A', b'A'),
            (b'N', b'N'),
            (b'O', b'S'),
            (b'S', b'O'),
            (b'A', b'N'),
            (b'N', b'A'),
            (b'O', b'N'),
        ] {
            let (info, r) = gesvd_call(ju, jv, &a);
            assert_eq!(info, 0);
            check_svd(
                &a,
                &r,
                &s_ref,
                &format!("gesvd {}{} {m}x{n}", ju as char, jv as char),
            );
        }
    }
    // A rank-one matrix x yᵀ has the single nonzero singular value ‖x‖‖y‖.
    let x = [1.0, 2.0, 2.0];
    let y = [3.0, 4.0];
    let a = M::<T>::new(3, 2, 1, |i, j| x[i] * y[j]);
    let (info, r, _) = gesdd_call(b'S', &a);
    assert_eq!(info, 0);
    assert!((r.s[0] - 15.0).abs() <= tol::<T>(3, 15.0));
    assert!(r.s[1].abs() <= tol::<T>(3, 15.0));
    // Illegal arguments.
    let mut a = M::<T>::random(3, 3, 0, &mut rng);
    let (mut s, mut u, mut vt) = (
        vec![T::of(0.0); 3],
        vec![T::of(0.0); 9],
        vec![T::of(0.0); 9],
    );
    let (mut work, mut iwork) = (vec![T::of(0.0); 100], vec![0; 24]);
    let info = T::gesvd(
        b'O', b'O', 3, 3, &mut a.d, 3, &mut s, &mut u, 3, &mut vt, 3, &mut work, 100,
    );
    assert_eq!(info, -2);
    let info = T::gesdd(
        b'Q', 3, 3, &mut a.d, 3, &mut s, &mut u, 3, &mut vt, 3, &mut work, 100, &mut iwork,
    );
    assert_eq!(info, -1);
    let info = T::gesdd(
        b'S', 3, 3, &mut a.d, 3, &mut s, &mut u, 2, &mut vt, 3, &mut work, 100, &mut iwork,
    );
    assert_eq!(info, -8);
}

#[test]
fn gesdd_gesvd_f64() {
    check_svds::<f64>();
}

#[test]
fn gesdd_gesvd_f32() {
    check_svds::<f32>();
}

// --------------------------------------------------------------- gesv ----

fn check_gesv<T: Scalar>(n: usize, seed: u64) {
    let mut rng = Rng(seed);
    let nrhs = 3;
    let a0 = M::<T>::random(n, n, 2, &mut rng);
    let b0 = M::<T>::random(n, nrhs, 1, &mut rng);
    let (mut a, mut x) = (a0.clone(), b0.clone());
    let mut ipiv = vec![0; n];
    let (lda, ldb) = (a.ldi(), x.ldi());
    let info = T::gesv(
        n as i32,
        nrhs as i32,
        &mut a.d,
        lda,
        &mut ipiv,
        &mut x.d,
        ldb,
    );
    assert_eq!(info, 0);
    assert!(a.padding_intact() && x.padding_intact());
    let anorm_inf = (0..n)
        .map(|i| (0..n).map(|j| a0.at(i, j).abs()).sum::<f64>())
        .fold(0.0, f64::max);
    for c in 0..nrhs {
        let xmax = (0..n).map(|i| x.at(i, c).abs()).fold(0.0, f64::max);
        for i in 0..n {
            let s: f64 = (0..n).map(|l| a0.at(i, l) * x.at(l, c)).sum();
            let r = s - b0.at(i, c);
            assert!(
                r.abs() <= tol::<T>(3 * n, anorm_inf * xmax),
                "gesv residual {r}"
            );
        }
    }
    // ipiv: 1-based, ipiv[i] >= i+1; applying the interchanges to A gives L U.
    let mut pa = M::<f64>::new(n, n, 0, |i, j| a0.at(i, j));
    for (i, &p) in ipiv.iter().enumerate() {
        let p = p as usize - 1;
        assert!(p >= i && p < n, "ipiv[{i}] = {}", p + 1);
        for j in 0..n {
            let (vi, vp) = (pa.at(i, j), pa.at(p, j));
            pa.set(i, j, vp);
            pa.set(p, j, vi);
        }
    }
    for i in 0..n {
        for j in 0..n {
            let (mut s, mut mag) = (0.0, 0.0);
            for l in 0..=i.min(j) {
                let lil = if l == i { 1.0 } else { a.at(i, l) };
                let p = lil * a.at(l, j);
                s += p;
                mag += p.abs();
            }
            assert!(
                (s - pa.at(i, j)).abs() <= tol::<T>(3 * n, mag),
                "P A = L U at ({i},{j})"
            );
        }
    }
}

fn check_gesv_singular<T: Scalar>() {
    // Third column zero: U(3,3) = 0 exactly.
    let mut a = M::<T>::new(
        3,
        3,
        0,
        |i, j| if j == 2 { 0.0 } else { (1 + i + 3 * j) as f64 },
    );
    let mut b = vec![T::of(1.0); 3];
    let mut ipiv = vec![0; 3];
    assert_eq!(T::gesv(3, 1, &mut a.d, 3, &mut ipiv, &mut b, 3), 3);
    let mut a = M::<T>::new(3, 3, 0, |_, _| 1.0);
    assert_eq!(T::gesv(3, 1, &mut a.d, 3, &mut ipiv, &mut b, 3), 2);
    assert_eq!(T::gesv(3, 1, &mut a.d, 2, &mut ipiv, &mut b, 3), -4);
    assert_eq!(T::gesv(3, -1, &mut a.d, 3, &mut ipiv, &mut b, 3), -2);
}

#[test]
fn gesv_f64() {
    check_gesv::<f64>(1, 61);
    check_gesv::<f64>(8, 62);
    check_gesv::<f64>(70, 63);
    check_gesv_singular::<f64>();
}

#[test]
fn gesv_f32() {
    check_gesv::<f32>(1, 64);
    check_gesv::<f32>(8, 65);
    check_gesv::<f32>(70, 66);
    check_gesv_singular::<f32>();
}
