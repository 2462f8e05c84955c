//! Unit tests of the parent module (compiled only under `cfg(test)`: `unwrap` here is the assertion).
use super::*;

fn c(re: f64, im: f64) -> Complex64 {
    Complex64::new(re, im)
}

#[test]
fn wrap_distance_is_symmetric_and_wraps() {
    assert!((wrap_distance(0.05, 0.95) - 0.1).abs() < 1e-15);
    assert!((wrap_distance(0.95, 0.05) - 0.1).abs() < 1e-15);
    assert!((wrap_distance(0.2, 0.7) - 0.5).abs() < 1e-15);
    assert!((wrap_difference(0.05, 0.95) - 0.1).abs() < 1e-15);
    assert!((wrap_difference(0.95, 0.05) + 0.1).abs() < 1e-15);
    assert_eq!(wrap(-1e-18), 0.0);
    assert!((wrap(-0.25) - 0.75).abs() < 1e-15);
}

#[test]
fn min_separation_wraps_around() {
    assert!((min_separation(&[0.02, 0.5, 0.97]) - 0.05).abs() < 1e-12);
    assert_eq!(min_separation(&[0.3]), f64::INFINITY);
}

#[test]
fn time_samples_are_fourier_data_with_k_minus_n() {
    // x_n = a exp(i2π f n) must equal the Fourier model at k = −n.
    let f = 0.123;
    let a = c(0.5, -1.5);
    let x: Vec<Complex64> = (0..9)
        .map(|n| a * Complex64::from_polar(1.0, 2.0 * PI * f * n as f64))
        .collect();
    let m = Measurements::from_time_samples(&x).unwrap();
    assert_eq!(m.kmin(), -8);
    assert_eq!(m.kmax(), 0);
    assert_eq!(m.fc(), 4.0);
    let spikes = Spikes::from_parts(&[f], &[a]).unwrap();
    assert!(m.residual_norm(&spikes) < 1e-13);
}

#[test]
fn forward_matches_matrix_oracle() {
    let spikes = Spikes::from_parts(&[0.1, 0.7], &[c(1.0, 0.0), c(0.0, 2.0)]).unwrap();
    let idx: Vec<i64> = (-5..=5).collect();
    let fast = forward(&spikes, &idx);
    let phi = forward_matrix(&idx, &spikes.positions());
    for (row, f) in phi.iter().zip(&fast) {
        let dense: Complex64 = row
            .iter()
            .zip(spikes.amplitudes())
            .map(|(p, a)| p * a)
            .sum();
        assert!((dense - f).norm() < 1e-14);
    }
}

#[test]
fn validation_errors() {
    let v = vec![c(1.0, 0.0); 3];
    assert_eq!(
        Measurements::fourier(0, &[0], &[c(1.0, 0.0)]),
        Err(Error::ZeroCutoff)
    );
    assert_eq!(
        Measurements::fourier(2, &[0, 1, 1], &v),
        Err(Error::DuplicateIndex {
            what: "frequency index k =",
            index: 1
        })
    );
    assert_eq!(
        Measurements::fourier(2, &[0, 1, 3], &v),
        Err(Error::IndexOutOfBand {
            what: "frequency index k =",
            index: 3,
            range: "the band -2..=2".into(),
            advice: "raise the cutoff or drop the sample",
        })
    );
    assert!(matches!(
        Measurements::fourier(2, &[0, 1], &v),
        Err(Error::LengthMismatch { .. })
    ));
    assert!(matches!(
        Measurements::fourier(2, &[], &[]),
        Err(Error::Empty { .. })
    ));
    let bad = vec![c(1.0, 0.0), c(f64::NAN, 0.0), c(0.0, 0.0)];
    assert!(matches!(
        Measurements::fourier(2, &[0, 1, 2], &bad),
        Err(Error::NonFinite { index: 1, .. })
    ));
}
