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

/// The decimated envelope of a curve (points in increasing x) on a view `(x0, x1)` drawn `columns`
/// pixels wide: per pixel column, `(x at the column's centre, lowest, highest value)` of the points
/// in it; columns without a point are left out. Drawn as a band, it shows every peak and the noise
/// floor of a curve with many points per pixel at a cost of one pass.
pub(super) fn column_envelope(
    points: &[(f64, f64)],
    (x0, x1): (f64, f64),
    columns: usize,
) -> Vec<(f64, f64, f64)> {
    let columns = columns.max(1);
    let step = (x1 - x0) / columns as f64;
    let mut out: Vec<(usize, f64, f64)> = Vec::with_capacity(columns);
    for &(x, y) in points {
        let c = (((x - x0) / step) as usize).min(columns - 1);
        match out.last_mut() {
            Some((last, lo, hi)) if *last == c => {
                *lo = lo.min(y);
                *hi = hi.max(y);
            }
            _ => out.push((c, y, y)),
        }
    }
    out.into_iter()
        .map(|(c, lo, hi)| (x0 + (c as f64 + 0.5) * step, lo, hi))
        .collect()
}

/// Decimals that tell the tick labels of a view of width `span` apart (ticks about a tenth of the
/// view apart, one more digit than the tick step needs).
pub(super) fn tick_decimals(span: f64) -> usize {
    if !(span.is_finite() && span > 0.0) {
        return 3;
    }
    let step = span / 10.0;
    (1.0 - step.log10().floor()).clamp(0.0, 12.0) as usize
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn envelope_keeps_each_columns_extremes() {
        let pts: Vec<(f64, f64)> = (0..1000)
            .map(|i| {
                (
                    i as f64 / 1000.0,
                    if i == 503 { 9.0 } else { (i % 7) as f64 },
                )
            })
            .collect();
        let env = column_envelope(&pts, (0.0, 1.0), 10);
        assert_eq!(env.len(), 10);
        assert_eq!(env[5], (0.55, 0.0, 9.0));
        assert!(env.iter().all(|&(_, lo, hi)| lo == 0.0 && hi >= 6.0));
    }

    #[test]
    fn tick_decimals_follow_the_view() {
        assert_eq!(tick_decimals(1.0), 2);
        assert_eq!(tick_decimals(500.0), 0);
        assert_eq!(tick_decimals(4e-4), 6);
    }
}
