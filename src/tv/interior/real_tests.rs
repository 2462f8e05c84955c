use super::super::clarabel_adapter::{solve, IpmSettings};
use super::super::compact::{ConicProgram, Formulation};
use super::*;

/// The dense orthogonal `P = [P_e, P_o]` (row-major `n × n`), built from the split's entries.
fn dense_p(split: MirrorSplit) -> Vec<Vec<f64>> {
    let n = split.n;
    let mut p = vec![vec![0.0; n]; n];
    for (i, row) in p.iter_mut().enumerate() {
        let (e, o) = split.components(i);
        if let Some((a, w)) = e {
            row[a] = w;
        }
        if let Some((b, w)) = o {
            row[split.even_len() + b] = w;
        }
    }
    p
}

/// `P` is orthogonal, `Pᵀ T P` of a real symmetric Toeplitz `T` is block diagonal, and its blocks
/// are `Σ u_j` of [`MirrorSplit::toeplitz_block`] (Cantoni & Butler 1976, checked here).
#[test]
fn mirror_split_block_diagonalises_symmetric_toeplitz() {
    for n in [1usize, 2, 3, 6, 9] {
        let split = MirrorSplit { n };
        let p = dense_p(split);
        let u: Vec<f64> = (0..n)
            .map(|j| 1.0 / (1.0 + j as f64) + 0.3 * (j as f64).sin())
            .collect();
        let t = |r: usize, c: usize| u[r.abs_diff(c)];
        let me = split.even_len();
        // PᵀP = I and PᵀTP.
        for a in 0..n {
            for b in 0..n {
                let g: f64 = (0..n).map(|r| p[r][a] * p[r][b]).sum();
                assert!(
                    (g - if a == b { 1.0 } else { 0.0 }).abs() < 1e-15,
                    "n = {n}"
                );
                let m: f64 = (0..n)
                    .flat_map(|r| (0..n).map(move |c| (r, c)))
                    .map(|(r, c)| p[r][a] * t(r, c) * p[c][b])
                    .sum();
                let same_part = (a < me) == (b < me);
                let expected = if same_part {
                    let odd = a >= me;
                    let (ra, rb) = if odd { (a - me, b - me) } else { (a, b) };
                    let (lo, hi) = (ra.min(rb), ra.max(rb));
                    (0..n)
                        .map(|j| {
                            split
                                .toeplitz_block(j, odd)
                                .iter()
                                .filter(|&&(r, c, _)| r == lo && c == hi)
                                .map(|&(_, _, v)| u[j] * v)
                                .sum::<f64>()
                        })
                        .sum()
                } else {
                    0.0
                };
                assert!(
                    (m - expected).abs() < 1e-13,
                    "n = {n}, ({a}, {b}): {m} vs {expected}"
                );
            }
        }
    }
}

/// A real record's band data: `y_k = Σ A cos(2πf n + φ)` at `n = −k`, shifted to `0..n` (band
/// `k = −(N−1)..0`), with every third sample unmeasured when `gaps`. Invented for the test.
fn record(n: usize, gaps: bool) -> Vec<Option<f64>> {
    let lines = [(0.11, 1.0, 0.3), (0.27, 0.7, -1.1), (0.41, 0.4, 2.0)];
    (0..n)
        .map(|i| {
            let t = (n - 1 - i) as f64; // k = i − (N−1) = −t
            if gaps && i % 3 == 1 {
                return None;
            }
            let x: f64 = lines
                .iter()
                .map(|&(f, a, ph): &(f64, f64, f64)| {
                    a * (2.0 * std::f64::consts::PI * f * t + ph).cos()
                })
                .sum();
            Some(x + 0.01 * (1.7 * t).sin())
        })
        .collect()
}

fn run(prog: &ConicProgram, what: &str) -> (f64, Vec<Complex64>) {
    let sol = solve(
        prog,
        IpmSettings {
            max_iter: 100,
            tolerance: 1e-8,
            time_limit: f64::INFINITY,
        },
    )
    .unwrap();
    assert_eq!(sol.status, crate::estimator::Status::Solved, "{what}");
    (
        0.5 * (sol.primal_objective + sol.dual_objective),
        prog.dual_coefficients(&sol.z),
    )
}

/// The real-symmetric program has the optimum of the complex compact program on the same real data
/// (exact, constrained, penalised; full band and gaps; odd and even N), its dual vector is real,
/// attains the objective and keeps `|q| ≤ 1` on a fine grid.
#[test]
fn real_form_matches_complex_form() {
    for (n, gaps) in [(9usize, false), (12, false), (13, true)] {
        let y = record(n, gaps);
        let yc: Vec<Option<Complex64>> = y
            .iter()
            .map(|v| v.map(|v| Complex64::new(v, 0.0)))
            .collect();
        let norm: f64 = y.iter().flatten().map(|v| v * v).sum::<f64>().sqrt();
        for f in [
            Formulation::Exact,
            Formulation::Constrained { delta: 0.1 * norm },
            Formulation::Penalised { tau: 0.5 },
        ] {
            let (obj_c, c_c) = run(
                &ConicProgram::assemble(n, &yc, f),
                &format!("complex {n} {f:?}"),
            );
            let (obj_r, c_r) = run(&assemble(n, &y, f), &format!("real {n} {f:?}"));
            assert!(
                (obj_r - obj_c).abs() <= 1e-6 * obj_c.abs().max(1.0),
                "N = {n}, {f:?}: {obj_r} vs {obj_c}"
            );
            assert!(c_r.iter().all(|c| c.im == 0.0));
            // Dual objective Re⟨y, c⟩ (minus δ‖c‖ or ½τ²‖c‖²-type terms aside, the exact case).
            if f == Formulation::Exact {
                let dual: f64 = y
                    .iter()
                    .zip(&c_r)
                    .filter_map(|(v, c)| v.map(|v| v * c.re))
                    .sum();
                assert!(
                    (dual - obj_r).abs() < 1e-6 * obj_r.abs(),
                    "{dual} vs {obj_r}"
                );
            }
            // The dual polynomials agree where the solution is unique enough to compare: their
            // moduli on the grid (the maxima that give the support).
            let q = |c: &[Complex64], t: f64| -> f64 {
                c.iter()
                    .enumerate()
                    .map(|(i, c)| {
                        c * Complex64::from_polar(1.0, 2.0 * std::f64::consts::PI * i as f64 * t)
                    })
                    .sum::<Complex64>()
                    .norm()
            };
            let m = 16 * n;
            for g in 0..m {
                let t = g as f64 / m as f64;
                assert!(
                    q(&c_r, t) <= 1.0 + 1e-6,
                    "N = {n}, {f:?}: |q({t})| = {}",
                    q(&c_r, t)
                );
            }
            let max_c = (0..m)
                .map(|g| q(&c_c, g as f64 / m as f64))
                .fold(0.0, f64::max);
            let max_r = (0..m)
                .map(|g| q(&c_r, g as f64 / m as f64))
                .fold(0.0, f64::max);
            assert!(
                (max_c - max_r).abs() < 1e-4,
                "N = {n}, {f:?}: {max_c} vs {max_r}"
            );
        }
    }
}
