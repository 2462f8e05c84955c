//! An independent oracle for the support of the dual polynomial.
//!
//! The crate locates the support of an exact `sdp` solve as the maxima of `|q|` found on an FFT grid
//! and polished by Newton steps on `d|q|²/dt = 0` (`DualPolynomial::grid_values` and
//! `polish_maximum`, src/dual.rs). The textbook route instead takes the unit-circle roots of the
//! algebraic polynomial `z^{L−1}(1 − |q(z)|²)`, `|q(z)|² = Σ_m r_m z^m` with the autocorrelation
//! `r_m = Σ_k c_{k+m} conj(c_k)` of the `L` coefficients, from the eigenvalues of its companion
//! matrix. The support points are *double* roots of that polynomial, and a companion matrix gives a
//! double root only to about `√ε ≈ 10⁻⁸` — not enough for a 10⁻⁸/fc comparison. So this oracle
//! takes the roots of the derivative instead: `d|q|²/dt ∝ Σ_m m r_m e^{i2πmt}`, i.e. the polynomial
//! `h(z) = Σ_m m r_m z^{m+L−1}` of degree `2(L−1)`, whose roots on the unit circle are the critical
//! points of `|q|²` — *simple* roots at the support (where `|q|²` has a non-degenerate maximum of 1)
//! and at the other extrema. Its unit-circle roots with `|q| ≥ 1 − 10⁻⁶` are the support. The
//! eigenvalues come from nalgebra's complex Schur decomposition of the companion matrix (no
//! hand-written QR), without a Newton polish on the crate's side of the comparison.
//!
//! Check: for fc = 4 … 64 the two routes agree to `10⁻⁸/fc` on every support point of exact `sdp`
//! solves (invented scenes, spikes at least 2/fc apart: Candès & Fernandez-Granda 2014, CPAM 67(6)).

use finespike::{DualPolynomial, Estimator, Scenario, Tv};
use nalgebra::DMatrix;
use num_complex::Complex64;
use std::f64::consts::PI;

/// Torus distance.
fn dist(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(1.0);
    d.min(1.0 - d)
}

/// Support by the textbook route: unit-circle roots of `h(z)` (see the module docs).
fn oracle_support(q: &DualPolynomial) -> Vec<f64> {
    let c = q.coeffs();
    let l = c.len();
    // r_m for m = −(L−1)..=(L−1), stored at m + L − 1.
    let mut r = vec![Complex64::new(0.0, 0.0); 2 * l - 1];
    for (i, ci) in c.iter().enumerate() {
        for (j, cj) in c.iter().enumerate() {
            // c_{k+m} conj(c_k) with k = j, k + m = i.
            r[i + l - 1 - j] += ci * cj.conj();
        }
    }
    // h(z) = Σ_m m r_m z^{m+L−1}: coefficient of z^p is (p − L + 1) r_{p−L+1}.
    let coeff: Vec<Complex64> = (0..2 * l - 1)
        .map(|p| r[p] * (p as f64 - (l as f64 - 1.0)))
        .collect();
    let deg = coeff.len() - 1;
    let lead = coeff[deg];
    // Companion matrix (first row −a_{deg−1}/a_deg, …, −a_0/a_deg; ones below the diagonal).
    let mut m = DMatrix::<Complex64>::zeros(deg, deg);
    for j in 0..deg {
        m[(0, j)] = -coeff[deg - 1 - j] / lead;
    }
    for i in 1..deg {
        m[(i, i - 1)] = Complex64::new(1.0, 0.0);
    }
    let eig = m
        .eigenvalues()
        .expect("complex Schur form of the companion matrix");
    let mut support: Vec<f64> = eig
        .iter()
        .filter(|z| (z.norm() - 1.0).abs() < 1e-3)
        .map(|z| (z.arg() / (2.0 * PI)).rem_euclid(1.0))
        .filter(|&t| q.eval(t).norm() >= 1.0 - 1e-6)
        .collect();
    support.sort_by(f64::total_cmp);
    support
}

/// Support by the crate's route: local maxima of `|q|` on its FFT grid, polished by its Newton steps.
fn crate_support(q: &DualPolynomial) -> Vec<f64> {
    let m = q.search_grid_len(16);
    let v: Vec<f64> = q.grid_values(m).iter().map(|x| x.norm_sqr()).collect();
    let mut out = Vec::new();
    for j in 0..m {
        let (a, b, c) = (v[(j + m - 1) % m], v[j], v[(j + 1) % m]);
        if b >= a && b > c && b.sqrt() >= 0.9 {
            let t = q.polish_maximum(j as f64 / m as f64, 1.0 / m as f64);
            if q.eval(t).norm() >= 1.0 - 1e-6 {
                out.push(t.rem_euclid(1.0));
            }
        }
    }
    out.sort_by(f64::total_cmp);
    out
}

#[test]
fn companion_roots_agree_with_the_grid_and_newton_support() {
    for (fc, count, seed) in [(4, 2, 1), (8, 3, 2), (16, 4, 3), (32, 5, 4), (64, 6, 5)] {
        let sample = Scenario::new(fc, count)
            .with_separation(2.0)
            .with_seed(seed)
            .generate()
            .unwrap();
        let est = Tv::exact().estimate(&sample.data).unwrap();
        assert!(est.status.is_usable(), "fc {fc}: {}", est.status);
        let q = est
            .dual
            .as_ref()
            .expect("an exact sdp solve returns its dual");
        let oracle = oracle_support(q);
        let ours = crate_support(q);
        assert_eq!(
            oracle.len(),
            ours.len(),
            "fc {fc}: oracle {oracle:?}, grid+Newton {ours:?}"
        );
        assert_eq!(
            ours.len(),
            count,
            "fc {fc}: the support is the truth's size"
        );
        for (a, b) in oracle.iter().zip(&ours) {
            let d = dist(*a, *b) * fc as f64;
            assert!(d <= 1e-8, "fc {fc}: {a} vs {b}, {d:e}/fc apart");
        }
        // And the support is the truth's (to the solver's accuracy, a much looser figure).
        for t in sample.truth.positions() {
            let near = oracle.iter().map(|s| dist(*s, t)).fold(1.0, f64::min);
            assert!(
                near * fc as f64 <= 1e-3,
                "fc {fc}: truth {t} off the support"
            );
        }
    }
}
