//! LAPACK: `?potrf`, `?potrs`, `?syevr`, `?gesdd`, `?gesvd`, `?gesv`.
//!
//! Argument checks (and the numbering of negative `info` values) follow the
//! reference LAPACK 3.9.1 sources (`SRC/dpotrf.f`, `SRC/dsyevr.f`, ...,
//! vendored in the `lapack-sys` 0.14 crate). The factorizations themselves are
//! faer's: Cholesky (`llt`), the self-adjoint eigendecomposition, the SVD and
//! LU with partial pivoting.

use core::ffi::{c_char, c_int};

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::linalg::cholesky::llt;
use faer::linalg::evd::{self_adjoint_evd, self_adjoint_evd_scratch, ComputeEigenvectors};
use faer::linalg::lu::partial_pivoting::{factor as lu_factor, solve as lu_solve};
use faer::linalg::svd::{svd, svd_scratch, ComputeSvdVectors};
use faer::perm::PermRef;
use faer::{Col, ColMut, Mat, MatMut, Par};

use crate::common::{lapack_call, mat_mut, mat_ref, max1, opt, Real, INFO_INTERNAL_ERROR};

/// Allocates faer's scratch space; `None` if the allocation fails.
fn scratch(req: StackReq) -> Option<MemBuffer> {
    MemBuffer::try_new(req).ok()
}

/// View whose lower triangle is the `uplo` triangle of the stored matrix
/// (the transposed view for `'U'`).
unsafe fn lower_view<'a, T>(a: *mut T, n: usize, lda: usize, upper: bool) -> MatMut<'a, T> {
    mat_mut(a, n, n, lda, upper)
}

/// Cholesky factorization of the `uplo` triangle (`A = L Lᵀ` for `'L'`,
/// `A = Uᵀ U` for `'U'`); the other triangle is neither read nor written.
/// `info = j > 0`: the leading minor of order `j` is not positive definite
/// (the triangle then holds the partial factorization, as in LAPACK).
unsafe fn potrf<T: Real>(uplo: u8, n: i32, a: *mut T, lda: i32) -> c_int {
    let upper = match uplo {
        b'U' => true,
        b'L' => false,
        _ => return -1,
    };
    if n < 0 {
        return -2;
    }
    if lda < max1(n) {
        return -4;
    }
    if n == 0 {
        return 0;
    }
    let n = n as usize;
    let mut l = lower_view(a, n, lda as usize, upper);
    let req = llt::factor::cholesky_in_place_scratch::<T>(n, Par::Seq, Default::default());
    let Some(mut buf) = scratch(req) else {
        return INFO_INTERNAL_ERROR;
    };
    // faer's kernel uses the strict upper triangle of its argument as scratch
    // (read-modify-write updates), while LAPACK leaves that triangle untouched
    // and clarabel relies on it (it multiplies the factor as a full matrix).
    // So the referenced triangle is factored in a contiguous copy and only
    // that triangle is copied back.
    let mut work = Mat::<T>::zeros(n, n);
    for j in 0..n {
        for i in j..n {
            work[(i, j)] = l[(i, j)];
        }
    }
    let result = llt::factor::cholesky_in_place(
        work.as_mut(),
        Default::default(),
        Par::Seq,
        MemStack::new(&mut buf),
        Default::default(),
    );
    for j in 0..n {
        for i in j..n {
            l[(i, j)] = work[(i, j)];
        }
    }
    match result {
        Ok(_) => 0,
        Err(llt::factor::LltError::NonPositivePivot { index }) => index as c_int + 1,
    }
}

/// Solves `A X = B` with the factor computed by [`potrf`].
#[allow(clippy::too_many_arguments)]
unsafe fn potrs<T: Real>(
    uplo: u8,
    n: i32,
    nrhs: i32,
    a: *const T,
    lda: i32,
    b: *mut T,
    ldb: i32,
) -> c_int {
    let upper = match uplo {
        b'U' => true,
        b'L' => false,
        _ => return -1,
    };
    if n < 0 {
        return -2;
    }
    if nrhs < 0 {
        return -3;
    }
    if lda < max1(n) {
        return -5;
    }
    if ldb < max1(n) {
        return -7;
    }
    if n == 0 || nrhs == 0 {
        return 0;
    }
    let (n, nrhs) = (n as usize, nrhs as usize);
    let l = mat_ref(a, n, n, lda as usize, upper);
    let bv = mat_mut(b, n, nrhs, ldb as usize, false);
    let req = llt::solve::solve_in_place_scratch::<T>(n, nrhs, Par::Seq);
    let Some(mut buf) = scratch(req) else {
        return INFO_INTERNAL_ERROR;
    };
    llt::solve::solve_in_place(l, bv, Par::Seq, MemStack::new(&mut buf));
    0
}

/// Minimum `lwork` of `?syevr` (reference `dsyevr.f`: `LWORK >= max(1,26*N)`).
fn syevr_lwork(n: i32) -> i32 {
    max1(26 * n)
}

/// Minimum `liwork` of `?syevr` (reference `dsyevr.f`: `LIWORK >= max(1,10*N)`).
fn syevr_liwork(n: i32) -> i32 {
    max1(10 * n)
}

/// Symmetric eigendecomposition of the `uplo` triangle; eigenvalues ascending.
#[allow(clippy::too_many_arguments)]
unsafe fn syevr<T: Real>(
    jobz: u8,
    range: u8,
    uplo: u8,
    n: i32,
    a: *const T,
    lda: i32,
    vl: T,
    vu: T,
    il: i32,
    iu: i32,
    m_out: *mut c_int,
    w: *mut T,
    z: *mut T,
    ldz: i32,
    isuppz: *mut c_int,
    work: *mut T,
    lwork: i32,
    iwork: *mut c_int,
    liwork: i32,
) -> c_int {
    let wantz = match jobz {
        b'V' => true,
        b'N' => false,
        _ => return -1,
    };
    if !matches!(range, b'A' | b'V' | b'I') {
        return -2;
    }
    let upper = match uplo {
        b'U' => true,
        b'L' => false,
        _ => return -3,
    };
    if n < 0 {
        return -4;
    }
    if lda < max1(n) {
        return -6;
    }
    if range == b'V' && n > 0 && vu <= vl {
        return -8;
    }
    if range == b'I' {
        if il < 1 || il > max1(n) {
            return -9;
        }
        if iu < n.min(il) || iu > n {
            return -10;
        }
    }
    let query = lwork == -1 || liwork == -1;
    let (lwmin, liwmin) = (syevr_lwork(n), syevr_liwork(n));
    if ldz < 1 || (wantz && ldz < n) {
        return -15;
    }
    if lwork < lwmin && !query {
        return -18;
    }
    if liwork < liwmin && !query {
        return -20;
    }
    // The workspace is not used; answer the size LAPACK documents as minimum.
    *work = T::from_usize(lwmin as usize);
    *iwork = liwmin;
    if query {
        return 0;
    }
    *m_out = 0;
    if n == 0 {
        return 0;
    }
    let n = n as usize;
    let ldz = ldz as usize;
    let av = mat_ref(a, n, n, lda as usize, upper);
    let compute = if wantz {
        ComputeEigenvectors::Yes
    } else {
        ComputeEigenvectors::No
    };
    let req = self_adjoint_evd_scratch::<T>(n, compute, Par::Seq, Default::default());
    let Some(mut buf) = scratch(req) else {
        return INFO_INTERNAL_ERROR;
    };
    let stack = MemStack::new(&mut buf);

    let m = if range == b'A' {
        // Whole spectrum: write straight into the caller's W and Z.
        let s = ColMut::from_raw_parts_mut(w, n, 1).as_diagonal_mut();
        let u = wantz.then(|| mat_mut(z, n, n, ldz, false));
        if self_adjoint_evd(av, s, u, Par::Seq, stack, Default::default()).is_err() {
            return 1;
        }
        n
    } else {
        let mut s = Col::<T>::zeros(n);
        let mut u = wantz.then(|| Mat::<T>::zeros(n, n));
        let res = self_adjoint_evd(
            av,
            s.as_mut().as_diagonal_mut(),
            u.as_mut().map(|u| u.as_mut()),
            Par::Seq,
            stack,
            Default::default(),
        );
        if res.is_err() {
            return 1;
        }
        let selected: Vec<usize> = if range == b'I' {
            (il as usize - 1..iu as usize).collect()
        } else {
            // Half-open interval (vl, vu], as in reference dsyevr.
            (0..n).filter(|&i| vl < s[i] && s[i] <= vu).collect()
        };
        for (dst, &src) in selected.iter().enumerate() {
            *w.add(dst) = s[src];
            if let Some(u) = &u {
                for r in 0..n {
                    *z.add(r + dst * ldz) = u[(r, src)];
                }
            }
        }
        selected.len()
    };
    *m_out = m as c_int;
    if wantz {
        // Support of each eigenvector: first and last nonzero row (1-based).
        for j in 0..m {
            let col = |r: usize| *z.add(r + j * ldz);
            let first = (0..n).find(|&r| col(r) != T::ZERO).unwrap_or(0);
            let last = (0..n).rev().find(|&r| col(r) != T::ZERO).unwrap_or(n - 1);
            *isuppz.add(2 * j) = first as c_int + 1;
            *isuppz.add(2 * j + 1) = last as c_int + 1;
        }
    }
    0
}

/// Where one factor of an SVD goes.
#[derive(Clone, Copy)]
enum SvdTarget<T> {
    /// Not computed.
    Skip,
    /// `U` (m × cols) at `ptr` with leading dimension `ld`, or `Vᵀ`
    /// (cols × n) at `ptr` with leading dimension `ld`.
    Store { ptr: *mut T, ld: usize, cols: usize },
    /// The first min(m, n) columns of U, or rows of Vᵀ, overwrite A.
    OverwriteA,
}

/// Target storing a factor with `k` columns of U (or rows of Vᵀ) at `ptr`.
fn store<T>(ptr: *mut T, ld: i32, k: usize) -> SvdTarget<T> {
    SvdTarget::Store {
        ptr,
        ld: ld as usize,
        cols: k,
    }
}

/// Computes `A = U Σ Vᵀ` for the gesdd/gesvd drivers (dimensions > 0,
/// arguments already checked).
#[allow(clippy::too_many_arguments)]
unsafe fn svd_driver<T: Real>(
    m: usize,
    n: usize,
    a: *mut T,
    lda: usize,
    s: *mut T,
    ut: SvdTarget<T>,
    vt: SvdTarget<T>,
) -> c_int {
    let k = m.min(n);
    let mode = |t: &SvdTarget<T>, full: usize| match t {
        SvdTarget::Skip => ComputeSvdVectors::No,
        SvdTarget::Store { cols, .. } if *cols == full && full != k => ComputeSvdVectors::Full,
        _ => ComputeSvdVectors::Thin,
    };
    let (mode_u, mode_v) = (mode(&ut, m), mode(&vt, n));
    let mut u_tmp = matches!(ut, SvdTarget::OverwriteA).then(|| Mat::<T>::zeros(m, k));
    let mut v_tmp = matches!(vt, SvdTarget::OverwriteA).then(|| Mat::<T>::zeros(n, k));
    let req = svd_scratch::<T>(m, n, mode_u, mode_v, Par::Seq, Default::default());
    let Some(mut buf) = scratch(req) else {
        return INFO_INTERNAL_ERROR;
    };
    let ok = {
        let av = mat_ref(a as *const T, m, n, lda, false);
        let sv = ColMut::from_raw_parts_mut(s, k, 1).as_diagonal_mut();
        // Output views are zeroed first: faer 0.21.9's QR-first path (tall or
        // wide matrices) leaves the off-diagonal block of a full U (or V)
        // unwritten, relying on zero-initialised storage.
        let uv = match ut {
            SvdTarget::Skip => None,
            SvdTarget::Store { ptr, ld, cols } => {
                let mut v = mat_mut(ptr, m, cols, ld, false);
                v.fill(T::ZERO);
                Some(v)
            }
            SvdTarget::OverwriteA => u_tmp.as_mut().map(|u| u.as_mut()),
        };
        // V (n × cols) is the transposed view of the caller's Vᵀ.
        let vv = match vt {
            SvdTarget::Skip => None,
            SvdTarget::Store { ptr, ld, cols } => {
                let mut v = mat_mut(ptr, n, cols, ld, true);
                v.fill(T::ZERO);
                Some(v)
            }
            SvdTarget::OverwriteA => v_tmp.as_mut().map(|v| v.as_mut()),
        };
        svd(
            av,
            sv,
            uv,
            vv,
            Par::Seq,
            MemStack::new(&mut buf),
            Default::default(),
        )
        .is_ok()
    };
    if !ok {
        return 1;
    }
    let mut adst = mat_mut(a, m, n, lda, false);
    if let Some(u) = &u_tmp {
        for j in 0..k {
            for i in 0..m {
                adst[(i, j)] = u[(i, j)];
            }
        }
    }
    if let Some(v) = &v_tmp {
        for j in 0..n {
            for i in 0..k {
                adst[(i, j)] = v[(j, i)];
            }
        }
    }
    0
}

/// Workspace size reported by `?gesdd` queries: the minimum `LWORK` given in
/// the reference `dgesdd.f` documentation (mx = max(m,n), mn = min(m,n)).
fn gesdd_lwork(jobz: u8, m: i32, n: i32) -> i32 {
    let (mx, mn) = (m.max(n), m.min(n));
    let w = match jobz {
        b'N' => 3 * mn + mx.max(7 * mn),
        b'O' => 3 * mn + mx.max(5 * mn * mn + 4 * mn),
        b'S' => 4 * mn * mn + 7 * mn,
        _ => 4 * mn * mn + 6 * mn + mx,
    };
    max1(w)
}

/// Workspace size reported by `?gesvd` queries: the minimum `LWORK` of the
/// reference `dgesvd.f` documentation, `MAX(1,3*MIN(M,N)+MAX(M,N),5*MIN(M,N))`.
fn gesvd_lwork(m: i32, n: i32) -> i32 {
    let (mx, mn) = (m.max(n), m.min(n));
    max1((3 * mn + mx).max(5 * mn))
}

/// Divide-and-conquer SVD driver interface (`jobz` ∈ {N, S, A, O}).
#[allow(clippy::too_many_arguments)]
unsafe fn gesdd<T: Real>(
    jobz: u8,
    m: i32,
    n: i32,
    a: *mut T,
    lda: i32,
    s: *mut T,
    u: *mut T,
    ldu: i32,
    vt: *mut T,
    ldvt: i32,
    work: *mut T,
    lwork: i32,
) -> c_int {
    if !matches!(jobz, b'N' | b'S' | b'A' | b'O') {
        return -1;
    }
    if m < 0 {
        return -2;
    }
    if n < 0 {
        return -3;
    }
    if lda < max1(m) {
        return -5;
    }
    let mn = m.min(n);
    let (wa, ws, wo) = (jobz == b'A', jobz == b'S', jobz == b'O');
    if ldu < 1 || ((wa || ws) && ldu < m) || (wo && m < n && ldu < m) {
        return -8;
    }
    if ldvt < 1 || (wa && ldvt < n) || (ws && ldvt < mn) || (wo && m >= n && ldvt < n) {
        return -10;
    }
    let query = lwork == -1;
    if lwork < 1 && !query {
        return -12;
    }
    // The workspace is not used; report the documented minimum size.
    *work = T::from_usize(gesdd_lwork(jobz, m, n) as usize);
    if query || m == 0 || n == 0 {
        return 0;
    }
    let k = mn as usize;
    let (ut, vtt) = match jobz {
        b'N' => (SvdTarget::Skip, SvdTarget::Skip),
        b'S' => (store(u, ldu, k), store(vt, ldvt, k)),
        b'A' => (store(u, ldu, m as usize), store(vt, ldvt, n as usize)),
        _ if m >= n => (SvdTarget::OverwriteA, store(vt, ldvt, n as usize)),
        _ => (store(u, ldu, m as usize), SvdTarget::OverwriteA),
    };
    svd_driver(m as usize, n as usize, a, lda as usize, s, ut, vtt)
}

/// QR-iteration SVD driver interface (`jobu`, `jobvt` ∈ {A, S, O, N}, not
/// both `O`).
#[allow(clippy::too_many_arguments)]
unsafe fn gesvd<T: Real>(
    jobu: u8,
    jobvt: u8,
    m: i32,
    n: i32,
    a: *mut T,
    lda: i32,
    s: *mut T,
    u: *mut T,
    ldu: i32,
    vt: *mut T,
    ldvt: i32,
    work: *mut T,
    lwork: i32,
) -> c_int {
    if !matches!(jobu, b'A' | b'S' | b'O' | b'N') {
        return -1;
    }
    if !matches!(jobvt, b'A' | b'S' | b'O' | b'N') || (jobu == b'O' && jobvt == b'O') {
        return -2;
    }
    if m < 0 {
        return -3;
    }
    if n < 0 {
        return -4;
    }
    if lda < max1(m) {
        return -6;
    }
    let mn = m.min(n);
    if ldu < 1 || (matches!(jobu, b'A' | b'S') && ldu < m) {
        return -9;
    }
    if ldvt < 1 || (jobvt == b'A' && ldvt < n) || (jobvt == b'S' && ldvt < mn) {
        return -11;
    }
    let query = lwork == -1;
    if lwork < 1 && !query {
        return -13;
    }
    *work = T::from_usize(gesvd_lwork(m, n) as usize);
    if query || m == 0 || n == 0 {
        return 0;
    }
    let k = mn as usize;
    let target = |job: u8, ptr: *mut T, ld: i32, full: usize| match job {
        b'A' => store(ptr, ld, full),
        b'S' => store(ptr, ld, k),
        b'O' => SvdTarget::OverwriteA,
        _ => SvdTarget::Skip,
    };
    let ut = target(jobu, u, ldu, m as usize);
    let vtt = target(jobvt, vt, ldvt, n as usize);
    svd_driver(m as usize, n as usize, a, lda as usize, s, ut, vtt)
}

/// LU with partial pivoting (`A = P L U`, overwriting A with L and U, pivots
/// in LAPACK's 1-based row-interchange form) followed by the solve `A X = B`.
/// `info = i > 0`: `U(i,i)` is exactly zero and X was not computed.
#[allow(clippy::too_many_arguments)]
unsafe fn gesv<T: Real>(
    n: i32,
    nrhs: i32,
    a: *mut T,
    lda: i32,
    ipiv: *mut c_int,
    b: *mut T,
    ldb: i32,
) -> c_int {
    if n < 0 {
        return -1;
    }
    if nrhs < 0 {
        return -2;
    }
    if lda < max1(n) {
        return -4;
    }
    if ldb < max1(n) {
        return -7;
    }
    if n == 0 {
        return 0;
    }
    let (n, nrhs, lda) = (n as usize, nrhs as usize, lda as usize);
    let mut perm = vec![0usize; n];
    let mut perm_inv = vec![0usize; n];
    let req = StackReq::any_of(&[
        lu_factor::lu_in_place_scratch::<usize, T>(n, n, Par::Seq, Default::default()),
        lu_solve::solve_in_place_scratch::<usize, T>(n, nrhs, Par::Seq),
    ]);
    let Some(mut buf) = scratch(req) else {
        return INFO_INTERNAL_ERROR;
    };
    lu_factor::lu_in_place(
        mat_mut(a, n, n, lda, false),
        &mut perm,
        &mut perm_inv,
        Par::Seq,
        MemStack::new(&mut buf),
        Default::default(),
    );
    // faer returns the permutation (row i of PA is row perm[i] of A). Recover
    // the sequence of interchanges "swap rows i and ipiv[i]" that produces it:
    // replay the swaps on an identity arrangement, tracking positions.
    let mut row_at: Vec<usize> = (0..n).collect();
    let mut pos_of: Vec<usize> = (0..n).collect();
    for i in 0..n {
        let j = pos_of[perm[i]];
        *ipiv.add(i) = j as c_int + 1;
        let (ri, rj) = (row_at[i], row_at[j]);
        row_at.swap(i, j);
        pos_of[ri] = j;
        pos_of[rj] = i;
    }
    for i in 0..n {
        if *a.add(i + i * lda) == T::ZERO {
            return i as c_int + 1;
        }
    }
    if nrhs == 0 {
        return 0;
    }
    let lu = mat_ref(a as *const T, n, n, lda, false);
    let p = PermRef::new_checked(&perm, &perm_inv, n);
    lu_solve::solve_in_place(
        lu,
        lu,
        p,
        mat_mut(b, n, nrhs, ldb as usize, false),
        Par::Seq,
        MemStack::new(&mut buf),
    );
    0
}

/// Shared `# Safety` text of the LAPACK entry points.
macro_rules! lapack_safety {
    () => {
        concat!(
            "# Safety\n\n",
            "Fortran calling convention: every argument is passed by pointer and ",
            "must satisfy the reference LAPACK contract for this routine: scalar ",
            "pointers are readable (outputs writable), arrays are column-major with ",
            "the given leading dimensions and large enough for the given sizes, and ",
            "distinct array arguments do not overlap. No hidden character-length ",
            "arguments are read. An internal failure is reported as ",
            "`info = INFO_INTERNAL_ERROR`."
        )
    };
}

macro_rules! potrf_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Cholesky factorization of a symmetric positive definite matrix.
        ///
        /// `uplo` ∈ {U, L}: only that triangle is read and it is overwritten by the factor
        /// (`A = Uᵀ U` or `A = L Lᵀ`). `info = j > 0` when the leading minor of order j is
        /// not positive definite.
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            uplo: *const c_char,
            n: *const c_int,
            a: *mut $t,
            lda: *const c_int,
            info: *mut c_int,
        ) {
            lapack_call(info, || potrf::<$t>(opt(uplo), *n, a, *lda))
        }
    };
}

macro_rules! potrs_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Solves `A X = B` with the Cholesky factor computed by `?potrf`.
        ///
        /// `uplo` ∈ {U, L}; any `nrhs >= 0`.
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            uplo: *const c_char,
            n: *const c_int,
            nrhs: *const c_int,
            a: *const $t,
            lda: *const c_int,
            b: *mut $t,
            ldb: *const c_int,
            info: *mut c_int,
        ) {
            lapack_call(info, || potrs::<$t>(opt(uplo), *n, *nrhs, a, *lda, b, *ldb))
        }
    };
}

macro_rules! syevr_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Eigenvalues (ascending) and optionally eigenvectors of a symmetric matrix.
        ///
        /// `jobz` ∈ {N, V}, `range` ∈ {A, V, I}, `uplo` ∈ {U, L}: only that triangle of A
        /// is read, and A is not modified. `abstol` is ignored (faer's accuracy applies).
        /// `lwork = -1` or `liwork = -1` is a workspace query answered with the documented
        /// minima `max(1,26n)` and `max(1,10n)` in `work[0]` and `iwork[0]`; smaller sizes
        /// are otherwise rejected as in LAPACK, but the workspaces are not used. With
        /// `jobz = V`, `isuppz` receives the first and last nonzero row of each returned
        /// eigenvector.
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            jobz: *const c_char,
            range: *const c_char,
            uplo: *const c_char,
            n: *const c_int,
            a: *mut $t,
            lda: *const c_int,
            vl: *const $t,
            vu: *const $t,
            il: *const c_int,
            iu: *const c_int,
            abstol: *const $t,
            m: *mut c_int,
            w: *mut $t,
            z: *mut $t,
            ldz: *const c_int,
            isuppz: *mut c_int,
            work: *mut $t,
            lwork: *const c_int,
            iwork: *mut c_int,
            liwork: *const c_int,
            info: *mut c_int,
        ) {
            let _ = abstol;
            lapack_call(info, || {
                syevr::<$t>(
                    opt(jobz),
                    opt(range),
                    opt(uplo),
                    *n,
                    a,
                    *lda,
                    *vl,
                    *vu,
                    *il,
                    *iu,
                    m,
                    w,
                    z,
                    *ldz,
                    isuppz,
                    work,
                    *lwork,
                    iwork,
                    *liwork,
                )
            })
        }
    };
}

macro_rules! gesdd_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Singular value decomposition `A = U Σ Vᵀ`, singular values descending
        /// (divide-and-conquer interface).
        ///
        /// `jobz` ∈ {N, S, A, O} with LAPACK's meaning: for `O` the thin U (if m ≥ n) or
        /// thin Vᵀ (if m < n) overwrites A; otherwise A is left unchanged. `lwork = -1` is
        /// a query answered with the documented minimum; `work` and `iwork` are not
        /// otherwise used.
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            jobz: *const c_char,
            m: *const c_int,
            n: *const c_int,
            a: *mut $t,
            lda: *const c_int,
            s: *mut $t,
            u: *mut $t,
            ldu: *const c_int,
            vt: *mut $t,
            ldvt: *const c_int,
            work: *mut $t,
            lwork: *const c_int,
            iwork: *mut c_int,
            info: *mut c_int,
        ) {
            let _ = iwork;
            lapack_call(info, || {
                gesdd::<$t>(
                    opt(jobz),
                    *m,
                    *n,
                    a,
                    *lda,
                    s,
                    u,
                    *ldu,
                    vt,
                    *ldvt,
                    work,
                    *lwork,
                )
            })
        }
    };
}

macro_rules! gesvd_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Singular value decomposition `A = U Σ Vᵀ`, singular values descending
        /// (QR-iteration interface).
        ///
        /// `jobu`, `jobvt` ∈ {A, S, O, N}, not both `O`, with LAPACK's meaning. `lwork = -1`
        /// is a query answered with the documented minimum; `work` is not otherwise used.
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            jobu: *const c_char,
            jobvt: *const c_char,
            m: *const c_int,
            n: *const c_int,
            a: *mut $t,
            lda: *const c_int,
            s: *mut $t,
            u: *mut $t,
            ldu: *const c_int,
            vt: *mut $t,
            ldvt: *const c_int,
            work: *mut $t,
            lwork: *const c_int,
            info: *mut c_int,
        ) {
            lapack_call(info, || {
                gesvd::<$t>(
                    opt(jobu),
                    opt(jobvt),
                    *m,
                    *n,
                    a,
                    *lda,
                    s,
                    u,
                    *ldu,
                    vt,
                    *ldvt,
                    work,
                    *lwork,
                )
            })
        }
    };
}

macro_rules! gesv_entry {
    ($name:ident, $t:ty, $upper:literal) => {
        #[doc = concat!("`", $upper, "` (reference LAPACK signature).")]
        ///
        /// Solves `A X = B` by LU factorization with partial pivoting.
        ///
        /// On exit A holds L (unit diagonal implied) and U, and `ipiv` the 1-based row
        /// interchanges. `info = i > 0`: `U(i,i)` is exactly zero and X was not computed
        /// (unlike LAPACK, entries of L below a zero pivot may then be non-finite).
        ///
        #[doc = lapack_safety!()]
        #[no_mangle]
        pub unsafe extern "C" fn $name(
            n: *const c_int,
            nrhs: *const c_int,
            a: *mut $t,
            lda: *const c_int,
            ipiv: *mut c_int,
            b: *mut $t,
            ldb: *const c_int,
            info: *mut c_int,
        ) {
            lapack_call(info, || gesv::<$t>(*n, *nrhs, a, *lda, ipiv, b, *ldb))
        }
    };
}

potrf_entry!(spotrf_, f32, "SPOTRF");
potrf_entry!(dpotrf_, f64, "DPOTRF");
potrs_entry!(spotrs_, f32, "SPOTRS");
potrs_entry!(dpotrs_, f64, "DPOTRS");
syevr_entry!(ssyevr_, f32, "SSYEVR");
syevr_entry!(dsyevr_, f64, "DSYEVR");
gesdd_entry!(sgesdd_, f32, "SGESDD");
gesdd_entry!(dgesdd_, f64, "DGESDD");
gesvd_entry!(sgesvd_, f32, "SGESVD");
gesvd_entry!(dgesvd_, f64, "DGESVD");
gesv_entry!(sgesv_, f32, "SGESV");
gesv_entry!(dgesv_, f64, "DGESV");
