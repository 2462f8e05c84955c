//! Interop: the conversions give exactly the measurements of the crate's own constructors, refuse
//! bad input with typed errors, and the outputs round-trip.

use finespike::interop::{
    amplitudes_dvector, fourier_band_from_dvector, iq_time_samples, positions_dvector,
    real_time_samples, real_time_samples_from_dvector, time_samples_from_dvector, to_parts,
};
use finespike::{Complex64, Error, Estimator, Measurements, Scenario, Sfw, Spikes};
use nalgebra::DVector;

fn c(re: f64, im: f64) -> Complex64 {
    Complex64::new(re, im)
}

#[test]
fn dvector_inputs_equal_the_slice_constructors() {
    // An invented scene: 3 spikes at fc = 10, 2/fc apart, exact data.
    let sample = Scenario::new(10, 3).with_seed(3).generate().unwrap();
    let y = DVector::from_column_slice(sample.data.values());
    assert_eq!(fourier_band_from_dvector(10, &y).unwrap(), sample.data);
    assert_eq!(
        time_samples_from_dvector(&y).unwrap(),
        Measurements::from_time_samples(sample.data.values()).unwrap()
    );
    // The estimate from converted data is the estimate from the original data.
    let a = Sfw::exact().estimate(&sample.data).unwrap();
    let b = Sfw::exact()
        .estimate(&fourier_band_from_dvector(10, &y).unwrap())
        .unwrap();
    assert_eq!(a.spikes, b.spikes);
}

#[test]
fn dvector_inputs_keep_the_typed_errors() {
    let y = DVector::from_element(8, c(1.0, 0.0));
    assert!(matches!(
        fourier_band_from_dvector(4, &y),
        Err(Error::LengthMismatch {
            left: 8,
            right: 9,
            ..
        })
    ));
    let mut y = DVector::from_element(9, c(1.0, 0.0));
    y[4] = c(f64::NAN, 0.0);
    assert!(matches!(
        fourier_band_from_dvector(4, &y),
        Err(Error::NonFinite { index: 4, .. })
    ));
    assert!(matches!(
        time_samples_from_dvector(&DVector::from_element(1, c(1.0, 0.0))),
        Err(Error::SingleSample { index: 0 })
    ));
    assert!(matches!(
        time_samples_from_dvector(&DVector::from_vec(vec![])),
        Err(Error::Empty { .. })
    ));
}

#[test]
fn real_samples_are_complex_samples_with_zero_imaginary_part() {
    let x = [0.5, -1.25, 3.0, 0.0, 2.0, -7.5];
    let expected =
        Measurements::from_time_samples(&x.iter().map(|&v| c(v, 0.0)).collect::<Vec<_>>()).unwrap();
    assert_eq!(real_time_samples(&x).unwrap(), expected);
    assert_eq!(
        real_time_samples_from_dvector(&DVector::from_column_slice(&x)).unwrap(),
        expected
    );
    assert!(matches!(
        real_time_samples(&[1.0, f64::INFINITY, 0.0]),
        Err(Error::NonFinite { .. })
    ));
}

#[test]
fn a_real_cosine_is_a_conjugate_pair() {
    // x_n = A cos(2πfn + φ) = (A/2)e^{iφ} e^{i2πfn} + (A/2)e^{−iφ} e^{−i2πfn} (Euler's formula):
    // lines at f and 1 − f with amplitudes (A/2)e^{±iφ}. Invented record: A = 2, f = 0.15, φ = 0.4.
    let (amp, f, phi) = (2.0, 0.15, 0.4);
    let x: Vec<f64> = (0..24)
        .map(|n| amp * (std::f64::consts::TAU * f * n as f64 + phi).cos())
        .collect();
    let est = Sfw::exact()
        .estimate(&real_time_samples(&x).unwrap())
        .unwrap();
    let (positions, amplitudes) = to_parts(&est.spikes);
    assert_eq!(positions.len(), 2, "{:?}", est.spikes);
    assert!((positions[0] - f).abs() < 1e-9 && (positions[1] - (1.0 - f)).abs() < 1e-9);
    assert!((amplitudes[0] - Complex64::from_polar(amp / 2.0, phi)).norm() < 1e-8);
    assert!((amplitudes[1] - Complex64::from_polar(amp / 2.0, -phi)).norm() < 1e-8);
}

#[test]
fn interleaved_iq_pairs_are_samples() {
    let iq = [1.0, 2.0, -3.0, 4.0, 0.5, -0.25];
    let expected =
        Measurements::from_time_samples(&[c(1.0, 2.0), c(-3.0, 4.0), c(0.5, -0.25)]).unwrap();
    assert_eq!(iq_time_samples(&iq).unwrap(), expected);
    // Odd length: both counts, so the length (7 = 4 + 3) is in the error.
    let err = iq_time_samples(&[0.0; 7]).unwrap_err();
    assert_eq!(
        err,
        Error::LengthMismatch {
            what: "interleaved I/Q samples: I values against Q values (odd length)",
            left: 4,
            right: 3,
        }
    );
    assert!(err.to_string().contains("4 values against 3"), "{err}");
    // A NaN in Q of pair 1 names sample index 1 (the pair), through the usual constructor.
    assert!(matches!(
        iq_time_samples(&[1.0, 0.0, 1.0, f64::NAN]),
        Err(Error::NonFinite { .. })
    ));
    assert!(matches!(iq_time_samples(&[]), Err(Error::Empty { .. })));
}

#[test]
fn outputs_round_trip_through_nalgebra_and_vectors() {
    let spikes =
        Spikes::from_parts(&[0.9, 0.1, 0.5], &[c(1.0, 0.0), c(0.0, -2.0), c(0.5, 0.5)]).unwrap();
    let p = positions_dvector(&spikes);
    let a = amplitudes_dvector(&spikes);
    assert_eq!(p.as_slice(), &[0.1, 0.5, 0.9]);
    assert_eq!(a.as_slice(), &[c(0.0, -2.0), c(0.5, 0.5), c(1.0, 0.0)]);
    assert_eq!(
        Spikes::from_parts(p.as_slice(), a.as_slice()).unwrap(),
        spikes
    );
    let (pv, av) = to_parts(&spikes);
    assert_eq!(Spikes::from_parts(&pv, &av).unwrap(), spikes);
    // nalgebra arithmetic on the output works with the crate's complex type.
    let total: Complex64 = a.iter().sum();
    assert_eq!(total, c(1.5, -1.5));
}

#[test]
fn complex_type_is_re_exported() {
    // The root re-export is the num-complex type itself, so nalgebra accepts it.
    let z: finespike::num_complex::Complex<f64> = finespike::Complex64::new(1.0, 2.0);
    let v: DVector<finespike::Complex64> = DVector::from_element(2, z);
    assert_eq!(v[1], z);
}

#[cfg(feature = "ndarray")]
mod with_ndarray {
    use super::*;
    use finespike::interop::{
        amplitudes_array, fourier_band_from_array, positions_array, time_samples_from_array,
    };
    use ndarray::{s, Array1};

    #[test]
    fn arrays_equal_the_slice_constructors_in_any_layout() {
        let x = Array1::from_shape_fn(14, |n| c(n as f64, -(n as f64) * 0.5));
        assert_eq!(
            time_samples_from_array(&x).unwrap(),
            Measurements::from_time_samples(&x.to_vec()).unwrap()
        );
        // A strided copy (every other element) through an owned, non-standard layout.
        let strided: Array1<Complex64> = x.slice(s![..;2]).to_owned();
        assert_eq!(
            time_samples_from_array(&strided).unwrap(),
            Measurements::from_time_samples(&strided.to_vec()).unwrap()
        );
        let band = Array1::from_elem(9, c(1.0, 0.0));
        assert_eq!(
            fourier_band_from_array(4, &band).unwrap(),
            Measurements::full_band(4, &band.to_vec()).unwrap()
        );
        assert!(matches!(
            fourier_band_from_array(5, &band),
            Err(Error::LengthMismatch { .. })
        ));
    }

    #[test]
    fn array_outputs() {
        let spikes = Spikes::from_parts(&[0.3, 0.2], &[c(1.0, 0.0), c(2.0, 0.0)]).unwrap();
        assert_eq!(positions_array(&spikes).to_vec(), vec![0.2, 0.3]);
        assert_eq!(
            amplitudes_array(&spikes).to_vec(),
            vec![c(2.0, 0.0), c(1.0, 0.0)]
        );
    }
}
