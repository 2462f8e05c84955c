//! The autocorrelation form of `‖Q(f)‖₂²` against its definition `Σ_l |Σ_k v_{kl} e^{i2πkf}|²`
//! summed column by column (no outside reference needed: the check is the definition itself).

use super::VectorPolynomial;
use num_complex::Complex64;
use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use std::f64::consts::PI;

/// Seeded columns on a band of 13 with two unmeasured rows (zero coefficients), 5 columns.
fn columns() -> (i64, Vec<Vec<Complex64>>) {
    let mut rng = StdRng::seed_from_u64(14);
    let cols = (0..5)
        .map(|_| {
            (0..13)
                .map(|k| {
                    if k == 4 || k == 9 {
                        Complex64::new(0.0, 0.0)
                    } else {
                        Complex64::new(rng.gen_range(-1.0..1.0), rng.gen_range(-1.0..1.0))
                    }
                })
                .collect()
        })
        .collect();
    (-6, cols)
}

/// `‖Q(f)‖₂²` by its definition.
fn direct(kmin: i64, cols: &[Vec<Complex64>], f: f64) -> f64 {
    cols.iter()
        .map(|c| {
            c.iter()
                .enumerate()
                .map(|(i, v)| {
                    v * Complex64::from_polar(1.0, 2.0 * PI * f * (kmin + i as i64) as f64)
                })
                .sum::<Complex64>()
                .norm_sqr()
        })
        .sum()
}

#[test]
fn squared_norm_and_derivatives_match_the_column_sum() {
    let (kmin, cols) = columns();
    let q = VectorPolynomial::new(kmin, &cols);
    for j in 0..97 {
        let f = j as f64 / 97.0 + 0.003;
        let [g, g1, g2] = q.eval_sq(f);
        let h = 1e-5;
        let (gp, gm) = (direct(kmin, &cols, f + h), direct(kmin, &cols, f - h));
        let g0 = direct(kmin, &cols, f);
        assert!(
            (g - g0).abs() <= 1e-12 * g0.max(1.0),
            "g at {f}: {g} vs {g0}"
        );
        // Central differences: error O(h²·g''') and O(ε/h²) for the second derivative.
        assert!((g1 - (gp - gm) / (2.0 * h)).abs() <= 1e-4 * g1.abs().max(1.0));
        assert!((g2 - (gp - 2.0 * g0 + gm) / (h * h)).abs() <= 1e-3 * g2.abs().max(1e2));
    }
}

#[test]
fn supremum_is_the_dense_grid_maximum() {
    let (kmin, cols) = columns();
    let q = VectorPolynomial::new(kmin, &cols);
    let dense = (0..200_000)
        .map(|j| direct(kmin, &cols, j as f64 / 200_000.0))
        .fold(0.0, f64::max)
        .sqrt();
    let peaks = q.peaks(8, f64::INFINITY);
    let top = peaks.first().map_or(0.0, |p| p.modulus);
    // The polished maximum is at least the dense grid's and exceeds it by at most the grid's own
    // miss (Bernstein: ½(2πDh)² relative in ‖Q‖², a quarter of it in ‖Q‖, for the degree D = 12
    // and the half spacing h = 2.5e-6: 9e-9).
    assert!(top >= dense * (1.0 - 1e-12), "{top} < {dense}");
    assert!(top <= dense * (1.0 + 1e-8), "{top} > {dense}");
    assert!((q.sup() - top).abs() <= 1e-12 * top);
    // The position of the maximum carries the value.
    let at = direct(kmin, &cols, peaks[0].position).sqrt();
    assert!((at - top).abs() <= 1e-12 * top);
}
