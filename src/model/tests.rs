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

mod snapshot_records {
    use super::super::{Snapshots, SENSOR_WORDS};
    use crate::error::Error;
    use nalgebra::DMatrix;
    use num_complex::Complex64;

    fn x(rows: usize, cols: usize) -> DMatrix<Complex64> {
        DMatrix::from_fn(rows, cols, |m, t| Complex64::new(m as f64, t as f64))
    }

    #[test]
    fn rows_are_stored_in_index_order_whatever_the_given_order() {
        // Sensors given as 2, 0, 1: row i of the stored matrix belongs to indices()[i] = −m sorted.
        let data = Snapshots::from_sensor_subset(&[2, 0, 1], &x(3, 2)).unwrap();
        assert_eq!(data.indices(), &[-2, -1, 0]);
        // Sensor 2 was given in row 0 (value 0 + i·t).
        assert_eq!(data.values()[(0, 1)], Complex64::new(0.0, 1.0));
        assert_eq!(data.values()[(2, 1)], Complex64::new(1.0, 1.0));
        let one = data.snapshot(1).unwrap();
        assert_eq!(one.values()[0], Complex64::new(0.0, 1.0));
        assert!(data.snapshot(2).is_err());
    }

    #[test]
    fn errors_name_the_sensor_and_the_snapshot() {
        let mut bad = x(4, 3);
        bad[(2, 1)] = Complex64::new(f64::NAN, 0.0);
        let e = Snapshots::from_sensor_subset(&[10, 11, 12, 13], &bad).unwrap_err();
        assert!(matches!(
            e,
            Error::NonFiniteSnapshot {
                index: 12,
                snapshot: 1,
                ..
            }
        ));
        assert!(e.to_string().contains("sensor m = 12, snapshot 1"), "{e}");
        assert_eq!(
            Snapshots::from_sensor_subset(&[0, 1, 1], &x(3, 1)).unwrap_err(),
            Error::DuplicateIndex {
                what: SENSOR_WORDS,
                index: 1
            }
        );
        assert!(matches!(
            Snapshots::from_sensors(&x(3, 0)),
            Err(Error::Empty { .. })
        ));
        assert!(matches!(
            Snapshots::from_sensor_subset(&[0, 1], &x(3, 2)),
            Err(Error::LengthMismatch { .. })
        ));
        assert!(Snapshots::from_sensors(&x(3, 2))
            .unwrap()
            .with_spacing(-0.5)
            .is_err());
    }

    #[test]
    fn sample_covariance_is_x_xh_over_l() {
        let data = Snapshots::from_sensors(&x(3, 4)).unwrap();
        let r = data.sample_covariance();
        let v = data.values();
        let want = v * v.adjoint() / Complex64::new(4.0, 0.0);
        assert!((r - want).norm() < 1e-12);
    }
}
