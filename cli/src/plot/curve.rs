//! The curves of a plot: the periodogram of the data, sampled on a grid, and their thinning.

use finespike::{DualPolynomial, Measurements};
use num_complex::Complex64;

/// `|Σ_k y_k exp(i2πkt)| / |K|` at `t = j/m`.
pub(super) fn periodogram(data: &Measurements, m: usize) -> Vec<f64> {
    let kmin = data.kmin();
    let mut coeffs = vec![Complex64::new(0.0, 0.0); data.band_len()];
    for (k, v) in data.indices().iter().zip(data.values()) {
        coeffs[(k - kmin) as usize] = *v;
    }
    let scale = data.len().max(1) as f64;
    DualPolynomial::new(kmin, coeffs)
        .grid_values(m)
        .iter()
        .map(|v| v.norm() / scale)
        .collect()
}

/// Thin a curve to at most about `budget` points: each run of consecutive points keeps its lowest and
/// highest point, in order, so that narrow peaks survive (an SVG needs no more than a few points per
/// pixel).
pub(super) fn envelope(points: Vec<(f64, f64)>, budget: usize) -> Vec<(f64, f64)> {
    let run = points.len().div_ceil(budget.max(2) / 2).max(1);
    if run <= 2 {
        return points;
    }
    let mut out = Vec::with_capacity(2 * points.len() / run + 2);
    for chunk in points.chunks(run) {
        let lo = chunk
            .iter()
            .enumerate()
            .min_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        let hi = chunk
            .iter()
            .enumerate()
            .max_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        if let (Some((i, &p)), Some((j, &q))) = (lo, hi) {
            if i < j {
                out.extend([p, q]);
            } else if i > j {
                out.extend([q, p]);
            } else {
                out.push(p);
            }
        }
    }
    out
}
