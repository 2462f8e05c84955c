//! clarabel's semidefinite programs solved through the BLAS/LAPACK provider
//! (`finespike-lapack` by default, the system libraries with
//! `--no-default-features --features system-lapack`).
//!
//! clarabel's PSD-cone variable is `svec(X)`: the upper triangle of the
//! symmetric matrix X, column by column (X₁₁, X₁₂, X₂₂, X₁₃, X₂₃, X₃₃, …),
//! with the off-diagonal entries multiplied by √2 (clarabel 0.11.1,
//! `src/algebra/dense/matrix_math.rs`, `svec_to_mat`/`mat_to_svec`). With this
//! scaling `⟨svec(A), svec(B)⟩ = tr(AB)`.
//!
//! clarabel handles PSD cones of order ≤ 3 with closed-form kernels; the
//! analytic problems below use order 6 and 8 so that every factorization goes
//! through the BLAS/LAPACK symbols (`?potrf`, `?syevr`, `?gesdd`, `?gemm`,
//! `?syrk`, `?syr2k`).

#![allow(non_snake_case)]

// rustc links an `--extern` crate only if the code refers to it. This test
// calls clarabel directly, so it names the root crate explicitly: linking
// `finespike` brings in the BLAS/LAPACK provider it depends on, exactly as in
// a program that uses finespike.
use finespike as _;

use clarabel::algebra::*;
use clarabel::solver::*;

/// Linear index of the upper-triangle entry (i, j), i ≤ j, in `svec` order.
fn svec_index(i: usize, j: usize) -> usize {
    j * (j + 1) / 2 + i
}

/// `svec` of a symmetric matrix given by a function of (i, j).
fn svec(n: usize, f: impl Fn(usize, usize) -> f64) -> Vec<f64> {
    let mut v = vec![0.0; n * (n + 1) / 2];
    for j in 0..n {
        for i in 0..=j {
            let s = if i == j {
                1.0
            } else {
                std::f64::consts::SQRT_2
            };
            v[svec_index(i, j)] = s * f(i, j);
        }
    }
    v
}

/// The second-difference matrix: 2 on the diagonal, −1 next to it.
fn second_difference(i: usize, j: usize) -> f64 {
    if i == j {
        2.0
    } else if i.abs_diff(j) == 1 {
        -1.0
    } else {
        0.0
    }
}

/// Eigenvalue k (1-based, ascending) of the n × n second-difference matrix:
/// `2 − 2 cos(kπ/(n+1))` (textbook formula).
fn second_difference_eigenvalue(n: usize, k: usize) -> f64 {
    2.0 - 2.0 * (k as f64 * std::f64::consts::PI / (n as f64 + 1.0)).cos()
}

fn quiet() -> DefaultSettings<f64> {
    DefaultSettingsBuilder::default()
        .verbose(false)
        .build()
        .unwrap()
}

/// clarabel's `examples/rust/example_sdp.rs` (3 × 3 PSD cone with one
/// equality), run to completion.
#[test]
fn clarabel_example_sdp() {
    let n = 3;
    let nvec = (n * (n + 1)) >> 1;
    let P = CscMatrix::zeros((nvec, nvec));
    let c = vec![1., 0., 1., 0., 0., 1.];
    let sqrt2 = 2f64.sqrt();
    let A = CscMatrix::from(&[
        [-1., 0., 0., 0., 0., 0.],
        [0., -sqrt2, 0., 0., 0., 0.],
        [0., 0., -1., 0., 0., 0.],
        [0., 0., 0., -sqrt2, 0., 0.],
        [0., 0., 0., 0., -sqrt2, 0.],
        [0., 0., 0., 0., 0., -1.],
        [1., 4., 3., 8., 10., 6.],
    ]);
    let mut b = vec![0.0; 6];
    b.push(1.);
    let cones = vec![PSDTriangleConeT(n), ZeroConeT(1)];
    let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, quiet()).unwrap();
    solver.solve();
    assert_eq!(solver.solution.status, SolverStatus::Solved);
}

/// Problem data `(P, q, A, b, cones)` in clarabel's argument order.
type ProblemData = (
    CscMatrix<f64>,
    Vec<f64>,
    CscMatrix<f64>,
    Vec<f64>,
    Vec<SupportedConeT<f64>>,
);

/// Data of clarabel's `tests/basic_sdp.rs` (reference solution below).
fn basic_sdp_data() -> ProblemData {
    let P = CscMatrix::identity(6);
    let A = CscMatrix::identity(6);
    let c = vec![0.0; 6];
    let b = vec![-3., 1., 4., 1., 2., 5.];
    let cones = vec![PSDTriangleConeT(3)];
    (P, c, A, b, cones)
}

const BASIC_SDP_X: [f64; 6] = [
    -3.0729833267361095,
    0.3696004167288786,
    -0.022226685581313674,
    0.31441213129613066,
    -0.026739700851545107,
    -0.016084530571308823,
];
const BASIC_SDP_OBJ: f64 = 4.840076866013861;

/// clarabel's `tests/basic_sdp.rs::test_sdp_feasible` and
/// `test_sdp_empty_cone`.
#[test]
fn clarabel_basic_sdp_feasible() {
    for empty_cone in [false, true] {
        let (P, c, A, b, mut cones) = basic_sdp_data();
        if empty_cone {
            cones.push(PSDTriangleConeT(0));
        }
        let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, quiet()).unwrap();
        solver.solve();
        assert_eq!(solver.solution.status, SolverStatus::Solved);
        assert!(solver.solution.x.dist(&BASIC_SDP_X) <= 1e-6);
        assert!((solver.info.cost_primal - BASIC_SDP_OBJ).abs() <= 1e-6);
    }
}

/// clarabel's `tests/basic_sdp.rs::test_sdp_primal_infeasible`.
#[test]
fn clarabel_basic_sdp_primal_infeasible() {
    let (P, c, A, mut b, mut cones) = basic_sdp_data();
    let mut A2 = A.clone();
    A2.negate();
    let A = CscMatrix::vcat(&A, &A2).unwrap();
    b.extend(vec![0.0; b.len()]);
    cones.extend([cones[0].clone()]);
    let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, quiet()).unwrap();
    solver.solve();
    assert_eq!(solver.solution.status, SolverStatus::PrimalInfeasible);
}

/// clarabel's `tests/sdp_chordal.rs` (a 6 × 6 PSD cone with power cones,
/// under every chordal-decomposition variant).
#[test]
fn clarabel_sdp_chordal() {
    let P = CscMatrix {
        m: 8,
        n: 8,
        colptr: vec![0, 0, 0, 0, 0, 0, 0, 0, 0],
        rowval: vec![],
        nzval: vec![],
    };
    let q = vec![-1.0, -0.0, -0.0, -0.0, -0.0, -0.0, -0.0, -0.0];
    let r2 = std::f64::consts::SQRT_2;
    let A = CscMatrix {
        m: 28,
        n: 8,
        colptr: vec![0, 1, 4, 5, 8, 9, 10, 13, 16],
        rowval: vec![24, 7, 10, 22, 8, 12, 15, 25, 9, 13, 18, 21, 26, 0, 23, 27],
        nzval: vec![
            -1.0, -r2, -1.0, -1.0, -r2, -r2, -1.0, -1.0, -r2, -r2, -r2, -1.0, -1.0, -1.0, -1.0,
            -1.0,
        ],
    };
    let mut b = vec![0.0; 28];
    b[1] = 3.0;
    b[2] = 2. * r2;
    b[3] = 2.0;
    b[4] = r2;
    b[5] = r2;
    b[6] = 3.0;
    let cones = vec![
        NonnegativeConeT(1),
        PSDTriangleConeT(6),
        PowerConeT(0.3333333333333333),
        PowerConeT(0.5),
    ];
    let mut settings = DefaultSettingsBuilder::default()
        .verbose(false)
        .chordal_decomposition_enable(true)
        .max_iter(50)
        .build()
        .unwrap();
    for compact in [false, true] {
        for complete_dual in [false, true] {
            for merge_method in ["clique_graph", "parent_child", "none"] {
                settings.chordal_decomposition_compact = compact;
                settings.chordal_decomposition_complete_dual = complete_dual;
                settings.chordal_decomposition_merge_method = merge_method.to_string();
                let mut solver =
                    DefaultSolver::new(&P, &q, &A, &b, &cones, settings.clone()).unwrap();
                solver.solve();
                assert_eq!(solver.solution.status, SolverStatus::Solved);
            }
        }
    }
}

/// `min t  s.t.  t I − A ⪰ 0` has optimum `λ_max(A)`. With A the 8 × 8
/// second-difference matrix, `λ_max = 2 − 2 cos(8π/9) = 2 + 2 cos(π/9)`.
///
/// clarabel form: variable `x = [t]`, cone slack `s = b − A_c x ∈ PSD` with
/// `s = svec(t I − A)`, i.e. `A_c = −svec(I)`, `b = −svec(A)`.
#[test]
fn max_eigenvalue_sdp_matches_closed_form() {
    let n = 8;
    let nvec = n * (n + 1) / 2;
    let b: Vec<f64> = svec(n, second_difference).iter().map(|v| -v).collect();
    let id = svec(n, |i, j| if i == j { 1.0 } else { 0.0 });
    let col: Vec<Vec<f64>> = id.iter().map(|&v| vec![-v]).collect();
    let A = CscMatrix::from(&col);
    let P = CscMatrix::zeros((1, 1));
    let c = vec![1.0];
    let cones = vec![PSDTriangleConeT(n)];
    let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, quiet()).unwrap();
    solver.solve();
    assert_eq!(solver.solution.status, SolverStatus::Solved);
    assert_eq!(b.len(), nvec);
    let want = second_difference_eigenvalue(n, n);
    assert!((want - (2.0 + 2.0 * (std::f64::consts::PI / 9.0).cos())).abs() < 1e-15);
    let t = solver.solution.x[0];
    assert!((t - want).abs() <= 1e-7, "t = {t}, λ_max = {want}");
    assert!((solver.info.cost_primal - want).abs() <= 1e-7);
}

/// `min tr(C X)  s.t.  tr X = 1, X ⪰ 0` has optimum `λ_min(C)`, attained at
/// `X = v vᵀ` for the unit eigenvector v (a textbook variational
/// characterisation). With C the 6 × 6 second-difference matrix,
/// `λ_min = 2 − 2 cos(π/7)` and `v_i ∝ sin(iπ/7)`, i = 1..6 (textbook
/// eigenvectors of the second-difference matrix).
///
/// clarabel form: `x = svec(X)`, objective `svec(C)ᵀ x = tr(C X)`, cone rows
/// `s = x` (`A = −I`, `b = 0`), one zero-cone row `tr X = Σ x_ii = 1`.
#[test]
fn min_eigenvalue_sdp_matches_closed_form() {
    let n = 6;
    let nvec = n * (n + 1) / 2;
    let c = svec(n, second_difference);
    let mut rows: Vec<Vec<f64>> = (0..nvec)
        .map(|r| (0..nvec).map(|k| if k == r { -1.0 } else { 0.0 }).collect())
        .collect();
    rows.push(svec(n, |i, j| if i == j { 1.0 } else { 0.0 }));
    let A = CscMatrix::from(&rows);
    let mut b = vec![0.0; nvec];
    b.push(1.0);
    let P = CscMatrix::zeros((nvec, nvec));
    let cones = vec![PSDTriangleConeT(n), ZeroConeT(1)];
    let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, quiet()).unwrap();
    solver.solve();
    assert_eq!(solver.solution.status, SolverStatus::Solved);
    let want = second_difference_eigenvalue(n, 1);
    assert!(
        (solver.info.cost_primal - want).abs() <= 1e-7,
        "objective {} vs λ_min {want}",
        solver.info.cost_primal
    );
    // The minimiser is the rank-one projector onto the eigenvector.
    let v: Vec<f64> = (1..=n)
        .map(|i| (i as f64 * std::f64::consts::PI / (n as f64 + 1.0)).sin())
        .collect();
    let norm2: f64 = v.iter().map(|x| x * x).sum();
    let x_want = svec(n, |i, j| v[i] * v[j] / norm2);
    let err = solver
        .solution
        .x
        .iter()
        .zip(&x_want)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(err <= 1e-5, "X differs from v vᵀ by {err}");
}

/// The same maximum-eigenvalue problem in single precision, which exercises
/// the `s`-prefixed routines (accuracy limited by f32).
#[test]
fn max_eigenvalue_sdp_f32() {
    let n = 8;
    let b: Vec<f32> = svec(n, second_difference)
        .iter()
        .map(|&v| -v as f32)
        .collect();
    let id = svec(n, |i, j| if i == j { 1.0 } else { 0.0 });
    let col: Vec<Vec<f32>> = id.iter().map(|&v| vec![-v as f32]).collect();
    let A = CscMatrix::<f32>::from(&col);
    let P = CscMatrix::<f32>::zeros((1, 1));
    let c = vec![1.0f32];
    let cones = vec![PSDTriangleConeT(n)];
    let settings = DefaultSettingsBuilder::<f32>::default()
        .verbose(false)
        .tol_gap_abs(1e-5)
        .tol_gap_rel(1e-5)
        .tol_feas(1e-5)
        .tol_ktratio(1e-4)
        .build()
        .unwrap();
    let mut solver = DefaultSolver::new(&P, &c, &A, &b, &cones, settings).unwrap();
    solver.solve();
    assert!(
        matches!(
            solver.solution.status,
            SolverStatus::Solved | SolverStatus::AlmostSolved
        ),
        "{:?}",
        solver.solution.status
    );
    let want = second_difference_eigenvalue(n, n);
    let t = f64::from(solver.solution.x[0]);
    assert!((t - want).abs() <= 1e-3, "t = {t}, λ_max = {want}");
}
